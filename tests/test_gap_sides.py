"""The two sides of a long NEE gap (fluxpart.gap_sides): a fill across a change of state."""

import warnings

import numpy as np
import pandas as pd
import pytest

from fluxpart import gapfill
from fluxpart.gap_sides import (
    long_gaps,
    one_sided_fills,
    state_change_notes,
    state_change_variance,
)


def test_long_gaps_keep_runs_longer_than_two_weeks_only():
    filled = np.zeros(60 * 48, dtype=bool)
    filled[100:100 + 14 * 48] = True            # exactly 14 days: not longer
    filled[1000:1000 + 14 * 48 + 1] = True      # one record more
    filled[2500:2510] = True
    starts, lengths = long_gaps(filled, 48)
    assert starts.tolist() == [1000] and lengths.tolist() == [14 * 48 + 1]
    assert long_gaps(filled, 48, min_days=0.1)[0].tolist() == [100, 1000, 2500]


def test_state_change_variance_is_the_mean_square_error_of_a_uniform_change_time():
    """A gap of n records changes from flux b to flux a at a uniformly distributed record
    (the uniform distribution's variance (b − a)²/12 and mean, a textbook fact); the
    mean square error of a fill F equals the brute-force average over every change
    time."""
    n, b, a = 400, 1.0, -3.0
    before, after = np.full(n, b), np.full(n, a)
    for fill_value in (a, b, (a + b) / 2, 0.3):
        fill = np.full(n, fill_value)
        truths = np.array([b * k + a * (n - k) for k in range(n + 1)])   # change after k records
        brute = np.mean(np.square(truths - fill.sum()))
        stated = state_change_variance(fill, before, after, np.zeros(n, int), 1)[0]
        assert stated == pytest.approx(brute, rel=0.01)
    # a fill from one side only carries D²/3; both sides alike carry nothing
    assert state_change_variance(after, before, after, np.zeros(n, int), 1)[0] == \
        pytest.approx((n * (a - b)) ** 2 / 3)
    assert state_change_variance(before, before, before, np.zeros(n, int), 1)[0] == 0.0


def test_state_change_variance_by_period_and_records():
    """Each gap's part in a period counts apart; `records` restricts the sums; records
    outside the long gaps (NaN sides) count nothing; a side without donors (NaN inside
    the gap) takes the central fill; a gap wholly in one period takes (m − F)² + D²/12."""
    n = 10
    fill = np.zeros(n)
    before = np.full(n, np.nan)
    after = np.full(n, np.nan)
    before[2:8], after[2:8] = 1.0, -1.0                     # one gap, records 2-7
    codes = np.array([0] * 5 + [1] * 5)                      # records 2-4 and 5-7
    whole = state_change_variance(fill, before, after, np.zeros(n, int), 1)
    assert whole == pytest.approx([(6 * 2.0) ** 2 / 12])
    # each half of the gap: E[x] = 3/4 (first) or 1/4, E[x²] = 2/3 or 1/6 (Notes),
    # so E[S] = ±1.5 and Var[S] = 36 (2/3 − 9/16) = 3.75
    out = state_change_variance(fill, before, after, codes, 2)
    assert out == pytest.approx([1.5**2 + 3.75] * 2)
    day = np.zeros(n, dtype=bool)
    day[[2, 3]] = True                                       # sums over these two only
    assert state_change_variance(fill, before, after, codes, 2, records=day) == \
        pytest.approx([1.0**2 + 16 * (2 / 3 - 9 / 16), 0.0])
    after[2:8] = np.nan                                      # no donor after the gap
    assert state_change_variance(fill, before, after, np.zeros(n, int), 1) == \
        pytest.approx([3.0**2 + 6.0**2 / 12])


