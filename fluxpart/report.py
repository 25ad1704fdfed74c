"""A self-contained report page for a result folder: ``fluxpart report``.

:func:`build_report` reads a folder written by :meth:`fluxpart.Result.write`
(the Parquet tables and ``manifest.json``, nothing else: no method is re-run and
no pipeline or method module is imported) and writes ``report.html``: one page
with every figure embedded as a compressed PNG data URI, inline CSS, no scripts
and nothing to fetch, so it can be mailed, archived, printed to PDF or opened
offline. The figures are also written beside it as PNG files.

The page is ordered for a reader who has five minutes:

1. the title and the caution that a tower budget is not a certified credit;
2. a summary card in plain words and numbers per budget period: net uptake with
   its 95 % interval in g C m-2 and t CO2 ha-1, GPP and Reco by both methods,
   the share gap-filled, the u* threshold, the clock check and whether the two
   partitioning methods agree;
3. the warnings of the run (the reader's notes apart, where it wrote some);
4. the figures, each with a one-sentence caption saying what to look for
   (drawn by :mod:`fluxpart.figures`);
5. the detailed tables, folded in ``<details>``; the methods and references;
   and at the end every setting with its value, meaning and source, where a
   value recalled from memory and not yet checked against its paper is marked
   once, in that table.

Columns that older result folders lack (95 % intervals, 1-sigma columns, the
clock check, budget-year periods) are shown when present and named as absent
otherwise.
"""

from __future__ import annotations

import base64
import errno
import gc
import html
import inspect
import os
import re
import shlex
from contextlib import nullcontext
from pathlib import Path

import numpy as np
import pandas as pd

from .config import Config, implied_settings
from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS, SOLAR_CONSTANT
from .errors import InputFileError, OutputError
from .figures import (
    FIGURES,
    Written,
    clock_sentence,
    day_text,
    draw_figures,
    fill_category,
    interval_minutes,
    period_masks,
    unfitted_methods,
    window_status,
    window_tally,
)
from .manifest import CAUTION, NEE_SCOPE, shown_name, shown_path
from .measured_months import month_runs_text, unchecked_months
from .plain_account import (
    ROUNDING_NOTE,
    interval_sentence,
    partition_sentence,
    records_sentence,
    warnings_sentence,
)
from .respiration_facts import respiration_facts
from .resultdir import (
    DEFAULT_LOCK_TIMEOUT,
    clean_leftovers,
    folder_identity,
    folder_lock,
    lock_file,
    read_folder,
    recover_missing,
    replace_refusal,
    staged,
)
from .store import atomic_write_bytes, full_disk_remedy, require_owner_access
from .uncertainty_parts import PART_LABELS, uncertainty_parts
from .units import CARBON_UNIT, FLUX_UNIT, T_CO2_HA_PER_G_C_M2, display_unit
from .ustar_range_note import outside_range_clause

__all__ = ["FIGURES", "build_report", "command_report", "read_written"]

_FLUX_UNIT = FLUX_UNIT
_CARBON_UNIT = CARBON_UNIT
_T_CO2_PER_HA_PER_G_C_M2 = T_CO2_HA_PER_G_C_M2

_BUDGET_COLUMNS = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime",
                   "ustar_threshold")
_COVERAGE_PATTERN = re.compile(r"records.*|complete|share_.*|nee_share_from_filled|period_.*")
_FLUX_NAMES = {"gpp_nighttime": "GPP, nighttime method", "gpp_daytime": "GPP, daytime method",
               "reco_nighttime": "Reco, nighttime method",
               "reco_daytime": "Reco, daytime method", "nee": "NEE"}

_REFERENCES = {
    "reichstein2005": "Reichstein, M. et al. (2005). On the separation of net ecosystem exchange "
                      "into assimilation and ecosystem respiration: review and improved algorithm. "
                      "Global Change Biology 11:1424–1439. doi:10.1111/j.1365-2486.2005.001002.x",
    "papale2006": "Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem "
                  "Exchange measured with eddy covariance technique: algorithms and uncertainty "
                  "estimation. Biogeosciences 3:571–583. doi:10.5194/bg-3-571-2006",
    "barr2013": "Barr, A. G. et al. (2013). Use of change-point detection for friction-velocity "
                "threshold evaluation in eddy-covariance studies. Agricultural and Forest "
                "Meteorology 171–172:31–45. doi:10.1016/j.agrformet.2012.11.023",
    "lloyd1994": "Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil "
                 "respiration. Functional Ecology 8:315–323. doi:10.2307/2389824",
    "lasslop2010": "Lasslop, G. et al. (2010). Separation of net ecosystem exchange into "
                   "assimilation and respiration using a light response curve approach: "
                   "critical issues and global evaluation. Global Change Biology 16:187–208. "
                   "doi:10.1111/j.1365-2486.2009.02041.x",
    "hollinger2005": "Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy "
                     "covariance measurements and its application to physiological models. "
                     "Tree Physiology 25:873–885. doi:10.1093/treephys/25.7.873",
    "richardson2006": "Richardson, A. D. et al. (2006). A multi-site analysis of random error "
                      "in tower-based measurements of carbon and energy fluxes. Agricultural "
                      "and Forest Meteorology 136:1–18. doi:10.1016/j.agrformet.2006.01.007",
    "kopp2011": "Kopp, G. & Lean, J. L. (2011). A new, lower value of total solar irradiance: "
                "evidence and climate significance. Geophysical Research Letters 38, L01706. "
                "doi:10.1029/2010GL045777",
    "hoeting1999": "Hoeting, J. A., Madigan, D., Raftery, A. E. & Volinsky, C. T. (1999). "
                   "Bayesian model averaging: a tutorial. Statistical Science 14:382–417. "
                   "doi:10.1214/ss/1009212519",
    "burnham2002": "Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel "
                   "Inference: A Practical Information-Theoretic Approach, 2nd ed. Springer, "
                   "New York.",
    "schwarz1978": "Schwarz, G. (1978). Estimating the dimension of a model. The Annals of "
                   "Statistics 6:461–464.",
    "richardson2007": "Richardson, A. D. & Hollinger, D. Y. (2007). A method to estimate the "
                      "additional uncertainty in gap-filled NEE resulting from long gaps. "
                      "Agricultural and Forest Meteorology 147:199–208.",
    "falge2001": "Falge, E. et al. (2001). Gap filling strategies for defensible annual sums "
                 "of net ecosystem exchange. Agricultural and Forest Meteorology 107:43–69.",
    "johnson1984": "Johnson, I. R. & Thornley, J. H. M. (1984). A model of instantaneous and "
                   "daily canopy photosynthesis. Journal of Theoretical Biology 107:531–545.",
    "okabe2008": "Okabe, M. & Ito, K. (2008). Color Universal Design (CUD): how to make figures "
                 "and presentations that are friendly to colorblind people (colour palette of "
                 "the figures).",
}




# ------------------------------------------------------------------------------ reading


def read_written(directory) -> Written:
    """Read every table a result folder's manifest lists, and the manifest itself.

    Parameters
    ----------
    directory : path-like
        Result folder written by :meth:`fluxpart.Result.write`.

    Returns
    -------
    fluxpart.figures.Written
        The manifest, the tables by manifest name and the run's settings.

    Raises
    ------
    InputFileError
        If the folder has no manifest, does not match it (seal, table hashes; see
        :func:`fluxpart.resultdir.read_folder`), or lacks a table the report needs.
    """
    directory = Path(directory)
    manifest, tables = read_folder(directory)
    fields = {}
    for name, table in tables.items():
        # the units and descriptions of the very tables read: the page read them again
        # from the folder's files, so a folder moved or replaced meanwhile (a run swapping
        # in its result) ended the report in a FileNotFoundError traceback
        units = table.attrs.get("units") or {}
        descriptions = table.attrs.get("descriptions") or {}
        fields[name] = {column: (display_unit(str(units.get(column, ""))),
                                 str(descriptions.get(column, "")))
                        for column in {**units, **descriptions}}
        table.attrs = {}  # attrs slow every copy
    for name in ("timeseries", "annual"):
        if name not in tables:
            raise InputFileError(f"the manifest of {str(directory)!r} lists no {name!r} table; "
                                 "the report needs it")
    return Written(manifest=manifest, tables=tables, config=dict(manifest.get("config", {})),
                   fields=fields)


# ------------------------------------------------------------------------------ summary


def _finite(value) -> bool:
    try:
        return value is not None and bool(np.isfinite(float(value)))
    except (TypeError, ValueError):
        return False


def _number(value, decimals: int, key: str, label, unit: str = "") -> str:
    """A summary number in a span whose data attributes name its column and period."""
    if not _finite(value):
        return f'<span class="missing" data-summary="{_e(key)}" data-year="{_e(label)}">n/a</span>'
    text = f"{float(value):.{decimals}f}".replace("-", "−")
    unit_html = f' <span class="unit">{_e(unit)}</span>' if unit else ""
    return (f'<span class="number" data-summary="{_e(key)}" data-year="{_e(label)}" '
            f'data-decimals="{decimals}" data-value="{float(value)!r}">{text}</span>{unit_html}')


def interval_of(row: pd.Series, flux: str):
    """(kind, low, high) of a flux's annual uncertainty as written.

    ``("ci95", low, high)`` from ``{flux}_ci95_low``/``_high`` where the run wrote a
    95 % interval; else ``("combined", value - u, value + u)`` from
    ``{flux}_uncertainty_total`` (root sum of squares of the parts, not a
    calibrated 95 % interval); else ``(None, nan, nan)``.
    """
    low, high = row.get(f"{flux}_ci95_low"), row.get(f"{flux}_ci95_high")
    if _finite(low) and _finite(high):
        return "ci95", float(low), float(high)
    total, value = row.get(f"{flux}_uncertainty_total"), row.get(flux)
    if _finite(total) and _finite(value):
        return "combined", float(value) - float(total), float(value) + float(total)
    return None, np.nan, np.nan


def _interval_html(kind, low, high, decimals, key, label, row) -> str:
    if kind == "ci95":
        return (f"95 % interval {_number(low, decimals, key + '_ci95_low', label)} to "
                f"{_number(high, decimals, key + '_ci95_high', label)}")
    if kind == "combined":
        half = row[f"{key}_uncertainty_total"]
        return (f"± {_number(half, decimals, key + '_uncertainty_total', label)} "
                '(combined uncertainty<sup><a href="#note-combined">*</a></sup>)')
    return "no uncertainty written"


