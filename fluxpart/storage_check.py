"""Morning release of CO2 stored below the sensor on calm nights (a warning, not a correction).

On a calm night the CO2 respired below an eddy-covariance sensor is not carried up to it:
it is held in the air of the canopy and comes out once the morning's turbulence starts.
NEE is the turbulent flux plus the change of the CO2 stored below the sensor (the storage
term); a tower that measures only the turbulent flux sees too little respiration on calm
nights and too much in the morning after them. The u* filter removes the calm nights and
fills them from turbulent ones, but it keeps the flushed mornings, so the night's
respiration is counted twice and annual NEE comes out too high (too little uptake). Over a
short canopy the air below the sensor holds little CO2; over a forest it can hold hours of
respiration.

This module looks for that release in the measured records: mornings after calm nights
should agree with mornings after turbulent nights once the light, temperature and VPD of
each morning are accounted for (by the daytime method's fitted NEE, which follows them).
It reports a warning with the size of the excess; it changes no number.

References
----------
Finnigan, J. (2006). The storage term in eddy flux calculations. Agricultural and Forest
Meteorology 136, 108–113. doi:10.1016/j.agrformet.2004.12.010

Papale, D. et al. (2006). Towards a standardized processing of net ecosystem exchange
measured with eddy covariance technique: algorithms and uncertainty estimation.
Biogeosciences 3, 571–583 (NEE as the turbulent flux plus the storage term, before the
u* filter) (m).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd

from . import units
from .uncertainty import gap_runs

__all__ = ["MORNING_HOURS", "morning_release", "release_mornings", "release_warnings",
           "unchecked_warnings", "unchecked_years"]

#: Hours after the end of a night that count as its morning: the release of stored CO2
#: takes the first hours of daytime mixing (common practice (m)).
MORNING_HOURS = 3.0
#: A night is calm where at least half its records with u* lie below the u* threshold.
CALM_SHARE = 0.5
#: The calm shares of the stages of :func:`fluxpart.pipeline`'s exclusion: first the nights
#: at least half calm; where their mornings were excluded, then the nights with any record
#: below the threshold (0), tested by the same rule against the nights with none.
CALM_SHARES = (CALM_SHARE, 0.0)
#: A morning counts where it holds at least this many measured records.
MIN_MORNING_RECORDS = 2
#: The excess must stand this many standard errors above zero (one-sided p ~ 0.001, so a
#: false alarm is rare even over hundreds of site-years) ...
MIN_Z = 3.0
#: ... and amount to at least this much a year [g C m-2]: twice the median annual NEE
#: error of the calibration benchmark (DEVELOPERS.md), so that only a release that
#: matters beside the budget's other errors is named.
MIN_ANNUAL_EXCESS = 10.0


def morning_release(nee_measured, ustar, threshold, is_night, nee_model, year_keys,
                    interval_minutes, calm_share=CALM_SHARE, excluded=None) -> list[dict]:
    """Excess NEE of the mornings after calm nights over those after turbulent nights.

    Parameters
    ----------
    nee_measured : array_like
        Measured NEE kept by screening [µmol m-2 s-1]; NaN where missing or rejected.
    ustar : array_like
        Friction velocity [m s-1].
    threshold : array_like
        The u* threshold that applies to each record [m s-1].
    is_night : array_like of bool
        Night records.
    nee_model : array_like
        NEE that the light, temperature and VPD of each record explain [µmol m-2 s-1]:
        the daytime method's fitted Reco − GPP.
    year_keys : array_like
        Budget year of each record.
    interval_minutes : int
        Record length [min]; the records lie on a regular axis.
    calm_share : float, optional
        Share of a night's records with u* below the threshold that makes it calm;
        :data:`CALM_SHARE` (0.5) by default, 0 for any record (the others then are
        the nights with none).
    excluded : array_like of bool, optional
        Records an earlier stage already excluded as mornings after calm nights
        (:func:`release_mornings`, measured or not); left out of ``annual_excess``,
        since their release has left the budget. None: no record.

    Returns
    -------
    list of dict
        One per budget year with mornings of both kinds: ``year``, ``calm_mornings``,
        ``other_mornings``, ``excess`` (mean residual after calm nights minus after the
        others [µmol m-2 s-1]), ``z`` (excess over its standard error), ``annual_excess``
        (the excess over every morning record after a calm night, measured or filled,
        that is not `excluded` [g C m-2]; a lower bound of the release: mornings after
        nights counted as turbulent release some too, and the daytime fit takes up part
        of it) and
        ``flagged`` (z ≥ :data:`MIN_Z` and annual excess ≥ :data:`MIN_ANNUAL_EXCESS`).

    Notes
    -----
    A night is a run of night records; its calm share is the share of its records with
    u* that lie below the threshold. Its morning is the records of the following
    :data:`MORNING_HOURS` that are not night. The residual of a morning is the mean of
    measured minus modelled NEE over its measured records; mornings after calm nights
    (share ≥ :data:`CALM_SHARE`) are compared with the others by the difference of
    their mean residuals and its standard error (Welch). The model absorbs each
    morning's light and weather, so a difference left is what the two kinds of
    mornings do not share: the preceding night.
    """
    nee = np.asarray(nee_measured, dtype=float)
    ustar = np.asarray(ustar, dtype=float)
    threshold = np.asarray(threshold, dtype=float)
    night = np.asarray(is_night, dtype=bool)
    residual = nee - np.asarray(nee_model, dtype=float)
    years = np.asarray(year_keys)
    counted = (np.ones(nee.size, dtype=bool) if excluded is None
               else ~np.asarray(excluded, dtype=bool))
    per_morning = max(1, int(round(MORNING_HOURS * 60 / int(interval_minutes))))
    nights = _nights_and_mornings(ustar, threshold, night, per_morning, calm_share)
    # each morning's measured records (finite residual); the nights with as many as one
    # another's as the rows of one array, whose row means have the bits of each morning's
    # own array's mean (round speed61: a Python pass per night before)
    measured = nights.valid & np.isfinite(residual[nights.positions])
    kept_counts = measured.sum(axis=1)
    means = np.full(kept_counts.size, np.nan)
    for count in np.unique(kept_counts[kept_counts >= MIN_MORNING_RECORDS]):
        same = np.flatnonzero(kept_counts == count)
        values = residual[nights.positions[same][measured[same]]].reshape(same.size, count)
        means[same] = values.sum(axis=1) / count
    enough = kept_counts >= MIN_MORNING_RECORDS
    calm_records = (counted[nights.positions] & nights.valid).sum(axis=1)
    night_years = years[nights.ends]
    rows = {}
    # the years in the order their first night appears (a year with nights but no
    # morning of each kind is skipped below)
    _, first = np.unique(night_years, return_index=True)
    for year in night_years[np.sort(first)]:
        inside = night_years == year
        rows[year] = {"calm": means[inside & nights.calm & enough].tolist(),
                      "other": means[inside & ~nights.calm & enough].tolist(),
                      "calm_records": int(calm_records[inside & nights.calm].sum())}
    out = []
    grams = float(units.flux_to_carbon(1.0, int(interval_minutes)))
    for year, entry in rows.items():
        calm, other = np.asarray(entry["calm"]), np.asarray(entry["other"])
        if calm.size < 2 or other.size < 2:
            continue
        excess = float(calm.mean() - other.mean())
        se = float(np.sqrt(calm.var(ddof=1) / calm.size + other.var(ddof=1) / other.size))
        z = excess / se if se > 0 else 0.0
        annual = excess * entry["calm_records"] * grams
        out.append({"year": year, "calm_mornings": int(calm.size),
                    "other_mornings": int(other.size), "excess": excess, "z": z,
                    "annual_excess": annual,
                    "flagged": bool(z >= MIN_Z and annual >= MIN_ANNUAL_EXCESS)})
    return out


class _Nights(NamedTuple):
    """:func:`_nights_and_mornings`' nights whose calm share is known, in order."""

    ends: np.ndarray         # position of the first record after each night
    positions: np.ndarray    # (nights x per_morning) the records after it (clipped)
    valid: np.ndarray        # (nights x per_morning) those within the record and not night
    calm: np.ndarray         # whether the night is calm


