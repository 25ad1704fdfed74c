"""A column labelled NEE mapped beside a storage column (round mistakes38); a storage
column of the file left unmapped beside a turbulent flux (round mistakes40).

Net ecosystem exchange is by definition the turbulent flux at the sensor plus the change
of the CO2 stored below it (Finnigan 2006; Aubinet et al. 2012, ch. 1 (m)): a column a
file labels NEE (or NEP, its opposite) already holds the storage term, and the reader,
which adds a mapped ``storage`` column to the column mapped as ``nee``, would count the
store twice. The values tell this only where the storage term trades against the
turbulent flux from night to night (:func:`fluxpart.column_faults.storage_in_turbulent_flux`);
a smooth storage column leaves that slope unresolved, and then the column's name is the
only evidence. A warning: the run is unchanged.

References
----------
Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and Forest
Meteorology 136, 108-113.
Aubinet, M., Vesala, T. & Papale, D. (eds.) (2012). Eddy Covariance: A Practical Guide
to Measurement and Data Analysis. Springer, ch. 1 (NEE = turbulent flux + storage) (m).
"""
from __future__ import annotations

import re

from .variables import same_unit_key, units_for

__all__ = ["NEE_WORDS", "STORAGE_WORDS", "TURBULENT_WORDS", "label_words",
           "nee_label_beside_storage", "storage_unit_apart", "unmapped_storage_column"]

#: Words of a column name that label net ecosystem exchange or production, both of which
#: hold the storage term by definition (the trade's terms).
NEE_WORDS = frozenset({"nee", "nep"})
#: Words of a column name that say the column is the turbulent part alone, or NEE without
#: its storage term; such a name is not read as NEE (our choice: "nee_turb" and
#: "NEE_no_storage" state which part they hold, "nee_uncorrected" may).
TURBULENT_WORDS = frozenset({"turb", "turbulent", "eddy", "covariance", "cov", "no", "without",
                             "wo", "excl", "excluding", "nostorage", "uncorrected"})

#: Words of a column name that say it holds a storage term (our choice: the English word
#: and its abbreviations in logger programs; "stor" as in "co2_stor").
STORAGE_WORDS = frozenset({"storage", "store", "stored", "stor"})
#: Words that say the gas is CO2 ("co2" reads as the word "co": digits are no letters), so
#: that a heat or water vapour storage column is not taken for CO2's (our choice).
CO2_WORDS = frozenset({"co", "carbon"})
#: Words that say a column is a flux, not the storage term alone ("co2_flux_storage_corr",
#: "NEE_incl_storage"): such a column is not named (our choice).
FLUX_WORDS = frozenset({"flux", "flx", "fluxes", "nee", "nep", "incl", "including", "with",
                        "corr", "corrected", "plus", "total"})
#: Words that say a column is a statistic or a flag of the storage term, not its value
#: ("co2_store_flag", "co2_storage_sd"): not named either (our choice).
STATISTIC_WORDS = frozenset({"flag", "flags", "qc", "quality", "sd", "std", "stdev", "sigma",
                             "var", "min", "max", "n", "count", "unc", "uncertainty", "err",
                             "error"})
#: Words that say a column is the CO2 concentration of a storage profile, not the
#: storage term ("co2_storage_profile_ppm", "co2_conc_storage_level"; review47: named as
#: a storage column to map before): a mole fraction or density, no flux (our choice).
CONCENTRATION_WORDS = frozenset({"ppm", "ppb", "conc", "concentration", "mixing",
                                 "molfrac", "fraction", "density", "dens"})


def label_words(name) -> set[str]:
    """The lower-case words of a column name.

    Parameters
    ----------
    name : str
        A column name as the file writes it.

    Returns
    -------
    set of str
        Its runs of letters, split at every other character (``"NEE_30min"`` ->
        ``{"nee", "min"}``; a digit run is no word).

    References
    ----------
    None (text handling).
    """
    return set(re.findall(r"[a-z]+", str(name).lower()))


