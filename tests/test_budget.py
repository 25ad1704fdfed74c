"""Tests of fluxpart.budget: unit conversion and daily/monthly/annual sums with coverage.

Outside values: the IUPAC standard atomic weight of carbon, the length of a day,
and the Gregorian calendar (reference/budget.toml).
"""

import numpy as np
import pandas as pd
import pytest
from conftest import load_reference

from fluxpart.budget import (
    GRAMS_CARBON_PER_UMOL,
    Budgets,
    aggregate,
    default_flux_names,
    flux_to_carbon,
)
from fluxpart.errors import (
    FluxpartError,
    ImplausibleValueError,
    InsufficientDataError,
    MissingColumnError,
    SpacingError,
)

REF = load_reference("budget")
RTOL = REF["conversion"]["relative_tolerance"]


def _timeseries(start, end, freq="30min", nee=1.0, quality=0, **extra):
    index = pd.date_range(start, end, freq=freq)
    frame = pd.DataFrame({"nee_filled": np.broadcast_to(np.asarray(nee, float), index.shape)
                          .copy(),
                          "gpp_nighttime": 5.0, "reco_nighttime": 4.0}, index=index)
    for name, value in extra.items():
        frame[name] = value
    frame["nee_fill_quality"] = np.broadcast_to(np.asarray(quality), index.shape).astype("int8")
    return frame


# --------------------------------------------------------------------------- #
# Unit conversion
# --------------------------------------------------------------------------- #
def test_grams_carbon_per_umol_is_iupac_weight():
    """1 µmol C = 12.011e-6 g C (IUPAC standard atomic weight of carbon)."""
    assert GRAMS_CARBON_PER_UMOL == pytest.approx(REF["carbon"]["molar_mass_g_per_mol"] * 1e-6,
                                                  rel=RTOL)


def test_one_umol_over_half_hour():
    """1 µmol m-2 s-1 over 30 min = 1800 × 12.011e-6 g C m-2 (reference/budget.toml)."""
    assert flux_to_carbon(np.array([1.0]), 30)[0] == pytest.approx(
        REF["conversion"]["one_umol_per_half_hour"], rel=RTOL)


def test_one_umol_sustained_for_a_day_and_a_year():
    """1 µmol m-2 s-1 for a day = 1.0378 g C m-2; for a 365-day year ≈ 378.8 g C m-2."""
    daily = aggregate(_timeseries("2023-03-01", "2023-03-01 23:30"), 30).daily
    assert daily["nee"].iloc[0] == pytest.approx(REF["conversion"]["one_umol_per_day"], rel=RTOL)
    annual = aggregate(_timeseries("2023-01-01", "2023-12-31 23:30"), 30).annual
    assert annual.loc[2023, "nee"] == pytest.approx(
        REF["conversion"]["one_umol_per_common_year"], rel=RTOL)
    assert annual.loc[2023, "nee"] == pytest.approx(378.8, abs=0.05)


def test_flux_to_carbon_keeps_series_index_and_nan():
    """A Series stays a Series with its index; NaN stays NaN."""
    values = pd.Series([1.0, np.nan], index=pd.date_range("2021-01-01", periods=2, freq="h"))
    out = flux_to_carbon(values, 60)
    assert out.index.equals(values.index)
    assert out.iloc[0] == pytest.approx(3600 * 12.011e-6) and np.isnan(out.iloc[1])


@pytest.mark.parametrize("interval", [0, -30, 7, 29.5, True])
def test_flux_to_carbon_bad_interval(interval):
    """An interval that is not a whole divisor of a day is a SpacingError."""
    with pytest.raises(SpacingError, match="interval_minutes"):
        flux_to_carbon([1.0], interval)


