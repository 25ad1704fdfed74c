"""Units a logger file's own units row states, read where ``[input.units]`` says nothing.

Loggers, tower programs and data portals write a line under the column names giving each
column's unit ("W/m2", "µmol m⁻² s⁻¹", "deg C", "kPa"). Until round unitsrow the reader
took units from ``[input.units]`` alone and only compared that row with them, so a file
whose row says "kW m-2" over Rg in kW m-2 was refused by the value checks although the
file states its unit. Now, for a mapped column the config gives no unit, a unit the row
writes that the reader converts for that variable is read (and noted, with its factor);
a unit it does not know, or one of another quantity ("C" over a CO2 flux, "%" over VPD),
is refused naming the cell and the setting that reads the column. A unit the config
states is never overridden: a row that disagrees is judged as before
(:func:`fluxpart.io._labelled_unit_warnings` and the value checks).

Which line is a units row: a line under the header where two or more mapped columns write
a unit the reader knows (for any variable); a statistics line ("Avg", "Smp") or a line of
sensor heights ("2.5") is none and is not judged here.

The functions are pure: they take the cells the reader kept (``part["header_rows"]``) and
return units, notes and refusals; the reader applies them.
"""

from __future__ import annotations

import re
import unicodedata

from .variables import VARIABLES, same_unit_key, to_canonical, unit_spelling, units_for

__all__ = ["row_unit", "stated_units"]

#: Cells that state no unit: blank, dashes, "n/a", a word for "no unit". A flag or a
#: count column writes them, and so does a column the logger derives.
_NO_UNIT = frozenset({"", "-", "--", "---", "n/a", "na", "none", "nan", "unitless",
                      "dimensionless", "no unit", "#", "."})

#: Variables whose units row is never read: a quality flag has no unit to convert.
_NOT_READ = frozenset({"nee_flag"})

#: A chemical species glued to its amount ("umolCO2", "gC", "mgCO2"): SI brochure
#: section 5.4.7 asks for the species apart from the unit symbol (BIPM 2019 (m)).
_GLUED_SPECIES = re.compile(r"([mµμun]?mol|\b[mµμuk]?g)(CO2|C)\b")
#: A statistic written after the unit in the same cell ("W/m^2 (Avg)", "degC [mean]"): a
#: logger program's label of the value, no part of the unit (common practice).
_TRAILING_STATISTIC = re.compile(r"\s*[(\[]\s*(?:avg|average|mean|smp|sample|tot|total|max|"
                                 r"min|std|median)\s*[)\]]$", re.IGNORECASE)
#: A percent sign with the quantity's name beside it ("%RH", "% RH", "RH %"): percent.
_PERCENT_OF_RH = re.compile(r"^(?:%\s*RH|RH\s*%)$", re.IGNORECASE)
#: A divisor of several symbols in parentheses ("umol/(m2 s)", "W/(m^2)").
_PARENTHESISED_DIVISOR = re.compile(r"/\s*\(([^()]*)\)")
#: One symbol with an optional exponent inside such a divisor ("m2", "m^2", "s").
_SYMBOL_POWER = re.compile(r"([A-Za-z\u00b5\u03bc]+)\^?(\d?)")


def _cleaned(cell: str) -> str:
    """`cell` in a form :func:`fluxpart.variables.unit_spelling` reads more often:
    compatibility forms folded (superscripts, the micro sign), an underscore as a blank
    ("deg_C"), a species glued to its amount set apart ("umolCO2/m2/s"), a parenthesised
    divisor written as negative exponents ("umol/(m2 s)" -> "umol m-2 s-1"), a double
    asterisk as the caret ("m**-2"). Notations of the SI brochure (BIPM 2019, section
    5.4.6 (m)) and of logger units lines (common practice)."""
    text = unicodedata.normalize("NFKC", cell).replace("\u2212", "-").replace("_", " ")
    text = _TRAILING_STATISTIC.sub("", text.strip())
    text = "%" if _PERCENT_OF_RH.match(text) else text
    text = text.replace("**", "^")
    text = _GLUED_SPECIES.sub(lambda match: f"{match.group(1)} {match.group(2)}", text)

    def divisor(match):
        powers = _SYMBOL_POWER.findall(match.group(1))
        return " " + " ".join(f"{symbol}-{power or '1'}" for symbol, power in powers)

    text = _PARENTHESISED_DIVISOR.sub(divisor, text)
    return " ".join(text.split())