def nee_label_beside_storage(nee_column, storage_column) -> str | None:
    """A message where the column mapped as nee is labelled NEE and storage is mapped too.

    Parameters
    ----------
    nee_column : str
        The file column mapped as ``nee``.
    storage_column : str
        The file column mapped as ``storage``.

    Returns
    -------
    str or None
        The warning text, or None where the name holds no word of :data:`NEE_WORDS`, or
        also one of :data:`TURBULENT_WORDS`. The caller gives it only where the values
        did not resolve the column as a turbulent flux.

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    """
    words = label_words(nee_column)
    if not words & NEE_WORDS or words & TURBULENT_WORDS:
        return None
    return (f"the column mapped as nee ({nee_column!r}) is labelled NEE, which is the "
            "turbulent flux plus the storage term by definition, and the storage column "
            f"({storage_column!r}) is added to it; the values cannot tell which it holds "
            "(the storage term does not trade against the flux from night to night "
            "clearly enough): if the column already holds the storage term, the store is "
            "counted twice (by night and again in the morning: nighttime GPP and Reco "
            "some +350 g C m-2 a year on the maize example so written), so remove the "
            "storage mapping; if it is the turbulent flux alone, keep it")


def unmapped_storage_column(nee_column, file_columns, taken) -> str | None:
    """A message where the file holds a CO2 storage column that no mapping reads.

    Parameters
    ----------
    nee_column : str
        The file column mapped as ``nee`` (storage not mapped).
    file_columns : iterable of str
        Every column of the input file(s).
    taken : iterable of str
        The file columns the reader uses (mapped, flags, time).

    Returns
    -------
    str or None
        The warning text, or None where the nee column is labelled NEE (a word of
        :data:`NEE_WORDS` and none of :data:`TURBULENT_WORDS`: it holds the storage term
        by definition) or names the storage itself ("co2_flux_incl_storage"; a word of
        :data:`STORAGE_WORDS`, none of :data:`TURBULENT_WORDS`), or no unused column's
        name holds a word of
        :data:`STORAGE_WORDS` and one of :data:`CO2_WORDS` and none of
        :data:`FLUX_WORDS`, :data:`STATISTIC_WORDS` or :data:`CONCENTRATION_WORDS`.

    Notes
    -----
    NEE is the turbulent flux at the sensor plus the change of the CO2 stored below it
    (Finnigan 2006; Aubinet et al. 2012, ch. 1 (m)). The storage term sums to about 0
    over whole days, but not over the night and morning records the partitionings read:
    left out, the CO2 building up on calm nights is missing from the night fluxes and the
    morning flush from the day's. Only a warning: a flux column of a neutral name may
    hold the storage term already, and a user may leave a negligible store out on purpose.

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    Aubinet, M., Vesala, T. & Papale, D. (eds.) (2012). Eddy Covariance: A Practical
    Guide to Measurement and Data Analysis. Springer, ch. 1 (NEE = turbulent flux +
    storage) (m).
    """
    words = label_words(nee_column)
    if (words & NEE_WORDS or words & STORAGE_WORDS) and not words & TURBULENT_WORDS:
        return None     # labelled NEE, or a flux whose name says it holds the storage
    used = {str(column) for column in taken}
    found = []
    for column in file_columns:
        if str(column) in used or str(column) in found:
            continue
        words = label_words(column)
        if (words & STORAGE_WORDS and words & CO2_WORDS
                and not words & (FLUX_WORDS | STATISTIC_WORDS | CONCENTRATION_WORDS)):
            found.append(str(column))
    if not found:
        return None
    listed = ", ".join(repr(column) for column in found)
    return (f"the file holds a CO2 storage column ({listed}) that no mapping reads, and the "
            f"column mapped as nee ({nee_column!r}) is not labelled NEE: NEE is the "
            "turbulent flux plus the storage term by definition, and without it the CO2 "
            "stored below the sensor on calm nights and vented in the morning is missing "
            "from the records both partitionings read (nighttime Reco -322 g C m-2 a year "
            f"on the maize example so read): map it, [input.columns] storage = "
            f"{found[0]!r}, if {nee_column!r} is the turbulent flux alone; if it already "
            "holds the storage term, leave the storage column out")


