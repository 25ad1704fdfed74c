"""A CO2 flux unit that a file writes and the reader cannot convert, named with its factor.

A column of NEE (or storage) labelled "g CO2 m-2 d-1", "gC/m2/d", "mmol m-2 s-1" or
"µmol m-2 h-1" by its name or by a units line was read as µmol m-2 s-1 without a word:
the reader judges only the units it knows (:func:`fluxpart.io._labelled_unit_warnings`),
and the values of most of these units lie in the plausible range (g CO2 m-2 d-1 is 3.80
times µmol m-2 s-1: on the invented grassland example 14 values beyond [-100, 100], and
every flux and budget 3.8 times too large, annual NEE -241.7 -> -918.4 g C m-2). The
file gives the flux no other absolute scale: round mistakes36 measured the light
response's initial slope against the photochemical maximum and found no bound that
names the factor without naming real sites (tests/benchmarks/bench_nee_scale.py). The
label itself is that scale: an amount of CO2 or carbon per square metre per unit of
time converts to µmol m-2 s-1 by a factor that is pure arithmetic.
"""

from __future__ import annotations

import re
import unicodedata

from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS

__all__ = ["rate_factor", "unreadable_rate_note"]

#: Molar masses [g mol-1]: CO2 44.009 and C 12.011, the reader's own
#: (:mod:`fluxpart.constants`: IUPAC conventional atomic weights, CO2 = 12.011 + 2 x 15.999;
#: 44.01 before leftovers57, so a factor named here and the conversion of a declared unit
#: agree to the bit); "CO2-C" is the carbon of CO2, a mass of C (common practice).
_MOLAR_MASS = {"co2": CO2_MOLAR_MASS, "c": CARBON_MOLAR_MASS, "co2-c": CARBON_MOLAR_MASS}
#: Amount prefixes -> factor to the base unit (SI prefixes, BIPM 2019 (m)).
_PREFIX = {"": 1.0, "k": 1e3, "m": 1e-3, "u": 1e-6, "n": 1e-9}
#: Time bases -> seconds (SI; 1 d = 86,400 s, BIPM 2019 table 8 (m)).
_SECONDS = {"s": 1.0, "sec": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0, "hour": 3600.0,
            "d": 86400.0, "day": 86400.0}

_RATE = re.compile(
    r"^(?P<prefix>[kmun]?)(?P<base>mol|g)"
    r"(?:\s*(?P<species>co2-c|co2|c)\b)?"
    r"\s*(?:/\s*|per\s+|\s)\s*m(?:-2|2)"
    r"\s*(?:/\s*|per\s+|\s)\s*(?P<count>\d+(?:\.\d+)?)?\s*"
    r"(?P<time>sec|s|min|hour|hr|h|day|d)(?:-1)?$")


def _normal(label: str) -> str:
    """`label` lower-cased with one notation: micro as "u", superscripts and carets
    folded ("m⁻²", "m^-2" -> "m-2"), a product dot or full stop as a space."""
    text = unicodedata.normalize("NFKC", label).replace("\u00b5", "u").replace("\u03bc", "u")
    text = text.replace("\u2212", "-").replace("^", "").replace("\u00b7", " ")
    text = re.sub(r"(?<=[a-z0-9])\.(?=[a-z])", " ", text.lower())
    # the species in brackets after the amount ("umol(CO2)", "g (C)"; review40)
    text = re.sub(r"\(\s*(co2-c|co2|c)\s*\)", r" \1", text)
    return " ".join(text.split())


def rate_factor(label) -> float | None:
    """The factor from a CO2 flux unit written as `label` to µmol CO2 m-2 s-1.

    Parameters
    ----------
    label : str
        A unit as a file writes it: an amount (mol, mmol, µmol or umol; g, mg, µg or
        kg of CO2 or of C), per square metre, per second, minute, hour or day, in the
        notations of logger units lines ("g CO2 m-2 d-1", "gC/m2/d", "mmol m^-2 s^-1",
        "µmol.m-2.h-1"); the species may be bracketed ("umol(CO2)") or written "CO2-C"
        (a mass of carbon), and the time base may carry a count ("gC m-2 30min-1": per
        30 minutes).

    Returns
    -------
    float or None
        Values in `label` times this factor are µmol CO2 m-2 s-1 [µmol m-2 s-1 per unit
        of `label`]; None where `label` is no such unit (a mass without its species,
        a unit of another quantity, a statistic such as "Avg", an amount per record).

    References
    ----------
    Molar masses of CO2 (44.009 g mol-1) and C (12.011 g mol-1), IUPAC conventional
    atomic weights (:mod:`fluxpart.constants`); SI prefixes and the day of 86,400 s,
    BIPM (2019) The International System of Units, 9th ed. (m).

    Examples
    --------
    >>> round(rate_factor("g CO2 m-2 d-1"), 4)
    0.263
    >>> rate_factor("mmol m-2 s-1")
    1000.0
    >>> rate_factor("W m-2") is None
    True
    """
    return _factor(label)


