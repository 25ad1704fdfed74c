"""Review38: a missing code inside a column's values that the column is held at in time.

Outside facts, each named beside its check: soil freezing and thawing is held at 0 °C for
days to weeks while the latent heat of fusion of its water is exchanged, the "zero
curtain" (Outcalt, Nelson & Hinkel 1990, Water Resources Research 26 (m)); ice melts at
0 °C at standard pressure (a fact of the trade); the saturation vapour pressure after
Tetens (1930) as given by Murray (1967), 0.61078 exp(17.27 T / (T + 237.3)) kPa (m).
Everything else is invented known truth:
the records as written.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.code_values import BOUND_MIN_SHARE, MIN_SHARE, ordinary_code_message
from fluxpart.errors import ConfigError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=61.8, longitude=24.3, utc_offset=2.0)
HOURS = 24 * 365


def _soil(curtain_days, start_day=100):
    """Invented hourly soil temperature at 5 cm [°C]: an annual wave from -4 to 16 °C and
    a daily one of 1 °C, held at 0 °C for `curtain_days` through the spring thaw (Outcalt
    et al. 1990 (m)), written to 0.1 °C."""
    t = np.arange(HOURS) / 24.0
    soil = 6.0 - 10.0 * np.cos(2 * np.pi * (t - 20) / 365) + 0.5 * np.sin(2 * np.pi * t)
    first = start_day * 24
    soil[first:first + curtain_days * 24] = 0.0
    return soil.round(1)


@pytest.mark.parametrize("days", [7, 12, 30])
def test_soil_held_at_0_through_a_thaw_is_a_reading(days):
    """Before: 7 and 12 days of 0.0 (2-3 % of the year, under MIN_SHARE) were blanked by
    missing = [-9999, 0] without a word, 30 days (more frequent than the values beside
    it by far) called a code. The records beside the curtain lie within a step of 0 °C."""
    soil = _soil(days)
    share = float((soil == 0).mean())
    assert share >= BOUND_MIN_SHARE
    assert soil.min() < 0.0 < soil.max()                      # 0 inside the column's values
    message = ordinary_code_message("tsoil", "ts5", 0.0, soil)
    assert message is not None and "among its values" in message
    assert "tsoil = [0]" in message and "[input.missing_by_variable]" in message
    if days < 30:
        assert share < MIN_SHARE


def test_outage_zeros_inside_the_values_stay_a_code():
    """A logger writing 0 for an outage writes it at any temperature: the records beside
    lie as far from 0 as the column does, so 0 is blanked as a code, as before."""
    soil = _soil(0)
    soil[soil == 0] = 0.1                                      # no reading of 0 here
    rng = np.random.default_rng(5)
    outage = rng.random(HOURS) < 0.03
    soil[outage] = 0.0
    assert ordinary_code_message("tsoil", "ts5", 0.0, soil) is None
    blocks = _soil(0)
    blocks[blocks == 0] = 0.1
    for start in rng.integers(0, HOURS - 24, 60):              # outages of 1-23 hours
        blocks[start:start + rng.integers(1, 24)] = 0.0
    assert ordinary_code_message("tsoil", "ts5", 0.0, blocks) is None


def _write(path, soil):
    ends = pd.date_range("2021-01-01 01:00", periods=HOURS, freq="60min")
    hour = ends.hour.to_numpy()
    day = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    ta = (soil + 2.0 + 3.0 * day).round(1)
    frame = pd.DataFrame({
        "time": ends.strftime("%Y-%m-%d %H:%M"),
        "co2_flux": (2.0 - 8.0 * day).round(2),
        "us": (0.3 + 0.1 * np.cos(np.arange(HOURS) / 9)).round(2),
        "sw": (600 * day).round(1), "t_air": ta,
        "vpd": (0.4 * 0.61078 * np.exp(17.27 * ta / (ta + 237.3))).round(3),   # RH 60 %
        "ts5": soil})
    frame.to_csv(path, index=False)
    return path


def test_a_file_with_a_thaw_under_a_code_of_zero_is_refused(tmp_path):
    """Through the reader: one `error:` line naming the column; each reading of 0 then
    gives what it says."""
    soil = _soil(10)
    path = _write(tmp_path / "t.csv", soil)
    settings = {"columns": {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air",
                            "vpd": "vpd", "tsoil": "ts5"},
                "time_column": "time", "time_format": "%Y-%m-%d %H:%M", "time_marks": "end",
                "units": {"vpd": "kPa"},
                "site": SITE}
    with pytest.raises(ConfigError) as caught:
        read_table(path, missing=[-9999, 0], **settings)
    assert "column 'ts5' (tsoil)" in str(caught.value)
    kept, _ = read_table(path, missing=[-9999], missing_by_variable={"nee": [0]}, **settings)
    assert int((kept["tsoil"] == 0).sum()) == int((soil == 0).sum())
    blanked, _ = read_table(path, missing=[-9999, 0], missing_by_variable={"tsoil": [0]},
                            **settings)
    assert int(blanked["tsoil"].isna().sum()) == int((soil == 0).sum())


# ------------------------------------------- key hints that named a setting of another meaning
def _hint(key):
    import dataclasses

    from fluxpart.config import Config, _key_hint

    return _key_hint(key, [f.name for f in dataclasses.fields(Config)])


@pytest.mark.parametrize("key", ["despike_days", "despike_window_days", "despike_blocks"])
def test_despike_days_are_the_block_length_not_the_z_limit(key):
    """Before: answered 'despike_z', a limit in robust standard deviations; the days a user
    meant (13 by default) written there pass its range (2-20) and despiking all but stops
    without a word. Despiking judges a flux against the median absolute deviation of its
    block of days (Papale et al. 2006, Biogeosciences 3 (m))."""
    hint = _hint(key)
    assert "'despike_block_days'" in hint and "despike_z" not in hint


@pytest.mark.parametrize(("key", "meant"), [
    ("min_ustar_resolution", "ustar_min_resolution"),
    ("ustar_resolution_min", "ustar_min_resolution"),
    ("ustar_minimum_classes", "ustar_classes"),
    ("ustar_seasons_min", "ustar_distinct_seasons"),
])
def test_other_ustar_minima_are_not_the_threshold_floor(key, meant):
    """Before: every u* key with 'min' in it was answered 'ustar_min_threshold', a floor
    under the detected thresholds in m s-1 (a value of standard errors or classes written
    there is a floor of that many m s-1). The nearest spelling names the setting meant."""
    hint = _hint(key)
    assert f"'{meant}'" in hint and "ustar_min_threshold" not in hint


@pytest.mark.parametrize(("key", "meant"), [
    ("gapfill_rg_threshold", "'rg_tolerance'"),
    ("mds_rg_tolerance", "'rg_tolerance'"),
    ("random_error_rg_threshold", "'random_error_rg_tolerance'"),
    ("gapfill_radiation_window", "'gapfill_rg_window'"),
])
def test_gap_filling_rg_keys_are_not_the_night_threshold(key, meant):
    """Before: the first three were answered 'night_rg_threshold' (night is Rg below it)
    and the last 'gapfill_max_window_days' (days): the Rg similarity of marginal
    distribution sampling's donors is a tolerance around the gap's own Rg (Reichstein et
    al. 2005, Global Change Biology 11, 50 W m-2 (m)), not the night limit."""
    hint = _hint(key)
    assert meant in hint and "night_rg_threshold" not in hint
    assert "gapfill_max_window_days" not in hint


@pytest.mark.parametrize(("key", "meant"), [
    ("ustar_floor", "ustar_min_threshold"), ("ustar_lower_bound", "ustar_min_threshold"),
    ("night_rg_limit", "night_rg_threshold"), ("despike_limit", "despike_z"),
    ("mds_window_days", "gapfill_max_window_days"),
])
def test_the_meanings_that_were_right_stay(key, meant):
    """The mistakes33 answers these changes leave as they were."""
    assert f"'{meant}'" in _hint(key)


@pytest.mark.parametrize(("key", "meant"), [
    ("missing_per_column", "[input.missing_by_variable]"),
    ("nodata_by_column", "[input.missing_by_variable]"),
    ("missing_values_by_variable", "[input.missing_by_variable]"),
    ("timestamp_end", "'time_marks'"),
    ("timestamp_refers_to", "'time_marks'"),
    ("timestamp_timezone", "'time_zone'"),
    ("timestamp_interval", "'interval_minutes'"),
])
def test_input_keys_named_by_what_they_mean(key, meant):
    """Before: codes per column were sent to [input] missing, whose codes blank every
    column (0 there also blanks Rg at night and VPD at saturation, a fact of the trade);
    a stamp's end, zone or interval were sent to time_column. Each is the setting its
    words name."""
    from fluxpart.io import _INPUT_KEYS
    from fluxpart.key_hints import table_meaning_hint

    hint = table_meaning_hint(key, "input", _INPUT_KEYS)
    assert meant in hint
    if "by_variable" in meant:
        assert "'missing'" not in hint
    else:
        assert "time_column" not in hint


@pytest.mark.parametrize(("key", "meant"), [
    ("na_values", "'missing'"), ("timestamp", "'time_column'"),
    ("timestamp_position", "'time_marks'"),
])
def test_the_input_meanings_that_were_right_stay(key, meant):
    """The mistakes33 answers these changes leave as they were."""
    from fluxpart.io import _INPUT_KEYS
    from fluxpart.key_hints import table_meaning_hint

    assert meant in table_meaning_hint(key, "input", _INPUT_KEYS)
