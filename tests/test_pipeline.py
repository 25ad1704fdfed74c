"""Pipeline wiring, the public contract, determinism and known-truth recovery on the demo."""

import datetime
import hashlib

import numpy as np
import pandas as pd
import pytest

import fluxpart
from fluxpart import Config, demo
from fluxpart.budget import flux_to_carbon
from fluxpart.errors import (
    ConfigError,
    FluxpartWarning,
    InsufficientDataError,
    MissingColumnError,
    SpacingError,
)
from fluxpart.pipeline import process
from fluxpart.schema import describe

TIMESERIES_CONTRACT = ("nee_filled", "gpp_nighttime", "reco_nighttime", "gpp_daytime",
                       "reco_daytime", "nee_fill_quality")
ANNUAL_CONTRACT = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime",
                   "ustar_threshold")


def _truth_sums(truth, interval_minutes=30):
    carbon = flux_to_carbon(truth[["gpp", "reco", "nee"]].to_numpy(), interval_minutes)
    return pd.DataFrame(carbon, index=truth.index, columns=["gpp", "reco", "nee"]).groupby(
        truth.index.year).sum()


@pytest.fixture(scope="module")
def demo_run(demo_default_run):
    """One demo site-year processed with the default settings (the session's run)."""
    return demo_default_run


@pytest.fixture(scope="module")
def demo_rerun(demo_run):
    """The same input, config and seed run a second time: (rerun, the input as it was before).

    Shared by the determinism checks of the tables and of the written files, which each
    compare the first run with an independent second one."""
    frame, _, _ = demo_run
    before = frame.copy()
    return process(frame, demo.site()), before


def test_result_honours_the_public_contract(demo_run):
    """The timeseries and annual tables carry the columns DESIGN.md §4 promises."""
    frame, _, result = demo_run
    for column in TIMESERIES_CONTRACT:
        assert column in result.timeseries.columns
    for column in ANNUAL_CONTRACT:
        assert column in result.annual.columns
    assert result.annual.index.name == "year"
    assert list(result.annual.index) == [2021]
    assert result.timeseries.index.equals(frame.index)
    assert result.timeseries["nee_filled"].notna().all()
    assert isinstance(result.config, Config) and result.config == Config()


def test_every_output_column_has_a_unit(demo_run):
    """Every column of every output table is described with a unit in the schema."""
    _, _, result = demo_run
    for table in ("timeseries", "daily", "monthly", "annual", "audit"):
        frame = getattr(result, table)
        undescribed = [c for c in frame.columns if describe(table, c) == ("", "")]
        assert not undescribed, f"{table}: {undescribed}"
    for name, frame in {"ustar": result.ustar, **result.parameters}.items():
        undescribed = [c for c in frame.columns if describe("parameters", c) == ("", "")]
        assert not undescribed, f"{name}: {undescribed}"


def test_measured_records_are_kept_as_measured(demo_run):
    """Where NEE passed screening and the u* filter, the filled series is the measurement."""
    _, _, result = demo_run
    ts = result.timeseries
    measured = ts["nee_fill_quality"] == "measured"
    np.testing.assert_array_equal(ts.loc[measured, "nee_filled"], ts.loc[measured, "nee_measured"])
    assert (ts.loc[ts["nee_low_ustar"], "nee_measured"].isna()).all()


def test_nighttime_budget_recovers_the_demo_truth(demo_run):
    """Known truth: annual nighttime GPP and Reco within 10 %, NEE within 30 g C m-2 (issue 3).

    The demo plants Laplace noise, spikes, a low-u* loss of night flux and ~40 % gaps;
    with the noise averaged over a year, the remaining error is that of gap filling
    and of the u* threshold, which 30 g C m-2 bounds.
    """
    _, truth, result = demo_run
    true = _truth_sums(truth).loc[2021]
    annual = result.annual.loc[2021]
    assert abs(annual["gpp_nighttime"] / true["gpp"] - 1) < 0.10
    assert abs(annual["reco_nighttime"] / true["reco"] - 1) < 0.10
    assert abs(annual["nee"] - true["nee"]) < 30.0


def test_daytime_budget_recovers_the_demo_truth(demo_run):
    """Known truth: annual daytime GPP and Reco within 10 % of the truth (issue 4)."""
    _, truth, result = demo_run
    true = _truth_sums(truth).loc[2021]
    annual = result.annual.loc[2021]
    assert abs(annual["gpp_daytime"] / true["gpp"] - 1) < 0.10
    assert abs(annual["reco_daytime"] / true["reco"] - 1) < 0.10
    # the two methods agree within 10 % of each other (issue 4)
    assert abs(annual["gpp_daytime"] / annual["gpp_nighttime"] - 1) < 0.10


