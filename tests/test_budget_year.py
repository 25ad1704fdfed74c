"""Budget years that start on a day other than 1 January ([processing] year_start).

Outside values: the Gregorian calendar (a Sep–Aug year holding 29 February has
366 days; reference/budget.toml) and the daily table itself, whose sums over each
budget year are the reference for the annual sums (a sum over a period is the sum of
its days' sums).
"""

import json

import numpy as np
import pandas as pd
import pyarrow.parquet as pq
import pytest
from conftest import load_reference

from fluxpart import demo
from fluxpart.audit import audit_trail
from fluxpart.budget import aggregate
from fluxpart.config import Config
from fluxpart.errors import ConfigError
from fluxpart.pipeline import process
from fluxpart.uncertainty import monte_carlo_sums

CALENDAR = load_reference("budget")["calendar"]
RTOL = load_reference("budget")["conversion"]["relative_tolerance"]


def _timeseries(start, end, rng):
    """Half-hourly fluxes with varied values, so a misplaced record changes a sum."""
    index = pd.date_range(start, end, freq="30min")
    gpp = rng.uniform(0.0, 20.0, index.size)
    reco = rng.uniform(1.0, 6.0, index.size)
    return pd.DataFrame({"nee_filled": reco - gpp, "gpp_nighttime": gpp,
                         "reco_nighttime": reco,
                         "nee_fill_quality": rng.integers(0, 4, index.size).astype("int8")},
                        index=index)


@pytest.fixture(scope="module")
def two_years():
    """15 March 2019 to 20 October 2021: partial, leap, common and partial Sep–Aug years."""
    frame = _timeseries("2019-03-15", "2021-10-20 23:30", np.random.default_rng(20261202))
    return frame, aggregate(frame, 30, year_start="09-01")


def test_annual_sums_equal_daily_sums_over_each_budget_year(two_years):
    _, budgets = two_years
    annual, daily = budgets.annual, budgets.daily
    assert list(annual.index) == [2018, 2019, 2020, 2021]
    for year, row in annual.iterrows():
        days = daily.loc[f"{year}-09-01":f"{year + 1}-08-31"]
        for flux in ("nee", "gpp_nighttime", "reco_nighttime"):
            assert row[flux] == pytest.approx(days[flux].sum(), rel=RTOL), (year, flux)
        assert row["records"] == days["records"].sum()
        assert row["records_unfilled"] == days["records_unfilled"].sum()
        measured = (days["share_measured"] * days["records"]).sum() / days["records"].sum()
        assert row["share_measured"] == pytest.approx(measured, rel=1e-12)


def test_budget_year_keys_and_dates(two_years):
    annual = two_years[1].annual
    assert annual.index.name == "year" and annual.index.dtype == "int64"
    assert list(annual["period_start"]) == [pd.Timestamp(f"{y}-09-01") for y in annual.index]
    assert list(annual["period_end"]) == [pd.Timestamp(f"{y + 1}-09-01")
                                          for y in annual.index]
    assert budgets_units_ok(two_years[1].units)


def budgets_units_ok(units) -> bool:
    return units["period_start"] == "" and units["period_end"] == "" and units["nee"] == "g C m-2"


def test_leap_budget_year_counts_366_days(two_years):
    """Sep 2019 – Aug 2020 holds 29 February 2020: 366 × 48 records; Sep 2020 – Aug 2021 365."""
    annual = two_years[1].annual
    assert annual.loc[2019, "records_expected"] == CALENDAR["records_leap_year_30min"]
    assert annual.loc[2019, "records"] == CALENDAR["records_leap_year_30min"]
    assert annual.loc[2020, "records_expected"] == CALENDAR["records_common_year_30min"]
    # Sep 2018 – Aug 2019 has no 29 February although the run holds 2020's
    assert annual.loc[2018, "records_expected"] == CALENDAR["records_common_year_30min"]
    assert bool(annual.loc[2019, "complete"]) and bool(annual.loc[2020, "complete"])


