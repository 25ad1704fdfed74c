"""Tests of fluxpart.screening: ranges, site flag, spikes, radiation, low u*, screen()."""

import inspect
import json

import numpy as np
import pandas as pd
import pytest
import scipy
import scipy.stats
from conftest import load_reference

from fluxpart import screening
from fluxpart.errors import ConfigError, FluxpartError, MissingColumnError, TimestampError
from fluxpart.screening import (
    REASON_CODES,
    despike,
    low_ustar,
    range_flags,
    rg_above_potential,
    screen,
    site_flag,
)
from fluxpart.variables import VARIABLES

REFERENCE = load_reference("screening")


def _diurnal_series(rng, days=60, noise_scale=0.5, freq="30min"):
    """Invented smooth diurnal NEE with Laplace noise (for known-truth recovery only)."""
    index = pd.date_range("2023-05-01", periods=days * (48 if freq == "30min" else 24), freq=freq)
    hour = np.asarray(index.hour + index.minute / 60.0)
    sun = np.clip(np.sin((hour - 6.0) / 12.0 * np.pi), 0.0, None)
    is_night = sun == 0.0
    nee = 3.0 - 15.0 * sun + rng.laplace(0.0, noise_scale, len(index))
    return index, nee, is_night, sun


def _planted_spikes(rng, nee, share=0.01):
    positions = rng.choice(len(nee), int(share * len(nee)), replace=False)
    spiked = nee.copy()
    spiked[positions] += rng.uniform(6.0, 20.0, len(positions)) * rng.choice([-1, 1], len(positions))
    return spiked, positions


def test_mad_constant_is_the_normal_quartile():
    """0.6745 of Papale et al. (2006) is the 0.75 quantile of the standard normal distribution."""
    # Source: Papale et al. (2006) eq. 2 writes 0.6745 (m); the exact value from
    # scipy.stats.norm.ppf(0.75) (SciPy, version printed below) is 0.674490; the
    # paper's rounding to 4 decimals allows 1e-4.
    assert screening._MAD_NORMAL_QUANTILE == REFERENCE["despike"]["mad_normal_quantile"]
    assert abs(screening._MAD_NORMAL_QUANTILE - scipy.stats.norm.ppf(0.75)) < 1e-4, scipy.__version__


def test_defaults_are_the_published_settings():
    """despike and screen default to z = 4 and 13-day blocks (Papale et al. 2006 (m))."""
    # Source: reference/screening.toml [despike], Papale et al. (2006) section 2.2 (m).
    parameters = inspect.signature(despike).parameters
    assert parameters["z"].default == REFERENCE["despike"]["z"]
    assert parameters["block_days"].default == REFERENCE["despike"]["block_days"]
    parameters = inspect.signature(screen).parameters
    assert parameters["despike_z"].default == REFERENCE["despike"]["z"]
    assert parameters["rg_margin"].default == REFERENCE["rg_above_potential"]["margin"]


def test_range_flags_bounds_and_missing():
    """Values beyond the plausible range are flagged; the bounds themselves and NaN are not."""
    index = pd.date_range("2023-01-01", periods=5, freq="30min")
    frame = pd.DataFrame({
        # common practice: u* is a magnitude and cannot be negative
        "ustar": [-0.01, 0.0, 0.3, np.nan, 5.01],
        # common practice: relative humidity far above 100 % is a sensor fault
        "rh": [50.0, 110.0, 120.0, 0.0, -1.0],
        "nee": [VARIABLES["nee"].minimum, -100.5, 5.0, 100.5, np.nan],
        "note": ["a", "b", "c", "d", "e"],
    }, index=index)
    flags = range_flags(frame)
    assert list(flags.columns) == ["nee_out_of_range", "ustar_out_of_range", "rh_out_of_range"]
    assert flags.index.equals(index)
    assert flags["ustar_out_of_range"].tolist() == [True, False, False, False, True]
    assert flags["rh_out_of_range"].tolist() == [False, False, True, False, True]
    assert flags["nee_out_of_range"].tolist() == [False, True, False, True, False]