def test_c4_variant_daytime_within_15_percent():
    """Known truth: the little-saturating C4 crop is still fitted; GPP within 15 % (issue 4)."""
    frame, truth = demo.site_year(seed=1, variant="c4")
    result = process(frame, demo.site("c4"), Config(ustar_bootstrap_draws=0))
    true = _truth_sums(truth).loc[2021]
    assert abs(result.annual.loc[2021, "gpp_daytime"] / true["gpp"] - 1) < 0.15
    assert abs(result.annual.loc[2021, "reco_daytime"] / true["reco"] - 1) < 0.15


def test_process_is_deterministic_and_leaves_its_input_alone(demo_run, demo_rerun):
    """Same input, config and seed give identical tables; the input frame is not modified
    (neither by the rerun nor by the first run: the frame is the simulation's, redrawn)."""
    frame, _, result = demo_run
    again, before = demo_rerun
    pd.testing.assert_frame_equal(frame, before)
    pd.testing.assert_frame_equal(frame, demo.site_year(seed=0)[0])
    pd.testing.assert_frame_equal(again.timeseries, result.timeseries)
    pd.testing.assert_frame_equal(again.annual, result.annual)


def test_written_folder_is_byte_identical_across_runs(demo_run, demo_rerun, tmp_path):
    """Two writes of the same result, and of a rerun, give byte-identical files.

    The run log (who, when, where) is the one file meant to differ; the manifest
    lists it without a hash.
    """
    _, _, result = demo_run
    result.write(tmp_path / "a")
    demo_rerun[0].write(tmp_path / "b")
    files = sorted(p.name for p in (tmp_path / "a").iterdir() if p.name != "run-log.json")
    assert "manifest.json" in files and "annual.parquet" in files
    for name in files:
        digest_a = hashlib.sha256((tmp_path / "a" / name).read_bytes()).hexdigest()
        digest_b = hashlib.sha256((tmp_path / "b" / name).read_bytes()).hexdigest()
        assert digest_a == digest_b, name


def test_load_returns_the_written_tables(demo_run, tmp_path):
    """fluxpart.load gives back the tables, site and settings that were written."""
    _, _, result = demo_run
    result.write(tmp_path / "out")
    again = fluxpart.load(tmp_path / "out")
    for table in ("timeseries", "daily", "monthly", "annual"):
        pd.testing.assert_frame_equal(getattr(again, table), getattr(result, table),
                                      check_freq=False)
    assert again.site == result.site and again.config == result.config
    assert set(again.parameters) == set(result.parameters)


def test_hourly_records_give_the_same_budget_as_half_hourly():
    """Hourly records of the same physics give annual sums within a few per cent."""
    frame, truth = demo.site_year(seed=2, interval_minutes=60)
    result = process(frame, demo.site(), Config(ustar_bootstrap_draws=0))
    true = _truth_sums(truth, 60).loc[2021]
    assert result.timeseries.index.freq is None or result.timeseries.index.freq == "60min"
    assert abs(result.annual.loc[2021, "gpp_nighttime"] / true["gpp"] - 1) < 0.10
    assert result.annual.loc[2021, "records_expected"] == 8760


def test_two_years_with_a_leap_year():
    """A two-year record (2023–2024, 2024 a leap year) gives one annual row per year."""
    frame, _ = demo.site_year(seed=3, year=2023, years=2)
    result = process(frame, demo.site(), Config(ustar_bootstrap_draws=0))
    assert list(result.annual.index) == [2023, 2024]
    assert result.annual.loc[2024, "records_expected"] == 17568
    assert result.annual["complete"].all()


def test_soil_temperature_as_respiration_driver(demo_tsoil_run):
    """respiration_driver = 'tsoil' drives Reco by soil temperature; absent tsoil is an error.
    (Demo seed 4 with the driver set, no u* bootstrap: the session's run.)"""
    frame, config, result = demo_tsoil_run
    assert config == Config(respiration_driver="tsoil", ustar_bootstrap_draws=0)
    assert result.parameters["nighttime_e0_annual"]["e0"].notna().all()
    with pytest.raises(ConfigError, match="respiration_driver = 'tsoil'"):
        process(frame.drop(columns="tsoil"), demo.site(), config)


def test_a_fixed_respiration_temperature_without_values_names_the_column():
    """Lloyd & Taylor (1994) respiration is a function of a temperature: with the fixed
    driver's column empty throughout, neither method can fit, and the error must name that
    column and setting, not ask for "measured night NEE" (which is there)."""
    frame, _ = demo.site_year(seed=4)
    config = Config(respiration_driver="tsoil", ustar_bootstrap_draws=0)
    with pytest.raises(ConfigError, match="column 'tsoil' has no value") as caught:
        process(frame.assign(tsoil=np.nan), demo.site(), config)
    assert "night NEE" not in str(caught.value)