def test_partial_first_and_last_budget_years_flagged(two_years):
    annual = two_years[1].annual
    first_days = (pd.Timestamp("2019-09-01") - pd.Timestamp("2019-03-15")).days
    last_days = (pd.Timestamp("2021-10-21") - pd.Timestamp("2021-09-01")).days
    assert annual.loc[2018, "records"] == first_days * 48
    assert annual.loc[2021, "records"] == last_days * 48
    assert not annual.loc[2018, "complete"] and not annual.loc[2021, "complete"]


def test_default_is_the_calendar_year(two_years):
    """year_start "01-01" groups by calendar year exactly as before, with Jan–Jan dates."""
    frame, _ = two_years
    budgets = aggregate(frame, 30)
    annual, daily = budgets.annual, budgets.daily
    assert list(annual.index) == [2019, 2020, 2021]
    for year, row in annual.iterrows():
        days = daily.loc[str(year)]
        assert row["nee"] == pytest.approx(days["nee"].sum(), rel=RTOL)
        assert row["period_start"] == pd.Timestamp(f"{year}-01-01")
        assert row["period_end"] == pd.Timestamp(f"{year + 1}-01-01")
    assert annual.loc[2020, "records_expected"] == CALENDAR["records_leap_year_30min"]
    explicit = aggregate(frame, 30, year_start="01-01")
    pd.testing.assert_frame_equal(explicit.annual, annual)
    # daily and monthly tables do not depend on the budget year
    shifted = aggregate(frame, 30, year_start="09-01")
    pd.testing.assert_frame_equal(shifted.daily, daily)
    pd.testing.assert_frame_equal(shifted.monthly, budgets.monthly)


@pytest.mark.parametrize("bad", ["02-30", "13-01", "00-10", "02-29", "9-01", "0901", 901])
def test_bad_year_start_names_the_setting(bad):
    with pytest.raises(ConfigError, match=r"\[processing\] year_start"):
        Config(year_start=bad)
    with pytest.raises(ConfigError, match=r"\[processing\] year_start"):
        Config.from_mapping({"year_start": bad})


def test_audit_and_random_error_follow_the_keys(two_years):
    """Per-year counts and Monte Carlo sums group by the budget-year keys given."""
    frame, budgets = two_years
    keys = np.asarray(budgets.annual.index.repeat(budgets.annual["records"].to_numpy()))
    trail = audit_trail(frame.assign(rejection_reason=0), year_keys=keys)
    assert list(trail.index) == [2018, 2019, 2020, 2021]
    assert trail["records_present"].tolist() == budgets.annual["records"].tolist()
    sigma = np.full(len(frame), 1.0)
    sums = monte_carlo_sums(sigma, frame.index, 30, draws=20, seed=0, year_keys=keys)
    assert sums["records"].tolist() == budgets.annual["records"].tolist()
    calendar = monte_carlo_sums(sigma, frame.index, 30, draws=20, seed=0)
    assert list(calendar.index) == [2019, 2020, 2021]


