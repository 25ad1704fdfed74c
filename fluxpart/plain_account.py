"""The report summary's account of a budget period in plain words.

The summary card gave the answer (NEE, GPP and Reco with their 95 % intervals) and then
facts in the trade's terms: "gap filling 6.2, random error 2.6, u* threshold 1.6 (1
sigma)". A reader who has never processed a flux tower (an auditor, a manager) could not
tell what had been done to the records or why the interval is as wide as it is
(report52). This module writes those sentences from what the result folder holds, and
nothing else:

* :func:`records_sentence`: what became of the period's records (kept, or rejected and
  why, then filled), from the written ``rejection_reason`` of each record, and the
  declared events that cut the record;
* :func:`interval_sentence`: what the 95 % interval of NEE means and what makes it wide,
  each part named in words with the interval it would give alone;
* :func:`partition_sentence`: why GPP's and Reco's intervals are wider, in the same words;
* :func:`warnings_sentence`: how many warnings the run recorded and where they are;
* :data:`ROUNDING_NOTE`: how the page rounds the tables' numbers.

Pure functions of plain values and pandas objects; no method or pipeline module.

References
----------
JCGM 100:2008, Evaluation of measurement data — Guide to the expression of uncertainty in
measurement (GUM), §5.1: independent standard uncertainties combine as the root sum of
squares, so a part of size u alone gives an interval of ±1.96 u at 95 % (normal
coverage factor, §G.3 (m)).
"""

from __future__ import annotations

import html

import numpy as np
import pandas as pd

__all__ = ["PLAIN_PARTS", "ROUNDING_NOTE", "interval_sentence", "partition_sentence",
           "records_sentence", "warnings_sentence"]

#: Coverage factor of a 95 % interval of a normal distribution (GUM §G.3 (m)); the one the
#: run's ``X_ci95_low`` / ``_high`` columns use (sum ± 1.96 × total).
Z95 = 1.96

#: Each part of the uncertainty (:data:`fluxpart.uncertainty_parts.PART_LABELS`' keys) in
#: words that need no flux processing: what is not known, not how it is computed.
PLAIN_PARTS = {
    "gap filling": "estimating the records without an accepted measurement from records "
                   "taken in similar weather",
    "random": "the noise of each single measurement, as the turbulent air brings the "
              "sensor a different sample every time",
    "ustar": "where the line is drawn between calm nights, when the tower misses part of "
             "the CO2, and windier nights it can trust",
    "parameters": "the respiration and light-response curves, fitted to a limited number "
                  "of records",
    "partitioning": "the disagreement between the two ways of splitting NEE into uptake "
                    "and respiration",
    "temperature": "whether air or soil temperature drives the respiration",
    "form": "the shape assumed for how respiration rises with temperature",
    "light shape": "the shape assumed for how uptake levels off in bright light",
}

#: What a screening outcome (``rejection_reason``, :data:`fluxpart.schema.REASON_LABELS`)
#: means for a record, in words.
_REASON_WORDS = {
    "missing": "had no NEE value in the file",
    "out_of_range": "lay outside the plausible range",
    "site_flag": "carried the site's own quality flag",
    "spike": "were spikes",
    "low_ustar": "were taken on calm nights (u* below the threshold)",
    "morning_release": "were mornings releasing CO2 stored during calm nights",
}

ROUNDING_NOTE = (
    "Rounding: every number on this page comes from the result folder's tables (a few by a "
    "conversion said where they appear: tonnes of CO2, percentages, ±1.96 × a 1-sigma part) "
    "and is rounded to the nearest of the digits shown: NEE and its interval to 0.1 g C m-2 "
    "(the headline's net amount to 1 g C m-2), GPP and Reco on the cards to 1 g C m-2, "
    "tonnes of CO2 to 0.01 t CO2 ha-1, the parts of the uncertainty to 0.1 g C m-2, shares "
    "of records to 0.1 % (the share of |NEE| from filled records to 1 %) and u* thresholds "
    "to 0.001 m s-1; the detailed tables give each column in its own unit, and the Parquet "
    "files hold the unrounded values.")


def _count(number: int, total: int) -> str:
    """A count with its share of `total`; a share that rounds to 0.0 % is "< 0.1 %" and one
    that rounds to 100.0 % without being all is "> 99.9 %" (3 records rejected read "3
    (0.0 %)", report52)."""
    share = 100 * number / total
    shown = f"{share:.1f}"
    if number and shown == "0.0":
        shown = "< 0.1"
    elif number < total and shown == "100.0":
        shown = "> 99.9"
    return f"{number} ({shown} %)"