def _nights_and_mornings(ustar, threshold, night, per_morning, calm_share=CALM_SHARE
                         ) -> _Nights:
    """The nights whose calm share is known, their mornings and whether they are calm.

    A night's morning is the day records among the `per_morning` records after its end
    (``positions`` where ``valid``); it is calm where at least `calm_share` of its
    records with u* lie below the threshold (0: any of them). A night that runs to the
    end of the record has no morning and is left out. All nights at once: the share is
    the count below over the count known, as the mean of the night's own comparisons.
    """
    n = night.size
    starts, lengths = gap_runs(night)                 # night runs [start, start + length)
    ends = starts + lengths
    inside = ends < n
    starts, ends = starts[inside], ends[inside]
    known = np.isfinite(ustar) & np.isfinite(threshold)
    with np.errstate(invalid="ignore"):
        below = known & (ustar < threshold)
    known_before = np.concatenate([[0], np.cumsum(known)])
    below_before = np.concatenate([[0], np.cumsum(below)])
    known_count = known_before[ends] - known_before[starts]
    below_count = below_before[ends] - below_before[starts]
    judged = known_count > 0
    ends = ends[judged]
    share = below_count[judged] / known_count[judged]
    calm = share >= calm_share if calm_share > 0 else share > 0
    positions = ends[:, None] + np.arange(per_morning)
    valid = positions < n
    positions = np.minimum(positions, n - 1)
    valid &= ~night[positions]
    return _Nights(ends, positions, valid, np.asarray(calm, dtype=bool))


