"""One partitioning method that cannot fit: the run goes on without it (method_failure);
a year without a nighttime E0 of its own takes the nearest year's (nighttime.annual_e0).

Site-years are invented (fluxpart.scenarios, fluxpart.demo); the polar night of the
record is checked against the textbook declination formula, not the package's solar code.
"""

import dataclasses
import math
import warnings

import numpy as np
import pandas as pd
import pytest

import fluxpart
from fluxpart import demo, method_failure, scenarios
from fluxpart.cli import main
from fluxpart.errors import InsufficientDataError
from fluxpart.partition import daytime, nighttime
from fluxpart.partition.nighttime import annual_e0
from fluxpart.pipeline import check_record

_POLAR = (0, 89.0, "2019-10-20", "2019-12-31")   # scenario seed, latitude, first and last day
_ANNUAL_SUMS = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")


def _cooper_declination(day_of_year: int) -> float:
    """Solar declination [degrees], Cooper (1969): 23.45 sin(360 (284 + n) / 365) (m)."""
    return 23.45 * math.sin(math.radians(360.0 * (284 + day_of_year) / 365.0))


def _polar_night_record():
    """An invented hourly deciduous forest (scenario 0) moved to 89° N, 20 October to
    31 December: polar night."""
    seed, latitude, first, last = _POLAR
    scenario = scenarios.draw(seed)
    scenario = dataclasses.replace(scenario, site=dataclasses.replace(scenario.site,
                                                                      latitude=latitude))
    site_year = scenarios.generate(scenario)
    return site_year.frame.loc[first:last], site_year.site


def _run(frame, site, config):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = fluxpart.process(frame, site, config)
    return result, [str(w.message) for w in caught
                    if issubclass(w.category, fluxpart.FluxpartWarning)]


@pytest.fixture(scope="module")
def polar_run():
    frame, site = _polar_night_record()
    return (frame, site, *_run(frame, site, fluxpart.Config(clock_check="warn")))


def test_the_polar_record_has_no_daylight_by_the_textbook_declination():
    """Noon solar elevation at 89° N is 90 - 89 + δ: below 0 on every day of the record
    (Cooper 1969 declination (m)), so there is no light response to fit."""
    frame, site = _polar_night_record()
    days = np.unique(frame.index.day_of_year)
    noon = [90.0 - site.latitude + _cooper_declination(int(day)) for day in days]
    assert max(noon) < 0.0
    # before 0.19.0 the preflight refused the whole run for want of daylight
    finding = [f for f in check_record(
        frame, site, fluxpart.Config(clock_check="warn"))[1]
        if f.stage == "daytime partitioning (light response)"]
    assert finding and not finding[0].fatal
    assert "goes on with the nighttime method alone" in finding[0].message


def test_polar_night_runs_with_the_daytime_method_nan(polar_run):
    """The run finishes; every daytime annual column is NaN, NEE and the nighttime ones
    finite, and the warning names the method, the year and the reason."""
    _, _, result, texts = polar_run
    annual = result.annual
    assert list(annual.index) == [2019]
    daytime_columns = [c for c in annual.columns if "daytime" in c]
    assert "gpp_daytime_ci95_low" in daytime_columns and "reco_daytime_ci95_high" in (
        daytime_columns)
    assert annual[daytime_columns].isna().all().all()
    for column in ("nee", "gpp_nighttime", "reco_nighttime", "nee_ci95_low",
                   "reco_nighttime_ci95_high"):
        assert np.isfinite(annual[column]).all(), column
    assert result.timeseries[["gpp_daytime", "reco_daytime"]].isna().all().all()
    assert np.isfinite(result.timeseries["reco_nighttime"]).all()
    assert result.daily["gpp_daytime"].isna().all()
    [text] = [t for t in texts if t.startswith("daytime partitioning could not fit")]
    assert "2019" in text and "light-response fit" in text
    assert text in result.warnings


