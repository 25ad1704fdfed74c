"""Tests of fluxpart.config (Config) and fluxpart.site (Site)."""

import dataclasses
import json

import pytest

from fluxpart import Config, Site
from fluxpart.config import suggest_key
from fluxpart.errors import ConfigError, InputFileError


def test_defaults_are_the_published_settings():
    """MDS tolerances 50 W m-2, 2.5 °C, 5 hPa (Reichstein et al. 2005, appendix)."""
    config = Config()
    assert (config.rg_tolerance, config.tair_tolerance, config.vpd_tolerance) == (50.0, 2.5, 5.0)
    # Reichstein et al. (2005): Rref in 4-day windows, E0 windows need a 5 K range,
    # E0 accepted within 30-450 K (m)
    assert config.rref_window_days == 4.0
    assert config.e0_min_temperature_range == 5.0
    assert config.e0_bounds == (30.0, 450.0)
    assert config.seed == 0
    assert config.respiration_driver == "auto"
    assert config.e0_fallback is None


def test_method_defaults_follow_their_papers():
    """Despiking z = 4 in 13-day blocks (Papale et al. 2006 (m)); daytime windows of 4 days
    moved by 2 (Lasslop et al. 2010); about 100 u* bootstrap draws (Papale et al. 2006 (m))."""
    config = Config()
    assert (config.despike_z, config.despike_block_days) == (4.0, 13.0)
    assert (config.daytime_window_days, config.daytime_window_step_days) == (4.0, 2.0)
    assert config.ustar_bootstrap_draws == 100
    assert config.ustar_method == "moving_point"


def test_config_is_frozen():
    """Config cannot be changed after construction."""
    with pytest.raises(dataclasses.FrozenInstanceError):
        Config().seed = 3


def test_from_toml_overrides_and_defaults(tmp_path):
    """[processing] overrides its keys; other fields keep their defaults."""
    path = tmp_path / "site.toml"
    path.write_text("[site]\nname = \"x\"\n[processing]\nseed = 7\nrg_tolerance = 40.0\n"
                    "e0_bounds = [50.0, 400.0]\n", encoding="utf-8")
    config = Config.from_toml(path)
    assert config.seed == 7
    assert config.rg_tolerance == 40.0
    assert config.e0_bounds == (50.0, 400.0)
    assert config.tair_tolerance == Config().tair_tolerance


def test_from_toml_without_processing_gives_defaults(tmp_path):
    """A site config without [processing] gives Config()."""
    path = tmp_path / "site.toml"
    path.write_text("[site]\nname = \"x\"\n", encoding="utf-8")
    assert Config.from_toml(path) == Config()


def test_unknown_key_suggests_nearest(tmp_path):
    """A misspelt setting names itself and suggests the nearest valid one."""
    path = tmp_path / "site.toml"
    path.write_text("[processing]\nrg_tolerence = 40.0\n", encoding="utf-8")
    with pytest.raises(ConfigError, match=r"\[processing\] rg_tolerence.*did you mean "
                                          r"'rg_tolerance'"):
        Config.from_toml(path)


def test_suggest_key_without_close_match_lists_valid():
    """With no close match, suggest_key lists the valid keys."""
    assert "valid settings: alpha, beta" in suggest_key("zzz", ["beta", "alpha"])


def test_from_toml_missing_and_invalid(tmp_path):
    """A missing file is an InputFileError, invalid TOML a ConfigError, both naming the file."""
    with pytest.raises(InputFileError, match="nowhere.toml"):
        Config.from_toml(tmp_path / "nowhere.toml")
    path = tmp_path / "broken.toml"
    path.write_text("[processing\nseed = 1\n", encoding="utf-8")
    with pytest.raises(ConfigError, match="broken.toml.*not valid TOML"):
        Config.from_toml(path)
    path.write_text("processing = 3\n", encoding="utf-8")
    with pytest.raises(ConfigError, match=r"\[processing\] must be a table"):
        Config.from_toml(path)


