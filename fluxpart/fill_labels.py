"""A column mapped as NEE whose name says it is gap-filled (round mistakes40).

Measured NEE has gaps: a tower keeps about 65 % of its half-hours (Falge et al. 2001 (m)),
and the pipeline fills the rest from the measured records, counting each fill's
uncertainty. A file exported after an earlier processing often holds both the measured
flux and its gap-filled version, and the filled one, complete and tidy, is the one a user
maps. Its fills then count as measurements: donors of the remaining gaps, points of the
respiration and light-response fits, with no fill uncertainty. Where the earlier tool
filled every gap, the values show it too (:func:`fluxpart.column_faults.gapless_nee`),
and the run names it once, by its name (:data:`FILLED_LABEL_MARK`);
where it filled the short gaps only, nothing in the values tells: on the invented
grassland example, its gaps of up to 3 h filled by a mean of records of similar weather
within a week (the usual look-up of marginal distribution sampling, Reichstein et al.
2005) moved NEE by -23.7, nighttime GPP by -79.7 and Reco by -103.4 g C m-2, silently.
The column's name is then the evidence: :func:`filled_nee_label` names a ``nee`` column
labelled filled. A warning: the run is unchanged.

References
----------
Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
ecosystem exchange. Agricultural and Forest Meteorology 107, 43-69 (m).
Reichstein, M., et al. (2005). On the separation of net ecosystem exchange into
assimilation and ecosystem respiration: review and improved algorithm. Global Change
Biology 11, 1424-1439 (m).
"""
from __future__ import annotations

from .storage_labels import label_words

__all__ = ["FILLED_LABEL_MARK", "FILLED_WORDS", "filled_nee_label"]

#: Key of ``frame.attrs`` the reader sets (True) where :func:`filled_nee_label` named the
#: column: the preflight's gapless-NEE finding on the same column (every gap filled) is
#: then left out, one finding with one message
#: (:func:`fluxpart.screening_stage.clock_and_preflight`, round polish47).
FILLED_LABEL_MARK = "nee_labelled_filled"

#: Words of a column name that say its values are gap-filled (our choice: the English
#: words and the abbreviation "gf" of "gap-filled").
FILLED_WORDS = frozenset({"filled", "gapfilled", "gapfill", "fill", "gf", "infilled",
                          "imputed", "completed"})
#: Words that say the column is the flux before filling, or deny the filling ("NEE_not_filled",
#: "co2_flux_before_fill", "nee_raw (no gf)"), or that it is a flag of the filling
#: ("co2_fill_flag", named as a flag elsewhere): such a name is not named (our choice).
UNFILLED_WORDS = frozenset({"no", "not", "non", "without", "wo", "before", "pre", "raw",
                            "measured", "orig", "original", "unfilled", "flag", "flags",
                            "qc"})


def filled_nee_label(nee_column) -> str | None:
    """A message where the column mapped as ``nee`` is labelled gap-filled, or None.

    Parameters
    ----------
    nee_column : str
        The file column mapped as ``nee``.

    Returns
    -------
    str or None
        The warning text, or None where no word of the name (its runs of letters,
        :func:`fluxpart.storage_labels.label_words`) is one of :data:`FILLED_WORDS`, or
        one is also of :data:`UNFILLED_WORDS`.

    References
    ----------
    Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
    ecosystem exchange. Agricultural and Forest Meteorology 107, 43-69 (m).
    """
    words = label_words(nee_column)
    said = sorted(words & FILLED_WORDS)
    if not said or words & UNFILLED_WORDS:
        return None
    return (f"the column mapped as nee ({nee_column!r}) is labelled gap-filled (the word "
            f"{said[0]!r}): measured NEE has gaps, and a filled column's fills would count "
            "as measurements (donors of the other gaps, points of the respiration and "
            "light-response fits) with their uncertainty left out (its short gaps filled "
            "so moved the grassland example's nighttime Reco by -103 g C m-2): map the "
            "measured NEE with its gaps empty; if the column is the measured flux, "
            "nothing is wrong")