def _period_heading(label, first, last, partial, row=None) -> str:
    span = f"{day_text(first)} – {day_text(last)}"
    # a budget year not starting on 1 January is labelled by the year it starts in, so a
    # record of January-June 2013 under year_start 07-01 read "2012: 01 Jan 2013 – 30 Jun
    # 2013"; the period itself is named before the records it holds (review39)
    start = row.get("period_start") if row is not None else None
    end = row.get("period_end") if row is not None else None
    if (start is not None and end is not None and pd.notna(start) and pd.notna(end)
            and (pd.Timestamp(start).month, pd.Timestamp(start).day) != (1, 1)):
        start, end = pd.Timestamp(start), pd.Timestamp(end)
        last_day = end - pd.Timedelta(days=1) if end == end.normalize() else end
        period = (f"Budget year {_e(label)} ({day_text(start)} – {day_text(last_day)}): "
                  f"records {span}")
    else:
        period = f"{_e(label)}: {span}"
    if partial:
        return f"{period}, partial period — sums over the records present, not an annual total"
    return period


def _ustar_year_rows(written: Written) -> pd.DataFrame:
    """The u* table's whole-year rows (one per calendar year of data), by year."""
    table = written.table("ustar")
    if not len(table) or not {"period", "year"} <= set(table.columns):
        return pd.DataFrame()
    return table[table["period"] == "year"].drop_duplicates("year").set_index("year")


def _ustar_range(written: Written, year) -> str:
    rows = _ustar_year_rows(written)
    if year not in rows.index or not {"threshold_p05", "threshold_p95"} <= set(rows.columns):
        return ""
    low, high = rows.loc[year, "threshold_p05"], rows.loc[year, "threshold_p95"]
    if not (_finite(low) and _finite(high)):
        return ""
    # a threshold outside its own range, said with why (round ustar47's diagnosis)
    median = rows.loc[year, "threshold_p50"] if "threshold_p50" in rows.columns else None
    outside = (outside_range_clause(rows.loc[year, "threshold"], low, high, median=median)
               if "threshold" in rows.columns else "")
    return (f" (bootstrap 5–95 %: {float(low):.3f}–{float(high):.3f} m s-1"
            f"{'; ' + outside if outside else ''})")


def _ustar_fact(written: Written, label, row, mask) -> str:
    """The summary's u* line: the period's threshold with the bootstrap range it came from.

    u* thresholds are detected per calendar year of data; a budget year from another
    ``year_start`` spans two of them and its ``ustar_threshold`` is the larger. Each
    calendar year's threshold is then named with its own bootstrap range, so that no
    threshold is printed beside another year's range.
    """
    value = _number(row["ustar_threshold"], 3, "ustar_threshold", label, "m s-1")
    rows = _ustar_year_rows(written)
    years = sorted(set(written.timeseries.index[mask].year) & set(rows.index)) \
        if "threshold" in rows.columns else []
    if len(years) < 2:
        # the one calendar year whose records the period holds owns the threshold; the
        # budget-year label is another year where the period's records begin after it
        own = years[0] if years else label
        return (f"{value}{_ustar_range(written, own)}; night records below it were removed "
                "before gap filling.")
    parts = "; ".join(
        f"{year}: {float(rows.loc[year, 'threshold']):.3f} m s-1{_ustar_range(written, year)}"
        if _finite(rows.loc[year, "threshold"]) else f"{year}: none written"
        for year in years)
    return (f"{value}, the largest of the thresholds of the calendar years in this period "
            f"({parts}); night records below their year's threshold were removed before gap "
            "filling.")


