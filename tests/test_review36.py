"""Fresh-eyes review of 0.26.0 as the three users (round review36).

Outside facts: a record's stamp marks the start, middle or end of its averaging
interval, and a start stamp needs no shift to be the interval's start (common practice;
ISO 8601-1:2019 time intervals (m)). The records are invented.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.io import read_table

MAPPING = {"nee": "co2_flux", "rg": "sw_down", "tair": "t_air", "vpd": "vpd_air",
           "ustar": "u_fric"}


def _file(path, marks, minutes=30, periods=96):
    """Invented half-hourly records, stamped at the `marks` of their interval."""
    rng = np.random.default_rng(2)
    starts = pd.date_range("2021-06-01", periods=periods, freq=f"{minutes}min")
    hour = starts.hour + starts.minute / 60
    daylight = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    shift = {"start": 0, "middle": minutes / 2, "end": minutes}[marks]
    pd.DataFrame({
        "stamp": (starts + pd.Timedelta(minutes=shift)).strftime("%Y-%m-%d %H:%M"),
        "co2_flux": np.round(3 - 15 * daylight + rng.normal(0, 1.5, periods), 3),
        "sw_down": np.round(800 * daylight, 1),
        "t_air": np.round(12 + 8 * daylight, 2),
        "vpd_air": np.round(2 + 14 * daylight, 2),
        "u_fric": np.round(rng.uniform(0.05, 0.8, periods), 3),
    }).to_csv(path, index=False)
    return path


@pytest.mark.parametrize("marks, line", [
    ("start", "time marks        start (stamps are interval starts, not shifted)"),
    ("middle", "time marks        middle (stamps shifted by -15 min to interval starts)"),
    ("end", "time marks        end (stamps shifted by -30 min to interval starts)"),
])
def test_the_check_line_of_the_time_marks_says_what_was_done(tmp_path, marks, line):
    """`fluxpart check` printed "start (stamps shifted by -0 min to interval starts)"
    for a file of start stamps: a shift that is none. Now it says the stamps are
    starts; middle and end stamps keep their shift (15 and 30 min of a 30-minute
    record)."""
    frame, report = read_table(_file(tmp_path / f"{marks}.csv", marks), columns=MAPPING,
                               time_column="stamp", time_format="%Y-%m-%d %H:%M",
                               time_marks=marks)
    assert frame.index[0] == pd.Timestamp("2021-06-01 00:00")
    lines = str(report).splitlines()
    assert line in lines
    assert not any("-0 min" in text for text in lines)


def test_the_plateau_share_setting_names_the_classes_it_is_compared_with():
    """The moving point test of Reichstein et al. (2005) (m) compares a u* class with
    the mean of all classes above it; since issue 11 fluxpart compares it with the
    classes above it within the top share that `ustar_plateau_reference` gives (0.25).
    The report's settings table and help(Config) said "the mean of the classes above
    it" for `ustar_plateau_share`, the published test, not the one run. Now the entry
    names the reference share and its default, which the Config default must equal."""
    from fluxpart.config import Config
    from fluxpart.report import _config_notes

    note = _config_notes()["ustar_plateau_share"]
    assert "ustar_plateau_reference" in note
    assert f"{Config().ustar_plateau_reference:g} by default" in note
    assert "(m)" in note                               # still marked as recalled


def test_the_readme_says_which_parquet_columns_the_netcdf_record_series_are(written_demo):
    """A modeller reading `nee` from the Parquet time series (NEE as read, with gaps) and
    from the NetCDF (gap-filled) got two different series under one name, and the README
    did not say so. Checked: the NetCDF `nee` is the Parquet `nee_filled` converted to
    carbon (1 µmol CO2 m-2 s-1 = 12.011e-9 kg C m-2 s-1, the standard atomic weight of
    carbon, IUPAC 12.011 (m)), the drivers are their `*_filled` columns, and the README
    names both."""
    import re
    from pathlib import Path

    result, _ = written_demo
    dataset = result.to_xarray()
    series = result.timeseries
    np.testing.assert_allclose(dataset["nee"].to_numpy(),
                               series["nee_filled"].to_numpy() * 12.011e-9, rtol=1e-9)
    assert np.isnan(series["nee"].to_numpy()).any()
    assert not np.isnan(dataset["nee"].to_numpy()).any()
    # the NetCDF's own units: VPD in Pa (1 hPa = 100 Pa, SI), the others as in Parquet
    scale = {"rg": 1.0, "tair": 1.0, "vpd": 100.0, "tsoil": 1.0}
    for driver, factor in scale.items():
        assert dataset[driver].attrs["units"] == {"vpd": "Pa", "rg": "W m-2"}.get(driver, "degC")
        np.testing.assert_allclose(dataset[driver].to_numpy(),
                                   series[f"{driver}_filled"].to_numpy() * factor, rtol=1e-12)
    readme = " ".join(Path(__file__).resolve().parents[1].joinpath("README.md")
                      .read_text(encoding="utf-8").split())
    assert re.search(r"the NetCDF `nee` is the Parquet `nee_filled`, not the Parquet `nee`",
                     readme)
    assert "`rg`, `tair`, `vpd` and `tsoil` are the `*_filled` columns" in readme


def test_a_notebook_shows_the_interval_and_the_caution_beside_the_sums(written_demo):
    """Jupyter shows a `Result` by its `_repr_html_` (IPython's rich display protocol
    (m)): it gave the annual sums alone, without NEE's 95 % interval or the caution
    that every written result, report and export carries. Parsed here with the
    standard library's `html.parser`: the interval's ends as the annual table holds
    them, and the caution naming the crediting methodology and accredited
    verification."""
    from html.parser import HTMLParser

    class Text(HTMLParser):
        def __init__(self):
            super().__init__()
            self.parts = []

        def handle_data(self, data):
            self.parts.append(data)

    result, _ = written_demo
    parser = Text()
    parser.feed(result._repr_html_())
    text = " ".join(" ".join(parser.parts).split())
    year = result.annual.index[0]
    for column in ("nee", "nee_ci95_low", "nee_ci95_high"):
        assert column in text
        assert f"{result.annual.loc[year, column]:.1f}" in text
    assert "systematic measurement errors not included" in text
    assert "not a certified credit" in text
    assert "applicable crediting methodology and by accredited verification" in text


def test_a_config_given_to_process_site_config_replaces_the_files_settings(tmp_path):
    """`process_site_config(path, config)` runs with `config` alone: the file's
    [processing] table (here `year_start = "07-01"`, budget years from 1 July) is not
    merged into it, so a modeller who passed `Config(seed=...)` to change the seed lost
    the file's budget year (or its declared events) without a word; the docstring did
    not document `config` at all. Now it says so and how to change one setting
    (`dataclasses.replace`, the standard library's copy of a frozen dataclass with some
    fields changed). Known truth on the invented example site: a calendar year from
    1 January without the file's setting, from 1 July with it."""
    import dataclasses
    import inspect

    import fluxpart
    from fluxpart import demo

    toml = demo.write_example(tmp_path / "site")
    toml.write_text(toml.read_text(encoding="utf-8").replace(
        "[processing]\nseed = 0", '[processing]\nseed = 0\nyear_start = "07-01"'),
        encoding="utf-8")
    fast = {"ustar_bootstrap_draws": 0, "random_error_draws": 20}
    import warnings
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        replaced = fluxpart.process_site_config(toml, fluxpart.Config(**fast))
        kept = fluxpart.process_site_config(toml, dataclasses.replace(
            fluxpart.Config.from_toml(toml), **fast))
    assert replaced.annual["period_start"].iloc[0] == pd.Timestamp("2021-01-01")
    assert kept.annual["period_start"].iloc[-1] == pd.Timestamp("2021-07-01")
    doc = " ".join(inspect.getdoc(fluxpart.process_site_config).split())
    assert "**replaces** that table whole, it is not merged" in doc
    assert "dataclasses.replace(Config.from_toml(path), seed=3)" in doc


