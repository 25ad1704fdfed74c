"""The known-truth trials' shared scoring (tests/benchmarks/trial_scoring.py)."""
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent / "benchmarks"))
from trial_scoring import FLUXES, TRUTH_OF, flux_scores, record_scores  # noqa: E402

GC_PER_UMOL = 12.011e-6  # g C per umol (standard atomic weight of carbon (m))


def _annual(estimate, low, high):
    row = {}
    for f in FLUXES:
        row.update({f: estimate, f + "_ci95_low": low, f + "_ci95_high": high})
    return pd.Series(row)


def _truth(values):
    return pd.DataFrame({name: np.asarray(values, dtype=float)
                         for name in set(TRUTH_OF.values())})


def test_flux_scores_follow_their_definitions():
    """Error = estimate − truth, relative error = 100 × error / |truth| (common practice),
    inside = the truth within the interval's bounds, half-width = (high − low) / 2;
    the truth is the records' sum × g C per record (1800 s × 12.011e-6 g C per µmol)."""
    factor = 1800 * GC_PER_UMOL
    truth = _truth([1.0, 2.0, 3.0])
    true = 6.0 * factor
    row = flux_scores(_annual(true + 0.01, true - 0.02, true + 0.03), truth, factor)
    for f in FLUXES:
        assert row[f + "_true"] == pytest.approx(true, rel=1e-12)
        assert row[f + "_err"] == pytest.approx(0.01, rel=1e-9)
        assert row[f + "_rel"] == pytest.approx(100 * 0.01 / true, rel=1e-9)
        assert row[f + "_in"] and row[f + "_halfwidth"] == pytest.approx(0.025, rel=1e-9)
    outside = flux_scores(_annual(true, true + 0.01, true + 0.03), truth, factor)
    assert not any(outside[f + "_in"] for f in FLUXES)


def test_flux_scores_of_a_zero_truth_and_a_truth_with_holes():
    """A truth summing to 0 has no relative error (NaN; it raised ZeroDivisionError and
    stopped the trial); a truth with a missing record, or none, is refused rather than
    summed without it (pandas skips NaN in a sum)."""
    row = flux_scores(_annual(0.5, -1.0, 1.0), _truth([1.0, -1.0]), 1.0)
    assert all(np.isnan(row[f + "_rel"]) and row[f + "_in"] for f in FLUXES)
    with pytest.raises(ValueError, match="1 of them missing"):
        flux_scores(_annual(0.5, -1.0, 1.0), _truth([1.0, np.nan, 2.0]), 1.0)
    with pytest.raises(ValueError, match="0 records"):
        flux_scores(_annual(0.5, -1.0, 1.0), _truth([]), 1.0)


def test_record_scores_follow_their_definitions():
    """u* found = the median of the run's threshold over the night records, planted = the
    median of the truth's over them, relative error 100 (found − planted) / planted; the
    kept records' NEE error is the sum of filled − true over the measured records only,
    and the u* loss left in them the sum of (share − 1) × true over them, × g C per record."""
    truth = pd.DataFrame({"night": [True, True, True, False],
                          "thr": [0.2, 0.2, 0.3, 0.9],
                          "share": [0.5, 1.0, 1.0, 1.0],
                          "nee": [2.0, 3.0, 4.0, -5.0]})
    series = pd.DataFrame({"ustar_threshold": [0.25, np.nan, 0.25, 0.01],
                           "nee_fill_method": ["measured", "similar_drivers", "measured",
                                               "measured"],
                           "nee_filled": [1.0, 9.0, 4.5, -4.0]})
    row = record_scores(series, truth, 2.0)
    assert row["ustar_found"] == pytest.approx(0.25) and row["ustar_planted"] == pytest.approx(0.2)
    assert row["ustar_rel"] == pytest.approx(25.0)
    assert row["err_kept"] == pytest.approx(2.0 * ((1.0 - 2.0) + (4.5 - 4.0) + (-4.0 + 5.0)))
    assert row["err_kept_loss"] == pytest.approx(2.0 * (0.5 - 1) * 2.0)


def test_fill_errors_sum_the_filled_records_of_each_group():
    """Each group's error is the sum over its filled records of (filled − true) × g C per
    record (1800 s × 12.011e-6 g C per µmol); measured records and other groups do not
    count; a record left unfilled is counted, not summed."""
    from trial_scoring import fill_errors

    index = pd.date_range("2021-01-01", periods=4, freq="30min")
    truth = pd.DataFrame({"nee": [1.0, 2.0, 3.0, 4.0]}, index=index)
    series = pd.DataFrame({"nee_filled": [1.5, 2.5, 2.0, np.nan],
                           "nee_fill_method": ["measured", "similar", "similar", "none"]},
                          index=index)
    night = np.array([True, True, False, False])
    out = fill_errors(truth, series, {"night": night, "day": ~night})
    factor = 1800 * GC_PER_UMOL
    assert out["err_fill_night"] == pytest.approx(0.5 * factor, rel=1e-12)
    assert out["err_fill_day"] == pytest.approx(-1.0 * factor, rel=1e-12)
    assert out["gap_share"] == pytest.approx(0.75) and out["unfilled"] == 1


def test_write_logger_site_writes_the_layout_and_declares_missing_codes(tmp_path):
    """The CSV holds the stamps (the interval's end where the layout says so), each variable
    converted and written with its decimals, missing values as the code; the TOML declares a
    number code bare, a text code quoted, "" and "NaN" not at all, and the events."""
    from types import SimpleNamespace

    from trial_scoring import write_logger_site

    site = SimpleNamespace(key="Q", name="Quillmere (FICTIONAL)", lat=50.0, lon=5.0,
                           utc_offset=1.0, canopy="short", year_start="01-01")
    index = pd.date_range("2021-01-01", periods=2, freq="30min")
    data = pd.DataFrame({"nee": [1.23456, np.nan], "vpd": [12.0, 3.0]}, index=index)
    to_unit = {"kPa": (lambda v: v / 10, 1)}
    declared = {}
    for code in ("-9999", "NA", "", "NaN"):
        layout = ("t_end", "%Y-%m-%d %H:%M", "end", code, {"nee": "co2", "vpd": "d_kpa"},
                  {"vpd": "kPa"})
        path = write_logger_site(site, data, tmp_path / (code or "empty"), layout, to_unit,
                                 "seed = 1\n", ["2021-05-01"], writer="test")
        declared[code] = [ln for ln in path.read_text().splitlines()
                          if ln.startswith(("missing", "events"))]
    assert declared == {"-9999": ["missing = [-9999]", 'events = ["2021-05-01"]'],
                        "NA": ['missing = ["NA"]', 'events = ["2021-05-01"]'],
                        "": ['events = ["2021-05-01"]'], "NaN": ['events = ["2021-05-01"]']}
    lines = (tmp_path / "NA" / "q_logger.csv").read_text().splitlines()
    assert lines == ["t_end,co2,d_kpa", "2021-01-01 00:30,1.235,1.200",
                     "2021-01-01 01:00,NA,0.300"]