def test_site_flag_nonzero_rejects():
    """Non-zero site flags reject; zero and a missing flag do not."""
    assert site_flag([0, 1, 2, -1, np.nan, 0.0]).tolist() == [False, True, True, True, False, False]


def test_rg_above_potential_margin():
    """Rg above potential plus max(50 W m-2, 20 %) is flagged (night light, clock shifts)."""
    # common practice: surface global radiation cannot exceed the top-of-atmosphere
    # value except briefly (cloud enhancement); at night it is zero.
    rg = np.array([0.0, 45.0, 60.0, 1150.0, 1250.0, np.nan, 300.0])
    potential = np.array([0.0, 0.0, 0.0, 1000.0, 1000.0, 800.0, np.nan])
    flagged = rg_above_potential(rg, potential)
    assert flagged.tolist() == [False, False, True, False, True, False, False]
    assert rg_above_potential([60.0], [0.0], margin=100.0).tolist() == [False]
    with pytest.raises(ConfigError, match="rg_margin"):
        rg_above_potential(rg, potential, margin=-1.0)


def test_despike_finds_planted_spikes(rng):
    """Known truth: >= 90 % of planted spikes found, <= 1 % of clean records rejected."""
    # Invented data (known-truth recovery): smooth diurnal NEE, Laplace noise as flux
    # random error is closer to Laplace than normal (Hollinger & Richardson 2005,
    # Tree Physiology 25:873-885), 1 % spikes of 6-20 µmol m-2 s-1.
    index, nee, is_night, _ = _diurnal_series(rng)
    spiked, positions = _planted_spikes(rng, nee)
    found = despike(spiked, index, is_night)
    clean = np.ones(len(nee), dtype=bool)
    clean[positions] = False
    assert found[positions].mean() >= 0.90
    assert found[clean].mean() <= 0.01


def test_despike_isolation_rule_spares_neighbours(rng):
    """Without the isolation rule the neighbours of large spikes are rejected too."""
    # eq. 1 of Papale et al. (2006): a spike s gives d = 2s at the spike and about
    # -s at both neighbours, so for s above the band both neighbours leave it.
    index, nee, is_night, _ = _diurnal_series(rng)
    spiked, positions = _planted_spikes(rng, nee)
    clean = np.ones(len(nee), dtype=bool)
    clean[positions] = False
    plain = despike(spiked, index, is_night, isolate=False)
    refined = despike(spiked, index, is_night)
    neighbours = np.clip(np.concatenate((positions - 1, positions + 1)), 0, len(nee) - 1)
    assert plain[neighbours].mean() > 5 * max(refined[neighbours].mean(), 1e-3)
    assert plain[positions].mean() >= refined[positions].mean() - 1e-12


def test_despike_hand_computed_band():
    """The flagged records are those of eq. 1-2 of Papale et al. (2006) computed by hand."""
    index = pd.date_range("2023-06-01", periods=40, freq="30min")
    values = np.tile([0.0, 1.0, 0.0, -1.0], 10).astype(float)
    values[21] += 9.0
    is_night = np.ones(40, dtype=bool)
    # by hand: d on the interior, median and MAD over the single block
    d = 2 * values[1:-1] - values[:-2] - values[2:]
    median = np.median(d)
    mad = np.median(np.abs(d - median))
    expected = np.zeros(40, dtype=bool)
    expected[1:-1] = np.abs(d - median) > 4.0 * mad / 0.6745
    assert expected.sum() >= 1
    assert despike(values, index, is_night, isolate=False).tolist() == expected.tolist()
    assert np.flatnonzero(despike(values, index, is_night)).tolist() == [21]