# --------------------------------------------------------------------------- #
# Periods and calendar
# --------------------------------------------------------------------------- #
def test_hourly_and_half_hourly_sums_agree(rng):
    """Hourly means of half-hourly fluxes give the same daily, monthly and annual sums."""
    half = _timeseries("2022-01-01", "2022-12-31 23:30",
                       nee=rng.normal(-1.0, 5.0, 17520))
    hourly = half.resample("60min").mean()
    hourly["nee_fill_quality"] = 0
    b30, b60 = aggregate(half, 30), aggregate(hourly, 60)
    for period in ("daily", "monthly", "annual"):
        left, right = getattr(b30, period), getattr(b60, period)
        for column in ("nee", "gpp_nighttime", "reco_nighttime"):
            np.testing.assert_allclose(left[column], right[column], rtol=1e-12, atol=1e-12)
        assert right["complete"].all()
    assert b60.annual.loc[2022, "records_expected"] == 8760


def test_leap_year_expected_records():
    """A leap year holds 366 × 48 = 17,568 half-hours; February 1392 (Gregorian calendar)."""
    calendar = REF["calendar"]
    budgets = aggregate(_timeseries("2024-01-01", "2024-12-31 23:30"), 30)
    assert budgets.annual.loc[2024, "records_expected"] == calendar["records_leap_year_30min"]
    assert budgets.annual.loc[2024, "records"] == calendar["records_leap_year_30min"]
    assert bool(budgets.annual.loc[2024, "complete"])
    february = budgets.monthly.loc[pd.Timestamp("2024-02-01")]
    assert february["records_expected"] == calendar["records_february_leap_30min"]
    assert (budgets.daily["records_expected"] == calendar["records_day_30min"]).all()
    hourly = aggregate(_timeseries("2024-01-01", "2024-12-31 23:00", freq="60min"), 60)
    assert hourly.annual.loc[2024, "records_expected"] == calendar["records_leap_year_60min"]


def test_common_year_and_century_rule():
    """Expected records follow the Gregorian rule: 2023 and 2100 common, 2000 leap."""
    calendar = REF["calendar"]
    for year, expected in [(2023, calendar["records_common_year_30min"]),
                           (2000, calendar["records_leap_year_30min"]),
                           (2100, calendar["records_common_year_30min"])]:
        frame = _timeseries(f"{year}-02-27", f"{year}-03-01 23:30")
        budgets = aggregate(frame, 30)
        assert budgets.annual.loc[year, "records_expected"] == expected
        february = budgets.monthly.loc[pd.Timestamp(f"{year}-02-01"), "records_expected"]
        assert february == (calendar["records_february_leap_30min"] if year == 2000
                            else calendar["records_february_common_30min"])


def test_partial_year_flagged_not_scaled():
    """A partial year reports its own records and sum, flagged incomplete, never scaled up."""
    budgets = aggregate(_timeseries("2023-07-01", "2024-03-31 23:30"), 30)
    annual = budgets.annual
    assert list(annual.index) == [2023, 2024]
    assert annual.index.name == "year" and annual.index.dtype == "int64"
    days_2023 = 184  # 1 July to 31 December
    assert annual.loc[2023, "records"] == days_2023 * 48
    assert annual.loc[2023, "records_expected"] == 17520
    assert not annual.loc[2023, "complete"]
    assert annual.loc[2023, "nee"] == pytest.approx(
        days_2023 * REF["conversion"]["one_umol_per_day"], rel=RTOL)


def test_index_names_and_types():
    """Daily by date, monthly by month start, annual by int year."""
    budgets = aggregate(_timeseries("2021-01-30", "2021-02-02 23:30"), 30)
    assert isinstance(budgets, Budgets)
    assert isinstance(budgets.daily.index, pd.DatetimeIndex)
    assert budgets.daily.index.name == "date"
    assert list(budgets.daily.index) == list(pd.date_range("2021-01-30", "2021-02-02"))
    assert budgets.monthly.index.name == "month"
    assert list(budgets.monthly.index) == [pd.Timestamp("2021-01-01"), pd.Timestamp("2021-02-01")]
    assert list(budgets.annual.index) == [2021]
    assert budgets.units["nee"] == "g C m-2" and budgets.units["share_measured"] == "1"


