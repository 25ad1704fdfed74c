"""A year's E0 resting on few nights of a wide enough temperature range is named
(fluxpart.e0_evidence); a year of seasonal nights is not.

Night respiration is Lloyd & Taylor (1994) eq. 11 written out here (Tref 283.15 K,
T0 227.13 K, from the paper), not the package's; the largest set of non-overlapping
windows is checked by enumerating every subset. Site-years are invented.
"""

import itertools

import numpy as np
import pandas as pd

from fluxpart import e0_evidence
from fluxpart.partition import nighttime


def _lloyd_taylor(celsius, rref, e0):
    """Lloyd & Taylor (1994) eq. 11: R = Rref exp(E0 (1/(283.15 - 227.13) - 1/(T - 227.13)))."""
    return rref * np.exp(e0 * (1.0 / (283.15 - 227.13) - 1.0 / (celsius + 273.15 - 227.13)))


def _night_year(rng, seasonal_k, diurnal_k, mean_c=25.0):
    """A half-hourly invented year of night NEE on air temperature, planted E0 150 K."""
    index = pd.date_range("2022-01-01", "2023-01-01", freq="30min", inclusive="left")
    day = index.day_of_year.to_numpy() + index.hour.to_numpy() / 24.0
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    temperature = (mean_c + seasonal_k * np.sin(2 * np.pi * (day - 110) / 365.0)
                   + diurnal_k * np.cos(2 * np.pi * (hour - 15) / 24.0)
                   + rng.normal(0.0, 0.3, len(index)))
    is_night = (hour < 6) | (hour >= 19)
    nee = _lloyd_taylor(temperature, 3.0, 150.0) + rng.laplace(0.0, 0.4, len(index))
    nee[rng.random(len(index)) < 0.5] = np.nan       # the night records a u* filter drops
    return index, np.where(is_night, nee, np.nan), temperature, is_night


def _notes(index, nee, temperature, is_night):
    windows = nighttime.fit_e0_windows(index, nee, temperature, is_night)
    joint = nighttime.fit_e0_joint(index, nee, temperature, is_night)
    annual = nighttime.annual_e0(windows, joint=joint)
    return annual, e0_evidence.thin_e0_notes(annual, windows, "tair")


def test_a_year_of_narrow_nights_is_named_and_a_seasonal_year_is_not(rng):
    """Nights within ~2–3 K all year (a tropical forest): fewer than three disjoint windows
    reach Reichstein et al.'s (2005) 5 K range (m), so the year is named with its counts;
    a 16 K seasonal swing gives a score of such windows and no note."""
    annual, [note] = _notes(*_night_year(rng, seasonal_k=0.5, diurnal_k=0.8))
    assert annual.loc[2022, "source"] == "joint"
    assert "E0 of 2022" in note and "tair" in note and "of its 72 E0 windows" in note
    # review63: the joint E0's basis is named with the table's own windows_used
    used = int(annual.loc[2022, "windows_used"])
    assert f"one fit to the night records of {used} consecutive windows together" in note
    assert "at least 5 K" in note and "fewer than the 3 independent windows" in note
    annual, notes = _notes(*_night_year(rng, seasonal_k=8.0, diurnal_k=2.0, mean_c=10.0))
    assert notes == [] and annual.loc[2022, "windows_accepted"] >= 20
    # the seasonal year's E0 is the planted 150 K within its stated 95 % interval
    assert abs(annual.loc[2022, "e0"] - 150.0) <= 1.96 * annual.loc[2022, "e0_se"]


def test_the_threshold_follows_the_runs_e0_best_windows(rng):
    """The count a year needs is the run's e0_best_windows: a year of k disjoint accepted
    windows passes at k and is named at k + 1."""
    index, nee, temperature, is_night = _night_year(rng, seasonal_k=3.0, diurnal_k=2.5)
    windows = nighttime.fit_e0_windows(index, nee, temperature, is_night)
    annual = nighttime.annual_e0(windows, joint=nighttime.fit_e0_joint(
        index, nee, temperature, is_night))
    disjoint = e0_evidence.disjoint_accepted(windows[windows["year"] == 2022])
    assert disjoint >= 1
    assert e0_evidence.thin_e0_notes(annual, windows, "tair", e0_best_windows=disjoint) == []
    [note] = e0_evidence.thin_e0_notes(annual, windows, "tair", e0_best_windows=disjoint + 1)
    assert f"{disjoint} of them without overlap" in note


def test_disjoint_accepted_is_the_largest_set_without_overlap(rng):
    """The greedy count equals the largest set of pairwise disjoint accepted windows found
    by enumerating every subset (windows of 15 days every 5, some cut, half accepted)."""
    for _ in range(20):
        starts = np.sort(rng.choice(np.arange(0, 120, 5), size=10, replace=False))
        lengths = rng.choice([15, 15, 15, 7, 11], size=10)
        frame = pd.DataFrame({
            "window_start": pd.Timestamp("2022-01-01") + pd.to_timedelta(starts, unit="D"),
            "window_end": pd.Timestamp("2022-01-01")
            + pd.to_timedelta(starts + lengths, unit="D"),
            "accepted": rng.random(10) < 0.6})
        accepted = frame[frame["accepted"]]
        spans = list(zip(accepted["window_start"], accepted["window_end"], strict=True))
        best = max((len(subset) for size in range(len(spans) + 1)
                    for subset in itertools.combinations(spans, size)
                    if all(a[1] <= b[0] or b[1] <= a[0]
                           for a, b in itertools.combinations(subset, 2))), default=0)
        assert e0_evidence.disjoint_accepted(frame) == best


def test_borrowed_and_fallback_years_are_left_to_their_own_warnings():
    """A year whose E0 came from another year or the fall-back has no windows of its own
    to judge: only ``joint`` and ``fitted`` years are named."""
    windows = pd.DataFrame({"window_start": pd.to_datetime(["2022-01-01"]),
                            "window_end": pd.to_datetime(["2022-01-16"]), "year": [2022],
                            "points": [40], "temperature_range": [2.0], "accepted": [False],
                            "reason": ["temperature range below 5 K"]})
    annual = pd.DataFrame({"e0": [200.0, 150.0], "e0_se": [20.0, np.nan],
                           "windows_accepted": [0, 0], "windows_tried": [1, 1],
                           "source": ["nearest_year", "fallback"]},
                          index=pd.Index([2022, 2023], name="year"))
    assert e0_evidence.thin_e0_notes(annual, windows, "tsoil") == []
    annual["source"] = ["fitted", "fallback"]
    [note] = e0_evidence.thin_e0_notes(annual, windows, "tsoil")
    assert "E0 of 2022" in note and "2.0 K" in note
    # review63: "0 of them without overlap" after "0 of its 1 E0 windows were accepted"
    # added nothing; a fitted year names no joint fit
    assert "0 of its 1 E0 windows were accepted" in note and "without overlap" not in note
    assert "source joint" not in note


def test_the_demo_site_year_is_not_named(demo_default_run):
    """No false alarm on the invented demo grassland (seasonal nights, 72 windows)."""
    _, _, result = demo_default_run
    assert not [text for text in result.warnings if "rests on few nights" in text]