def test_respiration_form_average_shifts_reco_and_gpp_alike_and_is_recorded(demo_run):
    """The default central nighttime Reco is Lloyd-Taylor's plus the weight w times the
    constant-Q10 refit's difference; GPP = Reco - NEE moves with it (NEE unchanged), and
    "lloyd_taylor" gives the published form alone. The weight is a probability."""
    frame, _, averaged = demo_run
    config = Config(respiration_form="lloyd_taylor")
    published = process(frame, demo.site(), config)
    form = averaged.provenance["respiration_form"]
    assert form["setting"] == "average" and form["fitted"]
    assert 0.0 <= form["exponential_weight"] <= 1.0
    assert form["share_applied"] == form["exponential_weight"]
    assert published.provenance["respiration_form"]["share_applied"] == 0.0
    a, p = averaged.timeseries, published.timeseries
    np.testing.assert_array_equal(a["nee_filled"], p["nee_filled"])
    shift = (a["reco_nighttime"] - p["reco_nighttime"]).to_numpy()
    np.testing.assert_allclose(a["gpp_nighttime"] - p["gpp_nighttime"], shift, atol=1e-12)
    np.testing.assert_array_equal(a["reco_daytime"], p["reco_daytime"])
    if form["exponential_weight"] > 1e-6:
        assert np.abs(shift).max() > 0


def test_bad_frames_are_rejected_with_the_column_or_row_named():
    """Missing columns, irregular stamps and time zones are named in the error."""
    frame, _ = demo.site_year(seed=0)
    with pytest.raises(MissingColumnError, match="'ustar'"):
        process(frame.drop(columns="ustar"), demo.site())
    with pytest.raises(SpacingError, match="row 3"):
        process(frame.drop(frame.index[3]), demo.site())
    with pytest.raises(MissingColumnError, match="'vpd'.*no values"):
        process(frame.assign(vpd=np.nan), demo.site())


def test_a_variable_given_twice_in_the_frame_is_named():
    """A frame joined with pd.concat(axis=1) can carry 'nee' twice: pandas returns both
    columns for frame["nee"] (common practice), so the run stopped in an AttributeError
    ("'DataFrame' object has no attribute 'dtype'"); now one error names the column.
    A non-canonical column given twice is still left out with a warning."""
    frame, _ = demo.site_year(seed=0)
    with pytest.raises(MissingColumnError, match="'nee' occur more than once"):
        process(pd.concat([frame, frame[["nee"]]], axis=1), demo.site())
    extra = pd.concat([frame, pd.DataFrame({"wind": 2.0}, index=frame.index)] * 1
                      + [pd.DataFrame({"wind": 3.0}, index=frame.index)], axis=1)
    with pytest.raises(MissingColumnError, match="'ustar'"):     # not about 'wind'
        process(extra.drop(columns="ustar"), demo.site())


def test_a_frame_column_in_another_unit_or_a_flag_of_the_other_convention_is_refused():
    """An air temperature in K (T[K] = T[°C] + 273.15, SI) and a nee_flag where 1 means
    good (every good record rejected) stopped the run on a symptom ("nighttime
    partitioning (E0): no 15-day window has 6 measured night records"); one error now
    names the column and the conversion."""
    from fluxpart.errors import ImplausibleValueError
    from fluxpart.unit_checks import frame_messages, frame_refusal
    frame, _ = demo.site_year(seed=0)
    with pytest.raises(ImplausibleValueError, match="'tair'.*look like 'K'"):
        process(frame.assign(tair=frame["tair"] + 273.15), demo.site())
    with pytest.raises(ImplausibleValueError, match="'nee_flag'.*nee_flag\"\\] == 0"):
        process(frame.assign(nee_flag=frame["nee_flag"] == 0), demo.site())
    # a flag rejecting more than half but not nearly all (the reader's rule for
    # flag_accept) is a warning; the demo's own flag (0.1 % rejected) is quiet
    rng = np.random.default_rng(2)
    harsh = frame.assign(nee_flag=(rng.random(len(frame)) < 0.7).astype(float))
    assert any("'nee_flag'" in text for text in frame_messages(harsh))
    assert not any("'nee_flag'" in text for text in frame_messages(frame))
    # an optional column so written (soil temperature in K) is left out of its stage
    # with a warning, as before: not refused; the demo frame itself is not refused
    assert frame_refusal(frame.assign(tsoil=frame["tsoil"] + 273.15)) is None
    assert frame_refusal(frame) is None