def test_missing_rows_make_period_incomplete_and_gap_days_appear():
    """Absent rows: records < expected; a day with no row at all is listed with NaN sums."""
    frame = _timeseries("2021-05-01", "2021-05-04 23:30")
    frame = frame.drop(frame.index[(frame.index >= "2021-05-02") & (frame.index < "2021-05-03")])
    frame = frame.drop(frame.index[:3])
    daily = aggregate(frame, 30).daily
    assert list(daily["records"]) == [45, 0, 48, 48]
    assert list(daily["complete"]) == [False, False, True, True]
    assert np.isnan(daily.loc["2021-05-02", "nee"])
    assert daily.loc["2021-05-01", "nee"] == pytest.approx(45 * 1800 * 12.011e-6)


# --------------------------------------------------------------------------- #
# Coverage and NaN
# --------------------------------------------------------------------------- #
def test_coverage_shares_sum_to_one(rng):
    """Measured, filled A/B/C and unfilled shares sum to 1 in every period."""
    n = 17520
    quality = rng.choice([-1, 0, 1, 2, 3], size=n, p=[0.01, 0.5, 0.3, 0.15, 0.04])
    nee = np.where(quality == -1, np.nan, rng.normal(0.0, 4.0, n))
    budgets = aggregate(_timeseries("2023-01-01", "2023-12-31 23:30", nee=nee,
                                    quality=quality), 30)
    shares = ["share_measured", "share_filled_a", "share_filled_b", "share_filled_c",
              "share_unfilled"]
    for period in ("daily", "monthly", "annual"):
        table = getattr(budgets, period)
        np.testing.assert_allclose(table[shares].sum(axis=1), 1.0, rtol=1e-12)
    annual = budgets.annual.loc[2023]
    assert annual["share_measured"] == pytest.approx(np.mean(quality == 0))
    assert annual["records_unfilled"] == np.sum(quality == -1)


def test_unfilled_nee_gives_nan_sum_not_zero():
    """One unfilled NEE record makes that day's, month's and year's NEE sum NaN."""
    frame = _timeseries("2023-01-01", "2023-12-31 23:30")
    row = frame.index.get_loc(pd.Timestamp("2023-06-15 03:00"))
    frame.iloc[row, frame.columns.get_loc("nee_filled")] = np.nan
    frame.iloc[row, frame.columns.get_loc("nee_fill_quality")] = -1
    budgets = aggregate(frame, 30)
    assert np.isnan(budgets.daily.loc["2023-06-15", "nee"])
    assert np.isfinite(budgets.daily.loc["2023-06-14", "nee"])
    assert np.isnan(budgets.monthly.loc[pd.Timestamp("2023-06-01"), "nee"])
    assert np.isfinite(budgets.monthly.loc[pd.Timestamp("2023-05-01"), "nee"])
    annual = budgets.annual.loc[2023]
    assert np.isnan(annual["nee"])
    assert annual["records_unfilled"] == 1 and not annual["complete"]
    assert annual["records"] == annual["records_expected"]
    assert annual["gpp_nighttime"] == pytest.approx(17520 * 5.0 * 1800 * 12.011e-6)


def test_unfilled_flag_with_value_still_nan():
    """Quality -1 marks NEE unfilled even if a number is present: the NEE sum is NaN."""
    frame = _timeseries("2023-01-01", "2023-01-01 23:30")
    frame.iloc[5, frame.columns.get_loc("nee_fill_quality")] = -1
    daily = aggregate(frame, 30).daily
    assert np.isnan(daily["nee"].iloc[0])
    assert daily["records_unfilled"].iloc[0] == 1


def test_nan_in_partitioned_flux_propagates():
    """A NaN in GPP makes that period's GPP sum NaN; NEE stays finite."""
    frame = _timeseries("2023-01-01", "2023-01-02 23:30")
    frame.iloc[60, frame.columns.get_loc("gpp_nighttime")] = np.nan
    daily = aggregate(frame, 30).daily
    assert np.isfinite(daily["gpp_nighttime"].iloc[0]) and np.isnan(daily["gpp_nighttime"].iloc[1])
    assert np.isfinite(daily["nee"]).all()


def test_nee_share_from_filled_uses_absolute_values():
    """Share of Σ|NEE| from filled records: here |−3| + |1| of 3 + 1 + 4 filled = 4/8."""
    frame = _timeseries("2023-01-01", "2023-01-01 01:30", nee=[4.0, -3.0, 1.0, 0.0],
                        quality=[0, 1, 3, 0])
    daily = aggregate(frame, 30).daily
    assert daily["nee_share_from_filled"].iloc[0] == pytest.approx(0.5)
    assert daily["nee"].iloc[0] == pytest.approx(2.0 * 1800 * 12.011e-6)


