"""A quality flag column of the file that no mapping reads (round mistakes60).

A tower's processing writes each flux record with a quality flag (the steady-state and
turbulence tests: Foken & Wichura 1996 (m); Mauder et al. 2013 (m)); a record it rejects
keeps its value in the flux column. Where ``[input.columns]`` maps no ``nee_flag``, every
value of the flux column is read as a good measurement, those the tower's own tests
rejected too: spikes of non-stationary or poorly mixed records the despiking may keep,
since they are not single records. On the clean site-year g15 of
``probe_clean_sites_seventh`` with 5 % of its records so flagged (their values spoilt by
a noise of 8 µmol m-2 s-1), the flag column left unmapped moved annual NEE by -2.7 sigma
without a word (``tests/benchmarks/probe_mistakes60.py``; 0.4-0.9 sigma at six other
site-years).

Only the column's name can tell, since its values are not read: a column whose name
holds a flag word and either a CO2 word or nothing beyond the words it shares with the
column mapped as ``nee``, and no word of another quantity (a flag of the latent heat or of
u* is not the flux's). A warning: where the flux column already has the rejected records
removed, mapping the flag rejects nothing more, so the fix is safe either way.

References
----------
Foken, T., & Wichura, B. (1996). Tools for quality assessment of surface-based flux
measurements. Agricultural and Forest Meteorology 78, 83-105 (m).

Mauder, M., et al. (2013). A strategy for quality and uncertainty assessment of long-term
eddy-covariance measurements. Agricultural and Forest Meteorology 169, 122-135 (m).
"""
from __future__ import annotations

from .storage_labels import label_words

__all__ = ["CO2_FLAG_WORDS", "FLAG_WORDS", "OTHER_QUANTITY_WORDS", "unmapped_flag_column"]

#: Words of a column name that say it is a quality flag (our choice: the English words
#: and their abbreviations in logger and processing programs).
FLAG_WORDS = frozenset({"qc", "qa", "flag", "flags", "quality", "qcflag", "qflag"})
#: Words that tie a flag to the CO2 flux (our choice; "co" as "co2" is split at the digit).
CO2_FLAG_WORDS = frozenset({"co", "carbon", "nee", "nep", "fco"})
#: Words of another quantity or instrument part, whose flag is not the CO2 flux's (our
#: choice: latent and sensible heat, water vapour, methane, momentum, radiation,
#: temperatures, humidity, wind, storage, the gas analyser's signal; and, round review97,
#: the CO2 concentration itself as a gas analyser reports it, its statistics and the
#: storage's abbreviation: a flag of the CO2 mole fraction or density ("qc_co2_conc") was
#: named as the flux's).
OTHER_QUANTITY_WORDS = frozenset({
    "h", "le", "et", "h2o", "o", "ch", "tau", "ustar", "u", "v", "w", "ws", "wind", "rg",
    "sw", "lw", "par", "ppfd", "rad", "rn", "ta", "tair", "ts", "tsoil", "soil", "air",
    "temp", "t", "rh", "vpd", "storage", "store", "stor", "strg", "signal", "sig", "agc",
    "rssi", "met", "heat", "latent", "sensible", "water", "methane", "momentum",
    "conc", "concentration", "mole", "molar", "fraction", "mixing", "ratio", "density",
    "dens", "ppm", "ppmv", "dry", "var", "variance", "std", "sd"})


def unmapped_flag_column(nee_column, file_columns, taken) -> str | None:
    """A message where the file holds the flux's quality flag column and none is mapped.

    Parameters
    ----------
    nee_column : str
        The file column mapped as ``nee`` (no ``nee_flag`` mapped).
    file_columns : iterable of str
        Every column of the input file(s).
    taken : iterable of str
        The file columns the reader uses (mapped, time).

    Returns
    -------
    str or None
        The warning text, or None where no unused column's name holds a word of
        :data:`FLAG_WORDS`, none of :data:`OTHER_QUANTITY_WORDS` beyond the words of
        `nee_column`, and either a word of
        :data:`CO2_FLAG_WORDS` or no other word than those of `nee_column`.

    References
    ----------
    Foken, T., & Wichura, B. (1996). Tools for quality assessment of surface-based flux
    measurements. Agricultural and Forest Meteorology 78, 83-105 (m).
    """
    own = label_words(nee_column)
    used = {str(column) for column in taken}
    found = []
    for column in file_columns:
        if str(column) in used or str(column) in found:
            continue
        words = label_words(column)
        # a word the flux column's own name holds names no other quantity (review97)
        if not words & FLAG_WORDS or (words - own) & OTHER_QUANTITY_WORDS:
            continue
        if words & CO2_FLAG_WORDS or not (words - FLAG_WORDS - own):
            found.append(str(column))
    if not found:
        return None
    listed = ", ".join(repr(column) for column in found)
    return (f"the file holds a quality flag column ({listed}) that no mapping reads, so every "
            f"value of the column mapped as nee ({nee_column!r}) is read as a good "
            "measurement, those the tower's own quality tests rejected too: map it as "
            f"[input.columns] nee_flag = {found[0]!r} with [input] flag_accept listing the "
            "values of a good record (where the flux column already has the rejected "
            "records removed, the flag then rejects nothing more)")