@pytest.mark.parametrize(("overrides", "pattern"), [
    ({"seed": -1}, r"seed = -1.*non-negative integer"),
    ({"seed": 1.5}, r"seed = 1.5"),
    ({"seed": True}, r"seed = True"),
    ({"respiration_driver": "soil"}, r"respiration_driver = 'soil'.*'tair', 'tsoil'"),
    ({"rg_tolerance": 0.0}, r"rg_tolerance = 0.0.*positive"),
    ({"tair_tolerance": "2.5"}, r"tair_tolerance = '2.5'"),
    ({"ustar_threshold": -0.1}, r"ustar_threshold = -0.1.*>= 0"),
    ({"e0_min_points": 0}, r"e0_min_points = 0.*whole number"),
    ({"e0_best_windows": 2.0}, r"e0_best_windows = 2.0"),
    ({"e0_bounds": (450.0, 30.0)}, r"e0_bounds.*low < high"),
    ({"e0_bounds": (30.0,)}, r"e0_bounds"),
    ({"e0_fallback": -5.0}, r"e0_fallback = -5.0"),
    ({"e0_fallback": 1e9}, r"e0_fallback = 1000000000.0: outside e0_bounds \[30.0, 450.0\]"),
    ({"ustar_method": "movingpoint"}, r"ustar_method = 'movingpoint'.*'moving_point'"),
    ({"ustar_bootstrap_draws": -1}, r"ustar_bootstrap_draws = -1"),
    ({"ustar_scenarios": (5, 42)}, r"ustar_scenarios = \(5, 42\).*percentiles"),
    ({"ustar_scenarios": (84, 50, 16)}, r"ustar_scenarios = \[84, 50, 16\].*out of order"),
    ({"ustar_min_threshold": -0.1}, r"ustar_min_threshold = -0.1"),
    ({"ustar_min_resolution": -1.0}, r"ustar_min_resolution = -1.0.*>= 0"),
    ({"ustar_annual": "max"}, r"ustar_annual = 'max'.*'median', 'maximum'"),
    ({"ustar_plateau_reference": 1.5}, r"ustar_plateau_reference = 1.5.*\(0, 1\]"),
    ({"ustar_plateau_reference": 0.0}, r"ustar_plateau_reference = 0.0.*positive"),
    ({"gapfill_donors": "twilight"}, r"gapfill_donors = 'twilight'.*'separate_day_night'"),
    ({"gapfill_interpolation_hours": -1.0}, r"gapfill_interpolation_hours = -1.0"),
    ({"gapfill_min_donors": 0}, r"gapfill_min_donors = 0.*whole number"),
    ({"daytime_min_points": 0}, r"daytime_min_points = 0"),
    # TOML reads nan and inf as floats; no setting is meaningful at either (review finding)
    ({"tair_tolerance": float("nan")}, r"tair_tolerance = nan.*positive"),
    ({"night_rg_threshold": float("nan")}, r"night_rg_threshold = nan"),
    ({"despike_z": float("inf")}, r"despike_z = inf.*positive"),
    ({"e0_bounds": (30.0, float("inf"))}, r"e0_bounds"),
])
def test_bad_values_name_the_setting(overrides, pattern):
    """Each bad value raises ConfigError naming the [processing] setting."""
    with pytest.raises(ConfigError, match=r"\[processing\] " + pattern):
        Config(**overrides)


def test_from_mapping_converts_lists():
    """TOML arrays for e0_bounds and ustar_scenarios become tuples."""
    config = Config.from_mapping({"e0_bounds": [40.0, 300.0], "ustar_scenarios": [16, 84]})
    assert config.e0_bounds == (40.0, 300.0)
    assert config.ustar_scenarios == (16, 84)


def test_to_dict_round_trips_through_json():
    """to_dict is JSON-serialisable and rebuilds the same Config."""
    config = Config(seed=3, e0_fallback=150.0)
    again = Config.from_mapping(json.loads(json.dumps(config.to_dict())))
    assert again == config
    assert set(config.to_dict()) == set(Config.field_names())


def test_site_accepts_southern_and_western_hemispheres():
    """Negative latitude and longitude are valid (southern, western hemisphere)."""
    site = Site(name="Lagoa Seca", latitude=-33.5, longitude=-70.6, utc_offset=-4)
    assert site.latitude == -33.5 and site.utc_offset == -4.0
    assert isinstance(site.utc_offset, float)
    assert site.to_dict() == {"name": "Lagoa Seca", "latitude": -33.5, "longitude": -70.6,
                              "utc_offset": -4.0, "canopy": "tall"}


def test_site_canopy_is_short_or_tall():
    """[site] canopy accepts "short" or "tall" (default) and names the setting otherwise."""
    assert Site(name="x", latitude=0.0, longitude=0.0, canopy="short").canopy == "short"
    with pytest.raises(ConfigError, match=r"\[site\] canopy = 'grass'.*'short', 'tall'"):
        Site(name="x", latitude=0.0, longitude=0.0, canopy="grass")


@pytest.mark.parametrize(("kwargs", "pattern"), [
    ({"latitude": 95.0}, r"\[site\] latitude = 95.0 is out of range.*\[-90, 90\]"),
    ({"latitude": -90.5}, r"\[site\] latitude"),
    ({"longitude": 181.0}, r"\[site\] longitude = 181.0.*\[-180, 180\]"),
    ({"utc_offset": 15.0}, r"\[site\] utc_offset = 15.0.*\[-12, 14\]"),
    ({"latitude": "48N"}, r"\[site\] latitude = '48N' is not a number"),
    ({"latitude": float("nan")}, r"\[site\] latitude = nan"),
    ({"name": "  "}, r"\[site\] name"),
])
def test_site_range_errors(kwargs, pattern):
    """Out-of-range or non-numeric site values raise ConfigError naming the [site] key."""
    values = {"name": "Hollow Fen", "latitude": 48.1, "longitude": 10.9, "utc_offset": 1.0}
    values.update(kwargs)
    with pytest.raises(ConfigError, match=pattern):
        Site(**values)


def test_site_config_reads_the_canopy(tmp_path):
    """[site] canopy in a site TOML reaches the Site; absent, the canopy is tall."""
    from fluxpart import demo
    from fluxpart.io import read_site_config

    path = demo.write_example(tmp_path)      # the demo's grassland: a short canopy
    assert read_site_config(path).site.canopy == "short"
    text = "".join(line for line in path.read_text(encoding="utf-8").splitlines(keepends=True)
                   if not line.startswith("canopy"))
    path.write_text(text, encoding="utf-8")
    assert read_site_config(path).site.canopy == "tall"
