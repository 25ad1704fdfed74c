"""Tests of the fictional Quillmoor demo site (fluxpart.demo)."""

import tomllib

import numpy as np
import pandas as pd
import pytest

from fluxpart import demo
from fluxpart.constants import CARBON_MOLAR_MASS
from fluxpart.errors import ConfigError
from fluxpart.site import Site
from fluxpart.variables import VARIABLES, vpd_from_rh

COLUMNS = ["nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh", "nee_flag"]
# 1 µmol m-2 s-1 over 30 min = 1800 x 12.011e-6 g C m-2 (DESIGN.md §5; IUPAC weight of C)
G_C_PER_HALF_HOUR = 1800 * CARBON_MOLAR_MASS * 1e-6

# Ranges stated in the site_year docstring [g C m-2 yr-1]; magnitudes reported for
# temperate grasslands and maize (common practice).
RANGES = {
    "c3": {"gpp": (1200, 1700), "reco": (1000, 1500), "nee": (-400, -100)},
    "c4": {"gpp": (1200, 1800), "reco": (900, 1400), "nee": (-550, -200)},
}


@pytest.fixture(scope="module")
def grassland():
    """The default demo year (seed 0), computed once."""
    return demo.site_year()


def _annual(truth, interval_minutes=30):
    factor = G_C_PER_HALF_HOUR * interval_minutes / 30
    return truth[["gpp", "reco", "nee"]].groupby(truth.index.year).sum() * factor


def test_site_is_fictional_and_valid():
    """SITE and site() return Sites whose names say they are fictional."""
    assert isinstance(demo.SITE, Site)
    assert demo.site() == demo.SITE
    assert "fictional" in demo.site("c4").name
    assert demo.site("c4").latitude == demo.SITE.latitude
    with pytest.raises(ConfigError, match="'c3', 'c4'"):
        demo.site("cam")


def test_frame_layout(grassland):
    """Canonical columns, start-stamped regular index named time, truth on the same index."""
    frame, truth = grassland
    assert list(frame.columns) == COLUMNS
    assert list(truth.columns) == ["gpp", "reco", "nee", "nee_measurable"]
    assert frame.index.name == "time" and frame.index.freq == pd.Timedelta(minutes=30)
    assert frame.index[0] == pd.Timestamp("2021-01-01 00:00")
    assert frame.index[-1] == pd.Timestamp("2021-12-31 23:30")
    assert truth.index.equals(frame.index)
    assert truth["nee_measurable"].dtype == bool
    np.testing.assert_array_equal(truth["nee_measurable"], frame["nee"].notna())
    np.testing.assert_allclose(truth["nee"], truth["reco"] - truth["gpp"])
    assert (truth["gpp"] >= 0).all() and (truth["reco"] > 0).all()
    for name in COLUMNS:                                  # plausible ranges of variables.py
        values = frame[name].dropna()
        assert values.between(VARIABLES[name].minimum, VARIABLES[name].maximum).all(), name


def test_deterministic_per_seed(grassland):
    """The same seed gives identical frames; another seed gives different ones."""
    frame, truth = grassland
    again, truth_again = demo.site_year(0)
    pd.testing.assert_frame_equal(frame, again)
    pd.testing.assert_frame_equal(truth, truth_again)
    other, _ = demo.site_year(1)
    assert not np.allclose(frame["tair"].fillna(0), other["tair"].fillna(0))


def test_gap_fraction_and_outage(grassland):
    """30-50 % of NEE missing, night-heavy, with a multi-day outage of all variables."""
    frame, _ = grassland
    missing = frame["nee"].isna()
    assert 0.30 <= missing.mean() <= 0.50
    night = frame["rg"] < 10
    assert missing[night].mean() > 1.5 * missing[~night].mean()
    drivers = ["nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh"]
    all_missing = frame[drivers].isna().all(axis=1).to_numpy()
    run_ids = np.cumsum(~all_missing)
    longest = np.bincount(run_ids[all_missing]).max()
    assert longest >= 2 * 48                               # at least two whole days
    for name in ("rg", "tair", "vpd"):                     # driver gaps outside the outage
        assert (frame[name].isna() & ~all_missing).any(), name
    assert 0 < (frame["nee_flag"] != 0).sum() < 100