def release_mornings(ustar, threshold, is_night, year_keys, years, interval_minutes,
                     calm_share=CALM_SHARE) -> np.ndarray:
    """Mark the mornings after calm nights in the given budget years.

    Parameters
    ----------
    ustar : array_like
        Friction velocity [m s-1].
    threshold : array_like
        The u* threshold that applies to each record [m s-1].
    is_night : array_like of bool
        Night records.
    year_keys : array_like
        Budget year of each record.
    years : iterable
        The budget years whose mornings are marked (those :func:`morning_release`
        flagged).
    interval_minutes : int
        Record length [min]; the records lie on a regular axis.
    calm_share : float, optional
        Share of a night's records below the threshold that makes it calm;
        :data:`CALM_SHARE` (0.5) by default, 0 for any record.

    Returns
    -------
    numpy.ndarray of bool
        True for the day records within :data:`MORNING_HOURS` after a night of which
        at least `calm_share` of the records with u* lie below the threshold (the
        nights :func:`morning_release` calls calm), in a year of `years`.

    Notes
    -----
    A record below the u* threshold at night is taken to have lost part of the
    ecosystem's respiration to the air below the sensor (the premise of the u*
    filter); mass conservation puts that CO2 into the turbulent flux once mixing
    resumes, in the morning. Where the storage term is not added to the flux
    (Finnigan 2006), such a morning measures the night's respiration a second time,
    after the u* filter has already replaced the calm night by modelled respiration.
    Excluding these mornings and filling them from similar conditions (whose donors
    are the mornings after turbulent nights and other hours of the same light,
    temperature and VPD) counts that respiration once. Mornings after nights with a
    smaller calm share still carry some release; :func:`fluxpart.pipeline.process`
    therefore tests them next (`calm_share` 0, :data:`CALM_SHARES`) against the mornings
    after nights with no calm record, by the same rule, and excludes them too where it
    shows. On the second independent trial's four tall sites without storage (invented
    data, DEVELOPERS.md) the annual NEE error fell from +49 / +54 / +88 / +197 to
    +10 / +19 / +15 / +54 g C m-2 (first stage alone: +24 / +19 / +31 / +98).
    """
    night = np.asarray(is_night, dtype=bool)
    keys = np.asarray(year_keys)
    chosen = set(years)
    per_morning = max(1, int(round(MORNING_HOURS * 60 / int(interval_minutes))))
    marked = np.zeros(night.size, dtype=bool)
    nights = _nights_and_mornings(np.asarray(ustar, dtype=float),
                                  np.asarray(threshold, dtype=float), night, per_morning,
                                  calm_share)
    chosen_night = nights.calm & np.array([key in chosen for key in keys[nights.ends]],
                                          dtype=bool)
    marked[nights.positions[chosen_night][nights.valid[chosen_night]]] = True
    return marked