def test_despike_gaps_use_nearest_valid_neighbours():
    """Across a gap, d uses the nearest valid records; NaN records are never flagged."""
    index = pd.date_range("2023-06-01", periods=60, freq="30min")
    values = np.where(np.arange(60) % 2 == 0, 0.5, -0.5)
    values[29] = np.nan
    values[30] = 12.0          # spike right after the gap
    values[31] = np.nan
    found = despike(values, index, np.zeros(60, dtype=bool))
    assert found[30]
    assert not found[29] and not found[31]
    assert found.sum() == 1


def test_despike_day_and_night_separately(rng):
    """A night spike small against day noise is found because night has its own MAD."""
    # Papale et al. (2006) (m): statistics separately for day and night.
    index, _, _, sun = _diurnal_series(rng, days=13)
    is_night = np.asarray(index.hour < 6)           # a quarter of the records, calm
    noise = np.where(is_night, rng.laplace(0.0, 0.1, len(index)), rng.laplace(0.0, 2.0, len(index)))
    nee = 3.0 - 15.0 * sun + noise
    target = int(np.flatnonzero(is_night)[100])
    nee[target] += 3.0
    assert despike(nee, index, is_night)[target]
    assert not despike(nee, index, np.zeros(len(nee), dtype=bool))[target]


def test_despike_short_and_empty_input():
    """Fewer than three valid values, or tiny blocks, flag nothing."""
    index = pd.date_range("2023-06-01", periods=5, freq="30min")
    assert not despike([np.nan, 1.0, np.nan, 50.0, np.nan], index, np.ones(5, bool)).any()
    assert not despike([1.0, 50.0, 1.0, 2.0, 1.0], index, np.ones(5, bool)).any()


def test_low_ustar_night_only_and_missing():
    """Night u* below the threshold and missing night u* are rejected; day never."""
    ustar = np.array([0.05, 0.3, np.nan, 0.05, np.nan, 0.2])
    is_night = np.array([True, True, True, False, False, True])
    assert low_ustar(ustar, is_night, 0.2).tolist() == [True, False, True, False, False, False]
    per_record = np.array([0.01, 0.4, 0.2, 0.2, 0.2, 0.1])
    assert low_ustar(ustar, is_night, per_record).tolist() == [False, True, True, False, False,
                                                               False]
    with pytest.raises(ConfigError, match="missing"):
        low_ustar(ustar, is_night, np.array([0.2, np.nan, 0.2, 0.2, 0.2, 0.2]))
    with pytest.raises(ConfigError, match="negative"):
        low_ustar(ustar, is_night, -0.1)


def _frame(rng):
    index, nee, is_night, sun = _diurnal_series(rng, days=30)
    n = len(index)
    frame = pd.DataFrame({
        "nee": nee, "rg": 900.0 * sun, "tair": 15.0 + 5.0 * sun, "vpd": 8.0 * sun,
        "ustar": np.full(n, 0.4), "nee_flag": np.zeros(n),
    }, index=index)
    return frame, 1000.0 * sun, is_night


