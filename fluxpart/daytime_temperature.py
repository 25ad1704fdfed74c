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
soil temperature is fitted on air temperature; with ``"average"`` its GPP and Reco are the
average of the fits on soil and on air temperature with equal weights, the equal prior of
model averaging (Burnham & Anderson 2002, ch. 4 (m)) that ``driver_day_prior`` gives the
daytime records where the nights show a mixture: neither single-temperature fit is true
where a soil part and a canopy part respire; ``"driver"`` (the default) keeps the run's
temperature; ``"mixture"`` averages them only where the nights also show a mixture of
the two temperatures (:func:`night_shown`, the test of ``driver_day_prior = "mixture"``).
The nighttime method is never changed. The air fit is the one the daytime
evidence already makes (:func:`fluxpart.central_run.daytime_driver_evidence`); every u*
run takes the same per-record shift as the central run, as the light shape's average does
(:mod:`fluxpart.partition.light_shape`), so the runs' spread stays the threshold's alone.

References
----------
Lasslop, G., Reichstein, M., Papale, D., Richardson, A. D., Arneth, A., Barr, A., Stoy,
P. & Wohlfahrt, G. (2010). Separation of net ecosystem exchange into assimilation and
respiration using a light response curve approach: critical issues and global
evaluation. Global Change Biology 16, 187–208 (the daytime Reco on air temperature).

Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
Functional Ecology 8, 315–323.

Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel Inference, 2nd
ed. Springer (m).
"""
from __future__ import annotations

import dataclasses

import numpy as np

from . import driver_mixture

__all__ = ["CHOICES", "DRIVER", "AIR", "AVERAGE", "MIXTURE", "air_weight", "night_shown",
           "night_share", "shifted_day", "unchanged_note"]

#: The run's respiration temperature (0.38.0 and before).
DRIVER = "driver"
#: Air temperature wherever the run drives Reco by soil temperature.
AIR = "air"
#: The equal-weight average of the fits on soil and on air temperature wherever the run
#: drives Reco by soil temperature.
AVERAGE = "average"
#: :data:`AVERAGE` only where the nights also show a mixture of the two temperatures.
MIXTURE = "mixture"
CHOICES = (DRIVER, AIR, AVERAGE, MIXTURE)


def air_weight(setting: str, temperature: str, shown: bool | None = None) -> float:
    """The weight of the daytime method's fit on air temperature.

    Parameters
    ----------
    setting : str
        ``daytime_temperature``: one of :data:`CHOICES`.
    temperature : str
        The run's respiration temperature, ``"tair"`` or ``"tsoil"``.
    shown : bool or None, optional
        Whether the nights show a mixture (:func:`night_shown`); None: not tested.

    Returns
    -------
    float
        0 for :data:`DRIVER` or a run on air temperature; where the run reads the soil
        1 for :data:`AIR`, 1/2 for :data:`AVERAGE`, and 1/2 for :data:`MIXTURE` where
        `shown` is True (0 elsewhere) [1].
    """
    if setting not in CHOICES:
        raise ValueError(f"daytime_temperature: expected one of {CHOICES}, got {setting!r}")
    if temperature != "tsoil" or setting == DRIVER:
        return 0.0
    if setting == MIXTURE:
        return 0.5 if shown else 0.0
    return 1.0 if setting == AIR else 0.5


def unchanged_note(setting: str, temperature: str, fitted: bool,
                   shown: bool | None = None) -> str:
    """Why a set ``daytime_temperature`` left the daytime method on the run's
    temperature, or '' where it acted (or is the default).

    A result records the setting it was run with; without this note it could not tell
    that the setting changed nothing (a run that drives Reco by air temperature, chosen
    by ``respiration_driver = "auto"`` or forced, or with no soil temperature at all).

    Parameters
    ----------
    setting : str
        ``daytime_temperature``: one of :data:`CHOICES`.
    temperature : str
        The run's respiration temperature, ``"tair"`` or ``"tsoil"``.
    fitted : bool
        Whether the daytime method was fitted on air temperature too
        (:func:`fluxpart.central_run.daytime_driver_evidence`).
    shown : bool or None, optional
        Whether the nights show a mixture (:func:`night_shown`); None: not tested.

    Returns
    -------
    str
        A warning naming the setting and why it changed nothing; '' otherwise.
    """
    if setting == DRIVER:
        return ""
    where = f'[processing] daytime_temperature = "{setting}" changed nothing in this run'
    if temperature != "tsoil":
        return (f"{where}: it acts only where Reco is driven by soil temperature, and this "
                "run drives it by air temperature (provenance.respiration_driver), on which "
                "the daytime method's Reco already rests")
    if not fitted:
        return (f"{where}: the daytime method could not be fitted on air temperature (a "
                "method failed or air temperature is missing), so it keeps soil temperature")
    if setting == MIXTURE and not shown:
        return (f"{where}: the night records show no mixture of soil and air temperature, so "
                'the daytime method keeps soil temperature, as with "driver"')
    return ""


def night_shown(nee_measured, is_night, reco_central, reco_air, index,
                test: str = "two_sided") -> bool:
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
    test : str, optional
        ``"two_sided"`` (default) or ``"one_sided"``, the ``mixture_test`` setting
        (:func:`fluxpart.driver_mixture.critical_value`).

    Returns
    -------
    bool
        :func:`fluxpart.driver_mixture.mixture_shown` of the air share and its unclipped
        draws over resampled nights: the test of ``driver_day_prior = "mixture"``.
    """
    return driver_mixture.mixture_shown(
        *night_share(nee_measured, is_night, reco_central, reco_air, index),
        driver_mixture.critical_value(test))