def test_no_gaps_no_spikes_no_damping():
    """gaps=False measures everything; without spikes and damping NEE scatters round truth."""
    frame, truth = demo.site_year(3, gaps=False, spikes=False, ustar_threshold=None)
    assert frame.notna().all().all() and truth["nee_measurable"].all()
    error = (frame["nee"] - truth["nee"])[frame["nee_flag"] == 0]
    assert abs(error.mean()) < 0.05
    assert error.abs().max() < 25.0                      # no planted 12–35 µmol outliers


def test_random_error_is_laplace_and_grows_with_flux():
    """Measurement error is heavy-tailed (Laplace) and grows with |NEE| (Richardson et al. 2006)."""
    # Richardson et al. (2006), Agric. For. Meteorol. 136:1-18: flux random error is
    # closer to a Laplace than a normal distribution and its s.d. grows with |flux|.
    # A Laplace distribution has excess kurtosis 3, a normal one 0.
    frame, truth = demo.site_year(5, gaps=False, spikes=False, ustar_threshold=None)
    clean = frame["nee_flag"] == 0
    error = (frame["nee"] - truth["nee"])[clean]
    size = truth["nee"].abs()[clean]
    small, large = error[size < 2], error[size > 15]
    assert large.std() > 2.5 * small.std()
    standardised = small / small.std()
    assert 2.0 < float((standardised**4).mean() - 3) < 4.5


def test_spikes_and_ustar_damping():
    """Spikes are large outliers not in truth; low-u* nights under-measure respiration."""
    clean, truth = demo.site_year(4, gaps=False, spikes=False)
    spiky, _ = demo.site_year(4, gaps=False, spikes=True)
    jumps = (spiky["nee"] - clean["nee"]).abs()
    assert 30 <= (jumps > 10).sum() <= 40
    night = clean["rg"] < 5
    low = night & (clean["ustar"] < 0.09)
    ratio = clean.loc[low, "nee"].mean() / truth.loc[low, "nee"].mean()
    assert ratio < 0.6                                     # damped by u*/0.18 < 0.5
    high = night & (clean["ustar"] > 0.3)
    assert clean.loc[high, "nee"].mean() == pytest.approx(truth.loc[high, "nee"].mean(),
                                                          rel=0.05)


@pytest.mark.parametrize("variant", ["c3", "c4"])
@pytest.mark.parametrize("seed", [0, 1, 2])
def test_annual_truth_sums_in_stated_ranges(variant, seed):
    """Annual true GPP, Reco and NEE lie in the ranges the docstring states."""
    _, truth = demo.site_year(seed, variant=variant)
    annual = _annual(truth).iloc[0]
    for name, (low, high) in RANGES[variant].items():
        assert low <= annual[name] <= high, (name, annual[name])


def test_hourly_is_the_same_physics():
    """Hourly records give the half-hourly annual sums (within 1 %) and 8760 records."""
    _, half = demo.site_year(0)
    frame, hour = demo.site_year(0, interval_minutes=60)
    assert len(frame) == 8760 and frame.index.freq == pd.Timedelta(hours=1)
    np.testing.assert_allclose(_annual(hour, 60).to_numpy(), _annual(half).to_numpy(),
                               rtol=0.01)
    assert 0.30 <= frame["nee"].isna().mean() <= 0.50


def test_leap_year_and_multi_year():
    """2024 has 17,568 half-hours; two years are consecutive and both have an outage."""
    frame, truth = demo.site_year(0, year=2024)
    assert len(frame) == 17568
    frame, truth = demo.site_year(0, year=2023, years=2)
    assert len(frame) == 17520 + 17568
    assert frame.index.is_monotonic_increasing and frame.index.freq is not None
    outage = frame[["nee", "rg", "tair"]].isna().all(axis=1)
    assert outage.groupby(frame.index.year).sum().min() >= 3 * 48


def test_vpd_from_rh_and_tsoil_lagged(grassland):
    """VPD is computed from RH and Tair; soil temperature is damped and lags the air."""
    frame, _ = grassland
    ok = frame[["vpd", "rh", "tair"]].notna().all(axis=1)
    np.testing.assert_allclose(frame.loc[ok, "vpd"], vpd_from_rh(frame.loc[ok, "rh"],
                                                                 frame.loc[ok, "tair"]))
    summer = frame.loc["2021-06-01":"2021-08-31"]
    course = summer.groupby(summer.index.hour)[["tair", "tsoil"]].mean()
    amplitude = course.max() - course.min()
    assert amplitude["tsoil"] < 0.6 * amplitude["tair"]
    assert course["tsoil"].idxmax() > course["tair"].idxmax()


