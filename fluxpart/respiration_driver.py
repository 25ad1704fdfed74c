"""The respiration temperature of a run: ``respiration_driver = "auto"`` resolved.

The choice of :func:`fluxpart.partition.temperature_choice.choose_respiration_temperature`
on the u*-filtered night NEE (with the nearest year's E0 only where the plain fits fail,
:func:`fluxpart.method_failure.first_fit`), and the warning of a set temperature the
night data reject.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from . import method_failure, screening
from .errors import FluxpartError, InsufficientDataError
from .method_settings import damped_delay, nighttime_settings
from .partition import temperature_choice


def chosen_temperature(driver, index, screened, is_night, threshold, config, sun_up=None):
    """Resolve ``respiration_driver = "auto"`` on the u*-filtered night NEE (else as set).

    Parameters
    ----------
    driver : str
        ``"auto"``, ``"tair"`` or ``"tsoil"``.
    index : pandas.DatetimeIndex
        The record's stamps.
    screened : pandas.DataFrame
        The screened record (``nee`` [µmol m-2 s-1], ``ustar`` [m s-1], ``tair`` and
        ``tsoil`` [°C], ``rg`` [W m-2]).
    is_night : numpy.ndarray of bool
        The night mask.
    threshold : numpy.ndarray
        The central run's u* threshold of each record [m s-1].
    config : Config
        Settings of the nighttime method.
    sun_up : numpy.ndarray of bool, optional
        The sun above the horizon in each record (``night_fit_records = "sun_down"``).

    Returns
    -------
    driver : str
        The temperature chosen (or as set).
    choice : fluxpart.partition.temperature_choice.TemperatureChoice or None
        The choice and its fits; None where the driver was set; air temperature with
        the nighttime fit's error as its reason where no fit could be compared.

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
    Functional Ecology 8(3):315-323. doi:10.2307/2389824

    Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics
    6(2):461-464. doi:10.1214/aos/1176344136 (the BIC the choice compares)
    """
    if driver != "auto":
        return driver, None
    too_calm = screening.low_ustar(screened["ustar"].to_numpy(), is_night, threshold)
    try:
        # a year without an E0 of its own takes the nearest year's only where the plain
        # fits fail (method_failure.first_fit)
        choice = method_failure.first_fit(
            lambda nearest_year: temperature_choice.choose_respiration_temperature(
                index, np.where(too_calm, np.nan, screened["nee"].to_numpy()),
                screened["tair"].to_numpy(),
                screened["tsoil"].to_numpy() if "tsoil" in screened.columns else None,
                is_night, damped_delay=damped_delay(config),
                **nighttime_settings(config, screened["rg"].to_numpy(dtype=float),
                                               index, nearest_year, sun_up)))
    except InsufficientDataError as error:
        # the nighttime method cannot fit on air temperature: the run's own fit says why
        # (and the run goes on with the daytime method where that one fits)
        return "tair", temperature_choice.TemperatureChoice(
            "tair", f"no nighttime fit to compare ({error})", {"tair": np.nan, "tsoil": np.nan},
            0, np.nan, np.nan)
    return choice.driver, choice


def forced_temperature_note(driver, index, screened, is_night, threshold, config,
                            sun_up=None):
    """The warning of a set respiration temperature the night data reject, or None.

    Parameters
    ----------
    driver, index, screened, is_night, threshold, config, sun_up
        As for :func:`chosen_temperature`.

    Returns
    -------
    str or None
        :func:`fluxpart.partition.temperature_choice.forced_driver_note` on what
        ``"auto"`` would choose; None for ``"auto"``, a record without soil
        temperature, or where the choice cannot be fitted.

    References
    ----------
    Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics
    6(2):461-464. doi:10.1214/aos/1176344136
    """
    if driver == "auto" or "tsoil" not in screened.columns:
        return None
    try:
        _, choice = chosen_temperature("auto", index, screened, is_night, threshold, config,
                                       sun_up)
    except FluxpartError:
        return None
    return temperature_choice.forced_driver_note(driver, choice)


class DriverDecision(NamedTuple):
    """The respiration temperature of a run and what its choice fitted.

    Attributes
    ----------
    temperature : str
        ``"tair"`` or ``"tsoil"``.
    choice : fluxpart.partition.temperature_choice.TemperatureChoice or None
        None where ``respiration_driver`` was set.
    delay : int
        Records by which the respiration temperature is delayed.
    night_fits : dict
        The choice's nighttime fits on the central measured NEE, by driver, where the
        measured temperature is the screened series (reused, not fitted again).
    warnings : list of str
        A set temperature the night data reject; a soil temperature not weighed.
    """

    temperature: str
    choice: object
    delay: int
    night_fits: dict
    warnings: list


def resolve(driver, frame, screened, is_night, threshold, config,
            sun_up=None) -> DriverDecision:
    """The run's respiration temperature (``"auto"`` chosen on the night NEE) and its fits.

    Parameters
    ----------
    driver : str
        ``respiration_driver`` as set.
    frame : pandas.DataFrame
        The prepared record.
    screened : pandas.DataFrame
        The screened record.
    is_night : numpy.ndarray of bool
        The night mask.
    threshold : numpy.ndarray
        The central run's u* threshold per record [m s-1].
    config : Config
        Settings.
    sun_up : numpy.ndarray of bool, optional
        The sun above the horizon in each record (``night_fit_records = "sun_down"``).

    Returns
    -------
    DriverDecision

    References
    ----------
    Lloyd, J. and Taylor, J. A. (1994). On the temperature dependence of soil
    respiration. Functional Ecology 8, 315-323.
    """
    warnings = []
    forced = forced_temperature_note(driver, frame.index, screened, is_night, threshold, config,
                                     sun_up)
    warnings.extend([forced] if forced else [])
    temperature, choice = chosen_temperature(driver, frame.index, screened, is_night,
                                             threshold, config, sun_up)
    if (choice is not None and not np.isfinite(choice.tsoil_weight) and "tsoil" in frame.columns
            and np.isfinite(frame["tsoil"].to_numpy(dtype=float)).any()):
        # soil temperature is in the record but could not be weighed against air temperature
        warnings.append(f"respiration temperature: {temperature} used, as {choice.reason}; the "
                        "part of the Reco and GPP uncertainty from the choice of temperature is "
                        "not quantified (reco_uncertainty_temperature_driver NaN)")
    # the choice fitted each candidate on the central run's measured NEE: its fits are
    # reused where the measured temperature is the same series
    delay = 0 if choice is None else choice.delay_records
    night_fits = {} if choice is None else {
        name: fit for name, fit in choice.fits.items()
        if np.array_equal(frame[name.removesuffix("_undelayed")].to_numpy(dtype=float),
                          screened[name.removesuffix("_undelayed")].to_numpy(dtype=float),
                          equal_nan=True)
        or name == temperature}
    return DriverDecision(temperature, choice, delay, night_fits, warnings)
