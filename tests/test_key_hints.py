"""Tests of fluxpart.key_hints: an unknown [processing] key answered by what its words mean.

Sources: Python documentation, ``difflib.SequenceMatcher.ratio`` and
``difflib.get_close_matches`` (m) (the likeness of a typing slip); Papale et al. (2006),
Biogeosciences 3, 571-583 (m): the u* filter's threshold is among the largest single
choices of night-time NEE, so a floor under detected thresholds and a fixed threshold are
not interchangeable (known-truth recovery on invented data below).
"""

import difflib
import shutil
import warnings
from pathlib import Path

import pytest

from fluxpart import Config, process, scenarios
from fluxpart.cli import main
from fluxpart.config import setting_text
from fluxpart.errors import ConfigError
from fluxpart.key_hints import SLIP_LIKENESS, meaning_hint, table_meaning_hint

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"

#: Keys of the user's own words, the setting that does what they say, and the setting the
#: spelling alone pointed at before (round mistakes33), of another meaning.
MEANT = [
    ("ustar_fixed_threshold", 'ustar_method = "fixed" and ustar_threshold', "ustar_min_threshold"),
    ("random_seed", "'seed'", "random_error_draws"),
    ("year_begin", "'year_start'", "rg_margin"),
    ("mds_window_days", "'gapfill_max_window_days'", "e0_window_days"),
    ("uncertainty_draws", "'random_error_draws'", "ustar_bootstrap_draws"),
    ("rg_threshold", "'night_rg_threshold'", "'ustar_threshold'"),
    ("ustar_floor", "'ustar_min_threshold'", "ustar_method"),
    ("ustar_minimum", "'ustar_min_threshold'", "ustar_annual"),
    ("despike_threshold", "'despike_z'", "'ustar_threshold'"),
    ("partition_method", "both partitionings always run", "ustar_method"),
]


def _refusal(tmp_path, key, value="0.2"):
    path = tmp_path / "site.toml"
    path.write_text(f"[processing]\n{key} = {value}\n", encoding="utf-8")
    with pytest.raises(ConfigError) as caught:
        Config.from_toml(path)
    return str(caught.value)


@pytest.mark.parametrize(("key", "meant", "before"), MEANT)
def test_a_key_of_ones_own_words_names_the_setting_that_does_what_it_says(tmp_path, key,
                                                                          meant, before):
    """The hint names the setting the words mean, not the nearest spelling of another
    meaning (fails on f5d7226, which answered with `before`)."""
    text = _refusal(tmp_path, key)
    assert text.startswith(f"[processing] {key}: unknown setting")
    assert meant in text
    assert f"did you mean {before!r}" not in text and f"did you mean {before}" not in text
    # the spelling alone is no slip: difflib's likeness of the nearest name is below the
    # slip bound, so the old hint was a guess (Python docs, difflib (m))
    nearest = difflib.get_close_matches(key, Config.field_names(), n=1, cutoff=0.0)[0]
    assert difflib.SequenceMatcher(None, key, nearest).ratio() < SLIP_LIKENESS


@pytest.mark.parametrize("key", ["random_seed", "year_begin", "mds_window_days",
                                 "uncertainty_draws", "rg_threshold", "ustar_floor",
                                 "despike_threshold"])
def test_the_named_setting_exists_and_takes_a_value(key):
    """Every setting a hint names is a valid key (the hint cannot point at nothing)."""
    hint = meaning_hint(key)
    named = hint.split("'")[1]
    assert named in Config.field_names()
    value = {"seed": 1, "year_start": "07-01", "gapfill_max_window_days": 14.0,
             "random_error_draws": 1000, "night_rg_threshold": 10.0,
             "ustar_min_threshold": 0.1, "despike_z": 5.5}[named]
    assert getattr(Config.from_mapping({named: value}), named) == value


@pytest.mark.parametrize(("key", "valid"), [
    ("ustar_treshold", "ustar_threshold"), ("despike_blocks_days", "despike_block_days"),
    ("rg_tolerence", "rg_tolerance"), ("gapfill_max_windows_days", "gapfill_max_window_days"),
    ("night_rg_treshold", "night_rg_threshold"), ("SEED", "seed")])
def test_a_typing_slip_keeps_the_spelling_hint(tmp_path, key, valid):
    """One or two letters off a valid name (difflib ratio at or above the bound, or the
    same name in other case) still gets that name."""
    assert (difflib.SequenceMatcher(None, key, valid).ratio() >= SLIP_LIKENESS
            or key.lower() == valid)
    assert f"did you mean {valid!r}" in _refusal(tmp_path, key)