def test_a_frame_column_mostly_but_not_in_median_out_of_range_is_refused_as_the_reader_does():
    """Round mistakes32: latent heat (W m-2) mapped as NEE has a plausible median (about
    50) but a third of its values above 100 µmol m-2 s-1 (midday latent heat reaches
    hundreds of W m-2 wherever water evaporates: an evaporative fraction of 0.4-0.8 of
    the available energy (m)). The reader refuses that column (more than 5 % outside);
    a caller's frame ran with the third screened out and the rest read as µmol, annual
    NEE -241 -> +14,400 g C m-2 on the demo, only the methods' disagreement named. Now
    refused naming the column; a missing-data code written into a fifth of the records
    (screening reads it as missing, as before) is still no refusal."""
    from fluxpart.errors import ImplausibleValueError
    from fluxpart.unit_checks import frame_refusal
    frame, _ = demo.site_year(seed=0)
    rng = np.random.default_rng(3)
    latent = 0.4 * frame["rg"].clip(lower=0) + 5 + rng.normal(0, 8, len(frame))
    as_nee = frame.assign(nee=latent.where(frame["nee"].notna()))
    present = as_nee["nee"].dropna()
    assert -100 < present.median() < 100 and (present > 100).mean() > 0.05
    with pytest.raises(ImplausibleValueError, match=r"'nee'.*outside the plausible range"):
        process(as_nee, demo.site())
    coded = frame.assign(nee=frame["nee"].mask(rng.random(len(frame)) < 0.2, -9999.0))
    assert frame_refusal(coded) is None
    # the same share of values outside without one repeated code is refused
    scattered = frame.assign(nee=frame["nee"].mask(rng.random(len(frame)) < 0.2,
                                                   rng.uniform(150, 400, len(frame))))
    assert "'nee'" in frame_refusal(scattered)


def test_zoned_index_is_converted_and_extra_columns_ignored():
    """Issue 15: a tz-aware index is converted with Site.utc_offset; an extra column is
    ignored; both are noted in the warnings and issued as FluxpartWarning."""
    frame, _ = demo.site_year(seed=0)
    site = demo.site()
    config = Config(ustar_method="fixed", random_error_draws=20)
    plain = process(frame, site, config)
    zone = datetime.timezone(datetime.timedelta(hours=site.utc_offset))
    zoned = frame.tz_localize(zone).tz_convert("UTC").assign(soil_water=0.3)
    with pytest.warns(FluxpartWarning, match="soil_water"):
        result = process(zoned, site, config)
    assert result.timeseries.index.equals(plain.timeseries.index)
    assert "soil_water" not in result.timeseries.columns
    np.testing.assert_array_equal(result.timeseries["nee_filled"], plain.timeseries["nee_filled"])
    assert any("time zone" in text for text in result.warnings)
    assert "soil_water" in zoned.columns and zoned.index.tz is not None   # input untouched
    assert len(repr(result)) < 200 and site.name in repr(result)


def test_column_types_of_the_caller_do_not_reach_the_tables(tmp_path):
    """Review 6: float32, float16, nullable (pandas ``Float64``/``Int64`` with ``pd.NA``) and
    Arrow-backed columns were echoed in the time series with their own type (a float16 rh
    written as Parquet halffloat). They are read as float64, as the file reader gives them,
    so the written schema equals that of a float64 frame (pyarrow's schema, the reference);
    the values are the float64 widening of the caller's (IEEE 754: float32 and float16
    widen to float64 exactly)."""
    import pyarrow.parquet as pq

    frame, _ = demo.site_year(seed=0, interval_minutes=60)
    site, config = demo.site(), Config(ustar_method="fixed", random_error_draws=20)
    measured = ["nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh"]
    odd = frame.astype({"nee": "float32", "rg": "Float64", "tair": "double[pyarrow]",
                        "rh": "float16"}).assign(nee_flag=frame["nee_flag"].astype("Int64"))
    odd.loc[odd.index[5], "rg"] = pd.NA
    widened = odd.astype({name: "float64" for name in measured}).assign(
        nee_flag=frame["nee_flag"].astype(float))
    process(widened, site, config).write(tmp_path / "plain")
    process(odd, site, config).write(tmp_path / "odd")
    plain = pq.read_table(tmp_path / "plain" / "timeseries.parquet")
    found = pq.read_table(tmp_path / "odd" / "timeseries.parquet")
    assert found.schema.equals(plain.schema, check_metadata=True)
    assert found.equals(plain)
    assert odd["rh"].dtype == np.float16                       # the caller's frame untouched


def test_frames_with_other_names_or_settings_are_refused_naming_the_fix():
    """Review 6, each once a traceback or an empty listing: the columns a frame has are
    named when required ones are missing (they were dropped as non-canonical first, so
    the canonical names in capitals gave "the frame has: " and nothing), letter case named
    as the fix;
    two-level column labels refused as such; a dict as config is a ConfigError, not an
    AttributeError (pandas ``DataFrame.rename(columns=str.upper)`` and ``MultiIndex`` are
    the reference frames; common practice)."""
    frame, _ = demo.site_year(seed=0, interval_minutes=60)
    site = demo.site()
    with pytest.raises(MissingColumnError, match=r"'nee', 'rg', 'tair', 'vpd', 'ustar' missing; "
                       r"the frame has: NEE, RG, TAIR.*case-sensitive: rename 'NEE' -> 'nee'"):
        process(frame.rename(columns=str.upper), site)
    with pytest.raises(MissingColumnError, match=r"'rg' missing; the frame has: .*soil_water"):
        process(frame.drop(columns="rg").assign(soil_water=0.3), site)
    two_levels = frame.set_axis(pd.MultiIndex.from_product([frame.columns, ["raw"]]), axis=1)
    with pytest.raises(MissingColumnError, match="2 levels.*droplevel"):
        process(two_levels, site)
    with pytest.raises(ConfigError, match="config must be a fluxpart.Config, got dict"):
        process(frame, site, {"seed": 1})