def _undecoded(cell: str) -> str:
    """`cell` with UTF-8 text decoded as a single-byte encoding undone ("Âµmol" for
    "µmol", "Â°C" for "°C": each non-ASCII character read as two bytes), as
    :func:`fluxpart.variables.same_unit_key` does; else as written."""
    for single_byte in ("cp1252", "latin-1"):
        try:
            return cell.encode(single_byte).decode("utf-8")
        except (UnicodeEncodeError, UnicodeDecodeError):
            continue
    return cell


def _squeezed(unit: str) -> str:
    """`unit` as :func:`fluxpart.variables.unit_spelling` would compare it, without
    blanks: "Wm-2" and "W m-2" write one unit (a logger's narrow cell)."""
    from .variables import _folded, _notation

    return _notation(_folded(unit)).replace(" ", "")


def row_unit(name: str, cell: str) -> str | None:
    """The accepted spelling (a key of :func:`fluxpart.variables.units_for`) of the unit
    `cell` writes for variable `name`, or None where it writes none the reader knows for
    `name`.

    Tried in turn: the cell as :func:`fluxpart.variables.unit_spelling` reads it (look-alike
    characters, "m^-2", "/m2", "deg C"), the cell cleaned by :func:`_cleaned`, then the
    cleaned cell without blanks ("Wm-2"), then its factors in any order with "+1"
    exponents ("µmol+1s-1m-2", :func:`_factors`), and last the cell without blanks
    ignoring letter case where one accepted unit alone matches ("kpa", "KPA"; "mW" and "MW" are no units of any variable
    here, so no prefix is misread).

    Examples
    --------
    >>> row_unit("nee", "µmol m⁻² s⁻¹"), row_unit("ustar", "km/h"), row_unit("nee", "C")
    ('µmol m-2 s-1', 'km h-1', None)
    >>> row_unit("tair", "deg F"), row_unit("vpd", "KPA"), row_unit("rg", "W/m²")
    ('°F', 'kPa', 'W/m2')
    """
    if not isinstance(cell, str):
        return None
    cell = _undecoded(cell)
    accepted = units_for(name)
    for text in (cell.strip(), _cleaned(cell)):
        spelled = unit_spelling(name, text)
        if spelled in accepted:
            return spelled
    squeezed = _squeezed(_cleaned(cell))
    same = [unit for unit in accepted if _squeezed(unit) == squeezed]
    if not same:
        factors = _factors(_cleaned(cell))
        same = [unit for unit in accepted if factors and _factors(unit) == factors]
    if not same:
        same = [unit for unit in accepted if _squeezed(unit).casefold() == squeezed.casefold()]
    return same[0] if len({same_unit_key(name, unit) for unit in same}) == 1 else None


#: One symbol and its exponent in a product written without blanks, the exponent also
#: written "+1" ("µmol+1s-1m-2", "m+1s-1": a processing program's units row).
_FACTOR = re.compile(r"([^\d+\-\s]+)([+-]?\d+)?")


def _factors(unit: str) -> tuple:
    """The unit's symbols and exponents in a fixed order, "+1" and no exponent alike:
    "µmol+1s-1m-2" and "µmol m-2 s-1" give one key (a product's factors in any order,
    BIPM 2019, 5.4.6 (m)); () where a symbol holds no letter."""
    from .variables import _folded, _notation

    text = _notation(_folded(unit))
    found = [(symbol, int(power) if power else 1) for chunk in text.split()
             for symbol, power in _FACTOR.findall(chunk)]
    if not found or not all(any(c.isalpha() for c in symbol) for symbol, _ in found):
        return ()
    return tuple(sorted(found))


