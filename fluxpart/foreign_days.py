"""Days on which the NEE column holds another quantity (round mistakes35).

A flux column of the wrong quantity for a stretch of days (the sensible or latent heat
flux in W m-2 of a month whose logger program wrote its columns in another order, a CO2
mole fraction in µmol mol-1 of a file mapped by a copied config) puts many values beyond
the plausible range of NEE on each of those days, by day at least. Screening rejects
those values, record by record, and the reader said only so; but the same days' other
values (the heat flux's nights and mornings, tens of W m-2) are of the same foreign
quantity and enter as NEE. A measured CO2 flux never reaches the range's ±100 µmol m-2
s-1 (the largest canopy uptake measured, of C4 crops, stays within about 60-70 µmol m-2
s-1 (m)), and the random error and spikes of eddy covariance are single records
(Hollinger & Richardson 2005; Papale et al. 2006 (m)): a tenth of a day's records beyond
the range, on two days or more, is not a spike but a column of another kind there.

References
----------
Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy covariance measurements
and its application to physiological models. Tree Physiology 25, 873-885.

Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
measured with eddy covariance technique: algorithms and uncertainty estimation.
Biogeosciences 3, 571-583.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .unit_checks import undeclared_code

__all__ = ["DAY_SHARE", "MIN_DAYS", "MIN_PER_DAY", "foreign_days"]

#: Share of a day's present values beyond the range that names the day (a tenth: single
#: spikes put one or two of 48 records there, 2-4 %).
DAY_SHARE = 0.10
#: Values beyond the range a day needs at least, whatever its share (an hourly day of 24
#: records with 3 spikes is not named).
MIN_PER_DAY = 4
#: Days so named that the column needs before it is named (one odd day is left to the
#: range warning).
MIN_DAYS = 2


def foreign_days(values, starts, minimum: float, maximum: float, *, column: str,
                 unit: str) -> str | None:
    """Name the days on which NEE's values beyond its range are no spikes, or None.

    Parameters
    ----------
    values : numpy.ndarray
        NEE in the canonical unit, NaN where missing [µmol m-2 s-1].
    starts : pandas.DatetimeIndex
        The records' interval starts (local standard time), as long as `values`.
    minimum, maximum : float
        The plausible range of NEE [µmol m-2 s-1].
    column : str
        The file column (for the message).
    unit : str
        The range's unit (for the message).

    Returns
    -------
    str or None
        The warning, naming the days, the values beyond the range and the values within
        it that enter as NEE; None where fewer than :data:`MIN_DAYS` calendar days hold
        :data:`DAY_SHARE` of their present values (and :data:`MIN_PER_DAY` or more) beyond
        the range. A value repeated exactly that makes up half or more of the values
        beyond the range (3 times or more) is taken as an undeclared missing-data code
        (:func:`fluxpart.unit_checks.undeclared_code`): its records count as missing.

    References
    ----------
    Hollinger & Richardson (2005) and Papale et al. (2006), module docstring: the random
    error and spikes of eddy covariance are single records.
    """
    values = np.asarray(values, dtype=float)
    present = np.isfinite(values)
    with np.errstate(invalid="ignore"):
        outside = present & ((values < minimum) | (values > maximum))
    # an undeclared missing-data code (-6999, 9999) is one number repeated exactly, not
    # a quantity: the reader names it as a code where it makes up half of the values
    # beyond the range and occurs 3 times or more (io._undeclared_code); its records are
    # missing, not days of another quantity (review40)
    found = undeclared_code(values[outside])
    if found is not None:
        coded = values == found[0]
        present, outside = present & ~coded, outside & ~coded
    if outside.sum() < MIN_DAYS * MIN_PER_DAY:
        return None
    norm = pd.DatetimeIndex(starts).normalize()
    norm = norm if norm.tz is None else norm.tz_localize(None)
    days, code = np.unique(norm.to_numpy(), return_inverse=True)
    count = np.bincount(code, weights=present, minlength=days.size)
    beyond = np.bincount(code, weights=outside, minlength=days.size)
    named = (beyond >= MIN_PER_DAY) & (beyond >= DAY_SHARE * count)
    if named.sum() < MIN_DAYS:
        return None
    on_named = named[code]
    within = int(np.sum(present & ~outside & on_named))
    names = [str(day)[:10] for day in days[named]]
    listed = (", ".join(names) if len(names) <= 4
              else f"{len(names)} days from {names[0]} to {names[-1]}")
    return (f"nee: column {column!r} holds values beyond the plausible range "
            f"[{minimum:g}, {maximum:g}] {unit} in {100 * DAY_SHARE:.0f} % or more of the records "
            f"of {int(named.sum())} day(s) ({listed}; {int(beyond[named].sum())} of "
            f"{int(count[named].sum())} values): no CO2 exchange reaches such values and "
            "a flux's spikes are single records, so on those days the column holds another "
            "quantity or unit (sensible or latent heat in W m-2, a CO2 mole fraction, a "
            "logger program's columns in another order?); screening rejects only the "
            f"values beyond the range, and the other {within} value(s) of those days enter "
            "as NEE: mark those days missing in a copy of the file, or map the right "
            "column of their file")
