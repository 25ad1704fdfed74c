"""A column labelled NEE mapped beside a storage column (round mistakes38).

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

__all__ = ["NEE_WORDS", "TURBULENT_WORDS", "label_words", "nee_label_beside_storage"]

#: Words of a column name that label net ecosystem exchange or production, both of which
#: hold the storage term by definition (the trade's terms).
NEE_WORDS = frozenset({"nee", "nep"})
#: Words of a column name that say the column is the turbulent part alone, or NEE without
#: its storage term; such a name is not read as NEE (our choice: "nee_turb" and
#: "NEE_no_storage" state which part they hold, "nee_uncorrected" may).
TURBULENT_WORDS = frozenset({"turb", "turbulent", "eddy", "covariance", "cov", "no", "without",
                             "wo", "excl", "excluding", "nostorage", "uncorrected"})


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
