"""A budget year that opens inside the site's growing season (``[processing] year_start``).

An annual budget is a sum over any twelve months, but the usual budget year starts in the
dormant season, so that one growing season's uptake falls in one year: 1 January north of
the tropics, 1 July south of them, where the austral summer spans December to February
(common practice (m)); summer-dry (Mediterranean) and monsoon sites start at the end of
their dry season. A ``year_start`` copied from a site of the other hemisphere ("07-01" at a
northern site) opens every budget year in the middle of the uptake: each year's NEE, GPP
and Reco then hold the end of one season and the start of the next, and a year-to-year
difference mixes two seasons. The site's own records tell where its growing season lies,
whatever its latitude or climate: the months of its strongest mean uptake.

References
----------
Common practice (m): budget or "carbon" years from the dormant season, calendar years in
the northern extratropics and July-June years in the southern (the hydrological year of
summer-dry sites begins in autumn).

A ``year_start`` written day first ("01-07" for 1 July) is read month first, as the
setting is defined: 7 January. Every day-first start on a month's first day other than
January's reads so, a day of January from the 2nd to the 12th (13 and above are no month
and refused); :func:`day_first_year_start` names it (round mistakes54).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["DORMANT_SHARE", "MIN_MONTHS", "SPLIT_SHARE", "TROPIC_LATITUDE",
           "calendar_year_in_the_south", "day_first_year_start", "split_growing_season"]

#: Calendar months with enough NEE for their mean needed to judge [1]: three quarters
#: of a year, so the growing season of a seasonal record is among them (our choice).
MIN_MONTHS = 9
#: Share of the year's uptake in the two months before the budget year's start and in
#: the two from it, each, at or above which the start splits the growing season [1]
#: (our choice: a fifth. On the grassland example (invented) a start of 1 July has 48 %
#: and 22 %, 1 September 22 % and 15 %, 1 October and 1 April 0-4 % on one side; the
#: maize example's short season, 1 July 10 % before, 1 August 50 % and 50 %).
SPLIT_SHARE = 0.2
#: Largest share of the uptake on the smaller side of the best start for the record to
#: have a growing season to split [1] (our choice): an evergreen or wet tropical canopy
#: taking up CO2 in every month (each two months a sixth of it) has no start that keeps
#: its uptake in one year, and is not judged; the grassland example's best starts leave 0.
DORMANT_SHARE = 0.05
#: Latitude of the tropics' edge [degrees]: the Earth's axial tilt, 23.44° (23° 26'; the
#: obliquity of the ecliptic, IAU 2006 precession, about 23.436° in the 2020s (m)). South
#: of it the austral summer, the growing season of most sites, spans the turn of the
#: calendar year.
TROPIC_LATITUDE = 23.44
#: NEE values a calendar month needs for its mean [1]: five days of 30-min records.
_MIN_VALUES = 240

_MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
           "September", "October", "November", "December")


def split_growing_season(year_start: str, nee, stamps, latitude: float,
                         default: str = "01-01") -> str | None:
    """A warning where ``year_start`` opens each budget year inside the growing season.

    Parameters
    ----------
    year_start : str
        ``"MM-DD"``, the first day of each budget year (checked by the config).
    nee : array_like
        NEE of each record [µmol m-2 s-1], NaN where missing.
    stamps : pandas.DatetimeIndex
        Interval start of each record (local standard time).
    latitude : float
        Site latitude [degrees north], named in the message.
    default : str
        The default ``year_start``: a start left at it is not judged (a convention the
        run did not ask for).

    Returns
    -------
    str or None
        The text where, of the monthly uptake (the negative part of each calendar
        month's mean NEE, over every calendar month of the record with
        :data:`_MIN_VALUES` values or more, at least :data:`MIN_MONTHS` of them), the
        two months before the start and the two from it each hold at least
        :data:`SPLIT_SHARE`, where some other start would leave at most
        :data:`DORMANT_SHARE` on one side (a growing season to split); None otherwise. A
        start after the 15th of a month counts from the next month.
    """
    if year_start == default:
        return None
    month, day = (int(part) for part in year_start.split("-"))
    values = pd.Series(np.asarray(nee, dtype=float), index=pd.DatetimeIndex(stamps))
    values = values[np.isfinite(values.to_numpy())]
    grouped = values.groupby(values.index.month)
    means = grouped.mean()[grouped.count() >= _MIN_VALUES]
    if len(means) < MIN_MONTHS:
        return None
    uptake = np.zeros(12)
    uptake[means.index.to_numpy() - 1] = np.clip(-means.to_numpy(), 0.0, None)
    total = float(uptake.sum())
    if not total > 0.0:
        return None
    # the uptake of the two months from each month's start and of the two before it
    starts = np.arange(12)
    opening = uptake[starts] + uptake[(starts + 1) % 12]
    closing = uptake[(starts - 1) % 12] + uptake[(starts - 2) % 12]
    minor = np.minimum(opening, closing) / total
    if minor.min() > DORMANT_SHARE:
        return None             # uptake all year round: no start keeps a season whole
    first = (month - 1 + (day > 15)) % 12          # the first month of the year, 0-based
    if minor[first] < SPLIT_SHARE:
        return None
    where = f"{abs(latitude):.1f}° {'N' if latitude >= 0 else 'S'}"
    peak = int(np.argmax(uptake))
    return (f"[processing] year_start = \"{year_start}\" opens each budget year inside the "
            f"site's growing season: of the uptake of the months with a negative mean NEE "
            f"(peak {_MONTHS[peak]}, {-uptake[peak]:.1f} µmol m-2 s-1), "
            f"{100 * (closing[first] / total):.0f} % lies in the two months before the start and "
            f"{100 * (opening[first] / total):.0f} % in the two from it, so each year's sums hold "
            "the end of one season and the start of the "
            "next; budget years usually start in the dormant season (common practice (m): "
            "1 January north of the tropics, 1 July south of them, the end of the dry "
            f"season at summer-dry and monsoon sites; this site lies at {where}): check the "
            "setting (another hemisphere's start?); used as set")


def day_first_year_start(year_start: str) -> str | None:
    """A warning where ``year_start`` reads as a January day that, written day first,
    is the first of another month (``"01-07"``: 7 January, or 1 July meant?).

    Parameters
    ----------
    year_start : str
        ``"MM-DD"``, the first day of each budget year (checked by the config).

    Returns
    -------
    str or None
        The text, naming the setting, the day it reads as and the start meant day
        first; None for any other start.

    Notes
    -----
    Pure and cheap (the setting alone). Budget years start on a month's first day
    (common practice (m): 1 January, 1 July, the first of the month ending a dry
    season), and the date order of many locales is day first (ISO 8601 writes month
    before day, as the setting does). Of the starts a day-first writer types, those of
    February to December's first day ("01-02" .. "01-12") are valid month-first days of
    January, so they pass the config's check and move every budget year's edges by up to
    eleven months: at the grassland example "01-07" cut its one year into two partial
    years, 2021's sums 0.2 months short (round mistakes54). A start of 2 to 12 January
    that is meant stays as set; the warning cannot change a number.

    References
    ----------
    ISO 8601-1:2019, Date and time: representations for information interchange, §5.2.2
    (calendar date, month before day) (m).
    """
    month, day = (int(part) for part in year_start.split("-"))
    if month != 1 or not 2 <= day <= 12:
        return None
    return (f"[processing] year_start = \"{year_start}\" is read as {day} January (the "
            f"setting is \"MM-DD\", month first), a start budget years rarely take: if "
            f"1 {_MONTHS[day - 1]} was meant (day first), write year_start = "
            f"\"{day:02d}-01\"; used as set")


def calendar_year_in_the_south(year_start: str, latitude: float,
                               default: str = "01-01") -> str | None:
    """A note for ``check`` where a site south of the tropics keeps calendar budget years.

    Parameters
    ----------
    year_start : str
        ``"MM-DD"``, the first day of each budget year (checked by the config).
    latitude : float
        Site latitude [degrees north].
    default : str
        The default ``year_start``; only a start at it is noted.

    Returns
    -------
    str or None
        The note, naming the latitude, the setting and ``"07-01"``, where `latitude` lies
        south of :data:`TROPIC_LATITUDE` and `year_start` is `default`; None otherwise.

    Notes
    -----
    South of the tropics the austral summer spans December to February, so a budget
    year from 1 January cuts most sites' growing season in two and each calendar year's
    sums hold the end of one season and the start of the next; budget years there usually
    run from 1 July (common practice (m)). Summer-dry (Mediterranean) sites of the south
    grow in the austral winter, for which 1 January is a dormant-season start; so this is
    a note (``check`` alone, exit status unchanged), not a warning of ``run``: the start
    may well be the right one, and a warning would have changed the manifests of result
    folders written before (round leftovers58). :func:`split_growing_season` judges a
    start set to another day against the site's own records.

    References
    ----------
    Common practice (m): budget years from the dormant season, July-June in the southern
    extratropics. The tropics' edge: the obliquity of the ecliptic (IAU 2006 (m)).
    """
    if year_start != default or not latitude < -TROPIC_LATITUDE:
        return None
    return (f"budget year: [processing] year_start = \"{year_start}\" (the default, calendar "
            f"years) at {abs(latitude):.1f}° S, south of the tropics: the austral summer "
            "spans the turn of the year, so where the site's growing season lies there each "
            "budget year holds the end of one season and the start of the next; budget "
            "years there usually start on 1 July (year_start = \"07-01\"), a summer-dry "
            "site's growing season in the austral winter aside; nothing changes unless you "
            "set it")
