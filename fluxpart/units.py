"""Unit strings of the output tables and the conversions between flux and carbon units.

Two kinds of unit string exist in fluxpart:

- the *display* units of the canonical variables and the text output (``µmol m-2 s-1``,
  ``°C``, ``g C m-2``), written for people;
- the *metadata* units stored with every output column (Parquet field and file metadata,
  NetCDF attributes), written so that a UDUNITS-2 parser reads them correctly:
  ``umol m-2 s-1``, ``degC``, and ``g m-2`` for grams of carbon. UDUNITS-2 reads ``g C m-2``
  as gram·coulomb per square metre and cannot parse ``t CO2 ha-1`` at all, so the
  substance (carbon, CO2) goes into the column description, never into the unit.

:func:`udunits` maps a display unit to its metadata form. The conversions here are the
single place where the carbon and CO2 factors are applied; :mod:`fluxpart.budget`,
:mod:`fluxpart.audit`, :mod:`fluxpart.report`, :mod:`fluxpart.uncertainty` and
:mod:`fluxpart.export` use them.

References
----------
Unidata (2024). UDUNITS-2 units database and grammar (common-practice parser of the CF
conventions). IUPAC/CIAAW conventional atomic weights: C 12.011, O 15.999.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS
from .errors import SpacingError

__all__ = [
    "CARBON_UNIT",
    "CO2_PER_CARBON",
    "FLUX_UNIT",
    "GRAMS_CARBON_PER_UMOL",
    "KG_CARBON_PER_UMOL",
    "METADATA_CARBON_UNIT",
    "METADATA_FLUX_UNIT",
    "METADATA_TONNES_PER_HECTARE",
    "T_CO2_HA_PER_G_C_M2",
    "display_unit",
    "flux_to_carbon",
    "interval_seconds",
    "udunits",
]

#: Display unit of fluxes (canonical NEE, GPP, Reco) [µmol CO2 m-2 s-1].
FLUX_UNIT = "µmol m-2 s-1"
#: Display unit of carbon sums per period [g C m-2].
CARBON_UNIT = "g C m-2"

#: Metadata (UDUNITS-2) unit of fluxes; the substance, CO2, is named in the description.
METADATA_FLUX_UNIT = "umol m-2 s-1"
#: Metadata (UDUNITS-2) unit of carbon sums; "carbon" is named in the description.
METADATA_CARBON_UNIT = "g m-2"
#: Metadata (UDUNITS-2) unit of tonnes of CO2 per hectare; "CO2" is in the description.
METADATA_TONNES_PER_HECTARE = "t ha-1"

#: Grams of carbon per micromole of CO2 (one C atom per molecule) [g µmol-1]:
#: 12.011 g mol-1 x 1e-6 mol µmol-1 (IUPAC conventional atomic weight of carbon).
GRAMS_CARBON_PER_UMOL = CARBON_MOLAR_MASS * 1e-6
#: Kilograms of carbon per micromole of CO2 [kg µmol-1] (the CF flux unit is kg m-2 s-1).
KG_CARBON_PER_UMOL = CARBON_MOLAR_MASS * 1e-9
#: Mass of CO2 per mass of carbon [1]: 44.009 / 12.011 (IUPAC conventional weights).
CO2_PER_CARBON = CO2_MOLAR_MASS / CARBON_MOLAR_MASS
#: t CO2 ha-1 per g C m-2 [1]: x 44.009/12.011 (C -> CO2) x 1e4 m2 ha-1 x 1e-6 t g-1.
T_CO2_HA_PER_G_C_M2 = CO2_PER_CARBON * 1e-2

_MINUTES_PER_DAY = 1440

#: Display unit -> UDUNITS-2 unit. Units not listed are already UDUNITS-2 strings.
_METADATA_UNITS = {
    FLUX_UNIT: METADATA_FLUX_UNIT,
    CARBON_UNIT: METADATA_CARBON_UNIT,
    "t CO2 ha-1": METADATA_TONNES_PER_HECTARE,
    "°C": "degC",
    "degrees": "degree",
    "days": "day",
    "µmol J-1": "umol J-1",
    "%": "percent",
}
_DISPLAY_UNITS = {metadata: display for display, metadata in _METADATA_UNITS.items()}


def udunits(unit: str) -> str:
    """Return the UDUNITS-2 form of a display unit.

    Parameters
    ----------
    unit : str
        A unit as fluxpart displays it, e.g. ``"µmol m-2 s-1"``, ``"g C m-2"``, ``"°C"``;
        ``""`` where none applies (names, timestamps).

    Returns
    -------
    str
        The same unit spelled for UDUNITS-2 (``"umol m-2 s-1"``, ``"g m-2"``, ``"degC"``);
        the substance of a carbon or CO2 unit is dropped and must be stated in the
        column's description. ``""`` stays ``""``.

    Examples
    --------
    >>> udunits("g C m-2")
    'g m-2'
    >>> udunits("m s-1")
    'm s-1'
    """
    return _METADATA_UNITS.get(unit, unit)


def display_unit(unit: str) -> str:
    """Return the display form of a metadata unit (the inverse of :func:`udunits`).

    Every ``g m-2`` column of fluxpart holds grams of carbon and every ``t ha-1``
    column tonnes of CO2, so these get their substance back (``g C m-2``,
    ``t CO2 ha-1``) for people; display units pass unchanged.

    Examples
    --------
    >>> display_unit("g m-2")
    'g C m-2'
    """
    return _DISPLAY_UNITS.get(unit, unit)


def interval_seconds(interval_minutes) -> float:
    """Return the length of a record [s] after checking it.

    Parameters
    ----------
    interval_minutes : int
        Record length [min]; a whole number of minutes that divides a day.

    Raises
    ------
    SpacingError
        If `interval_minutes` is not a positive whole number of minutes dividing a day.
    """
    if (isinstance(interval_minutes, bool)
            or not isinstance(interval_minutes, (int, float, np.integer, np.floating))
            or interval_minutes <= 0 or interval_minutes != int(interval_minutes)
            or _MINUTES_PER_DAY % int(interval_minutes) != 0):
        raise SpacingError(f"interval_minutes = {interval_minutes!r}: expected a whole number "
                           "of minutes that divides a day, e.g. 30 or 60")
    return float(interval_minutes) * 60.0


def flux_to_carbon(values, interval_minutes):
    """Convert CO2 fluxes per record into grams of carbon per record.

    Parameters
    ----------
    values : array_like or pandas.Series
        Flux, each the mean over its record [µmol m-2 s-1].
    interval_minutes : int
        Record length [min], e.g. 30 or 60.

    Returns
    -------
    numpy.ndarray or pandas.Series
        Carbon per record [g C m-2]: ``value x interval seconds x 12.011e-6``; a
        Series (same index) for a Series input. NaN stays NaN.

    Raises
    ------
    SpacingError
        If `interval_minutes` is not a positive whole number of minutes dividing a day.

    Notes
    -----
    One CO2 molecule carries one carbon atom, so µmol CO2 = µmol C; the standard
    atomic weight of carbon is 12.011 g mol-1 (IUPAC conventional value). For
    example 1 µmol m-2 s-1 over 30 min is ``1800 x 12.011e-6 = 0.0216198`` g C m-2.
    """
    factor = interval_seconds(interval_minutes) * GRAMS_CARBON_PER_UMOL
    if isinstance(values, pd.Series):
        return values.astype(float) * factor
    return np.asarray(values, dtype=float) * factor