def test_screen_reasons_in_order(rng):
    """Each record's reason is the first check in the order range, site, spike, u*."""
    frame, potential, is_night = _frame(rng)
    night = np.flatnonzero(is_night)
    frame.iloc[10, frame.columns.get_loc("nee")] = np.nan              # missing
    frame.iloc[20, frame.columns.get_loc("nee")] = 250.0               # out of range
    frame.iloc[20, frame.columns.get_loc("nee_flag")] = 1              # ...and flagged
    frame.iloc[30, frame.columns.get_loc("nee_flag")] = 2              # site flag
    frame.iloc[night[300], frame.columns.get_loc("nee")] += 25.0       # spike
    frame.iloc[night[400], frame.columns.get_loc("ustar")] = 0.05      # calm night
    frame.iloc[night[401], frame.columns.get_loc("ustar")] = np.nan    # u* missing at night
    frame.iloc[night[402], frame.columns.get_loc("ustar")] = 9.0       # u* out of range
    frame.iloc[500, frame.columns.get_loc("rg")] = 2000.0              # Rg out of range
    result = screen(frame, potential, is_night, ustar_threshold=0.2)
    reason = result.reason.to_numpy()
    assert result.reason.dtype == np.int8
    assert reason[10] == 1 and reason[20] == 2 and reason[30] == 3
    assert reason[night[300]] == 4
    assert reason[night[400]] == reason[night[401]] == reason[night[402]] == 5
    assert REASON_CODES[4] == "spike"
    # the out-of-range NEE is not also called a spike: despiking ran without it
    assert not result.flags["nee_spike"].iloc[20]
    assert result.flags["nee_site_flag"].iloc[20]
    rejected = reason != 0
    assert result.nee_screened[rejected].isna().all()
    kept = ~rejected
    assert np.array_equal(result.nee_screened[kept].to_numpy(), frame["nee"].to_numpy()[kept])
    assert np.isnan(result.screened["rg"].iloc[500]) and reason[500] == 0
    assert result.counts.sum() == len(frame)
    assert result.counts["low_ustar"] == 3 and result.counts["missing"] == 1
    assert list(result.counts.index) == list(REASON_CODES.values())
    for column in ("nee_out_of_range", "nee_site_flag", "nee_spike", "nee_low_ustar",
                   "rg_above_potential", "ustar_out_of_range"):
        assert result.flags[column].dtype == bool


def test_screen_without_ustar_threshold_and_rg_check(rng):
    """Without a threshold nothing is rejected for u*; Rg above potential rejects Rg only."""
    frame, potential, is_night = _frame(rng)
    frame["ustar"] = 0.01
    frame.iloc[5, frame.columns.get_loc("rg")] = 400.0         # night (potential 0)
    result = screen(frame, potential, is_night)
    assert not result.flags["nee_low_ustar"].any()
    assert result.flags["rg_above_potential"].iloc[5]
    assert np.isnan(result.screened["rg"].iloc[5])
    assert result.reason.iloc[5] == 0
    assert result.thresholds["ustar_threshold"] is None
    json.dumps(result.thresholds)


def test_screen_records_thresholds(rng):
    """The thresholds used are recorded, JSON-compatible, per-record u* as its values."""
    frame, potential, is_night = _frame(rng)
    per_record = np.where(frame.index.day < 15, 0.15, 0.25)
    result = screen(frame, potential, is_night, ustar_threshold=per_record, despike_z=5.0)
    thresholds = json.loads(json.dumps(result.thresholds))
    assert thresholds["despike_z"] == 5.0
    assert thresholds["ustar_threshold"] == {"per_record": True, "values": [0.15, 0.25]}
    assert thresholds["plausible_ranges"]["nee"] == [-100.0, 100.0]


def test_screen_does_not_modify_inputs_and_is_deterministic(rng):
    """Inputs are unchanged and two runs give identical results."""
    frame, potential, is_night = _frame(rng)
    frame.iloc[3, 0] = 500.0
    before, potential_before, night_before = frame.copy(), potential.copy(), is_night.copy()
    first = screen(frame, potential, is_night, ustar_threshold=0.2)
    second = screen(frame, potential, is_night, ustar_threshold=0.2)
    pd.testing.assert_frame_equal(frame, before)
    assert np.array_equal(potential, potential_before) and np.array_equal(is_night, night_before)
    pd.testing.assert_frame_equal(first.flags, second.flags)
    pd.testing.assert_series_equal(first.nee_screened, second.nee_screened)


def test_screen_hourly_records(rng):
    """Hourly records are screened the same way (blocks are in days, not records)."""
    index, nee, is_night, sun = _diurnal_series(rng, days=60, freq="60min")
    spiked, positions = _planted_spikes(rng, nee)
    frame = pd.DataFrame({"nee": spiked}, index=index)
    result = screen(frame, 1000.0 * sun, is_night)
    assert result.flags["nee_spike"].to_numpy()[positions].mean() >= 0.9