@pytest.mark.parametrize("cut", [0.1, 0.5, 0.83])
@pytest.mark.parametrize("fill_value", [-3.0, 1.0, -1.0, 0.3])
def test_a_part_of_a_gap_is_scored_against_every_change_time(cut, fill_value):
    """Known truth by brute force: a gap of n records changes from flux b to flux a after
    k records, k uniformly 0..n (nothing tells when; the uniform distribution, a
    textbook fact). The part of the gap in each of two periods (a budget year, a month
    or a day of a gap that runs on) errs by the mean square over every k of the part's
    true sum minus its fill; before review29 each part was scored as if the change
    fell uniformly within the part itself, which for a day in the middle of a long gap
    gave D²/12 instead of about D²/4."""
    n, b, a = 2000, 1.0, -3.0
    before, after = np.full(n, b), np.full(n, a)
    fill = np.full(n, fill_value)
    split = int(cut * n)
    codes = (np.arange(n) >= split).astype(int)
    stated = state_change_variance(fill, before, after, codes, 2)
    changes = np.arange(n + 1)[:, None]                      # change after k records
    truth = np.where(np.arange(n)[None, :] < changes, b, a)
    for period, part in enumerate((slice(0, split), slice(split, n))):
        error = truth[:, part].sum(axis=1) - fill[part].sum()
        assert stated[period] == pytest.approx(np.mean(np.square(error)), rel=0.01)
    # a single day (48 records) in the middle: one state or the other, D²/4
    middle = np.zeros(n, int)
    middle[976:1024] = 1
    day = state_change_variance(np.full(n, (a + b) / 2), before, after, middle, 2)[1]
    assert day == pytest.approx((48 * (b - a)) ** 2 / 4, rel=0.03)


def test_one_sided_fills_recover_each_sides_level_across_a_step_in_a_long_gap():
    """Known-truth recovery (invented series): a daily cycle whose level steps from +2 to
    -4 µmol m-2 s-1 inside a 30-day gap; marginal distribution sampling from the
    records before the gap only gives the first level, from those after only the
    second, and the variance then counts the step."""
    index = pd.date_range("2021-03-01", periods=120 * 48, freq="30min")
    n = len(index)
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60
    rg = np.clip(800 * np.sin(np.pi * (hour - 6) / 12), 0, None)
    night = rg <= 0
    level = np.where(np.arange(n) < 60 * 48, 2.0, -4.0)
    nee = np.where(night, 3.0, level)
    drivers = pd.DataFrame({"rg": rg, "tair": np.full(n, 15.0), "vpd": np.full(n, 8.0)})
    measured = nee.copy()
    start, length = 45 * 48, 30 * 48
    measured[start:start + length] = np.nan

    def fill(values, gaps):
        return gapfill.fill_marginal(values, drivers, index, is_night=night, gaps=gaps,
                                     max_window_days=140)["value"].to_numpy()

    starts, lengths = long_gaps(np.isnan(measured), 48)
    assert starts.tolist() == [start] and lengths.tolist() == [length]
    before, after = one_sided_fills(measured, starts, lengths, fill)
    gap = slice(start, start + length)
    day = ~night[gap]
    assert np.allclose(before[gap][day], 2.0) and np.allclose(after[gap][day], -4.0)
    assert np.allclose(before[gap][~day], 3.0) and np.allclose(after[gap][~day], 3.0)
    assert np.isnan(before[:start]).all() and np.isnan(after[start + length:]).all()
    central = fill(measured, np.isnan(measured))
    variance = state_change_variance(central, before, after, np.zeros(n, int), 1)[0]
    step = 6.0 * day.sum()
    assert variance >= step**2 / 12


