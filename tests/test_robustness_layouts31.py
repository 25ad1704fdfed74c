"""Layouts of the layouts31 round.

Outside facts, each named beside its check: a pyranometer reads about 0 W m-2 with the sun
down (WMO Guide to Instruments and Methods of Observation, vol. I, ch. 7 (m)), and the
sun is down where the top-of-atmosphere radiation is 0 (checked through the standard
library's math: the solar elevation at local solar midnight is -(90 - |latitude -
declination|) degrees, common practice); a measured continuous quantity at a fixed
resolution holds a value about as often as its neighbours (the NEE zero-code rule of
unit_checks, common practice). Everything else is invented known truth: the records as
written.
"""

import math

import numpy as np
import pandas as pd
import pytest

from fluxpart.code_values import ordinary_code_message
from fluxpart.errors import ConfigError
from fluxpart.io import read_config, read_table
from fluxpart.site import Site
from fluxpart.solar import potential_radiation

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "fc", "ustar": "us", "rg": "sw", "tair": "ta", "vpd": "vpd", "tsoil": "ts"}
NAMES = ["fc", "us", "sw", "ta", "vpd", "ts"]


def _records(count=48 * 30):
    """Invented half-hourly records ending at 00:30 on 1 May (local standard time); Rg
    0.7 of the potential radiation, so exactly 0 whenever the sun is down (a logger that
    clamps negative readings)."""
    ends = pd.date_range("2021-05-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = (0.7 * potential_radiation(ends - pd.Timedelta(minutes=30), SITE.latitude,
                                    SITE.longitude, SITE.utc_offset, interval_minutes=30)
          ).round(1)
    noise = np.random.default_rng(31).normal(0.0, 0.4, count)
    fc = (2.0 - rg / 100 + noise).round(3)
    ta = (15 + 5 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    vpd = (5 + ta / 3).round(2)
    us = (0.25 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    ts = (12 + np.sin((hour - 12) / 12 * np.pi)).round(2)
    return ends, np.column_stack([fc, us, rg, ta, vpd, ts])


def _write(path, ends, values):
    lines = ["stamp," + ",".join(NAMES)]
    lines += [f"{e:%Y-%m-%d %H:%M}," + ",".join(f"{v:g}" for v in row)
              for e, row in zip(ends, values, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


# ------------------------------------------------ a missing code that is a reading
def test_night_zeros_of_rg_under_a_code_of_zero_are_refused_naming_both(tmp_path):
    """Before: missing = [-9999, 0] blanked every night's Rg without a word (on the
    example site with Rg clamped at 0: daytime GPP +23.6 g C m-2). Known truth: the 0s
    are measured night readings."""
    # the sun is down at local solar midnight: elevation -(90 - |lat - decl|) < 0 (m)
    declination = 23.44 * math.sin(math.radians(360 / 365 * (121 - 81)))   # 1 May (m)
    assert -(90 - abs(SITE.latitude - declination)) < 0
    ends, values = _records()
    assert (values[:, 2] == 0).mean() > 0.3                 # many nights of exact 0
    path = _write(tmp_path / "r.csv", ends, values)
    with pytest.raises(ConfigError) as caught:
        _read(path, missing=[-9999, 0])
    message = str(caught.value)
    assert "column 'sw' (rg)" in message and "with the sun down" in message
    assert "[input.missing_by_variable]" in message and "rg = [0]" in message
    # the reading "0 is a code of NEE only": Rg kept whole, as without the code
    kept, _ = _read(path, missing=[-9999], missing_by_variable={"nee": [0]})
    plain, _ = _read(path)
    assert np.array_equal(kept["rg"].to_numpy(), plain["rg"].to_numpy())
    # the reading "0 is no value in Rg too": the night readings blanked, as asked
    blanked, _ = _read(path, missing=[-9999, 0], missing_by_variable={"rg": [0]})
    assert int(blanked["rg"].isna().sum()) == int((values[:, 2] == 0).sum())


def test_a_code_of_zero_in_nee_only_blanks_nee_only(tmp_path):
    """A flux written 0 for missing (a spike at 0 against its neighbours) with the code
    listed for NEE alone: NEE's zeros blanked, no other column touched."""
    ends, values = _records()
    values[::7, 0] = 0.0
    path = _write(tmp_path / "n.csv", ends, values)
    frame, _ = _read(path, missing=[-9999], missing_by_variable={"nee": [0]})
    assert int(frame["nee"].isna().sum()) == len(values[::7])
    assert not frame["rg"].isna().any()


def test_a_freezing_soil_under_a_code_of_zero_is_refused(tmp_path):
    """A soil held at the freezing point (the zero curtain): 0.0 as often as -0.1 and
    0.1, a measured value; a code of 0 would blank a tenth of the column."""
    ends, values = _records()
    values[:, 5] = np.round(np.random.default_rng(5).normal(0.0, 0.3, len(ends)), 1)
    path = _write(tmp_path / "s.csv", ends, values)
    with pytest.raises(ConfigError, match=r"column 'ts' \(tsoil\).*as a measured value is"):
        _read(path, missing=[-9999, 0], missing_by_variable={"rg": [0]})


def test_a_code_far_more_frequent_than_its_neighbours_stays_a_code(tmp_path):
    """A logger writing 0 for a lost soil temperature: 0 ten times more frequent than the
    values one step beside it is a code, blanked as before without a word."""
    ends, values = _records()
    values[::10, 5] = 0.0                       # the rest lies near 12 °C: a spike at 0
    path = _write(tmp_path / "c.csv", ends, values)
    frame, _ = _read(path, missing=[-9999, 0], missing_by_variable={"rg": [0]})
    assert int(frame["tsoil"].isna().sum()) == len(values[::10])


def test_ordinary_code_rules_on_their_own():
    """Rg zeros by day (outages fall by day and night alike) are a code; a code of
    -9999 is never judged; a value on the edge of the column's range is not among its
    values."""
    rng = np.random.default_rng(0)
    rg = rng.uniform(0, 800, 960).round(1)
    night = np.arange(960) % 2 == 0
    outages = rng.random(960) < 0.2
    rg[outages] = 0.0                                  # half of them by day
    assert ordinary_code_message("rg", "sw", 0.0, rg, night) is None
    assert ordinary_code_message("rg", "sw", -9999.0, np.full(960, -9999.0), night) is None
    vpd = np.concatenate([np.zeros(200), rng.uniform(0.1, 20, 760).round(1)])
    assert ordinary_code_message("vpd", "vpd", 0.0, vpd) is None       # its minimum
    tair = rng.normal(0, 0.3, 960).round(1)
    assert "an ordinary value of column 'ta'" in ordinary_code_message("tair", "ta", 0.0, tair)


def test_missing_by_variable_in_the_site_config(tmp_path):
    """[input.missing_by_variable] is read from the site config; an unknown variable is
    refused naming the table."""
    ends, values = _records(96)
    _write(tmp_path / "t.csv", ends, values)
    config = tmp_path / "site.toml"
    text = ('[site]\nname = "invented"\nlatitude = 49.3\nlongitude = 10.2\nutc_offset = 1.0\n'
            '[input]\npath = "t.csv"\ntime_column = "stamp"\ntime_format = "%Y-%m-%d %H:%M"\n'
            'time_marks = "end"\n[input.columns]\nnee = "fc"\nustar = "us"\nrg = "sw"\n'
            'tair = "ta"\nvpd = "vpd"\n[input.units]\nvpd = "hPa"\n'
            '[input.missing_by_variable]\n')
    config.write_text(text + "nee = [0]\n", encoding="utf-8")
    frame, _ = read_config(config)
    assert not frame["rg"].isna().any()
    config.write_text(text + "solar = [0]\n", encoding="utf-8")
    with pytest.raises(ConfigError, match=r"\[input.missing_by_variable\] solar"):
        read_config(config)