def test_screen_bad_input_errors(rng):
    """Missing NEE, wrong lengths, a non-time index and non-boolean night flags are errors."""
    frame, potential, is_night = _frame(rng)
    with pytest.raises(MissingColumnError, match="'nee'"):
        screen(frame.drop(columns="nee"), potential, is_night)
    with pytest.raises(FluxpartError, match="potential has"):
        screen(frame, potential[:-1], is_night)
    with pytest.raises(TimestampError, match="DatetimeIndex"):
        screen(frame.reset_index(drop=True), potential, is_night)
    with pytest.raises(FluxpartError, match="is_night must be boolean"):
        screen(frame, potential, np.where(is_night, 1.0, np.nan))
    with pytest.raises(MissingColumnError, match="'ustar'"):
        screen(frame.drop(columns="ustar"), potential, is_night, ustar_threshold=0.2)
    with pytest.raises(ConfigError, match="block_days"):
        despike(frame["nee"], frame.index, is_night, block_days=0)


def test_despike_finds_spikes_in_bursts_of_two_and_three(rng):
    """Known truth: records of 2- and 3-record spike bursts are found, their neighbours not.

    Invented data (known-truth recovery): the smooth diurnal NEE of the other tests with
    Laplace noise (Hollinger & Richardson 2005), and 40 bursts of two and 40 of three
    records raised alike by 8-20 µmol m-2 s-1 (sensor contamination lasting an hour or two,
    as rain on the optical path gives, common practice (m)). By eq. 1 of Papale et al.
    (2006) a two-record burst of height s gives d = s at both records and -s at both outer
    neighbours, and a three-record burst d = 0 at its middle record, so the published test
    alone cannot tell them from their neighbours; standing out from the records on both
    sides and the further passes (``isolate``, our refinement) do.
    """
    index, nee, is_night, _ = _diurnal_series(rng)
    spiked = nee.copy()
    starts = np.sort(rng.choice(np.arange(50, len(nee) - 50, 12), 80, replace=False))
    lengths = np.where(np.arange(80) % 2 == 0, 2, 3)
    burst = np.concatenate([np.arange(s, s + n) for s, n in zip(starts, lengths, strict=True)])
    heights = np.repeat(rng.uniform(8.0, 20.0, 80) * rng.choice([-1.0, 1.0], 80), lengths)
    spiked[burst] += heights
    outer = np.concatenate((starts - 1, starts + lengths))
    middle = starts[lengths == 3] + 1
    found = despike(spiked, index, is_night)
    plain = despike(spiked, index, is_night, isolate=False)
    assert found[burst].mean() >= 0.9
    assert found[middle].mean() >= 0.9 and plain[middle].mean() <= 0.1
    assert found[outer].mean() <= 0.02
    clean = np.ones(len(nee), dtype=bool)
    clean[burst] = False
    assert found[clean].mean() <= 0.01


def test_despike_flags_a_spike_next_to_either_end_of_the_series(rng):
    """A spike at the second or the second-last valid record is flagged, as eq. 1-2 of
    Papale et al. (2006) flag it (``d`` is defined at every record but the first and the
    last), and not its neighbours (review19: the refinement needed two reference records
    on each side, so spikes there were kept; 0.19.0 flagged them). Invented noise with a
    spike (known-truth recovery); NaN at the ends does not change which record is second."""
    index = pd.date_range("2023-06-01", periods=60, freq="30min")
    is_night = np.ones(60, dtype=bool)
    for spike in (1, 2, 57, 58):
        values = rng.normal(0.0, 0.5, 60)
        values[spike] += 12.0
        if spike == 2:
            values[0] = np.nan               # the spike is the second valid record
        if spike == 57:
            values[59] = np.nan              # the spike is the second-last valid record
        assert despike(values, index, is_night, isolate=False)[spike]
        assert np.flatnonzero(despike(values, index, is_night)).tolist() == [spike]