def _uncertainty_fact(parts: pd.DataFrame | None, label) -> str:
    """The summary's sentence on what drove a period's uncertainty, or ''.

    NEE's parts in decreasing order, then for each partitioned flux its largest part,
    each with its 1-sigma size and the flux's total, as written
    (:func:`fluxpart.uncertainty_parts.uncertainty_parts`).
    """
    if parts is None or label not in parts.index.get_level_values("year"):
        return ""
    table = parts.xs(label, level="year")
    names = [name for name in PART_LABELS if name in table.columns]

    def ordered(flux):
        values = table.loc[flux, names].astype(float).dropna()
        return values[values > 0].sort_values(ascending=False, kind="stable")

    sentences = []
    if "nee" in table.index and _finite(table.loc["nee", "total"]):
        nee = ordered("nee")
        listed = ", ".join(f"{PART_LABELS[name]} {value:.1f}" for name, value in nee.items())
        sentences.append(f"NEE ± {float(table.loc['nee', 'total']):.1f} {_CARBON_UNIT} "
                         f"(1 sigma){': ' + listed if listed else ''}.")
    largest = []
    for flux in ("gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
        if flux not in table.index or not _finite(table.loc[flux, "total"]):
            continue
        values = ordered(flux)
        if len(values):
            kind, method = flux.split("_")
            largest.append(f"{'GPP' if kind == 'gpp' else 'Reco'} {method} "
                           f"{values.iloc[0]:.1f} of {float(table.loc[flux, 'total']):.1f} "
                           f"({PART_LABELS[values.index[0]]})")
    if largest:
        sentences.append("Largest part of each partitioned flux (1 sigma, "
                         f"{_CARBON_UNIT}): {'; '.join(largest)}.")
    if sentences:
        sentences.append("Systematic measurement errors are not among them (see the note "
                         "below the cards).")
    return _e(" ".join(sentences))


def _records_fact(written: Written, mask, first, last) -> str:
    """The card's account of what became of the period's records, in plain words
    (:func:`fluxpart.plain_account.records_sentence`), or "" where the time series holds
    no screening outcome (older folders)."""
    series = written.timeseries
    if "rejection_reason" not in series.columns or not np.any(mask):
        return ""
    events = [str(event) for event in written.setting("events", None) or []]
    moments = pd.to_datetime(pd.Series(events, dtype=object), errors="coerce")
    inside = [event for event, moment in zip(events, moments, strict=True)
              if pd.notna(moment) and first <= moment <= last]
    return records_sentence(series["rejection_reason"].to_numpy()[mask],
                            interval_minutes(series.index), inside)


def _interval_fact(parts: pd.DataFrame | None, label, kind, low, high) -> str:
    """The card's plain words on NEE's 95 % interval, or "" without one
    (:func:`fluxpart.plain_account.interval_sentence`)."""
    if kind != "ci95" or parts is None or (label, "nee") not in parts.index:
        return ""
    row = parts.loc[(label, "nee")]
    names = [name for name in PART_LABELS if name in row.index]
    largest = []
    for flux in ("gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
        if (label, flux) in parts.index:
            values = parts.loc[(label, flux), names].astype(float).dropna()
            values = values[values > 0]
            if len(values):
                largest.append(values.sort_values(ascending=False, kind="stable").index[0])
    nee = interval_sentence(row[names], float(row["total"]), low, high)
    return f"{nee} {partition_sentence(largest)}".strip() if nee else ""


def _unmeasured_note(written: Written, label, mask) -> str:
    """The card's caution where months of the period hold no measured NEE record.

    Such a period is complete (every record filled) and its 95 % intervals are written,
    but its sums over those months are model output and the intervals were not checked
    there (:mod:`fluxpart.measured_months`; round review30). Read from the written time
    series, so older result folders get it too; nothing where the fill quality is absent.
    """
    series = written.timeseries
    if "nee_fill_quality" not in series.columns or not np.any(mask):
        return ""
    measured = fill_category(series["nee_fill_quality"].to_numpy()[mask]) == "measured"
    # months inside an outage longer than the intervals were checked on (round review31);
    # every month of a period without any measured NEE
    months = unchecked_months(series.index[mask], measured)
    if not months:
        return ""
    total = series.index[mask].to_period("M").nunique()
    what = ("No NEE was measured in this period" if not measured.any() else
            f"No NEE was measured in {len(months)} of its {total} months")
    return (f'<p class="caution" data-summary="unmeasured_months" data-year="{_e(label)}" '
            f'data-value="{len(months)}"><strong>{what}</strong> '
            f"({_e(month_runs_text(months))}): those months are gap-filled from other months "
            "or years and partitioned on those fills, so the sums above are model output "
            "there, not measurements, and the 95 % intervals were not checked on months "
            "without a measured record (their coverage was measured on outages of up to "
            "three weeks; the daytime method's carry no gap-filling part, although its "
            "light responses there come from windows of other months).</p>")


def _spans_zero(kind, low, high) -> str:
    """The headline's clause where NEE's stated 95 % interval holds zero: "took up net 379
    g C m-2" over an interval from -1154 to +396 read as a sink (review54)."""
    if kind == "ci95" and _finite(low) and _finite(high) and float(low) < 0.0 < float(high):
        return (" The interval holds zero: this record does not tell a net uptake from a "
                "net release.")
    return ""


def _not_stored(release: bool, spans_zero: bool = False) -> str:
    """The headline's clause beside the tonnes of a net uptake: the tonnes are what a reader
    quotes, and the note that they are not carbon stored stood only in the small print
    below the card (newuser54); a crediting methodology decides what a removal is. Where
    the interval holds zero, the sentence before says the record does not tell an uptake
    from a release, so the clause does not say the tonnes were taken up (review74)."""
    if release:
        return ""
    taken = ("Were they an uptake, these tonnes would be CO2 taken" if spans_zero
             else "These tonnes are CO2 taken")
    return (f" {taken} from the air above the canopy: not by themselves carbon the "
            "ecosystem stored, nor a credited removal (notes below).")


def _summary_card(written: Written) -> tuple[str, bool]:
    """The summary per budget period; also whether a combined (non-95 %) uncertainty is shown."""
    annual = written.annual
    periods = period_masks(written)
    uncertainty_table = uncertainty_parts(annual)
    cards, combined_used = [], False
    # a method that could not fit (fluxpart.method_failure): said so, not shown as numbers
    unfitted = "".join(
        f'<p class="small" data-summary="unfitted" data-method="{method}">The {method} '
        "partitioning method could not fit this record: its GPP and Reco are not given "
        "(n/a; the warnings below name the reason).</p>" for method in unfitted_methods(written))
    for label, (_, first, last, _, partial) in periods.items():
        row = annual.loc[label]
        nee = float(row["nee"]) if _finite(row.get("nee")) else np.nan
        kind, low, high = interval_of(row, "nee")
        combined_used |= kind == "combined"
        verb = "took up" if nee < 0 else "released"
        if not np.isfinite(nee):
            cards.append(f'<div class="card" data-period="{_e(label)}"><h3>'
                         f"{_period_heading(label, first, last, partial, row)}</h3><p>No NEE "
                         "sum was written for this period.</p></div>")
            continue
        # t CO2 ha-1 of uptake (positive = uptake): written by the run where present
        uptake = row.get("net_uptake_t_co2_per_ha")
        if not _finite(uptake) and _finite(nee):
            uptake = -nee * _T_CO2_PER_HA_PER_G_C_M2
        # a net source is a release of CO2, said as one: "a net uptake of −3.91 t CO2
        # ha-1" read as a credit with its minus sign dropped (review39); the spans of a
        # release carry the released tonnes, positive
        release = _finite(uptake) and float(uptake) < 0
        if kind == "ci95" and release:
            ends = [_number(end * _T_CO2_PER_HA_PER_G_C_M2, 2, key, label)
                    for end, key in ((low, "release_ci95_low"), (high, "release_ci95_high"))]
            t_interval = f"95 % interval {ends[0]} to {ends[1]}"
        elif kind == "ci95":
            t_text = (f"{_number(-high * _T_CO2_PER_HA_PER_G_C_M2, 2, 'uptake_ci95_low', label)}"
                      f" to {_number(-low * _T_CO2_PER_HA_PER_G_C_M2, 2, 'uptake_ci95_high', label)}")
            t_interval = f"95 % interval {t_text}"
        elif _finite(row.get("net_uptake_t_co2_per_ha_uncertainty")):
            t_interval = ("± " + _number(row["net_uptake_t_co2_per_ha_uncertainty"], 2,
                                         "net_uptake_t_co2_per_ha_uncertainty", label)
                          + " (combined)")
        else:
            t_interval = "no uncertainty written"
        if release:
            shown = _number(-float(uptake), 2, "net_release_t_co2_per_ha", label, "t CO2 ha-1")
            tonnes = f"a net release of {shown}"
        else:
            shown = _number(uptake, 2, "net_uptake_t_co2_per_ha", label, "t CO2 ha-1")
            tonnes = f"a net uptake of {shown}"
        headline = (
            f'<p class="headline">The ecosystem {verb} net '
            f"{_number(abs(nee), 0, 'nee_abs', label, _CARBON_UNIT)} of carbon: "
            f"NEE {_number(nee, 1, 'nee', label, _CARBON_UNIT)} "
            f"({_interval_html(kind, low, high, 1, 'nee', label, row)}), {tonnes} "
            f"({t_interval}).{_spans_zero(kind, low, high)}"
            f"{_not_stored(release, bool(_spans_zero(kind, low, high)))}</p>")
        headline += _unmeasured_note(written, label, periods[label][3])
        flux_rows = []
        for part in ("gpp", "reco"):
            cells = []
            for method in ("nighttime", "daytime"):
                flux = f"{part}_{method}"
                kind_f, low_f, high_f = interval_of(row, flux)
                combined_used |= kind_f == "combined"
                cells.append(f"<td>{_number(row.get(flux), 0, flux, label)} "
                             f'<span class="small">{_interval_html(kind_f, low_f, high_f, 0, flux, label, row)}'
                             "</span></td>")
            name = "GPP (gross uptake)" if part == "gpp" else "Reco (ecosystem respiration)"
            flux_rows.append(f'<tr><th scope="row">{name}</th>{"".join(cells)}</tr>')
        flux_table = ('<table class="summary-fluxes"><thead><tr><th scope="col">'
                      f'[{_CARBON_UNIT}]</th><th scope="col">Nighttime method</th>'
                      '<th scope="col">Daytime method</th></tr></thead>'
                      f"<tbody>{''.join(flux_rows)}</tbody></table>")
        facts = []
        done = _records_fact(written, periods[label][3], first, last)
        if done:
            facts.append(f"<li><strong>What was done:</strong> {done}</li>")
        if _finite(row.get("share_measured")):
            unfilled = float(row["share_unfilled"]) if _finite(row.get("share_unfilled")) else 0.0
            filled = 1.0 - float(row["share_measured"]) - unfilled
            parts = [f"quality {name} {100 * float(row[column]):.1f} %"
                     for name, column in (("A", "share_filled_a"), ("B", "share_filled_b"),
                                          ("C", "share_filled_c"))
                     if _finite(row.get(column))]
            facts.append(f"<li><strong>Gap-filled:</strong> "
                         f"{_number(100 * filled, 1, 'share_gap_filled_percent', label, '%')} of "
                         f"the records ({', '.join(parts)}); measured "
                         f"{100 * float(row['share_measured']):.1f} %, left unfilled "
                         f"{100 * unfilled:.1f} %"
                         + (f"; {100 * float(row['nee_share_from_filled']):.0f} % of the sum of "
                            "|NEE| comes from filled records"
                            if _finite(row.get("nee_share_from_filled")) else "") + ".</li>")
        meaning = _interval_fact(uncertainty_table, label, kind, low, high)
        if meaning:
            facts.append(f"<li><strong>What the interval means:</strong> {meaning}</li>")
        drivers = _uncertainty_fact(uncertainty_table, label)
        if drivers:
            facts.append(f"<li><strong>What the uncertainty comes from:</strong> {drivers}</li>")
        if "ustar_threshold" in row.index:
            facts.append("<li><strong>u* threshold:</strong> "
                         f"{_ustar_fact(written, label, row, periods[label][3])}</li>")
        if "methods_agree" in row.index and pd.notna(row["methods_agree"]):
            agree = bool(row["methods_agree"])
            margin = written.setting("agreement_margin")
            relative = [f"{name} {_signed(100 * float(row[f'{flux}_relative_difference']))} %"
                        + _absolute_difference(row.get(f"{flux}_method_difference"))
                        for name, flux in (("GPP", "gpp"), ("Reco", "reco"))
                        if _finite(row.get(f"{flux}_relative_difference"))]
            facts.append(
                f'<li><strong>Method agreement:</strong> <span data-summary="methods_agree" '
                f'data-year="{_e(label)}" data-value="{int(agree)}">'
                f"{'the two partitioning methods agree' if agree else 'the two partitioning methods DISAGREE'}"
                f"</span> (daytime minus nighttime: {', '.join(relative) or 'n/a'}"
                + (f"; margin ±{100 * float(margin):.0f} %" if _finite(margin) else "")
                + ")" + _shared_e0_note(written, first, last) + ".</li>")
        cards.append(f'<div class="card" data-period="{_e(label)}"><h3>'
                     f"{_period_heading(label, first, last, partial, row)}</h3>{headline}"
                     f"{flux_table}{unfitted}<ul>{''.join(facts)}</ul></div>")
    index = written.timeseries.index
    # the record's span is under the page's title and each card's heading gives its
    # period's: a third copy here read as a budget year of its own (review58)
    record = (f'<p class="record-line">{interval_minutes(index)}-minute records. '
              "<strong>Clock check:</strong> "
              f"{_e(clock_sentence(written.manifest))}.</p>")
    return record + "".join(cards), combined_used


def _shared_e0_note(written: Written, first, last) -> str:
    """A clause for the method-agreement line where the daytime method took the nighttime
    method's E0 (``e0_source`` ``fallback`` in the daytime parameter table) in windows
    centred from `first` to `last`: the two then share their temperature sensitivity, and
    their agreement is weaker evidence than two independent estimates (review43: the card
    said "agree" while only the warnings said so)."""
    table = written.table("parameters_daytime")
    if not {"e0_source", "window_centre"} <= set(table.columns):
        return ""
    centres = pd.to_datetime(table["window_centre"])
    inside = ((centres >= first) & (centres <= last)).to_numpy()
    shared = int((table["e0_source"].astype(str).to_numpy()[inside] == "fallback").sum())
    if not shared:
        return ""
    return (f"; not independent: the daytime method took the nighttime method's E0 in "
            f"{shared} of {int(inside.sum())} light-response windows")


def _absolute_difference(difference) -> str:
    """The method difference in g C m-2 beside its percentage: a dormant or short period's
    sums near zero give large percentages of a few tenths of a gram (review46: "GPP +94.2 %"
    for 0.4 against 1.2 g C m-2 read as a failed partitioning). Empty where the result
    holds no such column."""
    if not _finite(difference):
        return ""
    return f" ({_signed(float(difference))} g C m-2)"


def _signed(value: float) -> str:
    """`value` at one decimal with its sign, and "0.0" without one where it rounds to zero:
    IEEE 754 keeps the sign of a negative number rounded to zero ("-0.0", review21), and a
    forced "+0.0 %" beside "(-0.2 g C m-2)" gave one difference two signs (report52)."""
    rounded = round(value, 1)
    return "0.0" if rounded == 0 else f"{rounded:+.1f}"


def _reading_notes(combined_used: bool, light_shape: bool = False) -> str:
    """The notes under the summary cards; `light_shape`: the result wrote the daytime
    totals' light-shape part (``daytime_curvature = "average"``), named among the parts
    (review55)."""
    shape = ("; for the daytime method also the shape of its light response (rectangular "
             "or with a profiled curvature, daytime_curvature = average)" if light_shape else "")
    notes = [
        "NEE &lt; 0 is net uptake by the ecosystem; GPP and Reco are positive. Budgets are in "
        "grams of carbon per square metre (g C m-2); t CO2 ha-1 = g C m-2 × "
        f"{CO2_MOLAR_MASS}/{CARBON_MOLAR_MASS} × 0.01. {html.escape(NEE_SCOPE)}.",
        "The uncertainty covers the parts the run computed and wrote beside each total (the "
        "random error, gap filling with its bias on artificial gaps, the correlation of "
        "fills within a week and with the records they average and a change of state across "
        "a gap longer than 14 days, the u* threshold, fitted "
        "parameters (also Rref between its windows), the choice of partitioning method, of "
        "respiration temperature and of respiration form (Lloyd–Taylor or a constant Q10; by "
        "default the nighttime Reco is their average weighted by how well each fits the night "
        "data, the weight in the manifest's provenance.respiration_form)"
        f"{shape}, as far as each applies to the flux); systematic errors of the measurement itself (energy-balance closure, "
        "advection, storage, footprint) are not included (the manifest lists every part "
        "left out).",
        html.escape(ROUNDING_NOTE, quote=False),
    ]
    if combined_used:
        notes.append('<span id="note-combined">* Combined uncertainty: the root sum of squares '
                     "of the random error (standard deviation) and the u* and method half-ranges "
                     "written by the run; this result folder has no 95 % interval, so the value "
                     "is not one.</span>")
    return '<ul class="notes">' + "".join(f"<li>{n}</li>" for n in notes) + "</ul>"


# ------------------------------------------------------------------------------ settings


_RECALLED = re.compile(r"\s*\(m\)")


def _source_check(note: str) -> str:
    """How the source of a setting stands: recalled, our choice, common practice, cited."""
    if _RECALLED.search(note):
        return "recalled from memory, not yet checked against the paper"
    if "our choice" in note:
        return "our choice (reason in the note)"
    if "common practice" in note:
        return "common practice"
    if re.search(r"et al\.|\b(19|20)\d{2}\b", note):
        return "cited"
    return "–"


def _settings_table(config: dict) -> str:
    """The result's settings, each with its meaning and source; a setting its record
    does not name (:func:`fluxpart.config.implied_settings`: added after the folder's
    release, or written only away from its default) with the value that computed the
    result, marked implied (leftovers55: a 0.33.0 folder's table lacked
    ``night_donor_margin``, which ``load`` and ``verify`` take as "none")."""
    notes = _config_notes()
    implied = implied_settings(config)
    rows = []
    for key, value in sorted({**config, **{k: v for k, (v, _) in implied.items()}}.items()):
        note = notes.get(key, "")
        check = _source_check(note)
        css = ' class="unchecked"' if check.startswith("recalled") else ""
        value_html = _e(_setting_value(value))
        if key in implied:
            value_html += ' <span class="implied">(implied, not recorded)</span>'
            note = f"{implied[key][1][0].upper()}{implied[key][1][1:]}. {note}".strip()
        rows.append(f'<tr><th scope="row"><code>{_e(key)}</code></th>'
                    f'<td data-setting="{_e(key)}"'
                    f'{" data-implied" if key in implied else ""}>{value_html}</td>'
                    f'<td class="description">{_e(_RECALLED.sub("", note))}</td>'
                    f'<td{css} data-check="{_e(key)}">{_e(check)}</td></tr>')
    return ('<table id="settings"><thead><tr><th scope="col">Setting</th><th scope="col">Value'
            '</th><th scope="col">Meaning and source</th><th scope="col">Source checked?</th>'
            f"</tr></thead><tbody>{''.join(rows)}</tbody></table>")


# ------------------------------------------------------------------------------ page


def _e(value) -> str:
    return html.escape(str(value), quote=True)


def _decimals(unit: str, column: str, dtype) -> int:
    if pd.api.types.is_integer_dtype(dtype):
        return 0
    if unit == _CARBON_UNIT or unit == "K":
        return 1
    if unit == "m s-1" or unit == "1":
        return 3
    if unit == _FLUX_UNIT:
        return 2
    if unit == "µmol J-1":                      # a light-use efficiency: 0.001-0.1
        return 4
    return 3


#: A cell's text that is a date: a month (``2021-02``), a day (``2021-02-14``) or a day
#: and time (``2021-02-14 13:30``), as :func:`_frame_table` and the period labels write them.
_DATE_PATTERN = re.compile(r"\d{4}-\d{2}(-\d{2}( \d{2}:\d{2})?)?")


def _cell(value, decimals: int, attributes: dict) -> str:
    attrs = "".join(f' data-{key}="{_e(val)}"' for key, val in attributes.items())
    if isinstance(value, (bool, np.bool_)):
        return f'<td{attrs} data-value="{int(value)}">{"yes" if value else "no"}</td>'
    if value is None or (isinstance(value, (float, np.floating)) and not np.isfinite(value)):
        return f'<td{attrs} class="missing">n/a</td>'
    if isinstance(value, (int, np.integer)):
        return f'<td{attrs} data-decimals="0" class="number">{int(value)}</td>'
    if isinstance(value, (float, np.floating)):
        return (f'<td{attrs} data-decimals="{decimals}" class="number">'
                f"{float(value):.{decimals}f}</td>")
    if isinstance(value, str) and _DATE_PATTERN.fullmatch(value):
        # a month, day or time stamp is kept on one line: printed, "2021-02" broke at
        # its hyphen into "2021-" and "02" (review59)
        return f'<td{attrs} class="date">{_e(value)}</td>'
    return f"<td{attrs}>{_e(value)}</td>"


def _field_metadata(path: Path) -> dict[str, tuple[str, str]]:
    """Column -> (unit, description) from a table's Arrow field metadata."""
    import pyarrow.parquet as pq

    from .store import parquet_source

    with parquet_source(path) as source:
        schema = pq.read_schema(source)
    out = {}
    for field in schema:
        meta = field.metadata or {}
        out[field.name] = (display_unit(meta.get(b"unit", b"").decode()),
                           meta.get(b"description", b"").decode())
    return out


def _is_reportable(series: pd.Series) -> bool:
    return pd.api.types.is_numeric_dtype(series) or pd.api.types.is_bool_dtype(series)


def _annual_groups(annual: pd.DataFrame) -> dict[str, list[str]]:
    columns = [c for c in annual.columns if _is_reportable(annual[c])]
    budget = [c for c in _BUDGET_COLUMNS if c in columns]
    coverage = [c for c in columns if _COVERAGE_PATTERN.fullmatch(c) and c not in budget]
    uncertainty = [c for c in columns if c not in budget and c not in coverage]
    return {"budget": budget, "uncertainty": uncertainty, "coverage": coverage}


def _year_heading(annual: pd.DataFrame, year: int) -> str:
    """A column heading: the year, and its days where the budget year is not a calendar year
    (``year`` is the calendar year a budget year starts in, so "2020" alone would read as
    January to December 2020)."""
    start = annual.loc[year, "period_start"] if "period_start" in annual.columns else None
    if start is None or pd.isna(start) or (pd.Timestamp(start).month,
                                           pd.Timestamp(start).day) == (1, 1):
        return _e(year)
    start = pd.Timestamp(start)
    last = start + pd.DateOffset(years=1) - pd.Timedelta(days=1)
    return (f'{_e(year)}<br><span class="small">{day_text(start)} – '
            f"{day_text(last)}</span>")


def _annual_table(annual: pd.DataFrame, columns, metadata, table_id: str) -> str:
    years = [int(y) for y in annual.index]
    head = "".join(f'<th scope="col">{_year_heading(annual, y)}</th>' for y in years)
    rows = []
    for column in columns:
        unit, description = metadata.get(column, ("", ""))
        decimals = _decimals(unit, column, annual[column].dtype)
        cells = "".join(_cell(annual.loc[year, column], decimals,
                              {"column": column, "year": year}) for year in years)
        rows.append(f'<tr><th scope="row"><code>{_e(column)}</code></th><td class="unit">'
                    f"{_e(unit if unit != '1' else '–')}</td><td class=\"description\">"
                    f"{_e(description)}</td>{cells}</tr>")
    return (f'<table id="{_e(table_id)}"><thead><tr><th scope="col">Column</th>'
            f'<th scope="col">Unit</th><th scope="col">Meaning</th>{head}</tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table>")


def _frame_table(flat: pd.DataFrame, metadata, table_id: str, key: str) -> str:
    """A table with one row per row of `flat`, keyed by its first column (attribute `key`)."""
    head = "".join(
        f'<th scope="col">{_e(c)}'
        + (f'<br><span class="unit">[{_e(metadata.get(c, ("", ""))[0])}]</span>'
           if metadata.get(c, ("", ""))[0] not in ("", "1") else "") + "</th>"
        for c in flat.columns)
    # column lists instead of iterrows: each column keeps its own type, and no Series
    # is built per row
    columns = list(flat.columns)
    values = [flat[column].tolist() for column in columns]
    decimals = [_decimals(metadata.get(column, ("", ""))[0], column, flat[column].dtype)
                for column in columns]
    rows = []
    for position in range(len(flat)):
        label = _label(values[0][position], key)
        cells = []
        for column, column_values, places in zip(columns, values, decimals, strict=True):
            value = column_values[position]
            if column == columns[0]:
                value = label
            elif isinstance(value, pd.Timestamp):
                value = value.strftime("%Y-%m-%d %H:%M") if (value.hour or value.minute) \
                    else value.strftime("%Y-%m-%d")
            cells.append(_cell(value, places, {"column": column, key: label}))
        rows.append(f"<tr>{''.join(cells)}</tr>")
    return (f'<table id="{_e(table_id)}"><thead><tr>{head}</tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table>")


def _label(value, key: str):
    if isinstance(value, pd.Timestamp):
        return value.strftime("%Y-%m") if key == "month" else value.strftime("%Y-%m-%d")
    return value


def _config_notes() -> dict[str, str]:
    """Setting name -> its description in the Config docstring (where it cites its source)."""
    text = inspect.cleandoc(Config.__doc__ or "")
    section = text.split("Attributes\n----------\n", 1)[-1]
    notes, names = {}, []
    for line in section.splitlines():
        if line and not line.startswith(" ") and " : " in line:
            names = [n.strip() for n in line.split(" : ", 1)[0].split(",")]
            for name in names:
                notes[name] = ""
        elif line.startswith(" ") and names:
            for name in names:
                notes[name] = (notes[name] + " " + line.strip()).strip()
    return {name: _plain_text(note) for name, note in notes.items()}


def _plain_text(text: str) -> str:
    """Drop reStructuredText markup (roles, literals) from a docstring line."""
    text = re.sub(r":\w+:`~?([^`]+)`", r"\1", text)
    return text.replace("``", "").replace("`", "")


def _setting_value(value) -> str:
    if value is None:
        return "none"
    if isinstance(value, (list, tuple)):
        return ", ".join(_setting_value(v) for v in value) or "(empty)"
    if isinstance(value, bool):
        return "yes" if value else "no"
    return str(value)


def _fill_estimate(config: dict, soil: bool = False, light_tests=None) -> str:
    """How an NEE fill of the similarity steps was made, as the result's config says (a
    result written before 0.21.0 has no ``gapfill_estimate``: its fills were means);
    `soil`: the night fills also regressed on soil temperature (a result of 0.22.0 or
    later with a ``tsoil`` column, :func:`_soil_regressor`); `light_tests`: the central
    fill's yearly tests of the preceding day's light (``provenance["night_fill_light"]``;
    None where the result has none)."""
    if config.get("gapfill_estimate", "donor_mean") == "local_linear":
        night = (" (for night gaps also on soil temperature, which chooses no donor: calm "
                 "nights cool the air, not the soil)" if soil else "")
        return ("Each NEE fill of the similarity steps is the similar records' mean moved by "
                "the flux's local slope on Rg, Tair and VPD" + night
                + _night_light(config, light_tests) + " times their offset "
                "from the gap (a local-linear estimate, our refinement: a gap at the edge of "
                "its donors' conditions is not filled at their level).")
    return "Each fill is the mean of the similar records."


def _night_light(config: dict, tests) -> str:
    """The night fills' regressor on the preceding 24 h mean Rg, as the result's config and
    its provenance's yearly tests say: the years it was taken in, or that it was taken in
    none (review45: "in the years whose nights showed it" was said of results where no year
    passed, and of fills without separate night donors, where it acts on nothing)."""
    if (config.get("gapfill_night_light") != "tested"
            or config.get("gapfill_donors") == "similar_conditions_only"):
        return ""
    why = "the calm nights the u* filter removes follow sunny days"
    passed = None if tests is None else [str(t["year"]) for t in tests if t.get("passed")]
    if passed is None:
        return (" (for night gaps also on the preceding 24 h mean Rg in the years whose "
                "measured nights respired more after sunnier days at the same temperature, "
                f"a one-sided test at 1 %: {why})")
    if not passed:
        return (" (the preceding 24 h mean Rg, for night gaps in the years whose measured "
                "nights respire more after sunnier days at the same temperature, a one-sided "
                f"test at 1 %, was taken in no year: {why})")
    whose = "that year's" if len(passed) == 1 else "those years'"
    return (f" (for night gaps in {', '.join(passed)} also on the preceding 24 h mean Rg: "
            f"{whose} measured nights respired more after sunnier days at the same "
            f"temperature, a one-sided test at 1 %, and {why})")


def _fill_donors(config: dict) -> str:
    """Which records filled an NEE gap, as the result's config says (review37: the methods
    named no donor rule, and a result of ``gapfill_donors = "dark_first"`` read as one of
    the default); nothing for a config without the setting."""
    donors = config.get("gapfill_donors")
    if donors == "similar_conditions_only":
        return (" Any record within the tolerances filled an NEE gap, day or night (the "
                "single rule of Reichstein et al. 2005).")
    if donors not in ("separate_day_night", "dark_first"):
        return ""
    text = (" Night gaps of NEE took night records and day gaps day records (Falge et al. "
            "2001), a day gap's mean diurnal course records of both")
    if donors == "dark_first":
        text += ("; a night gap with the sun below the horizon took night records with the "
                 "sun below the horizon first, in the passes of quality A and B "
                 "(gapfill_donors = \"dark_first\", not the default)")
    return text + "."


def _soil_regressor(written: Written) -> bool:
    """Whether the result's night NEE fills regressed on soil temperature: it has a
    ``tsoil`` column and was written by fluxpart 0.22.0 or later (the manifest's version)."""
    version = str(written.manifest.get("versions", {}).get("fluxpart", ""))
    release = tuple(int(part) for part in re.findall(r"\d+", version)[:2])
    return "tsoil_filled" in written.timeseries.columns and release >= (0, 22)


def _night_donors(config: dict) -> str:
    """The night donors the u* threshold's spread withheld, as the result's config says
    (leftovers55: the methods did not say it; a folder that does not record the setting,
    written before it, computed without it)."""
    if config.get("night_donor_margin") != "threshold_spread":
        return ""
    return (" Night records kept by the u* filter but within the threshold's own 1-sigma "
            "above it (half its bootstrap's 16–84 range; a fixed threshold has none) stayed "
            "measured but filled no night gap (night_donor_margin = \"threshold_spread\").")


def _night_fit_records(config: dict) -> str:
    """Which night records the nighttime fits took, where not every one (leftovers55)."""
    if config.get("night_fit_records") != "sun_down":
        return ""
    return (" Its fits took the night records with the sun below the horizon for the whole "
            "interval, and every night record in an Rref window with too few of them "
            "(night_fit_records = \"sun_down\", not the default).")


def _fill_events(config: dict, windows_cut: bool = False) -> str:
    """The declared events no fill crosses, as the result's config says (none in a result
    written before 0.22.0); `windows_cut`: the partitionings' windows were cut at them too
    (:func:`_windows_cut`)."""
    events = list(config.get("events") or ())
    if not events:
        return ""
    windows = (" The nighttime and daytime partitionings' windows were cut at the events "
               "too: no window took records from both sides of one, and each record's "
               "parameters came from the windows of its own piece (a piece without a window "
               "of its own took those beside it, named among the warnings)." if windows_cut
               else " The partitionings' windows (4 to 15 days) were not cut at the events "
               "(a result written before they were).")
    return (f" Declared events ({', '.join(_setting_value(e) for e in events)}: a harvest, "
            "cut, fire or the like) cut the record into pieces; each NEE gap was filled from "
            "the records of its own piece only, or, where its piece held too few, from the "
            "neighbouring piece as well (named among the warnings)." + windows)


def _windows_cut(written: Written) -> bool:
    """Whether the result's partitioning windows were cut at its declared events: no
    window of the daytime table (every window, rejected ones too) nor of the nighttime
    Rref table holds an event strictly inside it. Written tables say it, not a version:
    a result of 0.22.0 has daytime windows across each event inside the record."""
    events = list(written.config.get("events") or ())
    if not events:
        return False
    stamps = [pd.Timestamp(event) for event in events]
    found = False
    for name in ("parameters_daytime", "parameters_nighttime_rref"):
        table = written.table(name)             # empty where the folder lacks it
        if not len(table) or not {"window_start", "window_end"} <= set(table.columns):
            continue
        start, end = (pd.DatetimeIndex(table[column]) for column in ("window_start",
                                                                       "window_end"))
        start, end = (times.tz_localize(None) if times.tz is not None else times
                      for times in (start, end))
        if any(((start < stamp) & (end > stamp)).any() for stamp in stamps):
            return False
        found = True
    return found


def _respiration_methods(config: dict) -> tuple[str, list[str]]:
    """How the nighttime method chose its temperature and form, as the result's config
    says, and the references it cites (review25: the methods named Lloyd–Taylor alone
    while the central Reco of a default run averages it with a constant Q10).

    A result written before 0.10.0 has no ``respiration_form``: its Reco was Lloyd–Taylor
    alone; one before 0.5.0 has no ``respiration_driver`` and used air temperature.
    """
    text, cited = "", []
    driver = config.get("respiration_driver")
    if driver == "auto":
        text += (" The respiration temperature, air or soil where both are measured, is the "
                 "one whose fit explains the measured night NEE better (the Bayesian "
                 "information criterion, Schwarz 1978); the table of inputs below names it "
                 "and why.")
        cited.append("schwarz1978")
    elif driver in ("tair", "tsoil"):
        text += (f" The respiration temperature is {'air' if driver == 'tair' else 'soil'} "
                 "temperature, as set (respiration_driver).")
    if config.get("respiration_form") == "average":
        text += (" The central nighttime Reco is the average of this Lloyd–Taylor fit and "
                 "the same method refitted with a constant Q10, weighted by the probability "
                 "the night NEE gives each (BIC weights; Bayesian model averaging, Hoeting "
                 "et al. 1999; Burnham & Anderson 2002); the weight is in the manifest's "
                 "provenance.respiration_form.")
        cited += ["hoeting1999", "burnham2002"]
    return text, cited


def _light_shape_methods(config: dict, light_shape=None) -> tuple[str, str, list[str]]:
    """The daytime light response's shape as the result's config says, a sentence on the
    ``"average"`` of two shapes, and the references (review55: the methods named the
    rectangular light response whatever ``daytime_curvature`` was).

    Parameters
    ----------
    config : dict
        The result's settings (``daytime_curvature``: 0 or absent, the rectangular
        hyperbola; a number, that curvature; ``"fit"``; ``"average"``).
    light_shape : dict, optional
        The manifest's ``provenance.light_shape`` (written where the average was made).

    Returns
    -------
    shape, average, cited : str, str, list of str
    """
    curvature = config.get("daytime_curvature", 0.0)
    if curvature in (None, 0, 0.0, "average"):
        shape, cited = "rectangular light response", []
    elif curvature == "fit":
        shape = ("non-rectangular light response (Johnson & Thornley 1984) whose curvature, "
                 "profiled on the central u* run's windows, every window and u* scenario takes "
                 "(daytime_curvature = fit; the value in the daytime parameter table)")
        cited = ["johnson1984"]
    else:
        shape = (f"non-rectangular light response of curvature {_setting_value(curvature)} "
                 "(daytime_curvature; Johnson & Thornley 1984)")
        cited = ["johnson1984"]
    average = ""
    if curvature == "average":
        cited = ["johnson1984"]
        if light_shape:
            average = (" With daytime_curvature = average the central run was refitted once "
                       "with a curvature profiled on the record (a non-rectangular light "
                       "response, Johnson & Thornley 1984; curvature "
                       f"{_setting_value(light_shape.get('profiled_curvature'))}), and daytime "
                       "GPP and Reco are the equal-weight average of the two fits, the same "
                       "shift in every u* scenario; half their difference is the light-shape "
                       "part of the daytime totals (the manifest's provenance.light_shape).")
        else:
            average = (" daytime_curvature = average was set, but no curvature could be "
                       "profiled (the warnings): daytime GPP and Reco are the rectangular "
                       "fit's alone, without a light-shape part.")
    return shape, average, cited


def _methods(config: dict, has_random: bool, soil: bool = False,
             windows_cut: bool = False, light_tests=None,
             light_shape=None) -> tuple[str, list[str]]:
    cited = ["papale2006", "reichstein2005", "lloyd1994", "lasslop2010", "kopp2011"]
    method = config.get("ustar_method", "moving_point")
    if method == "moving_point":
        ustar = ("the moving point test on night data by season and temperature class "
                 "(Reichstein et al. 2005; Papale et al. 2006), with a bootstrap of the night "
                 "data for its distribution")
    elif method == "change_point":
        ustar = ("change-point detection (Barr et al. 2013), with a bootstrap of the night data "
                 "for its distribution")
        cited.append("barr2013")
    else:
        ustar = f"a fixed threshold of {_setting_value(config.get('ustar_threshold'))} m s-1"
    respiration, respiration_cited = _respiration_methods(config)
    cited += respiration_cited
    shape, average, shape_cited = _light_shape_methods(config, light_shape)
    cited += shape_cited
    cited.append("richardson2007")
    if config.get("gapfill_donors") in ("separate_day_night", "dark_first"):
        cited.append("falge2001")
    items = [
        "Solar geometry and potential radiation from local standard time and longitude "
        f"(solar constant {SOLAR_CONSTANT:g} W m-2, Kopp & Lean 2011); night where Rg is below "
        f"{_setting_value(config.get('night_rg_threshold'))} W m-2.",
        "Screening: plausible ranges, the site's own flag, and despiking of the double-"
        f"differenced series in {_setting_value(config.get('despike_block_days'))}-day blocks "
        f"with z = {_setting_value(config.get('despike_z'))} (Papale et al. 2006); a record "
        "outside the band is a spike only where it also stands out from the records on both "
        "sides, with further passes for short bursts of spikes (our rule: it spares a "
        "spike's neighbours and a step change).",
        f"u* threshold: {ustar}. Night records below the threshold are removed.",
        "Gap filling of NEE and the drivers by marginal distribution sampling (Reichstein et "
        "al. 2005, appendix): similar Rg, Tair and VPD within widening time windows, then the "
        f"mean diurnal course; fill quality classes A, B, C. {_fill_estimate(config, soil, light_tests)}"
        f"{_fill_donors(config)}{_night_donors(config)}{_fill_events(config, windows_cut)}",
        "Nighttime partitioning: Lloyd–Taylor respiration (Lloyd & Taylor 1994); E0 per year "
        f"from the night data with a free Rref in each {_setting_value(config.get('e0_window_days'))}"
        f"-day window (e0_method = {_setting_value(config.get('e0_method'))}), Rref in "
        f"{_setting_value(config.get('rref_window_days'))}-day windows (Reichstein et al. "
        f"2005); GPP = Reco − NEE.{_night_fit_records(config)}{respiration}",
        f"Daytime partitioning: {shape} with VPD limitation of the "
        f"saturated assimilation, fitted in {_setting_value(config.get('daytime_window_days'))}"
        "-day windows (Lasslop et al. 2010), with its own E0: each window's estimate from the "
        "night data around it, pooled over the year by inverse variance (the daytime "
        "parameter table); a window whose fit sits at a bound, contradicts its night data or "
        f"does not resolve respiration is refitted with Rref from its night data.{average}",
        "Uncertainty: parts of 1 sigma, combined as the root sum of squares, the stated 95 % "
        "interval ±1.96 sigma about each sum: the random measurement error, gap filling "
        "scored on artificial gaps of the site's own gap lengths (Richardson & Hollinger "
        "2007) and, for a gap longer than 14 days, the change of state between the fills "
        "from its two sides alone, the u* threshold (the annual sums recomputed with the threshold at bootstrap "
        f"percentiles {_setting_value(config.get('ustar_scenarios'))}), the fitted "
        "parameters and the structural choices, each part where the result wrote it (the "
        "uncertainty table); the two partitioning methods are compared against the "
        f"agreement margin {_setting_value(config.get('agreement_margin'))}.",
        f"Carbon units: 1 µmol CO2 m-2 s-1 = {CARBON_MOLAR_MASS}e-6 g C m-2 s-1 (IUPAC "
        "standard atomic weight of carbon).",
    ]
    if has_random:
        items.append("Random measurement error of each record, closer to a Laplace than a "
                     "normal distribution (Hollinger & Richardson 2005; Richardson et al. 2006).")
        cited += ["hollinger2005", "richardson2006"]
    cited.append("okabe2008")
    body = "<ol>" + "".join(f"<li>{_e(item)}</li>" for item in items) + "</ol>"
    return body, cited


# In print (the README: "it prints to PDF") a table wider than the page was cut at its
# edge: the u* table lost its draws_valid, reason and source columns and the monthly
# coverage table its last (review58, Chromium's print to PDF). Printed, the detailed tables
# take a smaller type and their column header cells (names without spaces) may break
# anywhere, so each table fits the page width; a section heading stays with what follows.
# Row headers keep their words: broken anywhere, the provenance table's names printed
# three letters wide, "respiration temperature" in eight lines (review59). A cell that is
# a date (class "date") is never wrapped: a month broke at its hyphen, "2021-" over "02"
# (review59, Chromium's print to PDF; leftovers51).
# The summary card's table of GPP and Reco keeps the screen's type: at 7 pt the
# report's headline numbers printed smaller than any text around them (review59).
_CSS = """
body { font-family: "DejaVu Sans", Verdana, Arial, sans-serif; color: #1a1a1a;
       max-width: 1100px; margin: 1.2em auto; padding: 0 1em; line-height: 1.45; }
h1 { font-size: 1.55em; margin-bottom: 0.2em; }
h2 { font-size: 1.25em; border-bottom: 2px solid #2c4a7a; padding-bottom: 0.15em;
     margin-top: 1.6em; }
h3 { font-size: 1.05em; margin: 0.9em 0 0.4em; }
table { border-collapse: collapse; margin: 0.5em 0 1em; font-size: 0.85em; }
.scroll { overflow-x: auto; max-width: 100%; }
tbody th { text-align: left; font-weight: 600; }
th, td { border: 1px solid #c8c8c8; padding: 0.2em 0.5em; vertical-align: top; }
thead th { background: #e8edf5; }
td.number { text-align: right; font-variant-numeric: tabular-nums; }
td.date { white-space: nowrap; }
td.missing, span.missing { color: #777777; }
td.unit, span.unit { color: #444444; white-space: nowrap; }
td.description { color: #333333; max-width: 30em; }
td.unchecked { background: #fff1d6; }
span.implied { color: #555; font-style: italic; }
code { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: 0.95em; }
.caution { border: 2px solid #8a4b00; background: #fff4e0; padding: 0.6em 1em; margin: 0.8em 0; }
.card { border: 1px solid #2c4a7a; border-left: 6px solid #2c4a7a; background: #f5f8fc;
        padding: 0.3em 1em 0.6em; margin: 0.8em 0; break-inside: avoid; }
.headline { font-size: 1.12em; margin: 0.4em 0; }
.record-line { margin: 0.5em 0; }
.card ul { margin: 0.3em 0; padding-left: 1.2em; }
.card table { background: #ffffff; }
.small { font-size: 0.85em; color: #333333; }
.notes { font-size: 0.85em; color: #333333; }
.warning { border-left: 5px solid #b04a00; background: #fbf0e4; padding: 0.4em 0.8em;
           margin: 0.4em 0; }
.reader-note { border-left: 5px solid #999999; padding: 0.4em 0.8em; margin: 0.4em 0; }
figure { margin: 1.2em 0; break-inside: avoid; }
figure img { max-width: 100%; height: auto; border: 1px solid #dddddd; }
figcaption { font-size: 0.92em; color: #222222; margin-top: 0.3em; }
details { margin: 0.5em 0; border: 1px solid #d8d8d8; padding: 0.3em 0.7em; }
summary { cursor: pointer; font-weight: 600; }
.meta { color: #444444; font-size: 0.9em; }
.hash { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: 0.8em;
        word-break: break-all; }
@media print {
  body { max-width: none; margin: 0; font-size: 10pt; }
  details::details-content { content-visibility: visible; display: block; }
  details > * { display: block; }
  .scroll { overflow: visible; }
  .scroll table { font-size: 7pt; }
  .scroll table.summary-fluxes { font-size: 0.85em; }
  .scroll th, .scroll td { padding: 0.1em 0.25em; }
  .scroll thead th { overflow-wrap: anywhere; }
  h2, h3 { break-after: avoid; }
}
"""


def _site_table(written: Written, interval: int) -> str:
    site = written.manifest.get("site", {})
    index = written.timeseries.index

    def number(key, digits):
        return f"{float(site[key]):.{digits}f}" if _finite(site.get(key)) else "n/a"

    rows = [("name", "Name", site.get("name", "")),
            ("latitude", "Latitude [degrees north]", number("latitude", 4)),
            ("longitude", "Longitude [degrees east]", number("longitude", 4)),
            ("utc_offset", "UTC offset of local standard time [h]",
             f"{float(site['utc_offset']):g}" if _finite(site.get("utc_offset")) else "n/a"),
            ("first", "First record (start)", f"{index[0]:%Y-%m-%d %H:%M}"),
            ("last", "Last record (start)", f"{index[-1]:%Y-%m-%d %H:%M}"),
            ("records", "Records", f"{len(index)}"),
            ("interval", "Record length [min]", f"{interval}")]
    body = "".join(f'<tr><th scope="row">{_e(label)}</th><td data-site="{key}">{_e(value)}</td>'
                   "</tr>" for key, label, value in rows)
    return f'<table id="site"><tbody>{body}</tbody></table>'


def _screening_table(written: Written) -> str:
    table = written.table("screening")
    if not len(table) or "records" not in table.columns:
        return "<p>No screening table in this result folder.</p>"
    total = len(written.timeseries)
    rows = []
    for reason, records in table["records"].items():
        share = records / total if total else np.nan
        rows.append(f'<tr><th scope="row"><code>{_e(reason)}</code></th>'
                    + _cell(int(records), 0, {"column": "records", "reason": reason})
                    + _cell(float(share), 3, {"column": "share", "reason": reason}) + "</tr>")
    return ('<table id="screening"><thead><tr><th scope="col">Reason (first that applied)</th>'
            '<th scope="col">Records</th><th scope="col">Share of records</th></tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table>")


def _windows_html(written: Written, metadata: dict) -> str:
    """The light-response windows that are not plainly accepted, as a table.

    `metadata`: column -> (unit, description) of ``parameters_daytime`` as the result
    folder stores them (:func:`_field_metadata`), so each parameter's header shows its
    unit (alpha in µmol J-1 of Rg, beta0 and rref in µmol m-2 s-1, k in hPa-1).
    """
    parameters = written.table("parameters_daytime")
    if not len(parameters):
        return ""
    states = window_status(parameters)
    tally = window_tally(parameters, states, written.setting("daytime_beta0_max"))
    flagged = parameters[states["state"] != "accepted"]
    columns = [c for c in ("window_start", "window_end", "points", "alpha", "beta0", "k", "rref")
               if c in flagged.columns]
    frame = flagged[columns].assign(state=states.loc[flagged.index, "state"],
                                    why=states.loc[flagged.index, "why"])
    frame = frame[[*columns[:2], "state", "why", *columns[2:]]] if len(columns) >= 2 else frame
    return (f"<h3>Light-response windows</h3><p>{len(parameters)} windows: {_e(tally)}. "
            "Windows that are not plainly accepted:</p>"
            + _frame_table(frame.reset_index(drop=True), metadata, "daytime-windows", "window"))


def respiration_form_sentence(share: float, record: dict) -> str:
    """The weights of the two respiration forms in a run's nighttime Reco, as recorded.

    Parameters
    ----------
    share : float
        ``share_applied`` of ``provenance.respiration_form`` [1]: the weight of the
        nighttime method refitted with a constant Q10 in its central Reco.
    record : dict
        ``provenance.respiration_form`` (its ``setting`` and ``criterion``).

    Returns
    -------
    str
        E.g. "nighttime Reco: constant Q10 1.00, Lloyd–Taylor 0.00 (respiration_form =
        average; BIC weight ...); daytime Reco: Lloyd–Taylor".

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315-323.

    Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel Inference,
    2nd ed. Springer (weights of models by an information criterion).
    """
    how = "; ".join(([f"respiration_form = {record['setting']}"] if record.get("setting")
                     else []) + ([str(record["criterion"])] if record.get("criterion") else []))
    return (f"nighttime Reco: constant Q10 {share:.2f}, Lloyd–Taylor {1 - share:.2f}"
            + (f" ({how})" if how else "") + "; daytime Reco: Lloyd–Taylor")


def _provenance(manifest: dict) -> str:
    parts = []
    provenance = manifest.get("provenance", {})
    for key in ("input", "site_config"):
        entry = provenance.get(key)
        if isinstance(entry, dict):
            parts.append(f"<tr><th scope=\"row\">{_e(key.replace('_', ' '))}</th><td>"
                         f"{_e(entry.get('path', ''))}<br><span class=\"hash\">SHA-256 "
                         f"{_e(entry.get('sha256', ''))}</span></td></tr>")
    if "demo" in provenance:
        parts.append(f'<tr><th scope="row">demo</th><td>invented demo data: '
                     f"{_e(_plain(provenance['demo']))}</td></tr>")
    if "clock" in provenance:
        clock = provenance["clock"]
        recorded = _plain(clock)
        if isinstance(clock, dict):
            recorded = (f"{clock_sentence(manifest)} (positive shift: Rg later than the sun)."
                        f" Recorded: {recorded}")
        parts.append(f'<tr><th scope="row">clock check</th><td>{_e(recorded)}</td></tr>')
    driver = provenance.get("respiration_driver")
    if isinstance(driver, dict):
        chosen = driver.get("chosen", driver.get("setting", ""))
        why = f": {driver['reason']}" if driver.get("reason") else " (as set)"
        parts.append(f'<tr><th scope="row">respiration temperature</th><td>{_e(chosen)}'
                     f"{_e(why)}</td></tr>")
    share = respiration_facts(provenance).get("respiration_form_share_constant_q10")
    if share is not None:
        # the methods named the weight's place alone; an auditor read no value (review58)
        parts.append('<tr><th scope="row">respiration form</th><td>'
                     + _e(respiration_form_sentence(share, provenance["respiration_form"]))
                     + "</td></tr>")
    stated = provenance.get("uncertainty")
    if isinstance(stated, dict):
        left_out = "; ".join(str(item) for item in stated.get("not_quantified", []))
        checked = f"<br>Checked: {_e(stated['checked'])}." if stated.get("checked") else ""
        parts.append(f'<tr><th scope="row">stated intervals</th><td>'
                     f"{_e(round(100 * float(stated.get('confidence', 0.95))))} %; not included: "
                     f"{_e(left_out)}.{checked}</td></tr>")
    parts.append(f'<tr><th scope="row">seed</th><td>{_e(manifest.get("seed", ""))}</td></tr>')
    versions = manifest.get("versions", {})
    parts.append('<tr><th scope="row">versions</th><td>' + _e(", ".join(
        f"{name} {version}" for name, version in versions.items())) + "</td></tr>")
    # an auditor holding a printed page could not tie it to the code that computed it
    # or to the manifest it was drawn from (auditor53): both as the folder records them
    code = manifest.get("code")
    if isinstance(code, dict) and code.get("sha256"):
        parts.append('<tr><th scope="row">code fingerprint</th><td><span class="hash">'
                     f"SHA-256 {_e(code['sha256'])}</span> (fluxpart "
                     f"{_e(code.get('version', ''))}, {_e(code.get('files', ''))} source "
                     "files)</td></tr>")
    if manifest.get("seal"):
        parts.append('<tr><th scope="row">manifest seal</th><td><span class="hash">SHA-256 '
                     f"{_e(manifest['seal'])}</span> (over manifest.json's content: names "
                     "this result; <code>fluxpart verify</code> checks it and reruns "
                     "the numbers)</td></tr>")
    tables = "".join(f"<tr><td><code>{_e(entry.get('file', name))}</code></td><td class=\"number\">"
                     f"{_e(entry.get('rows', ''))}</td><td class=\"hash\">"
                     f"{_e(entry.get('sha256', ''))}</td></tr>"
                     for name, entry in manifest.get("tables", {}).items())
    return (f'<table id="provenance"><tbody>{"".join(parts)}</tbody></table>'
            '<table id="table-hashes"><thead><tr><th scope="col">Table</th><th scope="col">Rows'
            f'</th><th scope="col">SHA-256</th></tr></thead><tbody>{tables}</tbody></table>')


def _running_release() -> str:
    """The release drawing the page: a folder of an earlier release may be drawn by a later
    one, and the page's header named only the release that computed the tables."""
    from . import __version__

    return __version__


def _plain(value) -> str:
    """A manifest entry as plain words: ``key: value`` pairs separated by semicolons,
    list items by slashes, None and an empty list as "none", booleans as yes / no (a reader
    meets no Python dict or list notation)."""
    if isinstance(value, dict):
        return "; ".join(f"{str(key).replace('_', ' ')}: {_plain(item)}"
                         for key, item in value.items())
    if isinstance(value, (list, tuple)):
        # items may be sentences with commas of their own (a clock problem)
        return " / ".join(_plain(item) for item in value) if value else "none"
    if value is None:
        return "none"
    if isinstance(value, bool):
        return "yes" if value else "no"
    return str(value)


def _details(title: str, body: str, ident: str) -> str:
    return f'<details id="{_e(ident)}"><summary>{_e(title)}</summary>{body}</details>'


def _page(written: Written, directory: Path, figures, interval: int) -> str:
    manifest = written.manifest
    entries = manifest.get("tables", {})

    def metadata(name):
        if name in written.fields:
            return written.fields[name]
        return _field_metadata(directory / entries[name]["file"]) if name in entries else {}

    annual = written.annual
    annual_meta = metadata("annual")
    groups = _annual_groups(annual)
    has_random = "nee_random_error" in written.timeseries.columns
    site_name = manifest.get("site", {}).get("name", "")
    caution = manifest.get("caution", CAUTION)
    summary, combined_used = _summary_card(written)
    warnings = manifest.get("warnings", [])
    warning_html = ("".join(f'<p class="warning">{_e(w)}</p>' for w in warnings) if warnings
                    else "<p>No warnings were recorded for this run.</p>")
    # the reader's notes (a layout understood, every value read as the file means it),
    # apart from the warnings: an auditor sees how the file was read, and no note reads
    # as a fault (review64); only where the manifest records some
    reader_notes = manifest.get("provenance", {}).get("reader", {}).get("notes", [])
    warning_html += ('<h3>Notes on reading the input (the file was read as it means)</h3>'
                     + "".join(f'<p class="reader-note">{_e(n)}</p>' for n in reader_notes)
                     if reader_notes else "")
    figure_html = "".join(
        f'<figure id="figure-{_e(f.name.removesuffix(".png"))}"><h3>{_e(f.title)}</h3>'
        f'<img src="data:image/png;base64,{base64.b64encode(f.png).decode("ascii")}" '
        f'alt="{_e(f.title)}: {_e(f.caption)}"><figcaption>{_e(f.caption)}</figcaption></figure>'
        for f in figures)
    monthly = written.table("monthly")
    month_columns = [c for c in monthly.columns
                     if _COVERAGE_PATTERN.fullmatch(c) and _is_reportable(monthly[c])]
    ustar = written.table("ustar")
    e0_annual = written.table("parameters_nighttime_e0_annual")
    details = [
        _details("Annual budget table", _annual_table(annual, groups["budget"], annual_meta,
                                                       "annual-budget"), "details-budget"),
        _details("Uncertainty of the annual budget: every part written",
                 "<p>The u* threshold scenarios rerun gap filling and both partitionings with "
                 "the threshold at bootstrap percentiles; the method difference compares the "
                 "daytime with the nighttime partitioning.</p>"
                 + _annual_table(annual, groups["uncertainty"], annual_meta,
                                 "annual-uncertainty"), "details-uncertainty"),
        _details("Coverage and fill quality per year and month",
                 _annual_table(annual, groups["coverage"], annual_meta, "annual-coverage")
                 + (_frame_table(monthly[month_columns].reset_index(), metadata("monthly"),
                                 "monthly-coverage", "month") if len(month_columns) else ""),
                 "details-coverage"),
        _details("Screening of NEE records", _screening_table(written), "details-screening"),
        _details("u* thresholds and respiration parameters",
                 (_frame_table(ustar.reset_index(drop=True), metadata("ustar"), "ustar", "row")
                  if len(ustar) else "<p>No u* table.</p>")
                 + ("<h3>Lloyd–Taylor temperature sensitivity per period</h3>"
                    + _frame_table(e0_annual.reset_index(),
                                   metadata("parameters_nighttime_e0_annual"), "e0-annual",
                                   "year") if len(e0_annual) else "")
                 + _windows_html(written, metadata("parameters_daytime")),
                 "details-parameters"),
        _details("Site, inputs, versions and table hashes",
                 _site_table(written, interval) + _provenance(manifest), "details-provenance"),
    ]
    config = written.config
    methods, cited = _methods(config, has_random, _soil_regressor(written),
                              _windows_cut(written),
                              manifest.get("provenance", {}).get("night_fill_light"),
                              manifest.get("provenance", {}).get("light_shape"))
    references = "".join(f"<li>{_e(_REFERENCES[key])}</li>" for key in cited)
    extra_caution = ("" if caution == CAUTION
                     else f'<p class="caution">{_e(caution)}</p>')
    page = f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Carbon budget report: {_e(site_name)}</title>
<style>{_CSS}</style>
</head>
<body>
<header>
<h1>Carbon budget report: <span id="site-name">{_e(site_name)}</span></h1>
<p class="meta">Eddy-covariance record {_e(_span(written))}; computed by fluxpart
{_e(manifest.get("versions", {}).get("fluxpart", ""))} into the result folder
<code>{_e(directory.name)}</code>; this page drawn from its tables by fluxpart
{_e(_running_release())}.</p>
<div class="caution" id="caution-top"><strong>Caution.</strong> {_e(CAUTION)}</div>
{extra_caution}
</header>
<main>
<section id="section-summary"><h2>Summary</h2>
{summary}
<p class="warning-count" data-summary="warnings" data-value="{len(warnings)}">{warnings_sentence(len(warnings))}</p>
{_reading_notes(combined_used, "gpp_daytime_uncertainty_light_shape" in annual.columns)}
</section>
<section id="section-warnings"><h2>Warnings</h2>{warning_html}</section>
<section id="section-figures"><h2>Figures</h2>{figure_html}</section>
<section id="section-details"><h2>Detailed tables</h2>
{"".join(details)}
</section>
<section id="section-methods"><h2>Methods and references</h2>
{methods}
<ol id="references">{references}</ol>
</section>
<section id="section-settings"><h2>Settings and their sources</h2>
<p>Every setting of this run with its value, its meaning and its source. The last column says
which values were recalled from memory and are not yet checked against the original paper.
A setting the folder's record does not name (added after the release that wrote it, or
recorded only away from its default) shows the value that computed the result, marked
implied.</p>
{_settings_table(config)}
</section>
</main>
</body>
</html>
"""
    # Wide tables scroll inside the page; every value in them is escaped, so the only
    # "<table" and "</table>" in the page are our own.
    return (page.replace("<table ", '<div class="scroll"><table ')
            .replace("</table>", "</table></div>"))


def _span(written: Written) -> str:
    index = written.timeseries.index
    return f"{day_text(index[0])} – {day_text(index[-1])}"


# ------------------------------------------------------------------------------ entry points


def build_report(directory, out=None, *, progress=None) -> Path:
    """Draw the figures of a result folder and write a self-contained ``report.html``.

    Parameters
    ----------
    directory : path-like
        Result folder written by :meth:`fluxpart.Result.write` (``fluxpart run`` or
        ``fluxpart demo``).
    out : path-like, optional
        Folder for the PNG figures and ``report.html``; ``DIR/report/`` by default.
    progress : callable, optional
        Called with no argument after each figure and after the page (for example
        :meth:`fluxpart.progress.Progress.advance`); ``len(FIGURES) + 1`` calls.

    Returns
    -------
    pathlib.Path
        Path of the written ``report.html``.

    Raises
    ------
    InputFileError
        If `directory` is not a result folder or a table is missing.
    OutputError
        If `out` is a file or a folder of other files than a report, or cannot
        be written (no permission, a full disk); `out` is then unchanged.
    FluxpartError
        If matplotlib (the ``report`` extra) is not installed.

    Notes
    -----
    Reads only the folder's tables and manifest; nothing is recomputed. The page
    embeds each figure as a base64 data URI, carries its CSS inline and loads
    nothing from elsewhere. Every value from the folder is HTML-escaped. Each
    annual value sits in a cell ``<td data-column="nee" data-year="2021"
    data-decimals="1">``; each summary number in a ``<span data-summary="nee"
    data-year="2021" data-value="...">``. PNG files are written without
    timestamps, so the same folder and library versions give the same bytes.
    The figures and the page are written into a staging folder beside `out`
    that then replaces `out` whole (:func:`fluxpart.resultdir.staged`): a
    failure (a full disk) leaves the earlier report, or none, never a mix.
    """
    from .figures import _matplotlib

    _matplotlib()  # fail before reading anything when the extra is missing
    directory = Path(directory)
    out = directory / "report" if out is None else Path(out)
    _check_report_folder(out)
    require_owner_access()
    try:
        # staging folders of a report killed earlier (in the result folder, they would make
        # it fail its manifest check below)
        clean_leftovers(out)
    except OSError:
        pass                        # a read-only place: the write below says so
    written = read_written(directory)
    read_from = folder_identity(directory)
    interval = interval_minutes(written.timeseries.index)
    tick = progress if progress is not None else (lambda: None)
    figures = draw_figures(written, tick)
    # a folder name that is not UTF-8 (another code page) is shown with \xNN escapes: the
    # page is UTF-8, and such a name failed its encoding with a traceback
    page = shown_name(_page(written, directory, figures, interval)).encode("utf-8")
    # every byte is ready before the first file is written, and the files go into a staging
    # folder beside `out` that replaces it whole: a failure leaves the earlier report (or
    # none), never new figures beside an old page
    _require_same_folder(directory, read_from, out)
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
        with staged(out) as staging:
            for figure in figures:
                atomic_write_bytes(staging / figure.name, figure.png)
            atomic_write_bytes(staging / "report.html", page)
    except OSError as error:        # a read-only medium, no permission, a full disk
        # the result folder moved (mv) while the page was written into it: the swap found
        # no folder at the old path, "cannot be written (No such file or directory); give
        # --out a writable folder" sent the user after a fault that was not there
        _require_same_folder(directory, read_from, out)
        remedy = (full_disk_remedy(out.parent, "free space, or give --out a writable folder")
                  if error.errno == errno.ENOSPC
                  else "free space, or give --out a writable folder"
                  if error.errno == errno.EDQUOT
                  else "raise the file-size limit (ulimit -f), or give --out a folder on "
                  "another file system" if error.errno == errno.EFBIG
                  else f"give --out a writable folder (e.g. --out {_suggested_out()})")
        raise OutputError(f"the report folder {str(out)!r} cannot be written "
                          f"({error.strerror or error}); the earlier report, if any, is "
                          f"unchanged: {remedy}") from None
    tick()
    return out / "report.html"


def _suggested_out() -> str:
    """An ``--out`` to suggest where a report folder cannot be written: ``report`` in the
    first of the home folder, the working folder and the system's temporary folder that
    exists and this user may write (``~/report`` where that is the home folder).

    "~/report" was suggested whatever the home: with HOME unset (a service account, a
    cron job) the shell gives the password file's home, often ``/nonexistent``, and the
    suggested folder could not be made either (review75).
    """
    import tempfile

    home = os.environ.get("HOME")
    places = [home]
    for where in (os.getcwd, tempfile.gettempdir):
        try:
            places.append(where())
        except OSError:             # the working folder deleted; no temporary folder usable
            pass
    for place in places:
        if place and os.path.isdir(place) and os.access(place, os.W_OK | os.X_OK):
            return "~/report" if place == home else shlex.quote(str(Path(place) / "report"))
    return "FOLDER"


def _require_same_folder(directory: Path, read_from, out: Path) -> None:
    """Refuse to write a report inside a result folder moved or replaced since it was read.

    Parameters
    ----------
    directory : Path
        The result folder as given.
    read_from : tuple or None
        Its (device, inode) right after its tables were read
        (:func:`fluxpart.resultdir.folder_identity`).
    out : Path
        The report folder.

    Raises
    ------
    InputFileError
        Where `out` lies in `directory` and the folder there is gone or another one:
        the result was moved (``mv``), renamed or deleted while the figures were drawn,
        and the report was written into a new, otherwise empty folder of the old name
        (or beside another result), a page describing a result that is not there; also
        where the write into it failed because it moved while the page was written.

    References
    ----------
    POSIX ``rename(2)``: a folder moved keeps its inode, a new one at the old path has
    another (m).
    """
    try:
        inside = out.absolute().is_relative_to(directory.absolute())
    except (OSError, ValueError):
        return
    if inside and folder_identity(directory) != read_from:
        raise InputFileError(
            f"the result folder {str(directory)!r} was moved, renamed, removed or replaced "
            "while its report was drawn; nothing written: draw the report again from "
            "where the result is now")


def _check_report_folder(out: Path) -> None:
    """Refuse a report folder that is a file, or a folder holding other things than a report
    (:func:`fluxpart.resultdir.replace_refusal`): the report replaces its folder whole."""
    reason = replace_refusal(out, marker="report.html", kind="a report folder")
    if reason:
        raise OutputError(f"--out {str(out)!r} {reason}: choose an empty or new folder for the "
                          "report page and its figures")


def command_report(args) -> int:
    """Run ``fluxpart report DIR [--out OUT] [--quiet]``; return the exit status.

    Parameters
    ----------
    args : argparse.Namespace
        ``directory`` (the result folder), ``out`` (folder for the page, or None for
        ``DIR/report/``) and ``quiet`` (no progress line).

    Returns
    -------
    int
        0 on success; errors are raised as :class:`~fluxpart.errors.FluxpartError`
        and turned into exit status 2 by :func:`fluxpart.cli.main`.
    """
    from .figures import _matplotlib
    from .progress import Progress, progress_enabled

    enabled = progress_enabled(bool(getattr(args, "quiet", False)))
    # a short-lived command: the cyclic garbage collector pauses while matplotlib is
    # imported and the page is built (its full passes cost ~0.2 s of start-up alone)
    collecting = gc.isenabled()
    gc.disable()
    try:
        _matplotlib(setter_docs=False)
        # the result folder's lock is held while a page inside it is read and written: a
        # run replacing the folder meanwhile would leave a page describing the result
        # before (where the lock file can be made: a read-only copy is not written to)
        # (an --out outside the result folder is locked itself: its leftovers are cleaned
        # before staging; a lock file inside the result folder would make it fail its check)
        directory = Path(args.directory)
        # a run stopped between the two renames of its swap (a file system without an
        # atomic exchange) left no folder: the earlier result is put back before the lock
        # below is taken (under it, read_folder's repair waited 30 s for this very process
        # and then blamed a read-only place, round faults40)
        recover_missing(directory.absolute())
        out = getattr(args, "out", None)
        inside = out is None or directory.absolute().resolve() in (
            Path(out).absolute().resolve(), *Path(out).absolute().resolve().parents)
        locked = directory if inside else Path(out)
        # where the lock file goes: beside the folder a symbolic link leads to, not beside
        # the link (a link to a result on a read-only mount failed on the lock, faults34)
        parent = lock_file(locked).parent
        writable = parent.is_dir() and os.access(parent, os.W_OK)
        with (folder_lock(locked, DEFAULT_LOCK_TIMEOUT, remove=True) if writable
              else nullcontext()), \
                Progress(len(FIGURES) + 1, "fluxpart report", enabled=enabled) as progress:
            path = build_report(args.directory, getattr(args, "out", None),
                                progress=progress.advance)
    finally:
        if collecting:
            gc.enable()
    print(f"Wrote {shown_path(path)} (figures beside it; open it in any browser, no network "
          "needed)")
    print(f"Caution: {CAUTION}")
    return 0
