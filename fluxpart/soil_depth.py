"""A soil temperature without a daily cycle: a deep probe mapped as the topsoil's (round
mistakes60).

Heat conduction damps the soil's daily temperature wave with depth z as exp(-z / d),
d = sqrt(2 kappa / omega) the damping depth, about 0.1 m for the daily wave in moist
mineral soil (kappa about 0.5-0.8e-6 m2 s-1; Campbell & Norman 1998, ch. 8 (m); Hillel
1998, ch. 12 (m)); the annual wave's damping depth is sqrt(365) times longer, about 2 m.
A probe near the surface (2-10 cm, where respiration's temperature is usually read)
keeps 0.4-0.8 of the surface's daily range; a probe at 50 cm keeps exp(-5) = 0.007 of
it, while its annual course is still 0.78 of the surface's, two weeks late. So a soil
column that follows the air's seasons but has no daily cycle in the warm, clear months
is a deep probe (the 50 cm sensor's column mapped as the 5 cm one, a logger's channels
taken in the wrong order), not the topsoil's temperature. Its respiration fits take a
temperature that lags the season and hardly changes through the night: on the clean
site-year s05 of ``probe_clean_sites_third`` a 50 cm probe mapped as tsoil moved
nighttime and daytime GPP and Reco by +4.2 sigma, with only the soil fit's failure named
(``tests/benchmarks/probe_mistakes60.py``).

The daily range is judged only in months where it can show: the soil at 5 degC or more
(no snow pack or frozen zero curtain holds it), the air swinging by 5 K or more a day
(a cloudy, windless month at the coast may swing less), over 30 days or more of such
days. The ratio of the soil's median daily range to the air's must then stay below
:data:`DEEP_RATIO` in those days: a probe at 5 cm under a forest's shade and litter
still swings a tenth or more of the air's range or so (the canopy damping the surface's
range to 0.2-0.3 of the air's, e^(-0.5) of that kept at 5 cm). A warning: a site whose
only soil probe is deep may map it knowingly; ``respiration_driver = "tair"`` or a
shallower probe then keeps the fits on a temperature that follows the respiring layer.

References
----------
Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
2nd ed. Springer, ch. 8 (m).

Hillel, D. (1998). Environmental Soil Physics. Academic Press, ch. 12 (m).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["DAMPING_DEPTH_M", "DEEP_RATIO", "STAGE", "deep_soil_probe", "daily_range_ratio"]

#: The stage named in the preflight finding.
STAGE = "input (tsoil depth)"

#: Damping depth of the daily temperature wave in soil [m] (Campbell & Norman 1998,
#: ch. 8 (m): 0.08-0.15 m for moist mineral soils; common practice 0.1 m).
DAMPING_DEPTH_M = 0.1

#: Largest ratio of the soil's median daily range to the air's that is named [1]:
#: exp(-0.35 / 0.1) = 0.03, a probe some 35 cm deep or more if the surface swings as the
#: air does. Our choice, set so that a 5 cm probe under a forest's shade (surface range
#: 0.2 of the air's, 0.12 kept at 5 cm) stays four times above it.
DEEP_RATIO = 0.03

#: Soil temperature [degC] below which a day is not judged: a soil under snow or at the
#: zero curtain of thaw has no daily cycle at any depth.
_MIN_SOIL = 5.0
#: Smallest daily range of the air [K] for a day to be judged: the surface wave must be
#: there for the soil to damp it.
_MIN_AIR_RANGE = 5.0
#: Fewest judged days [d].
_MIN_DAYS = 30
#: Share of a day's records both temperatures need for its range to count [1].
_MIN_SHARE = 2 / 3


def daily_range_ratio(tair, tsoil, stamps) -> tuple[float, int, float, float, float] | None:
    """The soil's median daily range over the air's, on the days that can show it, each
    day's drift with the weather taken out.

    Parameters
    ----------
    tair, tsoil : array_like
        Air and soil temperature of each record [degC] (NaN = missing), one length.
    stamps : array_like of datetime64
        Each record's stamp (calendar days are taken from them).

    Returns
    -------
    tuple or None
        (ratio [1], days judged [d], soil's and air's median daily range [K] after the
        drift, share of the judged days on which the soil holds one value [1]); None
        where fewer than :data:`_MIN_DAYS` days can be judged.

    Notes
    -----
    A deep probe still follows the weather of several days, which heat conduction damps
    far less than the daily wave (the damping depth grows with the root of the period,
    Campbell & Norman 1998, eq. 8.6 (m)): a day's drift of a few tenths of a kelvin
    added to its range hid a 50 cm probe in a generated year with day-to-day weather
    (ratio 0.030-0.035, named in 1 of 9; round review97,
    ``tests/benchmarks/probe_soil_depth97.py``). Each temperature's drift is taken out
    as the line through the day with the slope of the neighbouring days' means,
    (m[d+1] - m[d-1]) / 2 per day, which a daily wave leaves at 0 whatever its phase;
    the days are judged on their ranges as recorded.
    """
    tair = np.asarray(tair, dtype=float)
    tsoil = np.asarray(tsoil, dtype=float)
    if tair.size != tsoil.size or tair.size == 0:
        return None
    both = np.isfinite(tair) & np.isfinite(tsoil)
    stamps = pd.DatetimeIndex(stamps)
    day = stamps.normalize()
    air, soil = np.where(both, tair, np.nan), np.where(both, tsoil, np.nan)
    frame = pd.DataFrame({"air": air, "soil": soil, "n": both}, index=day)
    stats = frame.groupby(level=0).agg(
        air_max=("air", "max"), air_min=("air", "min"), air_mean=("air", "mean"),
        soil_max=("soil", "max"), soil_min=("soil", "min"), soil_mean=("soil", "mean"),
        n=("n", "sum"), size=("n", "size"))
    per_day = float(stats["size"].median())
    air_range = stats["air_max"] - stats["air_min"]
    judged = ((stats["n"] >= _MIN_SHARE * per_day) & (stats["soil_min"] >= _MIN_SOIL)
              & (air_range >= _MIN_AIR_RANGE))
    if int(judged.sum()) < _MIN_DAYS:
        return None
    # each day's drift: the slope of the neighbouring days' means [K d-1] (0 where a
    # neighbour is missing), about the day's middle
    calendar = pd.date_range(stats.index[0], stats.index[-1], freq="D")
    at = calendar.get_indexer(day)
    hours = ((stamps - day) / pd.Timedelta(days=1)).to_numpy(dtype=float) - 0.5
    steady = {}
    for name, values in (("air", air), ("soil", soil)):
        means = stats[f"{name}_mean"].reindex(calendar).to_numpy(dtype=float)
        slope = np.zeros(means.size)
        if means.size > 2:
            slope[1:-1] = np.nan_to_num((means[2:] - means[:-2]) / 2.0)
        steady[name] = values - slope[at] * hours
    steady = pd.DataFrame(steady, index=day).groupby(level=0).agg(["max", "min"])
    soil_steady = (steady[("soil", "max")] - steady[("soil", "min")])[judged]
    air_steady = (steady[("air", "max")] - steady[("air", "min")])[judged]
    soil_range, air_median = float(soil_steady.median()), float(air_steady.median())
    held = float(((stats["soil_max"] - stats["soil_min"])[judged] == 0.0).mean())
    return soil_range / air_median, int(judged.sum()), soil_range, air_median, held


def deep_soil_probe(tair, tsoil, stamps, columns=None) -> str | None:
    """The warning where the soil column has no daily cycle, or None.

    Parameters
    ----------
    tair, tsoil : array_like
        Air and soil temperature of each record [degC] (NaN = missing), one length.
    stamps : array_like of datetime64
        Each record's stamp.
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text (a column holding one value through most days named as daily
        means, not as a depth); None where the soil swings as a shallow probe's does or
        the record cannot tell (see :func:`daily_range_ratio`).

    Notes
    -----
    The depth stated is the one at which the daily wave keeps the ratio found, if the
    surface swings as much as the air: z = -d ln(ratio), d = :data:`DAMPING_DEPTH_M`;
    a surface shaded by a canopy swings less, so the probe may be shallower than that
    but not near the surface.

    References
    ----------
    Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental
    Biophysics, 2nd ed. Springer, ch. 8 (m).
    """
    found = daily_range_ratio(tair, tsoil, stamps)
    if found is None:
        return None
    ratio, days, soil_range, air_range, held = found
    names = columns or {}
    soil_column, air_column = names.get("tsoil", "tsoil"), names.get("tair", "tair")
    if held > 0.5:
        # one value through most days: no depth damps a wave to nothing, a column of daily
        # means does (round review97: it was called "a probe some 138 cm deep")
        return (f"soil temperature (column {soil_column!r}) holds one value through the day "
                f"on most of {days} warm days (soil 5 °C or more, the air temperature, "
                f"column {air_column!r}, swinging a median {air_range:.1f} K): a column of "
                "daily means (or a value the logger held) written on every record, where "
                "the respiration fits need each record's temperature: map the column of the "
                "probe's own records as tsoil, or set [processing] respiration_driver = "
                "\"tair\"")
    if not ratio < DEEP_RATIO:
        return None
    depth = -DAMPING_DEPTH_M * np.log(max(ratio, 1e-6))
    return (f"soil temperature (column {soil_column!r}) has no daily cycle: over {days} warm "
            f"days (soil 5 °C or more, the air swinging 5 K or more) it swings a median "
            f"{soil_range:.2f} K a day, the air temperature (column {air_column!r}) "
            f"{air_range:.1f} K ({ratio:.3f} of it; each day's drift with the weather taken "
            "out); heat conduction damps the daily wave "
            f"with depth z as exp(-z / {DAMPING_DEPTH_M:g} m), so this is a probe some "
            f"{100 * depth:.0f} cm deep or more, not the topsoil's 2-10 cm, and its seasons "
            "lag the respiring layer's by weeks: map a shallower probe as tsoil (a logger's "
            "50 cm channel taken for the 5 cm one?), or set [processing] "
            "respiration_driver = \"tair\"")