def test_pipeline_budget_year_from_july(tmp_path):
    """A demo calendar year with year_start "07-01": two partial budget years whose sums,
    uncertainty and audit rows follow the July–June split."""
    frame, _ = demo.site_year(seed=0)
    with pytest.warns(Warning):
        result = process(frame, demo.site(), Config(year_start="07-01", random_error_draws=50))
    annual, daily = result.annual, result.daily
    first = int(frame.index[0].year)
    assert list(annual.index) == [first - 1, first]
    assert list(annual["period_start"]) == [pd.Timestamp(f"{first - 1}-07-01"),
                                            pd.Timestamp(f"{first}-07-01")]
    for year, row in annual.iterrows():
        days = daily.loc[f"{year}-07-01":f"{year + 1}-06-30"]
        assert row["nee"] == pytest.approx(days["nee"].sum(), rel=1e-9)
        assert row["gpp_daytime"] == pytest.approx(days["gpp_daytime"].sum(), rel=1e-9)
        assert not row["complete"]
    assert np.isfinite(annual["nee_ci95_low"]).all()
    assert list(result.audit.index) == list(annual.index)
    assert result.audit["records_present"].tolist() == annual["records"].tolist()
    assert any("budget year" in text and "partial" in text for text in result.warnings)
    # the tables' own words say which records a budget year holds, and the records agree
    # (modeller52: "calendar year of the interval starts" and "a year is the set of
    # intervals that start in it" were wrong here); the intervals counted with pandas
    stamps = result.timeseries.index
    for year, row in annual.iterrows():
        held = (stamps >= pd.Timestamp(f"{year}-07-01")) & (stamps < pd.Timestamp(
            f"{year + 1}-07-01"))
        assert row["records"] == held.sum()
    said = "from Y-07-01 to before (Y+1)-07-01, labelled by the calendar year in which it starts"
    for table in (annual, result.audit):
        assert said in table.attrs["descriptions"]["year"]
        assert said in table.attrs["time_convention"]
        assert "a day or month is the set of intervals that start in it" in \
            table.attrs["time_convention"]
        assert "calendar year of the interval starts" not in table.attrs["descriptions"]["year"]
    # and the folder's writer words them so from the settings it records
    result.write(tmp_path / "out")
    written = pq.read_schema(tmp_path / "out" / "annual.parquet")
    assert written.field("year").metadata[b"description"].decode() == \
        annual.attrs["descriptions"]["year"]
    assert json.loads(written.metadata[b"fluxpart"])["time_convention"] == \
        annual.attrs["time_convention"]


def test_pipeline_budgets_a_year_cut_by_end_stamp_dates_whole():
    """A year read from end stamps 00:00 on 1 January .. 23:30 on 31 December (review
    0.12.0, layout c84): no one-record budget year before it, and its absent last interval
    filled as a gap, so the year is complete; both stated among the warnings."""
    import warnings

    frame, _ = demo.site_year(seed=0)
    year = int(frame.index[0].year)
    before = frame.iloc[:1].set_axis(frame.index[:1] - pd.Timedelta(minutes=30))
    shifted = pd.concat([before, frame.iloc[:-1]])
    shifted.index.name = "time"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = process(shifted, demo.site(), Config(ustar_bootstrap_draws=0,
                                                      random_error_draws=50))
    assert list(result.annual.index) == [year] and bool(result.annual.loc[year, "complete"])
    assert int(result.annual.loc[year, "records"]) == len(frame)
    last = result.timeseries.iloc[-1]
    assert result.timeseries.index[-1] == frame.index[-1] and np.isnan(last["nee"])
    assert last["nee_fill_quality"] in ("A", "B", "C") and np.isfinite(last["nee_filled"])
    texts = [w for w in result.warnings if w.startswith("budget year:")]
    assert len(texts) == 2 and f"{year - 1}: only 1 record(s)" in texts[0]
    assert f"{year}: 1 record(s) at its end" in texts[1]
    assert not any("partial" in w for w in result.warnings)


def test_cli_names_the_budget_year_periods(two_years):
    """The printed annual table says which days each budget year covers (not for 01-01)."""
    from fluxpart.cli import _format_annual

    frame, budgets = two_years
    text = _format_annual(budgets.annual)
    assert "2019 = 2019-09-01 to 2020-08-31" in text
    assert "Budget years" not in _format_annual(aggregate(frame, 30).annual)