def test_reco_doubles_per_ten_degrees(grassland):
    """Truth Reco at 20 °C is ~2.3 x that at 10 °C (Lloyd & Taylor 1994; common practice)."""
    # Within a day the reference respiration is constant, so the day's log-slope of
    # Reco against air temperature gives its Q10. Lloyd & Taylor (1994), eq. 11 with
    # E0 = 308.56 K: R(20 °C)/R(10 °C) = 2.30; "about doubling per 10 °C" is common practice.
    _, truth = grassland
    frame, _ = demo.site_year(0, gaps=False)
    tair = frame["tair"]
    day = truth.index.normalize()
    grouped = pd.DataFrame({"t": tair, "r": np.log(truth["reco"]), "day": day}).groupby("day")
    slopes = grouped.apply(lambda d: np.polyfit(d["t"], d["r"], 1)[0]
                           if d["t"].between(8, 22).all() and np.ptp(d["t"]) > 5 else np.nan)
    q10 = np.exp(10 * slopes.dropna())
    assert len(q10) > 20
    assert q10.median() == pytest.approx(2.3, abs=0.15)


def _saturation_ratio(frame, truth):
    """Peak-season GPP at high light over the linear extrapolation of low light."""
    peak = frame.index.month.isin([7, 8]) & (frame["vpd"] < 10)
    rg = frame.loc[peak, "rg"]
    gpp = truth.loc[peak, "gpp"]
    low = rg.between(20, 200)
    slope = np.sum(gpp[low] * rg[low]) / np.sum(rg[low] ** 2)
    high = rg > 700
    return gpp[high].mean() / (slope * rg[high].mean())


def test_light_response_saturates_c3_more_than_c4():
    """GPP is near-linear at low light and saturates at high light, the C3 far more."""
    # Common practice: light response is linear at low light and saturates at high
    # light; C4 canopies (maize) saturate much less than C3 ones.
    c3 = _saturation_ratio(*demo.site_year(0, gaps=False, variant="c3"))
    c4 = _saturation_ratio(*demo.site_year(0, gaps=False, variant="c4"))
    assert c3 < 0.75
    assert c4 > 0.8
    assert c4 - c3 > 0.15


def test_bad_arguments():
    """Invalid arguments raise ConfigError naming the argument."""
    for kwargs, match in (({"interval_minutes": 15}, "interval_minutes"),
                          ({"variant": "c5"}, "variant"),
                          ({"years": 0}, "years"),
                          ({"ustar_threshold": -1.0}, "ustar_threshold")):
        with pytest.raises(ConfigError, match=match):
            demo.site_year(0, **kwargs)
    with pytest.raises(ConfigError, match="seed"):
        demo.site_year(-1)


def test_write_example_round_trip(tmp_path):
    """The example file and config describe the demo frame in their own layout."""
    config_path = demo.write_example(tmp_path / "ex", seed=0)
    assert config_path.name == "quillmoor_grassland.toml"
    assert not list((tmp_path / "ex").glob("*.tmp"))
    config = tomllib.loads(config_path.read_text(encoding="utf-8"))
    assert config["site"]["latitude"] == demo.SITE.latitude
    assert "fictional" in config["site"]["name"].lower()
    assert config["input"]["time_marks"] == "end"
    assert config["input"]["missing"] == [-9999]
    assert config["input"]["units"] == {"vpd": "kPa"}
    assert config["processing"] == {"seed": 0}
    columns = config["input"]["columns"]
    assert set(columns) == set(COLUMNS)
    assert not set(columns.values()) & set(COLUMNS)         # own names, not canonical
    raw = pd.read_csv(config_path.parent / config["input"]["path"],
                      dtype={config["input"]["time_column"]: str})
    stamps = pd.to_datetime(raw[config["input"]["time_column"]],
                            format=config["input"]["time_format"])
    frame, _ = demo.site_year(0)
    assert stamps.iloc[0] == frame.index[0] + pd.Timedelta(minutes=30)
    assert stamps.iloc[-1] == pd.Timestamp("2022-01-01 00:00")
    values = raw.replace(-9999, np.nan)
    np.testing.assert_allclose(values[columns["nee"]], frame["nee"], atol=6e-4)
    np.testing.assert_allclose(values[columns["vpd"]] * 10, frame["vpd"], atol=1e-3)
    np.testing.assert_allclose(values[columns["tair"]], frame["tair"], atol=6e-3)
    np.testing.assert_array_equal(values[columns["nee"]].isna(), frame["nee"].isna())