def night_share(nee_measured, is_night, reco_central, reco_air, index) -> tuple:
    """The air share in the night's best mixture and its draws over resampled nights.

    Parameters
    ----------
    nee_measured, is_night, reco_central, reco_air, index
        As for :func:`night_shown`.

    Returns
    -------
    share : float
        :func:`fluxpart.driver_mixture.mixture_share` [1].
    draws : numpy.ndarray
        :func:`fluxpart.driver_mixture.mixture_share_draws`, unclipped [1]: with the share,
        what :func:`fluxpart.driver_mixture.mixture_shown` tests.
    """
    share = driver_mixture.mixture_share(nee_measured, is_night, reco_central, reco_air)
    draws = driver_mixture.mixture_share_draws(nee_measured, is_night, reco_central, reco_air,
                                               index, clip=False)
    return share, draws


def shifted_day(day, central_day, air_day, weight: float):
    """A u* run's daytime result moved by the central run's weighted shift to air.

    Parameters
    ----------
    day : fluxpart.partition.daytime.DaytimeResult
        A u* run's daytime partitioning on the run's temperature.
    central_day, air_day : fluxpart.partition.daytime.DaytimeResult
        The central run's daytime partitioning on the run's temperature and on air
        temperature.
    weight : float
        The air fit's weight (:func:`air_weight`) [1].

    Returns
    -------
    fluxpart.partition.daytime.DaytimeResult
        `air_day` itself for the central run at weight 1; otherwise a copy whose
        ``gpp``, ``reco``, ``gpp_before`` and ``gpp_after`` carry `weight` times the
        central shift (air − run's temperature) per record [µmol m-2 s-1] (the window
        table stays the run's own).
    """
    if day is central_day and weight == 1.0:
        return air_day
    gpp_shift = weight * (np.asarray(air_day.gpp, dtype=float)
                          - np.asarray(central_day.gpp, dtype=float))
    reco_shift = weight * (np.asarray(air_day.reco, dtype=float)
                           - np.asarray(central_day.reco, dtype=float))
    sides = {name: getattr(day, name) + gpp_shift for name in ("gpp_before", "gpp_after")
             if getattr(day, name) is not None}
    return dataclasses.replace(day, gpp=day.gpp + gpp_shift, reco=day.reco + reco_shift,
                               **sides)
