"""The form of the respiration–temperature response, as a structural uncertainty.

Both partitioning methods describe respiration by Lloyd & Taylor (1994), whose
temperature sensitivity falls with temperature. Where respiration instead
keeps one Q10 over a wide range of temperature, an E0 set mostly by cold nights
extrapolates the warm season too low in both methods alike, so their
difference cannot reveal it (an independent known-truth trial: a 68° N
site-year with Q10 = 3 gave nighttime Reco −23 % and daytime −15 %, outside
both stated intervals).

:func:`exponential_reco` refits the whole nighttime method (E0 in short
windows, the annual E0, Rref in 4-day windows) with the exponential
(constant-Q10) form instead, on the same night records, by feeding the
Lloyd–Taylor code the temperature at which it is that form
(:func:`fluxpart.responses.exponential_equivalent_temperature`). The two fits
have the same number of parameters, so the night data weigh them by their sums
of squares (:func:`fluxpart.uncertainty.driver_weight`, the BIC weight also
used for the choice of temperature), and
:func:`fluxpart.uncertainty.period_uncertainty` states √w·|ΣΔReco| as a part of
every partitioned flux. The central estimate keeps Lloyd–Taylor, the published
form of both methods.

References
----------
Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
respiration. Functional Ecology 8:315–323. doi:10.2307/2389824

Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.
doi:10.1111/j.1365-2486.2005.001002.x
"""

from __future__ import annotations

import numpy as np

from ..responses import exponential_equivalent_temperature
from .nighttime import partition_nighttime

_DEFAULT_E0_BOUNDS = (30.0, 450.0)   # partition_nighttime's default e0_bounds [K]
_DEFAULT_MIN_RANGE = 5.0             # partition_nighttime's e0_min_temperature_range [K]
#: dT*/dT at the reference temperature: E0 of the exponential fit stands for 2 D² k,
#: so its bounds and fall-back double and a temperature range halves (Notes of
#: :func:`fluxpart.responses.exponential_equivalent_temperature`).
_SCALE = 2.0


def exponential_reco(index, nee_measured, nee_filled, temperature_measured, temperature_filled,
                     is_night, **settings) -> np.ndarray:
    """Nighttime Reco with the exponential (constant-Q10) temperature response.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start of each interval, local standard time.
    nee_measured, nee_filled : array_like
        Measured (u*-filtered) and gap-filled NEE [µmol m-2 s-1].
    temperature_measured, temperature_filled : array_like
        The respiration temperature, measured and gap-filled [°C].
    is_night : array_like of bool
        Night records.
    **settings
        Keyword settings of :func:`fluxpart.partition.nighttime.partition_nighttime`
        as for the central fit; ``e0_bounds`` and ``e0_fallback`` are doubled and
        ``e0_min_temperature_range`` halved, so that the exponential fit spans the
        temperature sensitivity Lloyd–Taylor's E0 range (30–450 K) has at 10 °C
        (Q10 1.10–4.20).

    Returns
    -------
    numpy.ndarray
        Reco per record [µmol m-2 s-1].

    Raises
    ------
    FluxpartError
        As :func:`~fluxpart.partition.nighttime.partition_nighttime` (e.g. no E0).

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.
    """
    scaled = dict(settings)
    low, high = settings.get("e0_bounds", _DEFAULT_E0_BOUNDS)
    scaled["e0_bounds"] = (_SCALE * low, _SCALE * high)
    if settings.get("e0_fallback") is not None:
        scaled["e0_fallback"] = _SCALE * settings["e0_fallback"]
    scaled["e0_min_temperature_range"] = settings.get(
        "e0_min_temperature_range", _DEFAULT_MIN_RANGE) / _SCALE
    result = partition_nighttime(
        index, nee_measured, nee_filled,
        exponential_equivalent_temperature(np.asarray(temperature_measured, dtype=float)),
        exponential_equivalent_temperature(np.asarray(temperature_filled, dtype=float)),
        is_night, **scaled)
    return result.reco