def test_polar_night_warns_of_no_part_the_nighttime_intervals_hold(polar_run):
    """The nighttime 95 % interval is the sum ± z sigma_total with z = 1.959964 (the
    normal quantile, statistics.NormalDist) and sigma_total holding the nighttime
    parameters part, which is finite: a warning that the year's intervals leave out the
    parameters part (only the failed daytime method's, NaN with its sums) would be
    wrong."""
    from statistics import NormalDist
    _, _, result, texts = polar_run
    row = result.annual.loc[2019]
    assert np.isfinite(row["reco_nighttime_uncertainty_parameters"])
    z = NormalDist().inv_cdf(0.975)
    half = (row["reco_nighttime_ci95_high"] - row["reco_nighttime_ci95_low"]) / 2
    assert half == pytest.approx(z * row["reco_nighttime_uncertainty_total"], rel=1e-9)
    assert row["reco_nighttime_uncertainty_total"] >= row["reco_nighttime_uncertainty_parameters"]
    assert "parameters" in row["uncertainty_parts_missing"]       # the table keeps its label
    assert not [t for t in texts if "leave out the parameters" in t]


def test_polar_night_nee_and_respiration_recover_the_truth(polar_run):
    """Known truth of the invented forest: in the dark NEE is respiration alone, and the
    nighttime Reco and the filled NEE sum to the true Reco within 10 % (the record's
    random error and gaps; our tolerance)."""
    frame, site, result, _ = polar_run
    seed, latitude, first, last = _POLAR
    scenario = scenarios.draw(seed)
    truth = scenarios.generate(dataclasses.replace(scenario, site=site)).truth.loc[first:last]
    true_reco = float(truth["reco"].sum()) * float(fluxpart.budget.flux_to_carbon(
        1.0, scenario.interval_minutes))
    assert float(truth["gpp"].abs().sum()) == 0.0          # no light, no photosynthesis
    for column in ("nee", "reco_nighttime"):
        assert result.annual.loc[2019, column] == pytest.approx(true_reco, rel=0.10)


def test_polar_night_folder_writes_verifies_reports_diffs_and_exports(polar_run, tmp_path,
                                                                        capsys):
    """The NaN columns go through every reader: the folder verifies bit-identical, diff
    finds nothing against a second run, the report says the method could not fit, and
    the NetCDF export carries the NaN daytime series."""
    frame, site, _, _ = polar_run
    names = ["nee", "rg", "tair", "vpd", "ustar", "tsoil"]
    table = frame[names].copy()
    table.insert(0, "stamp", frame.index.strftime("%Y-%m-%d %H:%M"))
    table.to_csv(tmp_path / "forest.csv", index=False, na_rep="-9999", float_format="%.4f")
    columns = "\n".join(f'{name} = "{name}"' for name in names)
    (tmp_path / "forest.toml").write_text(
        f'[site]\nname = "Polar test forest (fictional)"\nlatitude = {site.latitude}\n'
        f"longitude = {site.longitude}\nutc_offset = {site.utc_offset}\n\n[input]\n"
        'path = "forest.csv"\ntime_column = "stamp"\ntime_format = "%Y-%m-%d %H:%M"\n'
        'time_marks = "start"\nmissing = [-9999]\n\n[input.columns]\n'
        f'{columns}\n\n[processing]\nclock_check = "warn"\nustar_bootstrap_draws = 20\n'
        "random_error_draws = 50\n")
    for out in ("a", "b"):
        assert main(["run", str(tmp_path / "forest.toml"), "--out", str(tmp_path / out),
                     "--quiet"]) == 0
    capsys.readouterr()
    manifest = fluxpart.load(tmp_path / "a")
    assert any(w.startswith("daytime partitioning could not fit 2019") for w in
               manifest.warnings)
    assert main(["verify", str(tmp_path / "a"), "--quiet"]) == 0
    assert main(["diff", str(tmp_path / "a"), str(tmp_path / "b")]) == 0
    capsys.readouterr()
    pytest.importorskip("matplotlib")
    assert main(["report", str(tmp_path / "a")]) == 0
    page = (tmp_path / "a" / "report" / "report.html").read_text()
    assert 'data-summary="unfitted" data-method="daytime"' in page
    assert "The daytime partitioning method could not fit this record" in page
    xarray = pytest.importorskip("xarray")
    assert main(["export", str(tmp_path / "a"), "--netcdf", str(tmp_path / "forest.nc")]) == 0
    with xarray.open_dataset(tmp_path / "forest.nc") as exported:
        assert bool(exported["gpp_daytime"].isnull().all())
        assert bool(exported["reco_nighttime"].notnull().all())