def records_sentence(reasons, interval: int, events=()) -> str:
    """What became of a period's records, in words (HTML-escaped).

    Parameters
    ----------
    reasons : array-like of str
        The written ``rejection_reason`` of each record of the period ("kept", or the
        first screening step that rejected its NEE).
    interval : int
        Record length [min].
    events : sequence of str, optional
        The declared events (``events`` setting) that fall in the period.

    Returns
    -------
    str
        One or two sentences; "" where `reasons` is empty.
    """
    values = pd.Series(np.asarray(reasons, dtype=object)).astype(str)
    total = int(values.size)
    if not total:
        return ""
    counts = values.value_counts(sort=False)
    kept = int(counts.get("kept", 0))
    rejected = [(int(counts[reason]), _REASON_WORDS.get(reason, reason.replace("_", " ")))
                for reason in counts.index if reason != "kept" and counts[reason]]
    rejected.sort(key=lambda item: -item[0])
    text = (f"Of the period's {total} {interval}-minute records, {_count(kept, total)} hold "
            "an NEE measurement that passed every check")
    if rejected:
        listed = "; ".join(f"{_count(number, total)} {words}" for number, words in rejected)
        text += (f"; of the others, {listed}. Those were filled, then NEE was split into "
                 "uptake (GPP) and respiration (Reco) by two methods: one fits respiration "
                 "to the night records and temperature, the other a light-response curve "
                 "to the daytime records")
    else:
        text += (". NEE was then split into uptake (GPP) and respiration (Reco) by two "
                 "methods: one fits respiration to the night records and temperature, the "
                 "other a light-response curve to the daytime records")
    text += "."
    if len(events):
        text += (f" The record was cut at the declared event{'s' if len(events) > 1 else ''} "
                 f"({', '.join(str(event) for event in events)}: a harvest, cut, fire or "
                 "the like): gaps were filled and curves fitted on each side separately.")
    return html.escape(text, quote=False)


def interval_sentence(parts: pd.Series, total: float, low: float, high: float) -> str:
    """What NEE's 95 % interval means and what makes it wide, in words (HTML-escaped).

    Parameters
    ----------
    parts : pandas.Series
        NEE's parts of 1 sigma [g C m-2] by part name (keys of :data:`PLAIN_PARTS`),
        NaN where the flux takes no such part.
    total : float
        NEE's combined 1 sigma [g C m-2] (``nee_uncertainty_total``, the root sum of
        squares of the parts).
    low, high : float
        The written 95 % interval [g C m-2].

    Returns
    -------
    str
        The sentences; "" where any of the numbers is missing or the total is zero.

    References
    ----------
    JCGM 100:2008 (GUM), §5.1 and §G.3, see the module (root sum of squares of
    independent parts; ±1.96 u at 95 % (m)).
    """
    values = pd.to_numeric(parts, errors="coerce").dropna()
    values = values[values > 0].sort_values(ascending=False, kind="stable")
    if not (np.isfinite([total, low, high]).all() and total > 0 and len(values)):
        return ""
    half = 0.5 * (float(high) - float(low))

    def part(name, value):
        words = PLAIN_PARTS.get(name, name)
        return f"{words} (alone ±{Z95 * value:.1f} g C m-2)"

    first = part(values.index[0], values.iloc[0])
    rest = [part(name, value) for name, value in values.iloc[1:].items()]
    # a stated interval, not a promise: "should lie inside ... in 19 of 20" read as one,
    # and "independent test site-years ... less often" was untrue of the generated sets
    # (93-99 % for NEE); the shortfall is the trials' physics (review67)
    text = (f"The 95 % interval (±{half:.1f} g C m-2 about the central value) is built to "
            "hold the true NEE in about 19 of 20 site-years if the sources named here were "
            "the only errors; on known-truth test site-years whose physics the methods do "
            "not assume it held the truth less often (the measured shares: \"Checked\" "
            f"under the run's provenance, below). The largest source of its width is {first}")
    if rest:
        text += f"; the others: {'; '.join(rest)}"
    text += (". Independent sources do not add up: they combine as the square root of the "
             "sum of their squares, so the largest one sets the width. Errors of the "
             "measurement itself that repeat in every record (see the note below the cards) "
             "are not in it.")
    return html.escape(text, quote=False)


def partition_sentence(largest) -> str:
    """Why GPP's and Reco's intervals differ from NEE's, in words (HTML-escaped).

    Parameters
    ----------
    largest : sequence of str
        The largest part (keys of :data:`PLAIN_PARTS`) of each partitioned flux's
        uncertainty as written, in any order; repeats are said once.

    Returns
    -------
    str
        One sentence; "" where `largest` is empty.
    """
    names = list(dict.fromkeys(largest))
    if not names:
        return ""
    words = "; and ".join(PLAIN_PARTS.get(name, name) for name in names)
    verb = "sources here are" if len(names) > 1 else "source here is"
    return html.escape(
        "GPP and Reco are not measured: they are modelled from NEE, so their intervals also "
        f"carry the models' uncertainty; the largest {verb} {words} (each flux's largest "
        "part is named in the next line).", quote=False)


def warnings_sentence(count: int) -> str:
    """The summary's pointer to the run's warnings (HTML-escaped)."""
    if not count:
        return "The run recorded no warnings."
    what = "each says" if count > 1 else "it says"
    return (f"The run recorded {count} warning{'s' if count > 1 else ''} (section Warnings, "
            f"below): {what} what was found and, where something can be done, what to "
            "change or check. Read them before using these numbers.")
