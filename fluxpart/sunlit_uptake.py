"""NEE that takes up no CO2 in sunlight through a whole year (round mistakes47).

A canopy in sunlight fixes CO2: in the growing season the gross uptake of a vegetated
site exceeds its respiration by day, so NEE is negative in most warm, bright records of
any year (Baldocchi 2008 (m); every site of the global tower networks shows net uptake
at midday in its growing season, common practice). A column mapped as ``nee`` that is
positive in nearly every warm, bright record of a year's record holds no canopy's CO2
exchange: the flux of another gas (methane or nitrous oxide in nmol m-2 s-1, of NEE's
size and always an emission, from the same flux file), or the CO2 flux of a site without
plants (bare soil, a fallow, where GPP is 0 and the partitioning separates nothing).
Nights of a release pass the reader's sign check and no month rises with light, so the
day-sign check is silent too: on the invented grassland example a methane flux in nmol
m-2 s-1 mapped as ``nee`` moved annual NEE from -241.7 to +8722.9 g C m-2, named only as
the two partitionings' disagreement. A water vapour or heat flux (no release at night)
is the day-sign check's.

References
----------
Baldocchi, D. (2008). 'Breathing' of the terrestrial biosphere: lessons learned from a
global network of carbon dioxide flux measurement systems. Australian Journal of Botany
56, 1-26. doi:10.1071/BT07151 (m)

Falge, E. et al. (2001). Gap filling strategies for defensible annual sums of net
ecosystem exchange. Agricultural and Forest Meteorology 107, 43-69.
doi:10.1016/S0168-1923(00)00225-2 (m)

Richardson, A. D. et al. (2006). A multi-site analysis of random error in tower-based
measurements of carbon and energy fluxes. Agricultural and Forest Meteorology 136, 1-18.
doi:10.1016/j.agrformet.2006.01.007 (m)
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .day_sign import _BRIGHT_RG, _NIGHT_RESPIRATION_MIN, _WARM_CELSIUS

__all__ = ["MEASURED_MONTHS_SHARE", "MIN_MONTH_COVERAGE", "MIN_SPAN_DAYS", "STAGE",
           "UPTAKE_SHARE", "no_sunlit_uptake"]

#: The stage named in the preflight finding.
STAGE = "input (nee no uptake)"

# Warm and bright records (Rg of 300 W m-2 or more, air of 5 degC or more) and nights of
# a release (a median of 0.5 µmol m-2 s-1 or more) as the day-sign check reads them: a
# water vapour or heat flux (no release at night) is that check's.

#: Share of the warm, bright records with NEE below 0 under which the record takes up
#: no CO2 [1]. Our choice: a vegetated year holds most of them below 0; a release of
#: 1 µmol m-2 s-1 with a random error of 0.5 + 0.15 |NEE| (Richardson et al. 2006 (m))
#: puts about 5 % below 0 by chance alone.
UPTAKE_SHARE = 0.05
#: Shortest record judged [days]: one that holds every season (a record of a dormant
#: season alone may hold no uptake).
MIN_SPAN_DAYS = 330.0
#: Fewest warm, bright records with NEE that are judged (our choice: ten days of
#: half-hours).
_MIN_RECORDS = 480
#: Share of a month's warm, bright records (by the weather alone) in which NEE must be
#: measured for the month to count as measured [1], and share of the record's warm,
#: bright records that the measured months must hold for the record to be judged [1].
#: Our choice (review59): a crop's or a deciduous canopy's uptake can lie in three or
#: four warm months alone (maize, sown in May, takes up CO2 from June to September, fact
#: of the trade (m)), and a record that lost them (an analyser's outage of a summer)
#: holds only the dormant canopy's release in the sun: the invented maize example with
#: its NEE of June to September removed was named as another gas's flux (2.4 % of 1232
#: warm, bright records below 0); those months hold about half of its warm, bright
#: records. A tenth is far below the share a tower keeps (about 65 % of half-hours,
#: Falge et al. 2001 (m)); one month lost (a sixth at most) leaves a record judged, two
#: of the sunniest do not. Measured (``tests/benchmarks/bench_pairing_uptake.py``): a
#: methane flux named in 68 of 68 generated site-years as before, no false alarm.
MIN_MONTH_COVERAGE = 0.1
MEASURED_MONTHS_SHARE = 0.8


def _warm_season_measured(bright, rg, tair, stamps) -> bool:
    """Whether the months whose warm, bright records (by the weather alone) hold measured
    NEE in :data:`MIN_MONTH_COVERAGE` of them or more hold :data:`MEASURED_MONTHS_SHARE`
    or more of the record's warm, bright records."""
    with np.errstate(invalid="ignore"):
        sunny = (rg >= _BRIGHT_RG) & (tair >= _WARM_CELSIUS)
    months = stamps.year * 12 + stamps.month
    weather = pd.Series(sunny, dtype=float).groupby(months).sum()
    measured = pd.Series(bright, dtype=float).groupby(months).sum()
    covered = weather[measured >= MIN_MONTH_COVERAGE * weather].sum()
    return bool(covered >= MEASURED_MONTHS_SHARE * weather.sum())


