"""The hint for an unknown ``[processing]`` key, by what its words mean.

An unknown key is refused with the nearest valid name (:func:`fluxpart.config.suggest_key`,
string likeness by :mod:`difflib`). Where the key is a typing slip of a valid name that is
right. Where it is a name of the user's own making, the nearest spelling can be a setting
of another meaning, and a user who follows the hint gets a run that differs from the one
meant without a further word (round mistakes33): ``ustar_fixed_threshold = 0.2`` was
answered "did you mean 'ustar_min_threshold'?", a floor under the detected thresholds, not
a fixed one, which on a generated deciduous forest (``scenarios.generate(7)``, detected
above 0.2 m s-1) gave Reco +43.5 g C m-2 against the fixed run meant; ``mds_window_days``
pointed at ``e0_window_days`` (the respiration fit's window), ``random_seed`` at
``random_error_draws``, ``year_begin`` at ``rg_margin``, ``uncertainty_draws`` at
``ustar_bootstrap_draws``. :func:`meaning_hint` reads the key's words and names the
setting that does what they say, or None where none is recognised.
"""

from __future__ import annotations

import re

__all__ = ["meaning_hint", "table_meaning_hint"]

#: Likeness (difflib ratio) at or above which an unknown key is a typing slip of a valid
#: name and keeps the spelling hint: slips of one or two letters in names of 10-25
#: letters give 0.92-0.98 (``ustar_treshold`` 0.966, ``despike_blocks_days`` 0.973),
#: while keys of the user's own words stay below (``ustar_fixed_threshold`` against
#: ``ustar_min_threshold`` 0.85, ``seeds`` against ``seed`` 0.89, then read by meaning).
SLIP_LIKENESS = 0.9

_FIXED_USTAR = ('; to filter every year at one u* threshold write ustar_method = "fixed" '
                "and ustar_threshold = <value in m s-1> (ustar_min_threshold is only a floor "
                "under the thresholds detected from the data)")


#: Words of the other u* settings named "min" (review38): ``min_ustar_resolution``,
#: ``ustar_min_points`` are no floor under the thresholds; their spelling hint is kept.
_OTHER_USTAR_MINIMA = {"resolution", "res", "step", "class", "classes", "points", "count",
                       "season", "seasons", "draws", "samples", "share", "records"}
#: Words of the Rg settings other than the night threshold (review38):
#: ``gapfill_rg_threshold``, ``random_error_rg_threshold`` mean the similarity tolerance
#: of a gap's donors, not night; their spelling hint is kept.
_OTHER_RG_LIMITS = {"gap", "gapfill", "gapfilling", "fill", "filling", "mds", "donor",
                    "donors", "random", "error", "similar", "similarity", "tolerance"}


#: Words of a setting for some columns only (review38)
_EACH = {"by", "per", "each", "variable", "variables", "column", "columns", "var", "vars"}


def _words(key: str) -> set:
    return {w for w in re.split(r"[^a-z0-9*]+", key.lower().replace("u*", "ustar")) if w}


def meaning_hint(key: str) -> str | None:
    """The hint for an unknown ``[processing]`` key read by its words, or None.

    Parameters
    ----------
    key : str
        The key as written (not a valid setting name).

    Returns
    -------
    str or None
        A text starting ``"; "`` naming the setting (or the pair of settings) that does
        what the key's words say: a fixed u* threshold, a floor under the detected
        thresholds, the seed, the first day of the budget year, the number of
        random-error or bootstrap draws, the gap-filling window, the night Rg
        threshold, despiking, the canopy class (a ``[site]`` key), or that both
        partitionings always run; None where no rule
        applies (the caller keeps the spelling hint).

    Notes
    -----
    Pure and cheap. Only the hint text of a refusal: a run is never changed by it.

    References
    ----------
    Python documentation, ``difflib.SequenceMatcher.ratio`` (the likeness of
    :data:`SLIP_LIKENESS`) (m).
    """
    words = _words(key)
    ustar = bool(words & {"ustar", "u", "friction", "turbulence"})
    threshold = bool(words & {"threshold", "thresh", "thr", "limit", "value", "cutoff"})
    if "fixed" in words and (ustar or threshold):
        return _FIXED_USTAR
    if (ustar and words & {"floor", "minimum", "min", "lowest", "lower"}
            and not words & _OTHER_USTAR_MINIMA):
        return "; did you mean 'ustar_min_threshold' (a floor under the detected u* thresholds, m s-1)?"
    if words & {"seed", "seeds", "rng"}:
        return "; did you mean 'seed' (the seed of every random draw)?"
    if "year" in words and words & {"begin", "begins", "start", "starts", "first", "from"}:
        return "; did you mean 'year_start' (the first day of the budget year, \"MM-DD\")?"
    if words & {"draws", "samples", "realisations", "realizations", "iterations", "runs"}:
        if words & {"bootstrap", "ustar"}:
            return "; did you mean 'ustar_bootstrap_draws' (draws of the u* threshold)?"
        return "; did you mean 'random_error_draws' (draws of the random-error interval)?"
    if "window" in words and words & {"gap", "gapfill", "gapfilling", "fill", "filling", "mds"}:
        if words & {"rg", "radiation"}:
            return ("; did you mean 'gapfill_rg_window' (where a gap's Rg window lies, "
                    "e.g. \"centred\")?")
        return ("; did you mean 'gapfill_max_window_days' (the widest window in which the "
                "gap filling looks for similar records)?")
    if (("rg" in words or "radiation" in words) and words & _OTHER_RG_LIMITS
            and (threshold or words & {"tolerance", "window", "margin"})
            and not words & {"night", "dark", "random", "error"}):
        return ("; did you mean 'rg_tolerance' (how far a donor's Rg may lie from the gap's "
                "in the gap filling, W m-2)?")
    if ((words & {"night", "dark"} or ("rg" in words or "radiation" in words)
            and not words & _OTHER_RG_LIMITS) and threshold):
        return "; did you mean 'night_rg_threshold' (night is Rg below it, W m-2)?"
    if words & {"spike", "spikes", "despike", "despiking", "outlier", "outliers"}:
        if words & {"block", "blocks", "days", "day", "window", "period", "length"}:
            return ("; did you mean 'despike_block_days' (the length of the blocks in which "
                    "spikes are judged, days)?")
        return "; did you mean 'despike_z' (the despiking limit in robust standard deviations)?"
    if words & {"partition", "partitioning", "partitions"}:
        return ("; both partitionings always run (the nighttime and daytime columns side by "
                "side): no setting chooses one")
    if "canopy" in words:
        return '; the canopy class belongs under [site]: canopy = "short" or "tall"'
    return None