def test_period_uncertainty_adds_the_state_change_to_the_gapfill_part():
    """The gap-filling part grows by the state-change variance in quadrature; without
    one-sided fills it is as before."""
    from fluxpart.uncertainty import UncertaintyInputs, period_uncertainty

    index = pd.date_range("2021-04-01", periods=40 * 48, freq="30min")
    n = len(index)
    measured = np.ones(n, dtype=bool)
    measured[100:100 + 20 * 48] = False
    zeros = np.zeros(n)
    fluxes = pd.DataFrame({name: np.ones(n) for name in (
        "nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")}, index=index)
    model = pd.DataFrame({name: [0.0, 0.0] for name in (
        "bias", "bias_se", "correlated_variance")} | {"independent_variance": [0.5, 0.5]},
        index=pd.Index(["night", "day"], name="record_class"))
    before = np.where(~measured, 2.0, np.nan)
    after = np.where(~measured, 0.0, np.nan)
    common = dict(measured=measured, noise_sigma=zeros, is_night=np.zeros(n, dtype=bool),
                  fluxes=fluxes, runs={}, gapfill_model=model, e0_delta=zeros,
                  night_window=np.zeros(n, dtype=int), night_relative_se=np.full(n, np.nan),
                  day_window=np.zeros(n, dtype=int), day_relative_se=np.full(n, np.nan))
    plain = period_uncertainty(UncertaintyInputs(**common), np.zeros(n, int), 30)
    sided = period_uncertainty(UncertaintyInputs(**common, fill_before=before,
                                                 fill_after=after), np.zeros(n, int), 30)
    grams = 1800 * 12.011e-6
    records = 20 * 48
    extra = (records * 2.0) ** 2 / 12 * grams**2        # m = F: only D²/12
    assert sided["nee_uncertainty_gapfill"].iloc[0] ** 2 == pytest.approx(
        plain["nee_uncertainty_gapfill"].iloc[0] ** 2 + extra)
    assert sided["gpp_nighttime_uncertainty_gapfill"].iloc[0] ** 2 == pytest.approx(
        plain["gpp_nighttime_uncertainty_gapfill"].iloc[0] ** 2 + extra)


def test_long_gaps_leave_out_a_gap_with_a_declared_event():
    """An event inside a gap or at its ends dates the change: no unknown time to count."""
    filled = np.zeros(100 * 48, dtype=bool)
    filled[480:480 + 20 * 48] = True
    filled[3000:3000 + 20 * 48] = True
    assert long_gaps(filled, 48, breaks=np.array([480 + 5 * 48]))[0].tolist() == [3000]
    assert long_gaps(filled, 48, breaks=np.array([3000 + 20 * 48]))[0].tolist() == [480]
    assert long_gaps(filled, 48, breaks=np.array([2000]))[0].tolist() == [480, 3000]


def test_state_change_notes_name_a_gap_that_dominates_the_gapfill_part():
    """A 20-day gap whose two sides differ by 4 µmol m-2 s-1 is named with its dates and
    sums; one whose sides agree is not."""
    index = pd.date_range("2021-04-01", periods=60 * 48, freq="30min")
    n = len(index)
    fill = np.full(n, -1.0)
    before = np.full(n, np.nan)
    after = np.full(n, np.nan)
    gap = slice(10 * 48, 30 * 48)
    before[gap], after[gap] = 1.0, -3.0
    grams = 1800 * 12.011e-6
    sigma = np.sqrt((20 * 48 * 4.0) ** 2 / 12) * grams
    notes = state_change_notes(index, fill, before, after, 30, pd.Series({2021: sigma}))
    assert len(notes) == 1
    assert "2021-04-11 00:00 to 2021-04-30 23:30 (20 days)" in notes[0]
    assert f"{20 * 48 * grams:+.1f} g C m-2" in notes[0]          # from before: +1 each
    assert f"{-3 * 20 * 48 * grams:+.1f}," in notes[0]             # from after: -3 each
    assert f"{sigma:.1f} g C m-2 (1 sigma)" in notes[0] and "declare it as an event" in notes[0]
    # sides agree: nothing to name; a small share of a larger gap-filling part: nothing
    assert state_change_notes(index, fill, np.where(np.isfinite(before), -1.0, np.nan),
                              np.where(np.isfinite(after), -1.0, np.nan), 30,
                              pd.Series({2021: sigma})) == []
    assert state_change_notes(index, fill, before, after, 30,
                              pd.Series({2021: 3 * sigma})) == []


