"""The written tables each report figure draws, and what the page says where one is absent.

A result folder needs only its ``timeseries`` and ``annual`` tables to be reported
(:func:`fluxpart.report.read_written`); the others are optional to the report. A figure
whose table the folder lacks was drawn as empty axes under a caption that described
curves, bands and windows that were not there (report52: a folder without ``monthly``
gave a blank plot with a 1970 time axis, and without ``daily`` three empty panels
captioned "the run wrote no daily 1-sigma columns"). Such a figure is now one sentence
naming the absent table; a figure that lacks only a secondary table is drawn with a
caption clause saying what is left out. Pure: names in, sentences out; no method module.
"""

from __future__ import annotations

__all__ = ["MAIN_TABLES", "PART_TABLES", "absent_main", "absent_parts"]

#: Figure file -> (the table it draws, the figure's title, what it shows). Without the
#: table the figure has nothing to draw.
MAIN_TABLES = {
    "daily_fluxes.png": ("daily", "Daily NEE, GPP and Reco",
                         "the daily sums of NEE, GPP and Reco"),
    "monthly_gpp_reco.png": ("monthly", "Monthly GPP, Reco and NEE",
                             "the monthly sums of GPP, Reco and NEE"),
    "ustar_threshold.png": ("ustar", "u* threshold diagnostics",
                            "the u* thresholds and their bootstrap ranges"),
    "light_response.png": ("parameters_daytime", "Light-response windows",
                           "the daytime method's light-response windows"),
}

#: Figure file -> ((a table it draws in part, what of the figure comes from it), ...);
#: the figure is drawn without that part.
PART_TABLES = {
    "night_respiration.png": (
        ("parameters_nighttime_rref", "curves of the short Rref windows"),
        ("parameters_nighttime_e0_annual", "curve of each calendar year's E0"),
    ),
    "ustar_threshold.png": (
        ("parameters_ustar_bootstrap", "bootstrap thresholds (right panel)"),
    ),
}


def absent_main(name: str, tables) -> tuple[str, str] | None:
    """(title, sentence) where figure `name` cannot be drawn for want of its table.

    Parameters
    ----------
    name : str
        Figure file name (one of :data:`fluxpart.figures.FIGURES`).
    tables : collection of str
        The names of the tables the result folder holds.

    Returns
    -------
    tuple of str or None
        The figure's title and the one sentence that stands for it; None where the
        figure's table is present (or it draws from the always-present tables only).
    """
    if name not in MAIN_TABLES or MAIN_TABLES[name][0] in tables:
        return None
    table, title, shows = MAIN_TABLES[name]
    return title, (f"This result folder has no {table} table, so {shows} are not drawn "
                   "(the run that wrote it did not write that table).")


def absent_parts(name: str, tables) -> str:
    """A caption sentence naming what figure `name` leaves out for want of a secondary
    table, or "" where the folder holds every table the figure draws."""
    missing = [(table, what) for table, what in PART_TABLES.get(name, ())
               if table not in tables]
    if not missing:
        return ""
    listed = "; ".join(f"no {table} table, so the figure shows no {what}"
                       for table, what in missing)
    return f"This result folder has {listed}."
