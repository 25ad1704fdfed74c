"""The VPD column exchanged with another column for some months (round layouts28).

A logger program changed within the record can write its columns in another order
without a new header line: from some month on the column mapped as VPD holds another
quantity and another mapped column holds the VPD. Where RH and air temperature are
mapped too, they tell which: VPD is e_s(T) (1 - RH / 100) at each moment, so the VPD
column follows the VPD that RH and T imply record for record, and no other quantity
does. VPD and u* exchanged from July had moved the example's annual NEE by -25.4 g C m-2
and were named only by their side effects (a seasonal u* threshold, a "sun-heated
thermometer"): each lies in the other's range and rises by day.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ._groups import group_positions
from .column_faults import _correlation as _paired_correlation
from .measured_months import month_runs_text
from .variables import vpd_from_rh

__all__ = ["vpd_exchanged_in_months"]

#: Pearson correlation over a month's records between a VPD column and the VPD that RH
#: and T of the same records imply, above which the column follows it (a probe's own VPD
#: from its RH and T agrees to r above 0.99 (m); a quantity sharing only the diurnal
#: course, u*, Rg, a soil temperature, stays far below; our choice, between the two)
_FOLLOWS = 0.9
#: ... and below which a VPD column does not (our choice: 0.2 below it, so that a VPD
#: of another probe than the RH, r 0.9 to 0.99, is never taken for another quantity,
#: while u* or Rg sharing VPD's diurnal course reach 0.4 to 0.7)
_DOES_NOT_FOLLOW = 0.7
#: Records of a month with VPD, RH, T and the other column present needed to judge it
#: (ten days of half-hours; our choice)
_MONTH_RECORDS = 480


def _correlation(a: np.ndarray, b: np.ndarray) -> float:
    """Pearson correlation of the pairs both present, NaN below :data:`_MONTH_RECORDS`
    (the column checks' sums of products: the same bits on every CPU)."""
    return _paired_correlation(a, b, _MONTH_RECORDS)[0]


def vpd_exchanged_in_months(tair, rh, vpd, others: dict, stamps,
                            columns=None) -> str | None:
    """A message where another column holds the VPD in some months, or None.

    Parameters
    ----------
    tair : array_like
        Air temperature [°C].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        The column mapped as VPD [hPa].
    others : dict
        Canonical name -> values of the other mapped columns to try (u*, a soil
        temperature, Rg, NEE), in their own units (the correlation needs none).
    stamps : array_like of datetime64
        Interval starts of the records.
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text, naming the months and the other column; None where the VPD
        column follows the implied VPD in every month that can judge, where no month
        can judge, or where the record's other months do not show the VPD column
        following it (then no month is out of step with the rest).

    Notes
    -----
    VPD = e_s(T) (1 - RH / 100) (Campbell & Norman 1998, ch. 3 (m)). A month is named
    where the VPD column's correlation with the implied VPD is below
    :data:`_DOES_NOT_FOLLOW` while another column's is above :data:`_FOLLOWS`, and
    the VPD column follows it (above :data:`_FOLLOWS`) in at least one other month:
    the columns exchanged there. A VPD column that never follows (another probe, a
    wrong mapping) is left to the other checks.

    References
    ----------
    Campbell, G. S. & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
    2nd ed., Springer, ch. 3 (m).
    """
    tair = np.asarray(tair, dtype=float)
    implied = vpd_from_rh(np.asarray(rh, dtype=float), tair)
    vpd = np.asarray(vpd, dtype=float)
    months = pd.DatetimeIndex(stamps).to_period("M")
    codes, labels = pd.factorize(months, sort=True)
    follows_somewhere = False
    exchanged = {}
    for code, rows in group_positions(codes, where=codes >= 0).items():
        label = labels[code]
        own = _correlation(vpd[rows], implied[rows])
        if not np.isfinite(own):
            continue
        if own > _FOLLOWS:
            follows_somewhere = True
            continue
        if own >= _DOES_NOT_FOLLOW:
            continue
        for name, values in others.items():
            values = np.asarray(values, dtype=float)
            if _correlation(values[rows], implied[rows]) > _FOLLOWS:
                exchanged.setdefault(name, []).append(label)
                break
    if not follows_somewhere or not exchanged:
        return None
    names = {**{"vpd": "vpd", "rh": "rh", "tair": "tair"}, **(columns or {})}
    name, periods = max(exchanged.items(), key=lambda item: len(item[1]))
    other = names.get(name, name)
    # runs of consecutive months, so that March and September are not shown as the run
    # from March to September (review36; as rg_dim's months since the final reread)
    shown = month_runs_text(periods)
    return (f"VPD (column {names['vpd']!r}) does not follow the VPD that RH "
            f"({names['rh']!r}) and air temperature ({names['tair']!r}) imply in "
            f"{len(periods)} month(s) ({shown}), while column {other!r} ({name}) does, "
            f"record for record (correlation above {_FOLLOWS}), and VPD follows it in the "
            "other months: the two columns exchanged there (a logger program changed "
            "within the record without a new header?): exchange them in those months in "
            "a copy of the file")