def unchecked_years(nee_measured, nee_model, is_night, year_keys) -> list:
    """Budget years with measured day NEE but no fitted daytime NEE to compare it with.

    :func:`morning_release` compares each morning's measured NEE with the daytime
    method's fitted NEE; where that fit is missing on every measured day record of a
    year (the daytime method left the whole year unfitted), the year cannot be checked
    and would pass without a word. Returns those years in order of appearance.
    """
    keys = np.asarray(year_keys)
    day = ~np.asarray(is_night, dtype=bool)
    measured = day & np.isfinite(np.asarray(nee_measured, dtype=float))
    modelled = measured & np.isfinite(np.asarray(nee_model, dtype=float))
    years = pd.unique(keys[measured])
    checked = set(pd.unique(keys[modelled]).tolist())
    return [year for year in years.tolist() if year not in checked]


def unchecked_warnings(years) -> list[str]:
    """One warning per budget year that :func:`morning_release` could not check."""
    return [f"{year}: the mornings after calm nights could not be checked for a release of "
            "CO2 stored below the sensor (the daytime method fitted no day of the year), so "
            "a missing storage term would pass unnoticed there; check that NEE includes "
            "storage ([input.columns] storage)" for year in years]


def release_warnings(rows, excluded: int = 0, stage: int = 0) -> list[str]:
    """One warning per budget year whose morning release was flagged by :func:`morning_release`.

    `excluded`: records excluded as mornings after calm nights (:func:`release_mornings`;
    ``[processing] storage_release = "exclude"``), 0 where none were. `stage`: 0 for the
    nights at least half calm, 1 for the follow-up test of the nights with any calm record
    (:data:`CALM_SHARES`).
    """
    if stage:
        return [f"{row['year']}: with the mornings after calm nights excluded, those after "
                f"nights with any record below the u* threshold still exceed those after "
                f"nights with none by {row['excess']:+.2f} µmol m-2 s-1 "
                f"({row['calm_mornings']} and {row['other_mornings']} mornings, "
                f"{row['z']:.1f} standard errors), at least about "
                f"{row['annual_excess']:+.0f} g C m-2 in the year: their "
                f"{MORNING_HOURS:.0f} h after sunrise ({excluded} records in all flagged "
                "years) were excluded and gap-filled too"
                for row in rows if row["flagged"]]
    if excluded:
        outcome = (f"The day records of the {MORNING_HOURS:.0f} h after each calm night "
                   f"({excluded} in all flagged years) were excluded and gap-filled "
                   "([processing] storage_release = \"exclude\"), so the calm nights' "
                   "respiration is counted once; mornings after nights with fewer calm "
                   "records may still carry part of the release (tested next), which the "
                   "stated intervals do not include. Add the storage term to NEE "
                   "([input.columns] storage) if the file lacks it")
    else:
        outcome = ("The u* filter removes the calm nights but keeps these mornings, so annual "
                   "NEE counts that respiration twice (too little uptake). Add the storage "
                   "term to NEE ([input.columns] storage) if the file lacks it; the stated "
                   "intervals do not include this error")
    return [f"{row['year']}: measured NEE in the {MORNING_HOURS:.0f} h after calm nights "
            f"exceeds that after turbulent nights by {row['excess']:+.2f} µmol m-2 s-1 "
            f"({row['calm_mornings']} and {row['other_mornings']} mornings, "
            f"{row['z']:.1f} standard errors), at least about "
            f"{row['annual_excess']:+.0f} g C m-2 in the year: CO2 stored below the sensor on "
            f"calm nights released after sunrise. {outcome}"
            for row in rows if row["flagged"]]
