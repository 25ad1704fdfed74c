"""NEE with the opposite sign by day only (round mistakes30).

The reader refuses NEE whose night median is an uptake *and* whose warm, bright records
reach further into release than into uptake: the whole column of the opposite sign
(``unit_checks._nee_sign_message``). And :func:`fluxpart.record_shifts.months_rising_with_light`
names months whose NEE rises with light where other months' falls. A column negated by
day only (a user's sign convention applied where Rg > 0, an uptake-positive daytime
product joined to a night file of the right sign) passes both: its nights are a release,
as they should be, and every month rises with light, so none falls. It reverses the
whole daytime exchange: on the invented grassland example, NEE negated where Rg > 10
W m-2 moved the annual NEE from -241 to +1063 g C m-2 and the nighttime GPP from 1421 to
117, named only as a disagreement of the two partitionings.

Two facts of the trade decide it here: by day under strong light photosynthesis draws
NEE down, so the uptake tail of warm, bright records reaches further from zero than the
release tail, and a passing cloud's changes of light move NEE the other way within
minutes (the reader's and the month check's tests); and at night NEE is respiration, a
release. A record whose nights are a release, whose warm, bright records have the
reader's reversed tails beyond its release bound and beyond 1.5 times the 95th
percentile of the night values, and which holds a month clearly rising with light and
none falling, is named (a warning; the values are kept).

References
----------
Lloyd, J., & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
Functional Ecology 8(3):315-323. doi:10.2307/2389824 (m)

Lambers, H., Chapin, F. S., & Pons, T. L. (2008). Plant Physiological Ecology, 2nd ed.
Springer, ch. 2 (m).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .record_shifts import _clear_responses
from .unit_checks import _MIN_ACTIVE_RECORDS, _SIGN_MIN_RELEASE, _SIGN_TAIL_RATIO

__all__ = ["DAY_RELEASE_RATIO", "STAGE", "day_sign_reversed"]

STAGE = "input (nee day sign)"
#: Release of warm, bright records (their 95th percentile) over the 95th percentile of
#: the night values above which it is not respiration of a dormant canopy by day. By day
#: without photosynthesis NEE is respiration, which follows the soil's temperature;
#: at a few cm the soil's diurnal range in summer is a few K (damped by depth, (m)),
#: and a Q10 near 2 (Lloyd & Taylor 1994 (m)) puts 6 K above the warmest nights at
#: 2 ** 0.6 = 1.5 times their respiration. Our choice on that argument.
DAY_RELEASE_RATIO = 1.5
#: Warm and bright, as the reader's sign check: Rg above 300 W m-2, tair above 5 °C.
_BRIGHT_RG = 300.0
_WARM_CELSIUS = 5.0


def _tails(nee, night, active):
    """(night median, night 95th percentile, 5th and 95th percentile of the warm, bright
    records), or None where the records are too few (48 night, the reader's count)."""
    finite = np.isfinite(nee)
    night_values, active_values = nee[night & finite], nee[active & finite]
    if night_values.size < 48 or active_values.size < _MIN_ACTIVE_RECORDS:
        return None
    low, high = (float(v) for v in np.percentile(active_values, [5, 95]))
    return (float(np.median(night_values)), float(np.percentile(night_values, 95)),
            low, high)


#: Night median of NEE below which the nights read as no respiration [µmol m-2 s-1]:
#: ecosystem respiration at night is 0.5-10 µmol m-2 s-1 wherever a canopy takes up CO2
#: by day (Lloyd & Taylor 1994 (m)); our choice of its low end. Only the message reads it.
_NIGHT_RESPIRATION_MIN = 0.5


def _other_quantity(night_median: float) -> str:
    """The message's second cause where the nights hold no respiration (round mistakes44):
    a flux of another quantity that rises by day and is near 0 at night (a water vapour
    flux in mmol m-2 s-1 gave a night median of 0.06 and was named as NEE negated by day)."""
    if night_median >= _NIGHT_RESPIRATION_MIN:
        return ""
    return (f"; its nights, though, hold no respiration (median below "
            f"{_NIGHT_RESPIRATION_MIN:g} µmol m-2 s-1), which fits another quantity that "
            "rises by day and rests near 0 at night better: a water vapour flux (mmol m-2 "
            "s-1) or a heat flux mapped as nee; check the mapping first")


def day_sign_reversed(nee, rg, tair, potential, stamps, columns=None) -> str | None:
    """A message where NEE looks negated by day only, or None.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1] (NaN = missing or rejected).
    rg : array_like
        Global radiation of each record [W m-2].
    tair : array_like
        Air temperature of each record [°C].
    potential : array_like
        Potential radiation of each record [W m-2]; records with 0 are night.
    stamps : pandas.DatetimeIndex
        Interval starts of the records (the months).
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text, or None where the nights are not a release, the warm, bright
        records' release tail is not reversed and large, or a month's NEE clearly falls
        with light (or none clearly rises).

    Notes
    -----
    A whole column of the opposite sign has an uptake at night and is the reader's
    refusal; a sign changed in some months leaves months falling with light and is
    :func:`fluxpart.record_shifts.months_rising_with_light`'s. Between them lies the
    column negated by day only, which this names.

    References
    ----------
    Lloyd, J., & Taylor, J. A. (1994). Functional Ecology 8(3):315-323 (m).
    """
    nee = np.asarray(nee, dtype=float)
    rg = np.asarray(rg, dtype=float)
    tair = np.asarray(tair, dtype=float)
    potential = np.asarray(potential, dtype=float)
    if nee.size < 3 or not nee.size == rg.size == tair.size == potential.size == len(stamps):
        return None
    with np.errstate(invalid="ignore"):
        active = (rg > _BRIGHT_RG) & (tair > _WARM_CELSIUS)
    found = _tails(nee, potential <= 0.0, active)
    if found is None:
        return None
    night_median, night_high, low, high = found
    reversed_tails = high > 0.0 and (low >= 0.0 or high > _SIGN_TAIL_RATIO * -low)
    if not (night_median > 0.0 and reversed_tails and high > _SIGN_MIN_RELEASE
            and high > DAY_RELEASE_RATIO * night_high):
        return None
    d_nee, d_rg = np.diff(nee), np.diff(rg)
    usable = ((potential[1:] > 0) & (potential[:-1] > 0) & np.isfinite(d_nee)
              & np.isfinite(d_rg))
    index = pd.DatetimeIndex(stamps[1:])
    months = index.year.to_numpy() * 12 + index.month.to_numpy() - 1
    rising, falling = _clear_responses(d_nee, d_rg, usable, months)
    if not rising or falling:
        return None
    name = (columns or {}).get("nee", "nee")
    shown = ", ".join(f"{code // 12:04d}-{code % 12 + 1:02d} ({r:+.2f})"
                      for code, r in rising[:6])
    more = f" and {len(rising) - 6} more" if len(rising) > 6 else ""
    return (f"NEE (column {name!r}) looks negated by day only: its night values are a "
            f"release (median {night_median:.3g} µmol m-2 s-1), but its warm, bright "
            f"records reach {high:.3g} into release (95th percentile; 5th {low:.3g}), "
            f"{high / night_high if night_high > 0 else float('inf'):.3g} times the "
            "nights' 95th percentile, and NEE rises with light from record to record in "
            f"{shown}{more}, falling in no month: photosynthesis draws NEE down by day. "
            "A sign convention applied to the day records only (uptake positive where "
            "the sun is up) reverses the whole daytime exchange; check how the column "
            f"was made and give NEE positive = release at every hour{_other_quantity(night_median)}")
