"""Uptake in daylight while the air is frozen: an open-path flux without its density terms
(round mistakes53).

An open-path analyser measures the CO2 density of moist air that the surface heats by
day: the eddies that carry heat up carry expanded, thinner air, and the covariance of w
and the CO2 density reads an uptake that is not one. The density (WPL) terms restore the
flux: F = w'ρc' + μ (ρc/ρd) w'ρv' + (1 + μσ) (ρc/T) w'T' (Webb, Pearman and Leuning 1980),
about +0.05 µmol m-2 s-1 per W m-2 of sensible heat and +0.009 per W m-2 of latent heat
at 15 °C (ρc 16.9 mmol m-3 at 400 ppm, ρ cp 1210 J m-3 K-1 (m)). A flux written without
them shows an apparent uptake by day that grows with the sensible heat, and a release by
night, and moves the annual NEE by a multiple of its uncertainty. In the growing season
it hides among the canopy's own uptake; in frozen weather it cannot: a canopy whose air
is well below freezing fixes next to no CO2 (frozen leaves and soil, the winter
down-regulation of evergreens' photosynthesis to a few per cent of their summer capacity,
Öquist and Huner 2003 (m)), respiration is never negative, and so NEE in the bright records of frozen weather is a small release,
no less than in its dark records. Where most bright, frozen records take up CO2 and
their median uptake is beyond the dark frozen records' median by more than any
photosynthesis of a frozen canopy, the flux is named. The same trace is left by an
analyser's body heating the air in its path in the cold (Burba et al. 2008), whose
correction left out reads as an uptake by day too.

References
----------
Webb, E. K., Pearman, G. I., & Leuning, R. (1980). Correction of flux measurements for
density effects due to heat and water vapour transfer. Quarterly Journal of the Royal
Meteorological Society 106, 85-100. doi:10.1002/qj.49710644707 (m)

Burba, G. G., McDermitt, D. K., Grelle, A., Anderson, D. J., & Xu, L. (2008). Addressing
the influence of instrument surface heat exchange on the measurements of CO2 flux from
open-path gas analyzers. Global Change Biology 14, 1854-1876 (m)

Öquist, G., & Huner, N. P. A. (2003). Photosynthesis of overwintering evergreen plants.
Annual Review of Plant Biology 54, 329-355 (m)
"""
from __future__ import annotations

import numpy as np

__all__ = ["BRIGHT_RG", "DARK_RG", "FROZEN_TAIR", "MIN_RECORDS", "MIN_UPTAKE", "STAGE",
           "UPTAKE_SHARE", "frozen_daylight_uptake"]

#: The finding's stage, as the warning names it.
STAGE = "input (nee density terms)"
#: Air temperature at and below which a record is frozen weather [°C]: three degrees
#: below freezing, so that a sunlit leaf a few kelvin above the air stays frozen too
#: (leaf-to-air differences of 2-5 K in sunshine, Campbell and Norman 1998, ch. 14 (m)).
FROZEN_TAIR = -3.0
#: Global radiation at and above which a record is bright [W m-2]: about 200 µmol m-2
#: s-1 of PAR (2.1 µmol J-1 of Rg (m)), where a canopy able to fix CO2 would show it,
#: and where the surface heats the air by day (our choice).
BRIGHT_RG = 100.0
#: Global radiation at and below which a record is dark [W m-2] (a pyranometer's night
#: offset and twilight, common practice).
DARK_RG = 5.0
#: Fewest bright and fewest dark frozen records with NEE for a judgement (our choice:
#: about a day of bright half-hours of winter).
MIN_RECORDS = 20
#: Share of the bright frozen records with NEE below 0 that names the flux [1] (our
#: choice: three in four; with NEE a release of a few tenths of µmol m-2 s-1 and a
#: random error of about 0.5 (Richardson et al. 2006 (m)), a frozen canopy's records
#: take up CO2 in fewer than half).
UPTAKE_SHARE = 0.75
#: Median uptake of the bright frozen records below the dark ones' median that names the
#: flux [µmol m-2 s-1]. Argued: overwintering evergreens keep a few per cent of their
#: summer capacity (Öquist and Huner 2003 (m)), a light-saturated summer canopy takes up
#: 20-30 µmol m-2 s-1 (m), so a frozen canopy's uptake stays near 1; trial 27's invented
#: mixed forest, whose evergreen share fixes about 1 µmol m-2 s-1 in bright air at -3 to
#: -5 °C, reaches 0.8-1.0 (not named). The bright records are the warmer ones, whose
#: respiration is the higher, so the bound errs towards silence.
MIN_UPTAKE = 1.5


def frozen_daylight_uptake(nee, rg, tair, names=None) -> str | None:
    """A message where NEE takes up CO2 in most bright records of frozen weather.

    Parameters
    ----------
    nee : array_like
        NEE of each record [µmol m-2 s-1], NaN where missing or rejected.
    rg : array_like
        Global radiation [W m-2].
    tair : array_like
        Air temperature [°C].
    names : dict, optional
        Canonical name -> file column, to name NEE's column in the message.

    Returns
    -------
    str or None
        The warning text; None where fewer than :data:`MIN_RECORDS` bright or dark
        frozen records hold NEE, or where the bright ones take up CO2 in fewer than
        :data:`UPTAKE_SHARE` of them or by a median less than :data:`MIN_UPTAKE` below
        the dark ones' median.

    Notes
    -----
    Frozen records have tair <= :data:`FROZEN_TAIR`; bright ones Rg >=
    :data:`BRIGHT_RG`, dark ones Rg <= :data:`DARK_RG`. The share taking up CO2 must
    also exceed one half by 3 binomial standard errors (sqrt(0.25 / n)), so that a few
    bright records do not decide.

    References
    ----------
    Webb, Pearman and Leuning (1980); Burba et al. (2008); Öquist and Huner (2003) (m).
    """
    nee, rg, tair = (np.asarray(v, dtype=float) for v in (nee, rg, tair))
    with np.errstate(invalid="ignore"):
        frozen = np.isfinite(nee) & (tair <= FROZEN_TAIR)
        bright = frozen & (rg >= BRIGHT_RG)
        dark = frozen & (rg <= DARK_RG)
    if bright.sum() < MIN_RECORDS or dark.sum() < MIN_RECORDS:
        return None
    share = float(np.mean(nee[bright] < 0.0))
    day, night = float(np.median(nee[bright])), float(np.median(nee[dark]))
    if (share < UPTAKE_SHARE or share - 0.5 < 3.0 * np.sqrt(0.25 / bright.sum())
            or night - day < MIN_UPTAKE):
        return None
    column = (names or {}).get("nee", "nee")
    return (f"column {column!r} takes up CO2 in {share:.0%} of the {int(bright.sum())} "
            f"bright records (Rg >= {BRIGHT_RG:g} W m-2) of frozen air (tair <= "
            f"{FROZEN_TAIR:g} °C), median {day:.2f} against {night:.2f} µmol m-2 s-1 in "
            f"the {int(dark.sum())} dark ones: a frozen canopy fixes next to no CO2. "
            "Likely an open-path flux without its density (WPL) terms, whose heated, "
            "thinner air reads as uptake by day (Webb et al. 1980), or an analyser's "
            "self-heating left uncorrected (Burba et al. 2008); the budget is then "
            "biased towards uptake. Check the flux processing's density and heating "
            "corrections")
