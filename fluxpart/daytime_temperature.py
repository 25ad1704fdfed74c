"""The daytime method's respiration temperature: the run's, or the air's.

The daytime method models daytime NEE as Reco minus a light response, with Reco a
Lloyd–Taylor function of a temperature. Lasslop et al. (2010) drive that Reco with AIR
temperature. fluxpart drives it with the run's respiration temperature
(:mod:`fluxpart.partition.temperature_choice`), which the night records choose and which
may be the soil's. Night respiration is the sum of a soil part (heterotrophic and root
respiration, on soil temperature) and a canopy part (leaves and stems, on air
temperature); at night air and soil are close, by day the air warms well above the soil,
so the canopy part rises through the day as the air does and a soil-driven daytime Reco
misses that rise. The night records cannot show it (both fits describe the nights alike),
the daytime records can: the daytime method fitted on air temperature takes the daytime
rise into its Reco term, as Lasslop et al. (2010) fit it.

With ``daytime_temperature = "air"`` the daytime method of a run that drives Reco by
soil temperature is fitted on air temperature; with ``"mixture"`` only where the nights
show a mixture of the two temperatures (:func:`fluxpart.driver_mixture.mixture_shown`);
``"driver"`` (the default) keeps the run's temperature. The nighttime method is never
changed. The air fit is the one the daytime evidence already makes
(:func:`fluxpart.central_run.daytime_driver_evidence`); every u* run takes the same
per-record shift as the central run, as the light shape's average does
(:mod:`fluxpart.partition.light_shape`), so the runs' spread stays the threshold's alone.

References
----------
Lasslop, G., Reichstein, M., Papale, D., Richardson, A. D., Arneth, A., Barr, A., Stoy,
P. & Wohlfahrt, G. (2010). Separation of net ecosystem exchange into assimilation and
respiration using a light response curve approach: critical issues and global
evaluation. Global Change Biology 16, 187–208 (the daytime Reco on air temperature).

Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
Functional Ecology 8, 315–323.
"""
from __future__ import annotations

import dataclasses

import numpy as np

from . import driver_mixture

__all__ = ["CHOICES", "DRIVER", "AIR", "MIXTURE", "takes_air", "shifted_day", "night_shown"]

#: The run's respiration temperature (0.38.0 and before).
DRIVER = "driver"
#: Air temperature wherever the run drives Reco by soil temperature.
AIR = "air"
#: Air temperature where the run drives Reco by soil temperature and the nights show a
#: mixture of the two temperatures.
MIXTURE = "mixture"
CHOICES = (DRIVER, AIR, MIXTURE)


def takes_air(setting: str, temperature: str, shown: bool | None) -> bool:
    """Whether the daytime method is fitted on air temperature.

    Parameters
    ----------
    setting : str
        ``daytime_temperature``: one of :data:`CHOICES`.
    temperature : str
        The run's respiration temperature, ``"tair"`` or ``"tsoil"``.
    shown : bool or None
        Whether the nights show a mixture (:func:`night_shown`); None: not tested.

    Returns
    -------
    bool
        True where the run drives Reco by soil temperature and the setting is
        :data:`AIR`, or :data:`MIXTURE` with `shown` True.
    """
    if setting not in CHOICES:
        raise ValueError(f"daytime_temperature: expected one of {CHOICES}, got {setting!r}")
    if temperature != "tsoil" or setting == DRIVER:
        return False
    return setting == AIR or bool(shown)


def night_shown(nee_measured, is_night, reco_central, reco_air, index) -> bool:
    """Whether the nights show a mixture of the soil-driven and the air-driven Reco.

    Parameters
    ----------
    nee_measured : array_like
        Measured NEE kept by screening [µmol m-2 s-1]; NaN elsewhere.
    is_night : array_like of bool
    reco_central, reco_air : array_like
        Nighttime Reco on the run's (soil) temperature and on air temperature
        [µmol m-2 s-1].
    index : array_like of datetime64
        Record times (local).

    Returns
    -------
    bool
        :func:`fluxpart.driver_mixture.mixture_shown` of the air share and its
        unclipped draws over resampled nights (the test of ``driver_day_prior =
        "mixture"``).
    """
    share = driver_mixture.mixture_share(nee_measured, is_night, reco_central, reco_air)
    draws = driver_mixture.mixture_share_draws(nee_measured, is_night, reco_central, reco_air,
                                               index, clip=False)
    return driver_mixture.mixture_shown(share, draws)


def shifted_day(day, central_day, air_day):
    """A u* run's daytime result moved by the central run's shift from soil to air.

    Parameters
    ----------
    day : fluxpart.partition.daytime.DaytimeResult
        A u* run's daytime partitioning on the run's temperature.
    central_day, air_day : fluxpart.partition.daytime.DaytimeResult
        The central run's daytime partitioning on the run's temperature and on air
        temperature.

    Returns
    -------
    fluxpart.partition.daytime.DaytimeResult
        `air_day` itself for the central run; for another run a copy whose ``gpp``,
        ``reco``, ``gpp_before`` and ``gpp_after`` carry the central shift (air − run's
        temperature) per record [µmol m-2 s-1].
    """
    if day is central_day:
        return air_day
    gpp_shift = np.asarray(air_day.gpp, dtype=float) - np.asarray(central_day.gpp, dtype=float)
    reco_shift = np.asarray(air_day.reco, dtype=float) - np.asarray(central_day.reco,
                                                                    dtype=float)
    sides = {name: getattr(day, name) + gpp_shift for name in ("gpp_before", "gpp_after")
             if getattr(day, name) is not None}
    return dataclasses.replace(day, gpp=day.gpp + gpp_shift, reco=day.reco + reco_shift,
                               **sides)