def test_infinite_values_are_missing_as_from_a_file():
    """Review 6: +-inf in a frame (a division by zero upstream) leaked NumPy's "divide by
    zero" RuntimeWarnings and stood in the written time series; they are read as missing,
    as the file reader reads them, and counted in a warning. IEEE 754: inf is not a
    measurement; the same frame with NaN there is the reference."""
    import warnings

    frame, _ = demo.site_year(seed=0, interval_minutes=60)
    site, config = demo.site(), Config(ustar_method="fixed", random_error_draws=20)
    every = np.arange(len(frame))
    infinite = frame.assign(nee=frame["nee"].mask(every % 50 == 0, np.inf),
                            tair=frame["tair"].mask(every % 70 == 0, -np.inf))
    missing = infinite.replace([np.inf, -np.inf], np.nan)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = process(infinite, site, config)
    assert not [w for w in caught if issubclass(w.category, RuntimeWarning)]
    assert any("infinite values read as missing: 176 in 'nee', 126 in 'tair'" in text
               for text in result.warnings)
    reference = process(missing, site, config)
    pd.testing.assert_frame_equal(result.timeseries, reference.timeseries)
    pd.testing.assert_frame_equal(result.annual, reference.annual)


def test_too_little_night_data_fails_clearly_unless_a_fallback_is_chosen():
    """A year without usable night NEE fails naming e0_fallback; the opt-in fall-back is flagged."""
    frame, _ = demo.site_year(seed=0)
    night = (frame["rg"] < 10).to_numpy()
    keep = np.zeros(len(frame), dtype=bool)
    keep[np.flatnonzero(night & frame["nee"].notna().to_numpy())[:12]] = True
    blind = frame.assign(nee=frame["nee"].where(~night | keep))
    # rref_min_points = 2: the few night records left are spread over several Rref windows
    config = Config(ustar_method="fixed", rref_min_points=2)
    with pytest.raises(InsufficientDataError, match="e0_fallback"):
        process(blind, demo.site(), config)
    result = process(blind, demo.site(), Config(ustar_method="fixed", e0_fallback=308.56,
                                                rref_min_points=2))
    assert (result.parameters["nighttime_e0_annual"]["source"] == "fallback").all()


@pytest.mark.parametrize("planted", [0.18, 0.3])
def test_demo_ustar_threshold_recovered(planted):
    """Known truth: the demo's planted low-u* loss is found within ±0.05 m s-1 (issue 5)."""
    frame, _ = demo.site_year(seed=5, ustar_threshold=planted)
    _, table = fluxpart.pipeline.screening_summary(frame, demo.site(),
                                                   Config(ustar_bootstrap_draws=0))
    annual = table[table["period"] == "year"].iloc[0]
    assert annual["source"] == "detected"
    assert abs(annual["threshold"] - planted) <= 0.05


def test_demo_without_ustar_loss_gives_no_artefact():
    """With no low-u* loss planted, the detector reports a low threshold, not an artefact."""
    frame, _ = demo.site_year(seed=5, ustar_threshold=None)
    _, table = fluxpart.pipeline.screening_summary(frame, demo.site(),
                                                   Config(ustar_bootstrap_draws=0))
    annual = table[table["period"] == "year"].iloc[0]
    assert np.isnan(annual["threshold"]) or annual["threshold"] <= 0.15