def test_a_manifest_config_keeps_the_spelling_hint():
    """Keys of a manifest are a release's own names: no reading by meaning there."""
    with pytest.raises(ConfigError, match=r"manifest config: random_seed: unknown setting; "
                                          r"did you mean 'random_error_draws'"):
        Config.from_mapping({"random_seed": 1}, where="manifest config:")


def test_following_the_old_hint_for_a_fixed_threshold_moved_reco():
    """Known-truth recovery on invented data (scenarios.generate(7), a deciduous forest
    whose detected thresholds lie above 0.2 m s-1): a floor of 0.2 is not a fixed 0.2;
    the annual Reco differs by more than 10 g C m-2 (measured +43.5), so the hint for
    `ustar_fixed_threshold` must name the fixed method, not the floor."""
    site_year = scenarios.generate(7)
    sums = {}
    for label, config in (("fixed", Config(ustar_method="fixed", ustar_threshold=0.2)),
                          ("floor", Config(ustar_min_threshold=0.2))):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            sums[label] = float(process(site_year.frame, site_year.site, config)
                                .annual["reco_nighttime"].sum())
    assert abs(sums["floor"] - sums["fixed"]) > 10.0
    hint = meaning_hint("ustar_fixed_threshold")
    assert 'ustar_method = "fixed"' in hint and "floor" in hint
    assert "did you mean 'ustar_min_threshold'" not in hint


def test_the_command_line_refuses_in_one_line_naming_the_fixed_method(tmp_path, capsys):
    """`fluxpart run` with `ustar_fixed_threshold = 0.2`: exit 2, one `error:` line
    naming ustar_method = "fixed" and ustar_threshold; nothing written."""
    for name in ("quillmoor_grassland.toml", "quillmoor_grassland.csv"):
        shutil.copy(EXAMPLES / name, tmp_path / name)
    config = tmp_path / "quillmoor_grassland.toml"
    config.write_text(config.read_text().replace(
        "[processing]\n", f"[processing]\nustar_fixed_threshold = {setting_text(0.2)}\n", 1))
    out = tmp_path / "result"
    assert main(["run", str(config), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    lines = [line for line in err.splitlines() if line.startswith("error:")]
    assert len(lines) == 1 and 'ustar_method = "fixed"' in lines[0]
    assert "ustar_threshold" in lines[0] and "Traceback" not in err
    assert not out.exists()


@pytest.mark.parametrize(("table", "old", "new", "meant", "before"), [
    ("input", 'time_marks = "end"', 'timestamp_position = "end"', "'time_marks'", "'time_zone'"),
    ("input", "missing = [-9999]", "na_values = [-9999]", "'missing'", "'interval_minutes'"),
    ("input", 'time_column = "stamp_end"', 'timestamp = "stamp_end"', "'time_column'",
     "'time_marks'"),
    ("site", "utc_offset = 1.0", "timezone = 1.0", "'utc_offset'", "valid keys"),
    ("site", 'canopy = "short"', 'vegetation = "short"', "'canopy'", "valid keys"),
])
def test_a_site_or_input_key_of_ones_own_words_names_the_key_meant(tmp_path, table, old,
                                                                    new, meant, before):
    """The example's config with one key renamed in the user's words: the refusal names
    the key meant, not the nearest spelling (fails on f5d7226, which gave `before`)."""
    from fluxpart.io import read_site_config

    for name in ("quillmoor_grassland.toml", "quillmoor_grassland.csv"):
        shutil.copy(EXAMPLES / name, tmp_path / name)
    config = tmp_path / "quillmoor_grassland.toml"
    text = config.read_text()
    assert old in text
    config.write_text(text.replace(old, new, 1))
    with pytest.raises(ConfigError) as caught:
        read_site_config(config)
    message = str(caught.value)
    assert message.startswith(f"[{table}] {new.split(' =')[0]} is unknown")
    assert meant in message and before not in message


@pytest.mark.parametrize(("key", "valid"), [("lattitude", "latitude"), ("lat", "latitude"),
                                            ("timestamp_format", "time_format")])
def test_a_site_or_input_slip_keeps_the_spelling_hint(key, valid):
    """Slips and words of no rule are left to the spelling hint (None here)."""
    from fluxpart.io import _INPUT_KEYS, _SITE_KEYS

    table = "site" if valid == "latitude" else "input"
    keys = _SITE_KEYS if table == "site" else _INPUT_KEYS
    assert valid in keys
    assert table_meaning_hint(key, table, keys) is None