def test_a_frame_in_utc_is_told_how_to_give_its_index_the_zone():
    """A modeller's frame stamped in UTC without a time zone (naive), at a site of
    UTC+1: the clock check refuses it, rightly (Rg an hour before the sun: 15° of
    Earth's turn per hour (m)), but its fixes spoke config-file words only
    (`[input] time_zone = "UTC"`), which a frame has not; `fluxpart.process` converts
    an index that carries its zone. Now the refusal names `tz_localize("UTC")`, and a
    run from a config file (time_marks known) keeps its words."""
    import fluxpart
    from fluxpart import clock, demo
    from fluxpart.errors import FluxpartError

    frame, _ = demo.site_year(seed=0)
    frame.index = frame.index - pd.Timedelta(hours=1)          # naive UTC of UTC+1 stamps
    with pytest.raises(FluxpartError) as caught:
        fluxpart.process(frame, demo.site(), fluxpart.Config(ustar_bootstrap_draws=0))
    message = str(caught.value)
    assert "earlier than the sun" in message
    assert 'frame.index.tz_localize("UTC")' in message
    text, offset = clock._fix(-60.0, 1.0, 30, "end", 30.0, 10.2)
    assert '[input] time_zone = "UTC"' in text and "tz_localize" not in text
    assert offset == 0.0


def test_the_public_docstrings_point_to_documents_a_user_has():
    """`help(fluxpart.read_config)` sent the reader to "DESIGN.md §4", a contributors'
    design note that the repository and the installed package do not hold. Every public
    name's docstring (`fluxpart.__all__`, the classes' public members; read with the
    standard library's `inspect.getdoc`) now names only documents a user has, and
    `read_config`'s names the README sections of the config."""
    import inspect

    import fluxpart

    for name in fluxpart.__all__:
        thing = getattr(fluxpart, name)
        docs = [inspect.getdoc(thing) or ""]
        if inspect.isclass(thing):
            docs += [inspect.getdoc(member) or "" for attribute, member
                     in inspect.getmembers(thing) if not attribute.startswith("_")]
        assert not any("DESIGN.md" in doc for doc in docs), name
    assert '"Your own site"' in inspect.getdoc(fluxpart.read_config)