def _declared_unit_keys(nee_unit, storage_unit) -> tuple[tuple, tuple]:
    """The conversion keys (:func:`fluxpart.variables.same_unit_key`) of the flux's and
    the storage column's declared units, the canonical µmol m-2 s-1 where undeclared."""
    canonical = units_for("storage")[0]
    return (same_unit_key("nee", nee_unit if nee_unit is not None else canonical),
            same_unit_key("storage", storage_unit if storage_unit is not None else canonical))


def storage_unit_ratio(nee_unit, storage_unit) -> float | None:
    """How many times larger the storage column reads in its declared unit than in the
    flux's (22.7 for storage in mg CO2 m-2 s-1 beside NEE in µmol m-2 s-1), or None where
    the two read as one unit or either is an amount per interval (no one factor).

    Parameters
    ----------
    nee_unit, storage_unit : str or None
        The ``[input.units]`` of ``nee`` and ``storage``; None where not declared (the
        canonical µmol m-2 s-1).
    """
    nee_key, storage_key = _declared_unit_keys(nee_unit, storage_unit)
    if (nee_key == storage_key or nee_key[0] != "unit" or storage_key[0] != "unit"
            or nee_key[2] or storage_key[2]):   # an amount per interval: no one factor
        return None
    return storage_key[1][0] / nee_key[1][0]


def storage_unit_apart(nee_unit, storage_unit,
                       interval_minutes: float | None = None) -> str | None:
    """A message where storage is read in another unit than the flux it is added to.

    Parameters
    ----------
    nee_unit, storage_unit : str or None
        The ``[input.units]`` of ``nee`` and ``storage``; None where not declared (the
        canonical µmol m-2 s-1).
    interval_minutes : float, optional
        Record interval [min]: the factor between an amount per record (g C m-2) and a
        rate. Without it a unit per record beside a rate is not judged.

    Returns
    -------
    str or None
        The warning text naming both readings and the factor between them, or None
        where the two read as one unit (the same conversion).

    Notes
    -----
    The storage term is computed beside the turbulent flux from the same analyser or a
    profile of it and written by the same program, in the flux's unit (common practice
    (m)); two units in one file are a setting declared for one column and forgotten for
    the other. Read 22.7 times too small (mg CO2 for µmol), the store is as good as left
    out; 22.7 times too large, it swamps the flux. A warning: a profile system's own
    file may write another unit, and then the settings are right. An amount per record
    (g C m-2) beside a rate is judged as the others at the record interval (since
    leftovers57: 1 µmol m-2 s-1 over 30 minutes is 0.0216 g C m-2, a factor of 46.3).

    References
    ----------
    Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and
    Forest Meteorology 136, 108-113.
    """
    canonical = units_for("storage")[0]
    nee_key, storage_key = _declared_unit_keys(nee_unit, storage_unit)
    if nee_key == storage_key or nee_key[0] != "unit" or storage_key[0] != "unit":
        return None
    if (nee_key[2] or storage_key[2]) and not interval_minutes:
        return None                   # an amount per record: no factor without the interval

    def scale(key):                   # to µmol m-2 s-1, an amount per record over its seconds
        return key[1][0] / (float(interval_minutes) * 60.0) if key[2] else key[1][0]

    factor = scale(nee_key) / scale(storage_key)
    storage_text = (f"[input.units] storage = {storage_unit!r}" if storage_unit is not None
                    else f"{canonical!r} (no [input.units] storage: its default)")
    nee_text = (f"[input.units] nee = {nee_unit!r}" if nee_unit is not None
                else f"{canonical!r} (no [input.units] nee: its default)")
    target = nee_unit if nee_unit is not None else canonical
    fix = (f"set [input.units] storage = {target!r}"
           if same_unit_key("storage", target)[0] == "unit"
           else "declare the unit the storage column is written in")
    size = (f"{factor:.3g} times too small (a store left out: nighttime Reco -311 g C "
            "m-2 a year on the maize example so read)" if factor > 1
            else f"{1 / factor:.3g} times too large (a store swamping the flux)")
    return (f"the storage column is read as {storage_text} but the flux it is added to as "
            f"{nee_text}: a flux and its storage term are written by one program in one "
            f"unit, so if the storage column is in the flux's unit, its term is read "
            f"{size}; {fix} if so")