def _failing(name):
    def fail(*args, **kwargs):
        raise InsufficientDataError(f"{name}: no window could be fitted (test)")
    return fail


@pytest.fixture(scope="module")
def demo_year():
    frame, _ = demo.site_year(seed=0)
    config = fluxpart.Config(respiration_driver="tair", ustar_bootstrap_draws=20,
                             random_error_draws=50)
    reference, _ = _run(frame, demo.site(), config)
    return frame, config, reference


@pytest.mark.parametrize("method", ["nighttime", "daytime"])
def test_the_other_method_and_nee_are_those_of_a_run_where_both_fit(demo_year, method,
                                                                    monkeypatch):
    """One method made to fail on the demo year: its columns NaN; NEE and the other
    method's daily and annual sums equal, bit for bit, those of the run in which both fit
    (the two methods are independent estimates from the same filled NEE, Reichstein et
    al. 2005; Lasslop et al. 2010), NEE's 95 % interval too (to rounding); the other
    method's interval lacks the between-method part, which is named as missing."""
    frame, config, reference = demo_year
    module = nighttime if method == "nighttime" else daytime
    monkeypatch.setattr(module, f"partition_{method}", _failing(f"{method} test fit"))
    result, texts = _run(frame, demo.site(), config)
    other = "daytime" if method == "nighttime" else "nighttime"
    kept = ["nee", f"gpp_{other}", f"reco_{other}"]
    pd.testing.assert_frame_equal(result.annual[kept], reference.annual[kept])
    pd.testing.assert_frame_equal(result.daily[kept], reference.daily[kept])
    pd.testing.assert_frame_equal(result.annual[["nee_ci95_low", "nee_ci95_high"]],
                                  reference.annual[["nee_ci95_low", "nee_ci95_high"]],
                                  check_exact=False, rtol=1e-12)
    intervals = [f"{flux}_{other}_ci95_{end}" for flux in ("gpp", "reco")
                 for end in ("low", "high")]
    assert np.isfinite(result.annual[intervals].to_numpy()).all()
    assert "partitioning" in result.annual.loc[2021, "uncertainty_parts_missing"]
    assert "partitioning" not in str(reference.annual.loc[2021, "uncertainty_parts_missing"])
    lost = [c for c in result.annual.columns if c.startswith((f"gpp_{method}",
                                                              f"reco_{method}"))]
    assert lost and result.annual[lost].isna().all().all()
    assert np.isfinite(reference.annual[lost[:2]].to_numpy()).all()
    assert result.annual[["gpp_method_difference", "reco_method_difference"]].isna().all(
        ).all()
    [text] = [t for t in texts if "could not fit" in t]
    assert text.startswith(f"{method} partitioning could not fit 2021")
    assert f"{method} test fit: no window could be fitted" in text


def test_both_methods_failing_still_refuses(monkeypatch, demo_year):
    """Neither method can fit: the run stops with the nighttime method's error, as before."""
    frame, config, _ = demo_year
    monkeypatch.setattr(nighttime, "partition_nighttime", _failing("nighttime test fit"))
    monkeypatch.setattr(daytime, "partition_daytime", _failing("daytime test fit"))
    with pytest.raises(InsufficientDataError, match="nighttime test fit"):
        fluxpart.process(frame, demo.site(), config)


def test_midnight_sun_record_is_still_refused():
    """89° N from April to August has no night (noon elevation 90 - 89 + δ > 0 and
    midnight elevation δ - 1 > 0 by Cooper's declination (m) from mid-April): no night
    data for either method's E0, so the run stops as before."""
    seed, latitude, _, _ = _POLAR
    scenario = scenarios.draw(seed)
    site_year = scenarios.generate(dataclasses.replace(scenario, site=dataclasses.replace(
        scenario.site, latitude=latitude)))
    frame = site_year.frame.loc["2019-04-20":"2019-08-20"]
    days = np.unique(frame.index.day_of_year)
    assert min(_cooper_declination(int(day)) - (90.0 - latitude) for day in days) > 0.0
    with pytest.raises(InsufficientDataError, match=r"nighttime partitioning \(E0\)"):
        fluxpart.process(frame, site_year.site, fluxpart.Config(clock_check="warn"))


