"""Global radiation written as 0 (or below) with the sun well up (round mistakes27).

A pyranometer under the sky always reads its diffuse light: the thickest overcast still
passes about a quarter of the clear sky's global radiation (Kasten & Czeplak 1980 (m)),
and a thunderstorm's darkest hour a few percent. With the sun well up, a reading of 0 W m-2
or less is therefore no measurement: it is a logger's or an export's code for a lost value
(an outage written 0 instead of blank), or a sensor covered by snow or a cap. Those records
pass every range check, and they count as night (Rg below the night threshold), so the
daytime uptake of those records enters the night respiration fits. On the invented
grassland example, 1 % of the daytime records written 0 moved Reco by -150 g C m-2
(nighttime) and 0.3 % by -45, without a word.

References
----------
Kasten, F., & Czeplak, G. (1980). Solar and terrestrial radiation dependent on the amount
and type of cloud. Solar Energy 24(2):177-189. doi:10.1016/0038-092X(80)90391-6 (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["DAYLIGHT_POTENTIAL", "rg_zero_in_daylight"]

#: Potential (top-of-atmosphere) radiation of a record, interval mean, at and above which
#: the sun stands well up for the whole interval [W m-2]: about 8-9 degrees of elevation
#: at noon in winter (1361 W m-2 times the sine of the elevation). There even a thick
#: overcast passes tens of W m-2 of diffuse light (a quarter of the clear sky's global
#: radiation under eight oktas, Kasten & Czeplak 1980 (m); the clear sky about 0.75 of the
#: potential), so a working pyranometer reads well above 0. The value is the one the
#: shaded-sensor check uses (``column_faults._SHADE_MIN_POTENTIAL``).
DAYLIGHT_POTENTIAL = 200.0
#: Records with the sun well up and Rg at or below 0 that name the column [1]. Our choice:
#: one or two such records may be a cleaning of the dome; three are a habit of the logger
#: or a covered sensor. On the example site 0.3 % of the daytime records (24) written 0
#: moved the nighttime Reco by -45 g C m-2 (each enters a 4-day respiration window as a
#: night record with the day's uptake).
_MIN_RECORDS = 3


def rg_zero_in_daylight(rg, potential, stamps=None, columns=None) -> str | None:
    """A message where Rg reads 0 W m-2 or less with the sun well up, or None.

    Parameters
    ----------
    rg : array_like
        Global radiation of each record [W m-2], NaN where missing.
    potential : array_like
        Potential radiation of the same records [W m-2], interval means.
    stamps : pandas.DatetimeIndex, optional
        Interval starts of the records, to name the first such record and the days.
    columns : dict, optional
        Canonical name -> file column, to name the column in the message.

    Returns
    -------
    str or None
        The warning text; None where fewer than three records (:data:`_MIN_RECORDS`)
        with potential radiation of :data:`DAYLIGHT_POTENTIAL` or more, in them and in
        the records on either side, read Rg <= 0.

    Notes
    -----
    Under eight oktas of cloud the global radiation is about 0.25 of the clear sky's,
    G / G_clear = 1 - 0.75 (N / 8)^3.4 (Kasten & Czeplak 1980, eq. for all cloud types
    (m)), and the clear sky passes about 0.75 of the potential radiation: with the
    potential at 200 W m-2 or more the overcast sky still gives some 35 W m-2, and the
    darkest storm a few W m-2. A reading at or below 0 there is no sky; it is a value
    written for a lost one (or a covered sensor). Such records are night for the night
    mask (Rg below ``night_rg_threshold``) while their NEE is the day's uptake, and the
    respiration fits and the night fills read that uptake as respiration. A whole day or
    more at 0 is named by the stuck-sensor check as well. The records on either side
    must see the sun that high too, so that a clock the clock check lets through (off
    by up to two thirds of a record) cannot put a record at dawn or dusk, where a
    pyranometer's thermal offset under thick cloud reads 0 or less, among them (round
    review31: hourly records 39 minutes ahead of the sun with an offset of -6 and
    -10 W m-2 were named in 4 and 20 of 64 generated site-years).

    References
    ----------
    Kasten, F., & Czeplak, G. (1980). Solar and terrestrial radiation dependent on the
    amount and type of cloud. Solar Energy 24(2):177-189.
    doi:10.1016/0038-092X(80)90391-6 (m)

    ISO 9060:2018. Solar energy -- Specification and classification of instruments for
    measuring hemispherical solar and direct solar radiation (zero offset a: the reading
    under a net thermal radiation of -200 W m-2, up to 7, 15 and 30 W m-2 for classes
    A, B and C) (m)
    """
    rg = np.asarray(rg, dtype=float)
    potential = np.asarray(potential, dtype=float)
    if rg.size == 0 or rg.shape != potential.shape:
        return None
    with np.errstate(invalid="ignore"):
        up = potential >= DAYLIGHT_POTENTIAL
    # the sun well up in the records on either side too: the clock check passes a clock
    # off by up to two thirds of a record (clock.shift_threshold_minutes), and with the
    # stamps that far ahead of the sun a pyranometer's thermal offset (ISO 9060:2018,
    # zero offset a, up to 15 W m-2 for a class B sensor (m)) reads 0 or less at dawn
    # under thick cloud (round review31)
    sunlit = up.copy()
    sunlit[1:] &= up[:-1]
    sunlit[:-1] &= up[1:]
    sunlit[[0, -1]] = False
    with np.errstate(invalid="ignore"):
        hit = sunlit & (rg <= 0.0)                        # NaN compares False
    count = int(hit.sum())
    if count < _MIN_RECORDS:
        return None
    present = int((sunlit & np.isfinite(rg)).sum())
    where = ""
    if stamps is not None and len(stamps) == rg.size:
        index = pd.DatetimeIndex(stamps)
        days = index[hit].normalize().nunique()
        where = (f", on {days} day(s) from "
                 f"{pd.Timestamp(index[int(np.flatnonzero(hit)[0])]):%Y-%m-%d %H:%M}")
    column = (columns or {}).get("rg", "rg")
    return (f"rg (column {column!r}) reads 0 W m-2 or less in {count} records with the sun "
            f"well up (potential radiation {DAYLIGHT_POTENTIAL:g} W m-2 or more, also a "
            f"record before and after; "
            f"{100 * (count / max(present, 1)):.1f} % of those present{where}): even the thickest "
            "overcast passes tens of W m-2 of diffuse light there (Kasten & Czeplak 1980), "
            "so 0 looks like the logger's code for a lost value (or a sensor covered by "
            "snow or a cap). Those records count as night, and the uptake measured in them "
            "enters the respiration fits as night respiration: blank those cells (or write "
            "the file's missing code there) in a copy of the file")