def no_sunlit_uptake(nee, rg, tair, potential, stamps, columns=None) -> str | None:
    """A message where NEE takes up no CO2 in a year's warm, bright records, or None.

    Parameters
    ----------
    nee, rg, tair, potential, stamps, columns
        As :func:`fluxpart.day_sign.day_sign_reversed` reads them (NEE [µmol m-2 s-1],
        NaN where missing or rejected; Rg and potential radiation [W m-2], 0 potential
        at night; air temperature [degC]; interval starts; canonical name -> column).

    Returns
    -------
    str or None
        Named where the record spans :data:`MIN_SPAN_DAYS` or more, NEE is measured in
        the months holding most of its warm, bright records (:data:`MIN_MONTH_COVERAGE`,
        :data:`MEASURED_MONTHS_SHARE`), its nights are a release, and under
        :data:`UPTAKE_SHARE` of :data:`_MIN_RECORDS` or more warm, bright records hold
        NEE below 0.

    References
    ----------
    Baldocchi, D. (2008). Australian Journal of Botany 56, 1-26 (m): net uptake at
    midday in the growing season at every vegetated tower site.
    """
    stamps = pd.DatetimeIndex(stamps)
    if len(stamps) < 2 or (stamps[-1] - stamps[0]) / pd.Timedelta(days=1) < MIN_SPAN_DAYS:
        return None
    nee, rg, tair = (np.asarray(values, dtype=float) for values in (nee, rg, tair))
    potential = np.asarray(potential, dtype=float)
    measured = np.isfinite(nee)
    with np.errstate(invalid="ignore"):
        bright = measured & (rg >= _BRIGHT_RG) & (tair >= _WARM_CELSIUS)
    night = measured & (potential <= 0.0)
    if bright.sum() < _MIN_RECORDS or night.sum() < _MIN_RECORDS:
        return None
    if not _warm_season_measured(bright, rg, tair, stamps):
        return None
    night_median = float(np.median(nee[night]))
    share = float((nee[bright] < 0.0).mean())
    if night_median < _NIGHT_RESPIRATION_MIN or share >= UPTAKE_SHARE:
        return None
    column = (columns or {}).get("nee", "nee")
    return (f"NEE (column {column!r}) takes up no CO2 in sunlight: of its {int(bright.sum())} "
            f"warm, bright records (Rg of {_BRIGHT_RG:.0f} W m-2 or more, air of "
            f"{_WARM_CELSIUS:.0f} °C or more) only {100 * share:.1f} % lie below 0 (median "
            f"{float(np.median(nee[bright])):.2f}, nights {night_median:.2f} µmol m-2 s-1), "
            "where a canopy in sunlight takes CO2 up in most such records of a year: the "
            "column looks like the flux of another gas (methane or nitrous oxide in nmol "
            "m-2 s-1, always an emission) or of a site without plants (bare soil, where GPP "
            "is 0 and the partitioning separates nothing): map the CO2 flux as nee")