def test_a_different_seed_changes_only_the_random_draw_columns(demo_run):
    """Another seed changes only Monte Carlo and bootstrap-derived columns (issue 6).

    The seed drives the u* bootstrap (hence the scenario thresholds and their sums)
    and the Monte Carlo of the random error; the central threshold and the measured
    records come from the data alone. Since round donormargin51 the bootstrap's spread
    also sets which night records just above the threshold fill no night gap
    (``night_donor_margin``), so the seed moves the night fills, nighttime GPP (Reco −
    NEE) and the NEE sums a little, and the gap-filling error scored with the same
    donors: on the demo year by 0.024 g C m-2 (NEE), a 300th of its stated 1σ. The
    bound here is a hundredth of the 1σ: a seed must not choose a central value.
    """
    frame, _, result = demo_run
    other = process(frame, demo.site(), Config(seed=7))
    before, after = result.timeseries, other.timeseries
    night_fill = {"nee_filled", "nee_fill_method", "nee_fill_window_days", "nee_fill_count",
                  "nee_fill_std", "nee_fill_quality", "gpp_nighttime", "nee_random_error"}
    moved = {c for c in before.columns if not before[c].equals(after[c])}
    assert moved <= night_fill, moved - night_fill
    measured = before["nee_measured"].notna() | ~before["is_night"]
    pd.testing.assert_frame_equal(after.loc[measured, sorted(night_fill)],
                                  before.loc[measured, sorted(night_fill)])
    changed = [c for c in result.annual.columns
               if not result.annual[c].equals(other.annual[c])]
    assert changed, "a new seed must change the Monte Carlo columns"
    random_draw = ("_ustar_p", "_ustar_spread", "_uncertainty", "_ci95_",
                   "net_uptake_t_co2_per_ha_")
    for column in ("reco_nighttime", "gpp_daytime", "reco_daytime", "ustar_threshold"):
        assert column not in changed
    for flux in ("nee", "gpp_nighttime"):
        shift = abs(other.annual[flux].iloc[0] - result.annual[flux].iloc[0])
        assert shift < 0.01 * result.annual[f"{flux}_uncertainty_total"].iloc[0], (flux, shift)
    central = {"nee", "gpp_nighttime", "net_uptake_t_co2_per_ha", "nee_share_from_filled",
               "gpp_nighttime_share_from_filled", "gpp_method_difference",
               "gpp_relative_difference"}
    assert not [c for c in changed
                if c not in central and not any(part in c for part in random_draw)]


def test_clearness_option_changes_only_gaps_with_radiation(demo_run):
    """gapfill_clearness_tolerance > 0 adds the clearness index (Rg over top-of-atmosphere
    radiation; Liu & Jordan 1960 (m)) to the similarity steps: measured records keep
    their values, and some fills by similar conditions move."""
    frame, _, result = demo_run
    other = process(frame, demo.site(), Config(gapfill_clearness_tolerance=0.15))
    before, after = result.timeseries, other.timeseries
    measured = before["nee_measured"].notna()
    pd.testing.assert_series_equal(after["nee_filled"][measured],
                                   before["nee_filled"][measured])
    similar = before["nee_fill_method"].isin(["similar_drivers", "similar_radiation"])
    moved = (after["nee_filled"] != before["nee_filled"]) & similar
    assert moved.sum() > 0.05 * similar.sum()
    with pytest.raises(ConfigError, match="gapfill_clearness_tolerance"):
        Config(gapfill_clearness_tolerance=-0.1)


def test_a_failing_ustar_scenario_is_left_out_with_a_warning(monkeypatch):
    """A u* scenario whose higher threshold leaves a method too few night records is left
    out of the u* part (with a warning) instead of stopping the run; the central run is not
    (wiring test, issue 11)."""
    import fluxpart
    from fluxpart import ustar_runs
    from fluxpart.errors import InsufficientDataError

    real = ustar_runs.fill_and_partition
    calls = []

    def failing_highest(*args, **kwargs):
        threshold = args[5]
        calls.append(float(np.nanmax(threshold)))
        if len(calls) == 4:                          # the last scenario run (p84)
            raise InsufficientDataError("no acceptable Lloyd–Taylor window (test)")
        return real(*args, **kwargs)

    monkeypatch.setattr(ustar_runs, "fill_and_partition", failing_highest)
    frame, _ = fluxpart.demo.site_year(seed=0)
    frame = frame.loc["2021-04-01":"2021-07-29"]
    config = fluxpart.Config(ustar_bootstrap_draws=10, clock_check="off")
    with pytest.warns(fluxpart.FluxpartWarning):
        result = fluxpart.process(frame, fluxpart.demo.SITE, config)
    assert len(calls) == 4
    assert any("u* scenario ustar_p84 not computed" in w for w in result.warnings)
    assert np.isfinite(result.annual["nee_uncertainty_ustar"]).all()
    assert "nee_ustar_p84" not in result.annual.columns


def test_daytime_method_without_its_own_e0_falls_back_to_the_nighttime_e0_with_a_warning():
    """Known truth (generated site-year, dry savanna, 60-min records): on the damped
    soil temperature no daytime night window spans the 5 K an E0 fit needs
    (Reichstein et al. 2005 (m)). The run completes: every daytime window carries
    the nighttime method's E0, flagged, and a warning says the methods share it."""
    import dataclasses

    from fluxpart import scenarios
    from fluxpart.errors import FluxpartWarning

    site_year = scenarios.generate(30)
    config = dataclasses.replace(Config(), respiration_driver="tsoil", ustar_scenarios=())
    with pytest.warns(FluxpartWarning, match="the nighttime method's E0"):
        result = process(site_year.frame, site_year.site, config)
    table = result.parameters["daytime"]
    assert (table["e0_source"] == "fallback").all()
    night_e0 = result.timeseries["e0_nighttime"].to_numpy()
    assert np.allclose(table["e0"], np.median(night_e0[np.isfinite(night_e0)]))
    assert np.isfinite(result.annual["gpp_daytime"]).all()