def test_state_change_notes_compare_each_budget_years_part_with_that_year():
    """With budget years from 1 July (budget_calendar.budget_year_numbers) a June gap belongs
    to the budget year that started the July before (DESIGN.md §4.1: an interval
    belongs to the budget year in which it starts): its term is compared with that
    year's gap-filling part, not the calendar year's. A gap across the budget years'
    boundary names the year whose interval its part weighs most in, with the part's
    own 1 sigma as that year counts it (state_change_variance by year)."""
    from fluxpart.budget_calendar import budget_year_numbers

    index = pd.date_range("2022-05-01", periods=90 * 48, freq="30min")
    n = len(index)
    keys = budget_year_numbers(index, "07-01")               # 2021 until June, then 2022
    fill = np.full(n, -1.0)
    before = np.full(n, np.nan)
    after = np.full(n, np.nan)
    gap = slice(20 * 48, 50 * 48)                             # 21 May to 19 June 2022
    before[gap], after[gap] = 1.0, -3.0
    grams = 1800 * 12.011e-6
    sigma = np.sqrt((30 * 48 * 4.0) ** 2 / 12) * grams
    small, large = pd.Series({2021: sigma, 2022: 100 * sigma}), \
        pd.Series({2021: 100 * sigma, 2022: sigma})
    assert len(state_change_notes(index, fill, before, after, 30, small, keys)) == 1
    assert state_change_notes(index, fill, before, after, 30, large, keys) == []
    # across the boundary: 10 days in budget year 2021, 20 in 2022
    before[:], after[:] = np.nan, np.nan
    gap = slice(51 * 48, 81 * 48)                             # 21 June to 20 July 2022
    before[gap], after[gap] = 1.0, -3.0
    parts = np.sqrt(state_change_variance(fill[gap], before[gap], after[gap],
                                          keys[gap] - 2021, 2)) * grams
    notes = state_change_notes(index, fill, before, after, 30,
                               pd.Series({2021: 10 * sigma, 2022: parts[1] * 1.5}), keys)
    assert len(notes) == 1 and "budget year 2022" in notes[0]
    assert f"counts {parts[1]:.1f} g C m-2 (1 sigma)" in notes[0] and "67 %" in notes[0]


def test_daytime_gpp_of_the_two_windows_and_a_long_stretch_without_windows():
    """Known-truth recovery (invented record, the daytime test module's generator): with a
    45-day NEE outage in spring the daytime method interpolates GPP between the windows on
    either side; each record's GPP is the time-weighted mean of the two windows' GPP, and
    the outage's records lie between window centres more than 14 days apart, whose
    light responses differ (the canopy grows in between)."""
    from test_daytime import _inputs, _synthetic_record

    from fluxpart.partition.daytime import partition_daytime

    record = _synthetic_record(3)
    index = record["index"]
    outage = (index >= "2023-03-20") & (index < "2023-05-04")
    record["nee_measured"] = np.where(outage, np.nan, record["nee_measured"])
    result = partition_daytime(**_inputs(record))
    weights = result.gpp - result.gpp_before
    span = result.gpp_after - result.gpp_before
    share = np.divide(weights, span, out=np.zeros_like(weights), where=np.abs(span) > 1e-9)
    assert np.allclose(result.gpp, (1 - share) * result.gpp_before + share * result.gpp_after)
    assert ((share >= -1e-9) & (share <= 1 + 1e-9)).all()
    wide = result.span_days > 14
    assert wide[outage].mean() > 0.5 and not wide[~outage & (index.month == 7)].any()
    day = wide & (record["rg"] > 0)
    assert result.gpp_after[day].sum() > 1.2 * result.gpp_before[day].sum()  # growth
    assert np.unique(result.stretch[wide]).size <= 2


def test_period_uncertainty_adds_the_light_response_change_to_daytime_gpp():
    """The daytime GPP parameter part grows by D²/12 per stretch (F = m here), in
    quadrature; without the sides it is as before."""
    from fluxpart.uncertainty import UncertaintyInputs, period_uncertainty

    index = pd.date_range("2021-04-01", periods=40 * 48, freq="30min")
    n = len(index)
    zeros = np.zeros(n)
    fluxes = pd.DataFrame({name: np.full(n, 2.0) for name in (
        "nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")}, index=index)
    common = dict(measured=np.ones(n, dtype=bool), noise_sigma=zeros,
                  is_night=np.zeros(n, dtype=bool), fluxes=fluxes, runs={}, gapfill_model=None,
                  e0_delta=zeros, night_window=np.zeros(n, dtype=int),
                  night_relative_se=np.full(n, np.nan), day_window=np.zeros(n, dtype=int),
                  day_relative_se=np.full(n, 0.01))
    stretch = np.where(np.arange(n) < 20 * 48, 0, 1)
    before = np.where(stretch == 0, 1.0, np.nan)       # first stretch only: 1 and 3
    after = np.where(stretch == 0, 3.0, np.nan)
    plain = period_uncertainty(UncertaintyInputs(**common), np.zeros(n, int), 30)
    sided = period_uncertainty(UncertaintyInputs(**common, day_gpp_before=before,
                                                 day_gpp_after=after, day_stretch=stretch),
                               np.zeros(n, int), 30)
    grams = 1800 * 12.011e-6
    extra = (20 * 48 * 2.0) ** 2 / 12 * grams**2
    assert sided["gpp_daytime_uncertainty_parameters"].iloc[0] ** 2 == pytest.approx(
        plain["gpp_daytime_uncertainty_parameters"].iloc[0] ** 2 + extra)
    assert sided["reco_daytime_uncertainty_parameters"].iloc[0] == \
        plain["reco_daytime_uncertainty_parameters"].iloc[0]