def table_meaning_hint(key: str, table: str, valid) -> str | None:
    """The hint for an unknown ``[site]`` or ``[input]`` key read by its words, or None.

    Parameters
    ----------
    key : str
        The key as written.
    table : {"site", "input"}
        The table it stands in.
    valid : collection of str
        The table's valid keys; a typing slip of one of them (difflib likeness at or
        above :data:`SLIP_LIKENESS`, or the same name in other case) gets None, so the
        caller keeps the spelling hint.

    Returns
    -------
    str or None
        A text starting ``"; "``: under ``[site]`` a time zone's name or offset
        (``utc_offset`` in hours, a named zone being ``[input] time_zone``) or a
        vegetation class (``canopy``); under ``[input]`` the missing-value codes
        (``missing``, or ``[input.missing_by_variable]`` for codes of some columns),
        the stamp's place in its interval (``time_marks``), its zone (``time_zone``),
        the records' interval (``interval_minutes``) or the stamp column
        (``time_column``). None where no rule applies.

    Notes
    -----
    The spelling alone sent ``timestamp_position`` to ``time_zone``, ``na_values`` to
    ``interval_minutes`` and ``timestamp`` to ``time_marks`` (round mistakes33); each of
    those, followed, is refused by its own check, so the cost was a second refusal, not
    a number.

    References
    ----------
    Python documentation, ``difflib.get_close_matches`` (m).
    """
    import difflib

    valid = list(valid)
    if (difflib.get_close_matches(key, valid, n=1, cutoff=SLIP_LIKENESS)
            or key.lower() in {v.lower() for v in valid}):
        return None
    words = _words(key)
    if table == "site":
        if words & {"timezone", "tz", "zone", "utc", "gmt", "offset"}:
            return ("; did you mean 'utc_offset' (hours from UTC of the file's standard time, "
                    "e.g. 1.0)? A zone's name such as \"Europe/Berlin\" goes under [input] "
                    "time_zone")
        if words & {"vegetation", "ecosystem", "landcover", "land", "cover", "pft", "biome"}:
            return '; did you mean \'canopy\' ("short" for crops and grass, "tall" for forest)?'
        return None
    if table == "input":
        if "format" in words:           # a stamp's format: the spelling finds time_format
            return None
        if words & {"na", "nan", "nodata", "null", "fill", "missing", "missings",
                    "nodatavalue"}:
            if words & _EACH:
                # codes of some columns only (review38: "missing_per_column" was sent to
                # the codes of every column, where 0 also blanks readings of 0)
                return ("; did you mean [input.missing_by_variable] (the codes of some "
                        "variables only, e.g. nee = [0])?")
            return "; did you mean 'missing' (the codes written for a missing value, e.g. [-9999])?"
        stamp = bool(words & {"timestamp", "timestamps", "stamp", "stamps", "time", "date",
                              "datetime"})
        if words & {"zone", "timezone", "tz"}:
            return ("; did you mean 'time_zone' (the stamps' zone, e.g. \"Europe/Berlin\"; "
                    "a fixed offset is [site] utc_offset)?")
        if words & {"interval", "step", "timestep", "frequency"}:
            return "; did you mean 'interval_minutes' (the records' interval, 30 or 60)?"
        if words & {"position", "positions", "marks", "mark", "label", "convention",
                    "anchor", "alignment"} or (
                stamp and words & {"start", "end", "begin", "beginning", "refers"}):
            return ("; did you mean 'time_marks' (\"start\" or \"end\": which end of its "
                    "interval a stamp marks)?")
        if words & {"timestamp", "timestamps", "datetime", "date", "stamps"}:
            return "; did you mean 'time_column' (the column, or columns, of the stamps)?"
    return None