def test_cli_net_uptake_of_a_partial_year_is_not_headed_per_year():
    """The printed tonnes of a 3.6-month year are that part's sum, not scaled up (README
    cautions): the heading said "t CO2 ha-1 per year" above it (review43)."""
    from fluxpart.cli import _format_annual

    annual = pd.DataFrame({"nee": [-120.0], "complete": [False], "records": [5185],
                           "records_expected": [17520], "net_uptake_t_co2_per_ha": [4.4],
                           "net_uptake_t_co2_per_ha_uncertainty": [0.1],
                           "ustar_threshold": [0.2]}, index=pd.Index([2022], name="year"))
    text = _format_annual(annual)
    assert "per year" not in text
    assert "Net uptake [t CO2 ha-1 over each budget year's records; positive = uptake;" in text
    # the interval beside the tonnes leaves out what NEE's leaves out, said there (review54)
    heading = next(line for line in text.splitlines() if line.startswith("Net uptake ["))
    assert "systematic measurement errors not included" in heading
    assert "partial year, 3.6 months: not an annual total" in text
    # the tonnes are NEE's: a harvest's carbon is not in them (review46, a maize field's
    # 18 t CO2 ha-1 printed without a word on its harvest)
    from fluxpart.manifest import NEE_SCOPE
    assert f"  ({NEE_SCOPE})" in text and "harvest" in NEE_SCOPE

def test_cli_uncertainty_parts_combine_into_the_printed_total(written_demo):
    """The printed parts of each flux's uncertainty combine in quadrature into its printed
    total, as the table's header says (root sum of squares of independent 1-sigma parts,
    GUM, JCGM 100:2008 §5.1 (m)). Review round eighteen: nighttime GPP was printed with
    NEE's random and gap-filling parts (its own are those outside the night only) and the
    temperature-driver and respiration-form parts had no column, so the parts of a
    nighttime GPP of total 7.9 g C m-2 added up to 8.7."""
    from fluxpart.cli import _format_annual
    from fluxpart.uncertainty_parts import uncertainty_parts

    result, _ = written_demo
    table = uncertainty_parts(result.annual)
    parts = table.drop(columns=["total", "ci95_low", "ci95_high"])
    combined = np.sqrt(np.square(parts).sum(axis=1, min_count=1))
    assert np.allclose(combined, table["total"], rtol=1e-9, atol=0.0)
    assert {"temperature", "form"} <= set(table.columns)
    nighttime_gpp = table.xs("gpp_nighttime", level="flux")
    assert np.allclose(nighttime_gpp["random"],
                       result.annual["gpp_nighttime_uncertainty_random"].to_numpy())
    assert "temperature" in _format_annual(result.annual)
    # the light shape's column (daytime_curvature = average) is named in the heading
    # where it is printed, as the others that are no plain word (review55)
    assert "light shape" not in _format_annual(result.annual)
    shaped = result.annual.assign(gpp_daytime_uncertainty_light_shape=1.0,
                                  reco_daytime_uncertainty_light_shape=1.0)
    heading = next(line for line in _format_annual(shaped).splitlines()
                   if line.startswith("Uncertainty"))
    assert "light shape: the daytime light response rectangular or with its curvature " \
        "profiled" in heading