def test_write_example_is_byte_identical(tmp_path):
    """Writing the same example twice gives identical bytes (hourly maize variant)."""
    first = demo.write_example(tmp_path / "a", seed=2, variant="c4", interval_minutes=60)
    second = demo.write_example(tmp_path / "b", seed=2, variant="c4", interval_minutes=60)
    assert first.name == "quillmoor_maize_60min.toml"
    for name in (first.name, first.with_suffix(".csv").name):
        assert (first.parent / name).read_bytes() == (second.parent / name).read_bytes()


def test_as_recorded_is_what_the_example_file_holds(tmp_path):
    """`fluxpart demo` processes the numbers the example file holds: the demo frame
    rounded to the file's decimals equals the frame the reader takes from the file
    (decimal text read back as the nearest double, IEEE 754)."""
    from fluxpart.io import read_config

    frame, _ = demo.site_year(seed=0)
    recorded = demo.as_recorded(frame)
    read, _ = read_config(demo.write_example(tmp_path, seed=0))
    for name in ("nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh"):
        left, right = recorded[name].to_numpy(), read[name].to_numpy()
        assert np.array_equal(left, right, equal_nan=True), name
    assert np.nanmax(np.abs(recorded["nee"] - frame["nee"])) <= 0.0005 + 1e-12


def test_as_recorded_removes_last_bit_differences_of_the_simulation():
    """The simulation's exp and sin take CPU-specific SIMD paths that move values in their
    last bits; the recorded decimals do not move (a value within 1e-12 of a half step
    of 0.001 is the only exception, ~1e-9 of the values)."""
    frame, _ = demo.site_year(seed=1)
    nudged = frame.copy()
    for name in ("nee", "rg", "tair", "vpd", "ustar"):
        nudged[name] = frame[name] * (1.0 + 1e-13)
    for name in ("nee", "rg", "tair", "vpd", "ustar"):
        assert np.array_equal(demo.as_recorded(frame)[name].to_numpy(),
                              demo.as_recorded(nudged)[name].to_numpy(), equal_nan=True)