def _unread_flux(name: str, cell: str) -> str:
    """For a CO2 flux, the words naming a rate the reader does not convert with the factor
    to µmol m-2 s-1 (:func:`fluxpart.flux_rate_labels.rate_factor`: molar mass and
    seconds), else ""."""
    if name not in ("nee", "storage"):
        return ""
    from .flux_rate_labels import rate_factor

    factor = rate_factor(cell)
    if factor is None:
        return ""
    return (f"a CO2 flux unit fluxpart does not convert (multiply the values by "
            f"{factor:.6g} in a copy of the file to write them in µmol m-2 s-1)")


def _is_number(cell: str) -> bool:
    try:
        float(cell)
    except ValueError:
        return False
    return True


def _states_no_unit(cell: str) -> bool:
    return cell.strip().casefold() in _NO_UNIT


def _other_quantities(name: str, cell: str) -> list[str]:
    """The other variables `cell` writes a known unit of (a number states none)."""
    if _is_number(cell.strip()):
        return []
    return [other for other in VARIABLES if other != name and other not in _NOT_READ
            and row_unit(other, cell) is not None]


def _units_rows(parts: list, names: list) -> set:
    """Indices of the lines under the header that are units rows: two or more mapped
    columns writing a unit the reader knows (not a number) in a file's line."""
    rows = set()
    for part in parts:
        cells = [part["header_rows"][name][1] for name in names if name in part["header_rows"]]
        for index in range(max((len(c) for c in cells), default=0)):
            known = sum(1 for row in cells if index < len(row)
                        and not _is_number(row[index].strip())
                        and any(row_unit(other, _unenclosed(row[index])) is not None
                                for other in VARIABLES if other not in _NOT_READ))
            if known >= 2:
                rows.add(index)
    return rows


def _unenclosed(cell: str) -> str:
    from .header_cells import enclosed_unit

    return enclosed_unit(cell)


def _factor_text(name: str, unit: str) -> str:
    """How a value in `unit` becomes one in the canonical unit: "x 1000", "- 273.15",
    "x 0.5556 - 17.78", "divided by the record interval in seconds, x 1e+06"."""
    per_second = to_canonical([0.0, 1.0], name, unit, interval_minutes=1.0 / 60.0)
    offset, scale = float(per_second[0]), float(per_second[1] - per_second[0])
    text = f"x {scale:.6g}" if scale != 1.0 else ""
    if offset:
        text += f"{' ' if text else ''}{'-' if offset < 0 else '+'} {abs(offset):.6g}"
    if any((name, unit) == pair for pair in _per_interval()):
        text = f"divided by the record interval in seconds, {text}"
    return text


def _per_interval():
    from .variables import PER_INTERVAL_UNITS

    return PER_INTERVAL_UNITS