def test_screening_summary_lists_no_reason_it_cannot_decide():
    """Design property (``fluxpart check``: records per reason before the u* filter): the
    reasons decided only after the u* threshold, low u* and the mornings after calm nights
    (excluded by ``process`` where their release shows), are left out, not printed as 0;
    the reasons listed add up to the records."""
    frame, _ = demo.site_year(seed=5)
    counts, _ = fluxpart.pipeline.screening_summary(frame, demo.site(),
                                                    Config(ustar_bootstrap_draws=0))
    assert "low_ustar" not in counts.index and "morning_release" not in counts.index
    assert int(counts.sum()) == len(frame)


def test_a_year_with_unfilled_records_says_how_many_and_which_sums_are_nan():
    """NEE and every driver missing at 10:00-14:59 on every day of the year: the records
    of 11:00-13:59 have no measured NEE within an hour of their time of day anywhere in
    the record (the diurnal course's ±1 h, Reichstein et al. 2005), so no pass
    of gap filling (last resort included) can fill them, and the year's NEE sum is NaN.
    The warning counts them and names the NaN sums instead of calling the year 'partial'
    with '17520 of 17520 records' (review round fourteen)."""
    frame, _ = demo.site_year(seed=3)
    midday = (frame.index.hour >= 10) & (frame.index.hour < 15)
    frame.loc[midday, ["nee", "rg", "tair", "vpd"]] = np.nan
    config = Config(ustar_bootstrap_draws=0)
    with pytest.warns(FluxpartWarning):
        result = process(frame, demo.site(), config)
    row = result.annual.loc[2021]
    assert row["records"] == row["records_expected"] == 17520
    assert row["records_unfilled"] > 0 and np.isnan(row["nee"])
    unfilled = [w for w in result.warnings if "stay unfilled" in w]
    assert len(unfilled) == 1
    assert unfilled[0].startswith(f"2021: {int(row['records_unfilled'])} records (")
    assert "not even in the whole record" in unfilled[0] and "sums of nee" in unfilled[0]
    assert f"({100 * row['records_unfilled'] / 17520:.2g} %)" in unfilled[0]
    assert not any("partial" in w for w in result.warnings)


def test_gaps_beyond_every_window_take_the_last_resort():
    """Gap filling held to its own window (gapfill_max_window_days = 0): the gaps that no
    window of the sequence fills take the last resort of fluxpart.gapfill (the diurnal
    course widened to the whole record, as the flow chart widens it without end;
    Reichstein, gap-filling flow chart, workshop slides 2004), quality C, and the year has
    a total instead of NaN."""
    frame, _ = demo.site_year(seed=3)
    result = process(frame, demo.site(), Config(gapfill_max_window_days=0.0,
                                                ustar_bootstrap_draws=0))
    row = result.annual.loc[2021]
    assert row["records_unfilled"] == 0 and np.isfinite(row["nee"])
    table = result.timeseries
    widened = table["nee_fill_window_days"].to_numpy() > 1.0
    assert widened.any()
    assert set(table.loc[widened, "nee_fill_quality"].astype(str)) == {"C"}
    assert not any("stay unfilled" in w for w in result.warnings)


def test_partitioned_sums_nan_for_an_unfilled_driver_are_named():
    """Air temperature missing February to November: mid-year records lie more than
    gapfill_max_window_days = 140 days (the widest window of marginal distribution
    sampling, Reichstein et al. 2005 (m)) from any measured tair, stay unfilled, and the
    year's Reco sums are NaN. Before, the run finished without any warning (review round
    fourteen); now one names the NaN sums, their records and the driver."""
    frame, _ = demo.site_year(seed=3)
    frame.loc["2021-02-01":"2021-11-30", "tair"] = np.nan
    with pytest.warns(FluxpartWarning):
        result = process(frame, demo.site(), Config(ustar_bootstrap_draws=0,
                                                    respiration_driver="tair"))
    row = result.annual.loc[2021]
    assert np.isnan(row["reco_nighttime"]) and np.isfinite(row["nee"])
    lacking = int(result.timeseries["reco_nighttime"].isna().sum())
    assert lacking == int(result.timeseries["tair_filled"].isna().sum()) > 0
    text = [w for w in result.warnings if "are NaN, not totals" in w]
    assert len(text) == 1 and text[0].startswith("2021: the sums of reco_nighttime")
    assert f"reco_nighttime lacks {lacking} records" in text[0]
    assert f"tair ({lacking} records)" in text[0]