def test_readme_demo_figures_are_those_of_fluxpart_demo():
    """Docs against the code: every demo figure of README's "For modellers" recounted from
    the run `fluxpart demo` makes (the values as the example file records them, the default
    settings). Round review22 fixed 4,931 negative nighttime-GPP records counted before
    0.21.0; this test then ran without the u* bootstrap, which since 0.34.0's
    night_donor_margin moves the central values, and the README kept that run's 4,923 / 4,444
    and its 5.3 / 9.1 / 9.2 g C m-2 while `fluxpart demo` gives the figures below (a
    modeller recounting found others; round modeller52).

    References: GPP = Reco - NEE is negative wherever measured or filled NEE exceeds
    modelled respiration, at night about half the time for an unbiased model (random error
    symmetric about zero: Richardson et al. 2006 (m)); 1 umol CO2 = 12.011e-6 g C (IUPAC
    standard atomic weight of carbon, (m)); the root sum of squares of the daily sigmas
    understates a year's where the days' errors are positively correlated (variance of a
    sum, common practice).
    """
    import re
    import warnings
    from pathlib import Path

    import fluxpart

    frame, _ = demo.site_year(seed=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        result = fluxpart.process(demo.as_recorded(frame), demo.site())   # as cli.demo does
    series, daily = result.timeseries, result.daily
    monthly, annual = result.monthly, result.annual.iloc[0]
    text = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    text = re.sub(r"\s+", " ", text)

    def stated(pattern):
        return [float(group.replace(",", "").replace("\u2212", "-"))
                for group in re.search(pattern, text).groups()]

    negative = series["gpp_nighttime"].to_numpy() < 0
    night = series["is_night"].to_numpy(dtype=bool)
    assert stated(r"\(([\d,]+) of the ([\d,]+) records of the demo year, ([\d,]+) of them "
                  r"at night\)") == [negative.sum(), len(series), (negative & night).sum()]
    assert 0.3 < (negative & night).sum() / night.sum() < 0.7
    lit = night & (series["gpp_daytime"].to_numpy() > 0)
    night_gpp = series["gpp_daytime"].to_numpy()[night].sum() * G_C_PER_HALF_HOUR
    count, nights, grams, share = stated(r"in the demo year ([\d,]+) of ([\d,]+) night "
                                         r"records, ([\d.]+) g C m-2, ([\d.]+) % of its GPP")
    assert [count, nights] == [lit.sum(), night.sum()]
    assert grams == round(night_gpp, 1) and share == round(100 * night_gpp / annual[
        "gpp_daytime"], 1)
    days, months, year = stated(r"demo year, NEE: ([\d.]+) g C m-2 from the days, ([\d.]+) "
                                r"from the months, ([\d.]+) the annual total")
    assert [days, months, year] == [round(float(np.sqrt((daily["nee_sigma"] ** 2).sum())), 1),
                                    round(float(np.sqrt((monthly["nee_sigma"] ** 2).sum())), 1),
                                    round(float(annual["nee_uncertainty_total"]), 1)]
    days, year = stated(r"([\d.]+) from the days against ([\d.]+), a 95 %")
    assert [days, year] == [
        round(float(np.sqrt((daily["reco_nighttime_sigma"] ** 2).sum())), 1),
        round(float(annual["reco_nighttime_uncertainty_total"]), 1)]
    raw, mean_times_n, filled = stated(r"gives (\u2212[\d.]+) g C m-2 \((\u2212[\d.]+) as its "
                                       r"mean times the records\) for the (\u2212[\d.]+) of")
    nee = series["nee"]
    assert [raw, mean_times_n, filled] == [
        round(nee.sum() * G_C_PER_HALF_HOUR), round(nee.mean() * len(nee) * G_C_PER_HALF_HOUR),
        round(annual["nee"])]
    # "the sums add up ... within rounding: at most 4e-15 g C m-2 a day and 5e-13 a year"
    per_day, per_year = stated(r"within rounding: at most ([\de.-]+) g C m-2 a day and "
                               r"([\de.-]+) a year in the demo")
    days_of_records = series.index.normalize()
    for column in ("gpp_daytime", "gpp_nighttime", "reco_daytime", "reco_nighttime"):
        summed = (series[column] * G_C_PER_HALF_HOUR).groupby(days_of_records).sum()
        assert np.abs(summed.to_numpy() - daily[column].to_numpy()).max() <= per_day
        assert abs(series[column].sum() * G_C_PER_HALF_HOUR - annual[column]) <= per_year
        assert abs(monthly[column].sum() - annual[column]) <= per_year


def test_compare_with_truth_says_whether_each_interval_holds_the_truth():
    """Known-truth recovery on invented data (review33): the demo printed each estimate's
    error against the truth but not whether its stated 95 % interval held it, and on the
    demo year both daytime intervals miss (a user sees a 95 % interval and a truth outside
    it with no word). The flag is low <= truth <= high of the annual columns, None where
    the result has no interval; the truth is the sum of the invented fluxes in g C m-2
    (1 umol CO2 s-1 = 12.011e-6 g C s-1, IUPAC standard atomic weight of carbon)."""
    index = pd.date_range("2021-01-01", periods=48, freq="30min")
    truth = pd.DataFrame({"gpp": 2.0, "reco": 1.0, "nee": -1.0}, index=index)
    true_nee = -1.0 * 48 * 1800 * CARBON_MOLAR_MASS * 1e-6        # g C m-2
    annual = pd.DataFrame({"nee": [true_nee + 3.0], "nee_ci95_low": [true_nee + 1.0],
                           "nee_ci95_high": [true_nee + 5.0], "reco_daytime": [0.9 * 48 * 1800
                                                                             * 12.011e-6]},
                          index=pd.Index([2021], name="year"))
    table = demo.compare_with_truth(annual, truth)
    assert table.loc[(2021, "nee"), "error"] == pytest.approx(3.0)
    assert table.loc[(2021, "nee"), "truth_in_95"] is False
    assert table.loc[(2021, "reco_daytime"), "truth_in_95"] is None
    annual["nee_ci95_low"] = true_nee - 1.0
    assert demo.compare_with_truth(annual, truth).loc[(2021, "nee"), "truth_in_95"] is True
