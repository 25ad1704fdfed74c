"""Canonical variables: names, units, meaning and physically plausible ranges.

Every DataFrame column that enters fluxpart uses one of the names in
:data:`VARIABLES`, in the unit given there. Input files in other units are
converted by :func:`to_canonical`; vapour pressure deficit may be derived from
relative humidity and air temperature by :func:`vpd_from_rh`.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass

import numpy as np

from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS, KELVIN_OFFSET
from .errors import UnitError

__all__ = [
    "PER_INTERVAL_UNITS",
    "PPFD_PER_RG",
    "READER_VARIABLES",
    "REQUIRED",
    "VARIABLES",
    "Variable",
    "reads_as_canonical",
    "saturation_vapour_pressure",
    "to_canonical",
    "unit_spelling",
    "units_for",
    "vpd_from_rh",
]


@dataclass(frozen=True)
class Variable:
    """One canonical input variable.

    Attributes
    ----------
    name : str
        Canonical column name.
    unit : str
        Canonical unit.
    description : str
        Meaning, with sign convention where one applies.
    minimum, maximum : float
        Physically plausible range in the canonical unit. Values outside it are
        rejected by screening; values far outside it for much of a file point to a
        unit mix-up and stop the reader.
    required : bool
        Whether a site file must provide it (``vpd`` may instead be derived from
        ``rh`` and ``tair``).
    """

    name: str
    unit: str
    description: str
    minimum: float
    maximum: float
    required: bool


# Plausible ranges: our own choices, set wide enough for any ecosystem on Earth
# and narrow enough to catch unit mix-ups. NEE: the largest half-hourly uptake
# reported for crops is about -70 µmol m-2 s-1 (common practice), so ±100.
# VPD: at most the saturation vapour pressure at the top of the air-temperature range,
# es(60 °C) = 199 hPa (Magnus form of saturation_vapour_pressure): a hot desert afternoon
# (47-50 °C at 5-8 % relative humidity) reaches 100-120 hPa, which the former limit of 100
# refused as VPD in Pa (review, round ten); VPD above saturation at the record's own air
# temperature is caught by fluxpart.unit_checks. Soil temperature: bare desert soil
# reaches 70-80 °C near the surface in summer (the ground surface above 90 °C in Death
# Valley (m)), so a probe at 2-5 cm reads 60-70 °C on summer afternoons; soil in °F or K
# is caught by the soil-against-air check of fluxpart.unit_checks.
VARIABLES: dict[str, Variable] = {
    v.name: v
    for v in (
        Variable("nee", "µmol m-2 s-1",
                 "net ecosystem exchange of CO2, storage-corrected; positive = release "
                 "to the atmosphere", -100.0, 100.0, True),
        Variable("rg", "W m-2", "global (incoming short-wave) radiation", -50.0, 1500.0, True),
        Variable("tair", "°C", "air temperature", -60.0, 60.0, True),
        Variable("vpd", "hPa", "vapour pressure deficit", -1.0, 200.0, True),
        Variable("ustar", "m s-1", "friction velocity", 0.0, 5.0, True),
        Variable("tsoil", "°C", "soil temperature", -50.0, 80.0, False),
        Variable("rh", "%", "relative humidity", 0.0, 110.0, False),
        Variable("nee_flag", "1", "the site's own quality flag; non-zero = reject",
                 -np.inf, np.inf, False),
    )
}

#: Names a site file must provide (``vpd`` or else ``rh``).
REQUIRED = tuple(name for name, v in VARIABLES.items() if v.required)

#: Variables a site file may map that the reader turns into canonical ones and
#: leaves out of the frame: ``storage`` is added to the turbulent flux mapped as
#: ``nee``; ``ppfd`` becomes ``rg`` (divided by :data:`PPFD_PER_RG`) when no ``rg``
#: is mapped. Ranges: storage is a fraction of the flux (our choice, ±50);
#: PPFD at the surface stays below about 2,500 µmol m-2 s-1 (common practice).
READER_VARIABLES: dict[str, Variable] = {
    **VARIABLES,
    "storage": Variable("storage", "µmol m-2 s-1",
                        "CO2 storage flux below the flux measurement height; positive = "
                        "CO2 accumulating in the air below", -50.0, 50.0, False),
    "ppfd": Variable("ppfd", "µmol m-2 s-1",
                     "incoming photosynthetic photon flux density (400-700 nm)",
                     -20.0, 3000.0, False),
}

#: Photosynthetic photons per joule of global radiation [µmol J-1]: about 46 % of the
#: energy of global radiation lies in 400-700 nm (Britton & Dodd 1976 give 0.45-0.50
#: (m)) and daylight PAR carries 4.57 µmol J-1 (McCree 1972, Agric. Meteorol.
#: 10:443-453 (m)); 0.46 x 4.57 = 2.10. Measured ratios range from about 1.9 to 2.3
#: with cloud and season (Meek et al. 1984, Agron. J. 76:939-945 (m)), so Rg derived
#: from PPFD carries an error of roughly ±10 %.
PPFD_PER_RG = 0.46 * 4.57

#: One langley (thermochemical calorie per cm2) per minute in W m-2: 4.184 J cal-1 x
#: 1e4 cm2 m-2 / 60 s min-1 (NIST SP 811, appendix B (m)); old actinograph records of
#: global radiation are in it (a solar constant near 1.95 ly min-1 (m)).
LANGLEY_PER_MINUTE = 4.184 * 1e4 / 60.0

#: Hectopascals per pound-force per square inch and per conventional inch of mercury
#: (NIST SP 811 (2008), appendix B.8: 1 psi = 6.894757E+03 Pa, 1 inHg = 3.386389E+03 Pa
#: (m)); some North American greenhouse and weather-station loggers write pressures and
#: vapour pressure deficits in them (round layouts49).
HPA_PER_PSI = 68.94757
HPA_PER_INHG = 33.86389

# unit spelling -> (scale, offset) such that canonical = value * scale + offset
_TEMPERATURE = {"°C": (1.0, 0.0), "degC": (1.0, 0.0), "C": (1.0, 0.0),
                "K": (1.0, -KELVIN_OFFSET), "kelvin": (1.0, -KELVIN_OFFSET),
                # degrees Fahrenheit: °C = (°F - 32) x 5/9 (NIST SP 811, appendix B (m))
                "°F": (5.0 / 9.0, -32.0 * 5.0 / 9.0), "degF": (5.0 / 9.0, -32.0 * 5.0 / 9.0),
                # tenths of a degree written as whole numbers (a logger storing integers,
                # 153 for 15.3 °C; round layouts32)
                "0.1 °C": (0.1, 0.0), "0.1 degC": (0.1, 0.0),
                "0.01 °C": (0.01, 0.0), "0.01 degC": (0.01, 0.0)}
_CONVERSIONS: dict[str, dict[str, tuple[float, float]]] = {
    "nee": {"µmol m-2 s-1": (1.0, 0.0), "umol m-2 s-1": (1.0, 0.0),
            "mg CO2 m-2 s-1": (1000.0 / CO2_MOLAR_MASS, 0.0),
            "g C m-2": (1e6 / CARBON_MOLAR_MASS, 0.0),
            # a thousand µmol (SI prefixes), and a mass flux of CO2 in micrograms: one
            # µmol of CO2 weighs CO2_MOLAR_MASS µg (round layouts49)
            "mmol m-2 s-1": (1000.0, 0.0),
            "µg CO2 m-2 s-1": (1.0 / CO2_MOLAR_MASS, 0.0),
            "ug CO2 m-2 s-1": (1.0 / CO2_MOLAR_MASS, 0.0)},
    "rg": {"W m-2": (1.0, 0.0), "W/m2": (1.0, 0.0), "kW m-2": (1000.0, 0.0),
           "MJ m-2": (1e6, 0.0),
           # calories per cm2 and minute, old actinographs' and pyranometer records' unit:
           # the langley is 1 thermochemical cal cm-2 = 4.184 J / 1e-4 m2 = 41,840 J m-2
           # (NIST SP 811, appendix B (m)), so 1 ly min-1 = 41,840 / 60 = 697.33 W m-2
           "cal cm-2 min-1": (LANGLEY_PER_MINUTE, 0.0),
           "ly min-1": (LANGLEY_PER_MINUTE, 0.0)},
    "tair": _TEMPERATURE,
    "tsoil": _TEMPERATURE,
    "vpd": {"hPa": (1.0, 0.0), "mbar": (1.0, 0.0), "kPa": (10.0, 0.0), "Pa": (0.01, 0.0),
            "psi": (HPA_PER_PSI, 0.0), "inHg": (HPA_PER_INHG, 0.0)},
    # centimetres per second: some sonic programs and older records write u* so
    # (1 cm s-1 = 0.01 m s-1, SI; layouts34: refused with no unit to declare)
    # kilometres per hour, the wind unit of some weather-station loggers' units rows:
    # 1 km h-1 = 1000 m / 3600 s = 1/3.6 m s-1 (SI brochure, BIPM 2019, table 8 (m))
    "ustar": {"m s-1": (1.0, 0.0), "m/s": (1.0, 0.0), "cm s-1": (0.01, 0.0),
              "km h-1": (1.0 / 3.6, 0.0)},
    # "percent": the UDUNITS-2 and CF name of %, which fluxpart's own NetCDF and CSVW
    # metadata write (review63: refused as "not a known unit for rh")
    "rh": {"%": (1.0, 0.0), "percent": (1.0, 0.0), "fraction": (100.0, 0.0),
           "1": (100.0, 0.0),
           "0.1 %": (0.1, 0.0)},          # tenths of a percent as whole numbers (layouts32)
    "nee_flag": {"1": (1.0, 0.0)},
    "storage": {},              # the flux's own units, below (leftovers56)
    "ppfd": {"µmol m-2 s-1": (1.0, 0.0), "umol m-2 s-1": (1.0, 0.0)},
}

# the storage term is written beside the flux, in its unit (common practice (m)): every
# unit NEE is read in (layouts49 added mmol and µg CO2 to NEE only; leftovers56)
_CONVERSIONS["storage"] = dict(_CONVERSIONS["nee"])

#: Units of whole numbers counting a tenth or hundredth of the canonical unit (a logger's
#: integer storage; round layouts32) -> the divisor applied
DIVIDED_UNITS = {"0.1 °C": 10.0, "0.1 degC": 10.0, "0.01 °C": 100.0, "0.01 degC": 100.0,
                 "0.1 %": 10.0, "cm s-1": 100.0, "km h-1": 3.6}

#: Units of an amount per record interval rather than a rate: (variable, unit) whose
#: scale is divided by the interval in seconds (``"MJ m-2"`` of Rg = energy received
#: per record interval).
PER_INTERVAL_UNITS = frozenset({("rg", "MJ m-2"), ("nee", "g C m-2"), ("storage", "g C m-2")})


def units_for(name: str) -> tuple[str, ...]:
    """Return the unit spellings accepted for canonical variable `name`."""
    return tuple(_CONVERSIONS[name])


def reads_as_canonical(name: str, unit: str | None) -> bool:
    """Whether `unit` (``None``: none declared) is a spelling of the canonical unit of
    `name`, whose values the reader keeps as written (scale 1, offset 0, a rate).

    Checks that judge values "read as" the canonical unit apply to every such spelling:
    ``"C"``, ``"degC"`` and ``"°C"`` alike, ``"W/m2"`` as ``"W m-2"``.

    Examples
    --------
    >>> reads_as_canonical("tair", "C"), reads_as_canonical("tair", "K")
    (True, False)
    """
    if unit is None:
        return True
    return (_CONVERSIONS.get(name, {}).get(unit) == (1.0, 0.0)
            and (name, unit) not in PER_INTERVAL_UNITS)


#: Characters typed for the degree sign: the masculine ordinal (Spanish and Portuguese
#: keyboards), the ring above and the superscript zero.
_DEGREE_LOOK_ALIKES = str.maketrans({"\u00ba": "\u00b0", "\u02da": "\u00b0",
                                     "\u2070": "\u00b0"})


def _folded(unit: str) -> str:
    """`unit` with look-alike characters folded: degree-sign look-alikes to the degree
    sign, compatibility forms (NFKC: the micro sign to the Greek mu, superscript digits
    to digits, ℃ to °C) and the minus sign to a hyphen."""
    return unicodedata.normalize("NFKC", unit.translate(_DEGREE_LOOK_ALIKES)).replace(
        "\u2212", "-")


#: A degree word for a temperature scale: "deg C", "Deg C", "degrees C", "Celsius".
_DEGREE_WORD = re.compile(r"^(?:[Dd]eg(?:rees?)?\.?\s*([CF])|(Celsius|Fahrenheit))$",
                          re.IGNORECASE)
#: A period between a unit symbol (or its exponent) and the next symbol: "W.m-2".
_PERIOD_PRODUCT = re.compile(r"(?<=[A-Za-z0-9\u00b5\u03bc])\.(?=[A-Za-z\u00b5\u03bc])")
#: A divisor written with a solidus: "/m2", "/s", "/ m^2".
_SOLIDUS = re.compile(r"\s*/\s*([A-Za-z]+)(\d?)")


def _notation(unit: str) -> str:
    """`unit` in one notation: exponents with a caret (``m^-2``) written ``m-2``, divisors
    with a solidus (``/m2/s``) as negative exponents (``m-2 s-1``), the species of a
    molar flux dropped (``µmol CO2 m-2 s-1``: moles of CO2 are the unit's own), a
    full stop for the product's dot (``W.m-2``), and a degree word (``deg C``, ``Deg C``, ``Celsius``) as the degree sign. These are the
    notations of logger units lines and of the SI brochure (BIPM 2019, section 5.4.6:
    ``m/s``, ``m s-1`` and ``m·s⁻¹`` write one unit (m))."""
    text = unit.strip()
    degree = _DEGREE_WORD.match(text)
    if degree:
        letter = (degree.group(1) or degree.group(2)[0]).upper()
        return "\u00b0" + letter
    text = text.replace("^", "").replace("\u00b7", " ").replace("\u22c5", " ")
    # a full stop for the product's dot ("W.m-2", "µmol.m-2.s-1"), as typewriters and
    # many logger units lines write the half-high dot: a period between two symbols
    text = _PERIOD_PRODUCT.sub(" ", text)
    text = re.sub(r"(mol)\s+CO2\b", r"\1", text)
    text = _SOLIDUS.sub(lambda match: f" {match.group(1)}-{match.group(2) or '1'}", text)
    return " ".join(text.split())


def same_notation(unit: str, other: str) -> bool:
    """True where `unit` and `other` write one unit in two notations or look-alike
    characters ("umol/m2/s" and "umol m-2 s-1", "W/m^2" and "W m-2", "deg C" and "°C"),
    whatever variable they belong to; text equal as written is one unit too.

    Examples
    --------
    >>> same_notation("umol/m2/s", "umol m-2 s-1"), same_notation("W m-2", "kW m-2")
    (True, False)
    """
    return unit == other or _notation(_folded(unit)) == _notation(_folded(other))


def unit_spelling(name: str, unit: str) -> str:
    """The accepted spelling of `unit` for variable `name`, where they differ only in
    look-alike characters or notation; else `unit` unchanged.

    A unit copied from a file header or a paper is often typed with the Greek mu (U+03BC)
    for the micro sign (U+00B5), which a font shows alike, with superscripts ("W m⁻²"),
    or with the masculine ordinal (U+00BA) for the degree sign ("ºC"); each names the
    same unit. So do the notations :func:`_notation` folds ("umol/m^2/s", "W/m^2",
    "Deg C", "µmol CO2 m-2 s-1").

    Examples
    --------
    >>> unit_spelling("rg", "W m\u207b\u00b2")
    'W m-2'
    >>> unit_spelling("nee", "\u03bcmol m-2 s-1") == "\u00b5mol m-2 s-1"
    True
    """
    table = _CONVERSIONS.get(name, {})
    if not isinstance(unit, str) or unit in table:
        return unit
    same = [spelling for spelling in table if _folded(spelling) == _folded(unit)]
    if not same:
        same = [spelling for spelling in table
                if _notation(_folded(spelling)) == _notation(_folded(unit))]
    return same[0] if same else unit


def same_unit_key(name: str, cell: str):
    """A key that two cells of a units line share where they write one unit of `name`.

    Cells are compared as :func:`unit_spelling` reads them, after undoing UTF-8 text
    decoded as a single-byte encoding ("Â°C" for "°C": each non-ASCII character read as
    two bytes, as when a logger program's update changed the file encoding): spellings
    of one unit with the same conversion ("umol/m2/s" and "µmol m-2 s-1", "C" and "°C")
    get one key. Anything else (a statistic such as "Avg", an unknown unit) is its own
    text.

    Examples
    --------
    >>> same_unit_key("tair", "\u00c2\u00b0C") == same_unit_key("tair", "degC")
    True
    >>> same_unit_key("vpd", "kPa") == same_unit_key("vpd", "hPa")
    False
    """
    text = cell.strip() if isinstance(cell, str) else cell
    if isinstance(text, str):
        for single_byte in ("cp1252", "latin-1"):
            try:
                text = text.encode(single_byte).decode("utf-8")
                break
            except (UnicodeEncodeError, UnicodeDecodeError):
                continue
    spelled = unit_spelling(name, text)
    conversion = _CONVERSIONS.get(name, {}).get(spelled)
    if conversion is None:
        return ("text", text)
    return ("unit", conversion, (name, spelled) in PER_INTERVAL_UNITS)


def to_canonical(values, name: str, unit: str | None = None, *,
                 interval_minutes: float | None = None) -> np.ndarray:
    """Convert `values` of variable `name` from `unit` to its canonical unit.

    Parameters
    ----------
    values : array_like
        Values in `unit`.
    name : str
        Canonical variable name, a key of :data:`VARIABLES`.
    unit : str, optional
        Unit of `values`; ``None`` means the canonical unit already.
    interval_minutes : float, optional
        Record interval [minutes]; needed for an amount per interval
        (:data:`PER_INTERVAL_UNITS`, e.g. Rg in ``"MJ m-2"``).

    Returns
    -------
    numpy.ndarray
        Float values in the canonical unit of `name`.

    Raises
    ------
    UnitError
        If `unit` is not known for `name`; the message lists the accepted units.
        If `unit` is an amount per interval and `interval_minutes` is not given.

    Examples
    --------
    >>> to_canonical([1.2], "vpd", "kPa")
    array([12.])
    """
    values = np.asarray(values, dtype=float)
    if unit is None:
        return values.copy()
    table = _CONVERSIONS.get(name)
    if table is None:
        raise UnitError(f"[input.units] {name}: \"{name}\" is not a canonical variable; "
                        f"valid names: {', '.join(sorted(_CONVERSIONS))}")
    if unit not in table:
        known = ", ".join('"' + str(u) + '"' for u in table)
        raise UnitError(f"[input.units] {name} = \"{unit}\" is not a known unit for {name}; "
                        f"use one of: {known}")
    scale, offset = table[unit]
    if (name, unit) in PER_INTERVAL_UNITS:
        if interval_minutes is None:
            raise UnitError(f"[input.units] {name} = \"{unit}\" is an amount per record "
                            "interval; the record interval is needed to convert it")
        scale = scale / (float(interval_minutes) * 60.0)
    with np.errstate(over="ignore", invalid="ignore"):
        if unit in DIVIDED_UNITS:
            # whole numbers of tenths or hundredths divided, not multiplied by 0.1: 153 /
            # 10 is the double nearest 15.3, as the text "15.3" reads (IEEE 754 division
            # is correctly rounded), where 153 * 0.1 may be one unit in the last place off
            return values / DIVIDED_UNITS[unit]
        return values * scale + offset


def saturation_vapour_pressure(tair):
    """Saturation vapour pressure over water.

    Parameters
    ----------
    tair : array_like
        Air temperature [°C].

    Returns
    -------
    numpy.ndarray
        Saturation vapour pressure [hPa].

    Notes
    -----
    Magnus form with the coefficients of Alduchov & Eskridge (1996), their
    eq. 21 (AERK): ``es = 6.1094 exp(17.625 T / (T + 243.04))``, accurate to
    better than 0.4 % between -40 and 50 °C.

    References
    ----------
    Alduchov, O. A. & Eskridge, R. E. (1996). Improved Magnus form approximation of
    saturation vapor pressure. Journal of Applied Meteorology 35:601–609.
    doi:10.1175/1520-0450(1996)035<0601:IMFAOS>2.0.CO;2
    """
    tair = np.asarray(tair, dtype=float)
    return 6.1094 * np.exp(17.625 * tair / (tair + 243.04))


def saturation_temperature(vapour_pressure):
    """The temperature at which the saturation vapour pressure is the one given.

    Parameters
    ----------
    vapour_pressure : array_like
        Saturation vapour pressure [hPa] (positive).

    Returns
    -------
    numpy.ndarray
        Temperature [°C], the inverse of :func:`saturation_vapour_pressure`:
        ``243.04 g / (17.625 - g)`` with ``g = ln(e / 6.1094)``; NaN or inf where the
        pressure is not positive (no warning raised). With ``e = VPD / (1 - RH / 100)``
        it is the temperature a humidity probe's VPD and RH imply; with the actual
        vapour pressure, the dew point.

    References
    ----------
    Alduchov, O. A. & Eskridge, R. E. (1996). Improved Magnus form approximation of
    saturation vapor pressure. Journal of Applied Meteorology 35:601–609, eq. 21.
    """
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        g = np.log(np.asarray(vapour_pressure, dtype=float) / 6.1094)
        return 243.04 * g / (17.625 - g)


def vpd_from_rh(rh, tair):
    """Vapour pressure deficit from relative humidity and air temperature.

    Parameters
    ----------
    rh : array_like
        Relative humidity [%].
    tair : array_like
        Air temperature [°C].

    Returns
    -------
    numpy.ndarray
        Vapour pressure deficit [hPa], ``es(T) (1 - rh/100)`` with `es` from
        :func:`saturation_vapour_pressure`; humidity above 100 % gives 0 and below 0 % is taken as 0 %.

    References
    ----------
    Alduchov, O. A. & Eskridge, R. E. (1996). Journal of Applied Meteorology
    35:601–609.
    """
    rh = np.clip(np.asarray(rh, dtype=float), 0.0, 100.0)
    return saturation_vapour_pressure(tair) * (1.0 - rh / 100.0)
