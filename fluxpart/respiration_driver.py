"""The respiration temperature of a run: ``respiration_driver = "auto"`` resolved.

The choice of :func:`fluxpart.partition.temperature_choice.choose_respiration_temperature`
on the u*-filtered night NEE (with the nearest year's E0 only where the plain fits fail,
:func:`fluxpart.method_failure.first_fit`), and the warning of a set temperature the
night data reject.
"""

from __future__ import annotations

import numpy as np

from . import method_failure, screening
from .errors import FluxpartError, InsufficientDataError
from .method_settings import nighttime_settings
from .partition import temperature_choice


def chosen_temperature(driver, index, screened, is_night, threshold, config):
    """Resolve ``respiration_driver = "auto"`` on the u*-filtered night NEE (else as set)."""
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
                is_night, **nighttime_settings(config, screened["rg"].to_numpy(dtype=float),
                                               index, nearest_year)))
    except InsufficientDataError as error:
        # the nighttime method cannot fit on air temperature: the run's own fit says why
        # (and the run goes on with the daytime method where that one fits)
        return "tair", temperature_choice.TemperatureChoice(
            "tair", f"no nighttime fit to compare ({error})", {"tair": np.nan, "tsoil": np.nan},
            0, np.nan, np.nan)
    return choice.driver, choice


def forced_temperature_note(driver, index, screened, is_night, threshold, config):
    """The warning of a set respiration temperature the night data reject, or None
    (:func:`temperature_choice.forced_driver_note` on what ``"auto"`` would choose)."""
    if driver == "auto" or "tsoil" not in screened.columns:
        return None
    try:
        _, choice = chosen_temperature("auto", index, screened, is_night, threshold, config)
    except FluxpartError:
        return None
    return temperature_choice.forced_driver_note(driver, choice)