def stated_units(parts: list, mapping: dict, units: dict) -> tuple[dict, list, dict]:
    """Units the input files' units rows state for mapped columns ``[input.units]``
    leaves out.

    Parameters
    ----------
    parts : list of dict
        The reader's file parts; ``part["header_rows"]`` maps a variable to ``(column,
        cells)``, the cells of its column on the lines under the header.
    mapping : dict
        Variable -> column read.
    units : dict
        ``[input.units]`` as given (accepted spellings).

    Returns
    -------
    adopted : dict
        Variable -> accepted unit spelling to read its column in, where every file's
        units row writes one unit the reader converts for that variable, other than the
        canonical unit (a row writing the canonical unit changes nothing and is left out).
    notes : list of str
        One note a variable adopted: column, unit written, the factor to the canonical
        unit.
    refusals : dict
        Variable -> message, where a units row writes a unit the reader does not know for
        it or one of another quantity; the message names the cell, the file and the
        ``[input.units]`` key to set. Where files' rows write two known units, or one file's
        row a unit and another's none (blank, "-", a number), none is read (:func:`fluxpart.io._header_rows_warning` and the relabelled-file rules
        judge them, as before).

    References
    ----------
    BIPM (2019) The International System of Units (SI), 9th edition, sections 5.4.6-5.4.7:
    "m/s", "m s-1" and "m·s⁻¹" write one unit; no species within a unit symbol (m).
    """
    names = [name for name in mapping if name not in units and name not in _NOT_READ]
    rows = _units_rows(parts, [name for name in mapping if name not in _NOT_READ])
    adopted, notes, refusals = {}, [], {}
    if not rows:
        return adopted, notes, refusals
    for name in names:
        written, silent = [], []                           # (cell, source); sources
        for part in parts:
            if name not in part["header_rows"]:
                continue                                   # the column lacks in this file
            column, cells = part["header_rows"][name]
            stated = [(_unenclosed(cells[i]), part["source"]) for i in sorted(rows)
                      if i < len(cells) and not _states_no_unit(_unenclosed(cells[i]))]
            written += stated
            if all(_is_number(cell.strip()) and row_unit(name, cell) is None
                   for cell, _ in stated):
                silent.append(part["source"])              # no unit in this file's row
        if not written:
            continue
        column = mapping[name]
        key_text = f"[input.units] {name}"
        choices = ", ".join(f'"{unit}"' for unit in units_for(name))
        read = {}
        for cell, source in written:
            unit = row_unit(name, cell)
            if unit is None and _is_number(cell.strip()):
                continue                                   # a number states no unit
            if unit is None:
                others = _other_quantities(name, cell)
                what = (f"a unit of {' or '.join(others)}, not of {name}" if others
                        else _unread_flux(name, cell) or f"no unit fluxpart reads for {name}")
                refusals[name] = (
                    f"column {str(column)!r} ({name}): the units row of {source!r} writes "
                    f"{cell!r}, {what}, and no {key_text} is given: set {key_text} to "
                    f"the unit its values are in (one of {choices}), or convert the column "
                    "in a copy of the file")
                break
            read.setdefault(same_unit_key(name, unit), (unit, cell, source))
        if name in refusals or not read:
            continue                                       # refused, or numbers alone
        canonical_key = same_unit_key(name, VARIABLES[name].unit if name in VARIABLES
                                      else units_for(name)[0])
        if len(read) > 1 or silent:
            # files (or parts) whose rows write two units, or a unit and none (review98:
            # the unit was read for the file whose row writes none too): none is read for
            # every file; the reader's rules for a unit changed between files judge them,
            # as before
            continue
        unit, cell, source = next(iter(read.values()))
        if same_unit_key(name, unit) == canonical_key:
            continue                                       # the canonical unit
        adopted[name] = unit
        canonical = VARIABLES[name].unit if name in VARIABLES else units_for(name)[0]
        notes.append(
            f"column {str(column)!r} ({name}) read in {cell!r} as the units row of "
            f"{source if len(parts) == 1 else f'{len(parts)} file part(s)'!r} writes "
            f"(no {key_text} given): converted to {canonical} ({_factor_text(name, unit)}); "
            f"the plausibility checks judge the converted values")
    return adopted, notes, refusals


def read_clause(name: str, adopted: dict) -> str:
    """" (read in 'kPa' as the file's units row writes; no [input.units] vpd given)" for
    a refusal of a variable read in a unit its units row stated, else "": the reader's
    message says "read as 'kPa'" of a unit the user never set."""
    if name not in adopted:
        return ""
    return (f" (read in {adopted[name]!r} as the file's units row writes; no [input.units] "
            f"{name} given)")