def test_partial_year_warning_states_its_months():
    """A partial year's warning says how many months of records it holds (issue 13: partial
    years stated as months): 60 days of a non-leap year are 60 / 365 x 12 = 1.97 months
    (calendar arithmetic)."""
    import warnings

    import fluxpart

    frame, _ = fluxpart.demo.site_year(seed=0)
    frame = frame.loc["2021-05-01":"2021-06-29"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = fluxpart.process(frame, fluxpart.demo.SITE,
                                  fluxpart.Config(ustar_method="fixed", clock_check="off"))
    assert any("2021 is a partial" in w and "2.0 months" in w for w in result.warnings)


def test_cli_net_uptake_of_a_partial_year_is_not_called_a_rate_per_year():
    """The printed net uptake (t CO2 ha-1 per year) of a partial or not fully filled year
    says so on its own line: a month of records printed "2022: -0.52" beside the full
    year's 8.84 (review, round five). 1488 records of 17520 are 1488 / 17520 x 12 = 1.0
    months (calendar arithmetic)."""
    from fluxpart.cli import _format_annual

    annual = pd.DataFrame({
        "nee": [-241.4, 14.2, -230.0], "complete": [True, False, False],
        "records": [17520, 1488, 17520], "records_expected": [17520, 17520, 17520],
        "records_unfilled": [0, 0, 96], "net_uptake_t_co2_per_ha": [8.84, -0.52, 8.43],
        "net_uptake_t_co2_per_ha_uncertainty": [0.30, 0.05, 0.3],
        "ustar_threshold": [0.158, 0.2, 0.16]}, index=pd.Index([2021, 2022, 2023], name="year"))
    lines = _format_annual(annual).splitlines()
    assert "  2021: 8.84 ± 0.30 (1 sigma; u* threshold 0.158 m s-1)" in lines
    assert ("  2022: -0.52 ± 0.05 (a net release; 1 sigma; u* threshold 0.200 m s-1; partial year, 1.0 "
            "months: not an annual total)") in lines
    assert ("  2023: 8.43 ± 0.30 (1 sigma; u* threshold 0.160 m s-1; 96 records unfilled: "
            "not an annual total)") in lines


def test_a_budget_year_of_one_day_is_stated_in_days_not_zero_months():
    """A record from 29 February 2020 with year_start "03-01": budget year 2019 (1 March
    2019 to 29 February 2020, a leap year's 366 days, calendar arithmetic) holds one day,
    48 half-hours: 48 / 17568 x 12 = 0.03 months, which read '0.0 months'; it now says
    '1.0 days' (review round fourteen)."""
    frame, _ = demo.site_year(seed=3, year=2020, years=2)
    frame = frame.loc["2020-02-29":"2021-03-10"]
    with pytest.warns(Warning):
        result = process(frame, demo.site(), Config(year_start="03-01",
                                                    ustar_bootstrap_draws=0))
    text = [w for w in result.warnings if w.startswith("budget year 2019") and "partial" in w]
    assert len(text) == 1 and "(48 of 17568 records, 1.0 days)" in text[0]


def test_intervals_that_leave_out_the_ustar_part_are_warned():
    """With the u* bootstrap off, the u* part of the NEE uncertainty is NaN and left out of
    the total, so the 95 % interval is narrower than the uncertainty (the threshold's
    uncertainty is a recognised part of an annual budget's, Papale et al. 2006 (m)). The
    annual table lists the part in uncertainty_parts_missing; a warning now says so and
    names the setting; a default run, whose parts are all estimated, has no such warning."""
    frame, _ = demo.site_year(seed=3)
    with pytest.warns(Warning):
        off = process(frame, demo.site(), Config(ustar_bootstrap_draws=0))
    row = off.annual.loc[2021]
    assert row["uncertainty_parts_missing"] == "ustar" and np.isnan(row["nee_uncertainty_ustar"])
    text = [w for w in off.warnings if "leave out" in w]
    assert len(text) == 1 and text[0].startswith("2021: the 95 % intervals leave out the ustar")
    assert "ustar_bootstrap_draws = 0" in text[0]
    default = process(frame, demo.site(), Config())
    assert default.annual.loc[2021, "uncertainty_parts_missing"] == ""
    assert not any("leave out" in w for w in default.warnings)


def test_intervals_without_ustar_scenarios_name_the_setting():
    """No u* scenario run leaves the u* threshold's part (a recognised part of an annual
    budget's uncertainty, Papale et al. 2006 (m)) NaN and out of the total: the warning
    names the setting that did it, as it does for a fixed threshold or no bootstrap."""
    frame, _ = demo.site_year(seed=3)
    with pytest.warns(Warning):
        result = process(frame, demo.site(), Config(ustar_scenarios=()))
    assert np.isnan(result.annual.loc[2021, "nee_uncertainty_ustar"])
    text = [w for w in result.warnings if "leave out the ustar" in w]
    assert len(text) == 1 and "ustar_scenarios = []" in text[0]