# --------------------------------------------------------------------------- #
# Flux selection and bad input
# --------------------------------------------------------------------------- #
def test_default_fluxes_pick_up_daytime_columns():
    """nee_filled→nee plus every gpp_*/reco_* column present (e.g. the daytime method)."""
    frame = _timeseries("2023-01-01", "2023-01-01 23:30", gpp_daytime=6.0, reco_daytime=5.0)
    assert default_flux_names(frame.columns) == {
        "nee_filled": "nee", "gpp_nighttime": "gpp_nighttime",
        "reco_nighttime": "reco_nighttime", "gpp_daytime": "gpp_daytime",
        "reco_daytime": "reco_daytime"}
    daily = aggregate(frame, 30).daily
    assert daily["gpp_daytime"].iloc[0] == pytest.approx(6.0 * REF["conversion"]["one_umol_per_day"])
    assert list(daily.columns[:5]) == ["nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime",
                                       "reco_daytime"]


def test_explicit_mapping_and_sequence():
    """A mapping renames outputs; a sequence keeps names except nee_filled→nee."""
    frame = _timeseries("2023-01-01", "2023-01-01 23:30")
    mapped = aggregate(frame, 30, fluxes={"nee_filled": "nee", "reco_nighttime": "reco"}).daily
    assert "reco" in mapped.columns and "gpp_nighttime" not in mapped.columns
    listed = aggregate(frame, 30, fluxes=["nee_filled"]).daily
    assert listed.columns[0] == "nee" and "reco_nighttime" not in listed.columns


def test_missing_column_named():
    """An absent flux or quality column is a MissingColumnError naming it."""
    frame = _timeseries("2023-01-01", "2023-01-01 23:30").drop(columns="nee_fill_quality")
    with pytest.raises(MissingColumnError, match="'nee_fill_quality'"):
        aggregate(frame, 30)
    with pytest.raises(MissingColumnError, match="'gpp_daytime'"):
        aggregate(_timeseries("2023-01-01", "2023-01-01 23:30"), 30,
                  fluxes=["nee_filled", "gpp_daytime"])


def test_bad_quality_code_named():
    """A quality code outside -1..3 is an ImplausibleValueError naming the row."""
    frame = _timeseries("2023-01-01", "2023-01-01 23:30")
    frame.iloc[9, frame.columns.get_loc("nee_fill_quality")] = 7
    with pytest.raises(ImplausibleValueError, match="row 9"):
        aggregate(frame, 30)


def test_spacing_mismatch_named():
    """Hourly data declared as 30-minute is fine (gaps); 30-minute declared as hourly is not."""
    frame = _timeseries("2023-01-01", "2023-01-01 23:30")
    with pytest.raises(SpacingError, match="row 1"):
        aggregate(frame, 60)
    hourly = _timeseries("2023-01-01", "2023-01-01 23:00", freq="60min")
    daily = aggregate(hourly, 30).daily
    assert daily["records"].iloc[0] == 24 and daily["records_expected"].iloc[0] == 48
    assert not daily["complete"].iloc[0]


def test_empty_and_bad_index():
    """An empty frame or a non-datetime index is a clear error."""
    frame = _timeseries("2023-01-01", "2023-01-01 23:30")
    with pytest.raises(InsufficientDataError):
        aggregate(frame.iloc[:0], 30)
    with pytest.raises(FluxpartError, match="DatetimeIndex"):
        aggregate(frame.reset_index(drop=True), 30)


def test_input_not_modified(rng):
    """The timeseries is left unchanged."""
    frame = _timeseries("2023-01-01", "2023-01-03 23:30", nee=rng.normal(0, 3, 144))
    frame.iloc[4, 0] = np.nan
    frame.iloc[4, frame.columns.get_loc("nee_fill_quality")] = -1
    copy = frame.copy()
    aggregate(frame, 30)
    pd.testing.assert_frame_equal(frame, copy)