def test_the_run_compares_gaps_with_the_budget_years_of_year_start(monkeypatch):
    """The run hands the notes each record's budget year of `year_start` (DESIGN.md §4.1,
    budget_calendar.budget_year_numbers), the labels of the annual table it compares with;
    before review29 the notes took the calendar year, so a June gap of a July-to-June
    budget was compared with the next budget year's gap-filling part."""
    from fluxpart import Config, demo, gap_sides, pipeline
    from fluxpart.budget_calendar import budget_year_numbers

    seen = {}

    def spy(index, fill, before, after, interval, gapfill_sigma, year_keys=None):
        seen.update(index=index, keys=year_keys, labels=list(gapfill_sigma.index))
        return []

    monkeypatch.setattr(gap_sides, "state_change_notes", spy)
    frame, _ = demo.site_year(0)
    frame.loc[(frame.index >= "2021-06-05") & (frame.index < "2021-06-28"), "nee"] = np.nan
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")          # the run's own warnings are not tested here
        # no u* bootstrap: the notes' year keys do not depend on it (round suitetrim)
        pipeline.process(frame, demo.site(), Config(year_start="07-01",
                                                    ustar_bootstrap_draws=0))
    assert seen["labels"] == [2020, 2021]
    assert np.array_equal(seen["keys"], budget_year_numbers(seen["index"], "07-01"))


def test_the_run_counts_a_gap_across_the_green_up_and_names_it(monkeypatch):
    """Known-truth wiring (invented grassland year, `demo.site_year`, green-up in spring):
    a 34-day NEE gap from 26 March to 29 April is named, and the run's annual gap-filling
    variance exceeds that of the same run without the one-sided fills by the named
    term's square (variances of independent parts add, Bienaymé's formula); the daytime
    GPP parameter part grows too (the windows on either side of the outage differ).
    Removing either input of `record_inputs` fails this test. Both runs skip the u*
    bootstrap (round suitetrim: the named term and both parts are there without it, and
    removing either input still fails the test; two default runs cost 30 % more)."""
    import re

    from fluxpart import Config, demo, pipeline, uncertainty

    frame, _ = demo.site_year(0)
    frame.loc[(frame.index >= "2021-03-26") & (frame.index < "2021-04-29"), "nee"] = np.nan

    def run():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return pipeline.process(frame, demo.site(), Config(ustar_bootstrap_draws=0))

    full = run()
    named = [w for w in full.warnings if "spans a change of state" in w]
    assert len(named) == 1 and "(34 days)" in named[0]
    sigma = float(re.search(r"counts ([\d.]+) g C m-2 \(1 sigma\)", named[0]).group(1))
    original = uncertainty.record_inputs

    def without_sides(*args, **kwargs):
        return original(*args, **{**kwargs, "fill_sides": None, "daytime_result": None})

    monkeypatch.setattr(uncertainty, "record_inputs", without_sides)
    plain = run()
    with_term, without = (r.annual["nee_uncertainty_gapfill"].iloc[0] for r in (full, plain))
    assert with_term**2 - without**2 == pytest.approx(sigma**2, abs=0.1 * sigma)
    day = "gpp_daytime_uncertainty_parameters"
    assert full.annual[day].iloc[0] > plain.annual[day].iloc[0]