# --------------------------------------------------------------------------- E0 stub year


def _windows(accepted_years, all_years):
    """E0 window table: two windows per year, accepted in `accepted_years` only."""
    rows = []
    for year in all_years:
        for month, e0 in ((3, 200.0 + year % 10), (9, 220.0 + year % 10)):
            start = pd.Timestamp(year, month, 1)
            ok = year in accepted_years
            rows.append({"window_start": start, "window_end": start + pd.Timedelta(days=15),
                         "year": year, "points": 40 if ok else 3, "e0": e0 if ok else np.nan,
                         "e0_se": 20.0 if ok else np.nan, "accepted": ok,
                         "reason": "" if ok else "too few night records (< 6)"})
    return pd.DataFrame(rows)


def test_annual_e0_takes_the_nearest_year_only_when_asked():
    """2022 without accepted windows: an error by default (as before), the nearest year's
    E0 with nearest_year=True, and e0_fallback still first where it is set."""
    windows = _windows({2020, 2021}, [2020, 2021, 2022])
    with pytest.raises(InsufficientDataError, match="year 2022"):
        annual_e0(windows)
    table = annual_e0(windows, nearest_year=True)
    assert table.loc[2022, "source"] == "nearest_year"
    assert table.loc[2022, "e0"] == table.loc[2021, "e0"]
    assert table.loc[2022, "e0_se"] == table.loc[2021, "e0_se"]
    assert table.loc[2022, "windows_used"] == 0
    pd.testing.assert_frame_equal(table.loc[[2020, 2021]], annual_e0(
        windows[windows["year"] < 2022]))
    assert annual_e0(windows, e0_fallback=150.0, nearest_year=True).loc[2022, "source"] == (
        "fallback")
    [note] = nighttime.nearest_year_notes(table, "tsoil")
    assert "2022" in note and "E0 of 2021" in note and "tsoil" in note
    # E0 is fitted per calendar year (windows of night records within it, Reichstein et al.
    # 2005 (m)), whatever budget year_start: the note says which year it means
    assert "calendar year 2022" in note


def test_annual_e0_nearest_year_tie_takes_the_earlier_and_none_still_refuses():
    """A year between two donors takes the earlier one; no year with an E0 is an error."""
    table = annual_e0(_windows({2019, 2021}, [2019, 2020, 2021]), nearest_year=True)
    assert table.loc[2020, "e0"] == table.loc[2019, "e0"] != table.loc[2021, "e0"]
    with pytest.raises(InsufficientDataError, match="year 2020"):
        annual_e0(_windows(set(), [2020, 2021]), nearest_year=True)


def test_a_nine_day_stub_year_takes_the_e0_of_the_year_before():
    """A record of 2021 and 1–9 January 2022 on soil temperature: the stub has no window
    with night records spanning 5 K (damped soil temperature) and was refused before;
    now it runs with 2021's E0, named in a warning with both years."""
    frame, _ = demo.site_year(seed=0, years=2)
    frame = frame.loc["2021-01-01":"2022-01-09"]
    config = fluxpart.Config(respiration_driver="tsoil", ustar_bootstrap_draws=20,
                             random_error_draws=50)
    result, texts = _run(frame, demo.site(), config)
    e0 = result.parameters["nighttime_e0_annual"]
    assert e0.loc[2022, "source"] == "nearest_year" and e0.loc[2021, "source"] != (
        "nearest_year")
    assert e0.loc[2022, "e0"] == e0.loc[2021, "e0"]
    stub = result.timeseries.index.year == 2022
    np.testing.assert_array_equal(result.timeseries["e0_nighttime"].to_numpy()[stub],
                                  e0.loc[2021, "e0"])
    assert np.isfinite(result.annual.loc[2022, ["reco_nighttime", "gpp_daytime"]]).all()
    [note] = [t for t in texts if "E0 of 2021, the nearest year with one" in t]
    assert "2022" in note and "E0 of 2021" in note
    assert method_failure.borrowed_e0(nighttime.NighttimeResult(
        *([np.zeros(1)] * 4), pd.DataFrame(), e0, pd.DataFrame(), "tsoil"))