def _factor(label, species_of_mass: str | None = None) -> float | None:
    """:func:`rate_factor`, a mass without its species read as `species_of_mass`."""
    if not isinstance(label, str):
        return None
    found = _RATE.match(_normal(label))
    if found is None:
        return None
    species = found["species"]
    amount = _PREFIX[found["prefix"]]
    if found["base"] == "g":
        species = species or species_of_mass
        if species is None:
            return None
        micromoles = amount / _MOLAR_MASS[species] * 1e6
    elif species_of_mass is not None:
        return None
    else:
        micromoles = amount * 1e6
    # a count before the time base: per 30 minutes, an amount per record ("gC m-2 30min-1")
    count = float(found["count"]) if found["count"] else 1.0
    if count <= 0.0:
        return None
    return micromoles / (count * _SECONDS[found["time"]])


def _unnamed_mass_note(column, label: str, where: str, name: str, read_scale: float,
                       read_text: str) -> str | None:
    """The warning for a mass rate without its species ("mg m-2 s-1"), or None.

    Of CO2 or of C the factors lie 3.66 times apart (44.009 / 12.011), so neither is
    applied; but where the values are read as neither, every flux is wrong by one of
    them (mg CO2 m-2 s-1, an older flux unit, read as µmol m-2 s-1: 22.7 times too
    small).
    """
    factors = {species: _factor(label, species) for species in ("co2", "c")}
    if factors["co2"] is None or factors["c"] is None:
        return None
    if any(abs(read_scale / factor - 1.0) < 1e-3 for factor in factors.values()):
        return None
    return (f"column {str(column)!r} ({name}) is labelled {label!r} by {where} but read as "
            f"{read_text}: a mass per square metre and time without its species, which the "
            "reader does not convert; where the label is right every flux and budget from "
            f"this column is {_size(read_scale / factors['co2'])} (a mass of CO2) or "
            f"{_size(read_scale / factors['c'])} (of C). Convert the column in a copy of "
            f"the file (multiply its values by {factors['co2'] / read_scale:.6g} for CO2, "
            f"{factors['c'] / read_scale:.6g} for C) or map a column written in "
            "µmol m-2 s-1")


def _size(ratio: float) -> str:
    return (f"{ratio:.3g} times too large" if ratio > 1.0
            else f"{1.0 / ratio:.3g} times too small")


def unreadable_rate_note(name: str, column, label: str, where: str, read_scale: float,
                         read_text: str) -> str | None:
    """A warning where `label` writes a CO2 flux unit that the values are not read in.

    Parameters
    ----------
    name : str
        Canonical variable (``"nee"`` or ``"storage"``; others give None).
    column : str
        The file's column.
    label : str
        The unit the file writes for it (in its name or on a units line).
    where : str
        Where it is written ("its name", "the units line of 'x.csv'").
    read_scale : float
        The factor the reader applies to the column's values [µmol m-2 s-1 per unit
        read].
    read_text : str
        The unit read and the setting behind it, as the warning gives it.

    Returns
    -------
    str or None
        The warning: the label, the unit read, how many times too large or small every
        flux and budget is where the label is right, and the fix (convert the column by
        the factor in a copy of the file, or map a column in µmol m-2 s-1). A mass rate
        without its species ("mg m-2 s-1") is named with the factors of CO2 and of C
        unless the values are read as either. None where `label` is no CO2 flux unit or
        converts as the values are read.

    References
    ----------
    The conversion: :func:`rate_factor`.
    """
    if name not in ("nee", "storage"):
        return None
    factor = rate_factor(label)
    if factor is None:
        # a mass without its species: named with both factors (review40)
        return _unnamed_mass_note(column, label, where, name, read_scale, read_text)
    if abs(read_scale / factor - 1.0) < 1e-3:
        return None
    size = _size(read_scale / factor)
    return (f"column {str(column)!r} ({name}) is labelled {label!r} by {where} but read as "
            f"{read_text}: the reader does not convert {label!r}, and where the label is "
            f"right every flux and budget from this column is {size}. Convert the column "
            f"in a copy of the file (multiply its values by {factor / read_scale:.6g} to "
            "write them in the unit read) or map a column written in µmol m-2 s-1")