def test_the_fallback_e0_warning_states_the_value_the_windows_took():
    """Behaviour check (review round eighteen): the warning of daytime windows without an
    E0 of their own stated the median of the daytime E0 over all records, which mixes
    the windows that had their own E0 with those that took the nighttime method's; on a
    record of three calendar years it also called a median of the years' E0 that no year
    had (236 K between 226 and 246 K) "the nighttime method's E0". It now states the
    value the flagged windows hold and, over several years, each year's E0."""
    from fluxpart.central_run import fallback_e0_text

    parameters = pd.DataFrame({"e0": [301.0, 236.0, 236.0, 298.0],
                               "e0_source": ["year", "fallback", "fallback", "year"]})
    fell_back = parameters["e0_source"] == "fallback"
    years = pd.DataFrame({"e0": [246.0, 226.0, 249.0]},
                         index=pd.Index([2020, 2021, 2022], name="year"))
    text = fallback_e0_text(parameters, fell_back, years)
    assert "(236 K;" in text
    assert "2020: 246 K, 2021: 226 K, 2022: 249 K" in text
    one_year = fallback_e0_text(parameters, fell_back, years.iloc[[1]])
    assert one_year == "the nighttime method's E0 (236 K)"


def test_outage_across_the_maize_harvest_with_the_event_declared():
    """Known-truth recovery on the invented maize year (harvest on day 275, 2 October):
    a 24-day NEE outage across the harvest; declared as an event (Config.events), the
    days after the harvest are filled from bare ground only. Their summed error falls
    from -9.5 to -1.6 g C m-2 (seed 0, measured); an event outside the record is warned."""
    import warnings

    frame, truth = demo.site_year(seed=0, variant="c4")
    outage = (frame.index >= "2021-09-20") & (frame.index < "2021-10-14")
    frame.loc[outage, "nee"] = np.nan
    after = outage & (frame.index >= "2021-10-02")
    errors = {}
    for events in ((), ("2021-10-02", "2012-10-02")):
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            result = process(frame, demo.site(), Config(
                events=events, ustar_bootstrap_draws=20, random_error_draws=50))
        filled = result.timeseries["nee_filled"].to_numpy()
        errors[events] = flux_to_carbon(filled[after] - truth["nee"].to_numpy()[after],
                                        30).sum()
        outside = [w for w in caught if "events: 2012-10-02 lies outside" in str(w.message)]
        assert len(outside) == (1 if events else 0)
    assert errors[()] < -5.0
    assert abs(errors[("2021-10-02", "2012-10-02")]) < 3.0


def test_events_hours_apart_within_an_outage_leave_no_nee_unfilled():
    """Two events declared hours apart (a harvest, then the baling) within an outage: the
    records between them have no measured record of their own piece. They stayed
    unfilled, so the year's NEE sum was NaN (review23); they are filled across the later
    event, named in a warning, and the year has its total. A record's NEE is the
    ecosystem's exchange in that interval, so a year without a gap left has a sum
    (Reichstein et al. 2005: gap filling exists to give the annual sum)."""
    import warnings

    frame, _ = demo.site_year(seed=0)
    frame.loc[(frame.index >= "2021-07-19") & (frame.index < "2021-07-22"), "nee"] = np.nan
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = process(frame, demo.site(), Config(
            events=("2021-07-20 10:00", "2021-07-20 13:00"), ustar_bootstrap_draws=20,
            random_error_draws=50))
    assert int(result.annual["records_unfilled"].iloc[0]) == 0
    assert np.isfinite(result.annual["nee"].iloc[0])
    crossed = [str(w.message) for w in caught if "filled across 2021-07-20T13:00" in
               str(w.message)]
    assert len(crossed) == 1
    assert "6 NEE records from 2021-07-20 10:00 to 2021-07-20 12:30" in crossed[0]
    # the 3 h between the events hold no window of either partitioning (round events2):
    # their GPP and Reco take the windows beside them, named
    pieces = [str(w.message) for w in caught if "2021-07-20 10:00 to 2021-07-20 12:30 "
              "(interval starts) has no" in str(w.message)]
    assert len(pieces) == 2
    assert np.isfinite(result.annual[["gpp_nighttime", "gpp_daytime"]].to_numpy()).all()


def test_warnings_of_process_site_config_name_the_callers_line(tmp_path):
    """A FluxpartWarning names the line of the caller's code, through
    `process_site_config` too: it named fluxpart/pipeline.py, the line where
    `process_site_config` calls `process` (review43). A short bundle of the invented
    example site gives a partial-year warning among others."""
    import warnings

    from bundles import make_bundle

    from fluxpart.pipeline import process_site_config

    config = make_bundle(tmp_path)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        process_site_config(config)
    ours = [w for w in caught if issubclass(w.category, FluxpartWarning)]
    assert any("partial year" in str(w.message) for w in ours)
    assert {w.filename for w in ours} == {__file__}
