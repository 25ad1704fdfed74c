"""Tests of the budget-year warnings (fluxpart.budget_warnings)."""
from statistics import NormalDist

import pandas as pd
import pytest

from fluxpart.budget_warnings import _uncertainty_parts_missing
from fluxpart.config import Config
from fluxpart.uncertainty import ustar_sigma


@pytest.mark.parametrize(("settings", "named"), [
    ({"ustar_scenarios": (50,)}, "ustar_scenarios = [50]"),
    ({"ustar_scenarios": ()}, "ustar_scenarios = []"),
    ({"ustar_bootstrap_draws": 0}, "ustar_bootstrap_draws = 0"),
    ({"ustar_method": "fixed"}, 'ustar_method = "fixed"'),
])
def test_a_missing_u_star_part_names_the_setting_that_left_it_out(settings, named):
    """Behaviour check (review22): with ustar_scenarios = [50] the u* part is NaN, since
    the median's standard-normal quantile is 0 (statistics.NormalDist, the standard
    library), the central run's, so the runs span no quantile to scale their spread by;
    the warning said "could not be estimated" without the cause it names for the other
    settings that leave the part out."""
    assert NormalDist().inv_cdf(0.5) == 0.0
    sums = pd.DataFrame({"central": [-241.0], "ustar_p50": [-240.3]})
    assert ustar_sigma(sums, (50,)).isna().all()
    assert ustar_sigma(sums.assign(ustar_p84=[-238.6]), (50, 84)).notna().all()
    row = pd.Series({"uncertainty_parts_missing": "ustar"})
    (text,) = _uncertainty_parts_missing(2021, row, Config(**settings))
    assert text.startswith("2021: the 95 % intervals leave out the ustar part(s)")
    assert named in text


def test_a_part_missing_for_another_reason_names_no_setting():
    row = pd.Series({"uncertainty_parts_missing": "ustar"})
    (text,) = _uncertainty_parts_missing(2021, row, Config())
    assert "could not be estimated:" in text and "ustar_scenarios" not in text
    assert _uncertainty_parts_missing(2021, pd.Series({"uncertainty_parts_missing": ""}),
                                      Config()) == []


def test_unfilled_records_with_events_are_named_as_unfillable_in_the_whole_record():
    """Round mistakes21 named the events and the shortest piece where NEE stayed unfilled
    between events, as each piece was then filled from its own records only. Since
    review23 a gap its own piece cannot fill is filled from the pieces joined around it,
    up to the whole record (fluxpart.gapfill.fill_marginal, ``breaks``), so a record still
    unfilled found no donors in the whole record, events or not, and the warning says so
    without blaming the events."""
    import numpy as np

    from fluxpart.budget_warnings import _unfilled_warning

    index = pd.date_range("2021-07-01", periods=10 * 48, freq="30min")
    nee = np.ones(index.size)
    nee[5 * 48 + 10] = np.nan                       # one unfilled record on 6 July
    timeseries = pd.DataFrame({"nee_filled": nee}, index=index)
    row = pd.Series({"records_unfilled": 1, "records_expected": index.size, "nee": np.nan})
    annual = pd.DataFrame([row])
    in_year = np.ones(index.size, dtype=bool)
    plain = _unfilled_warning(2021, row, annual, timeseries, in_year, Config(), ["nee"])
    assert "events" not in plain and "not even in the whole record" in plain
    for events in (("2021-07-06", "2021-07-07"), ("2021-07-09",)):
        text = _unfilled_warning(2021, row, annual, timeseries, in_year,
                                 Config(events=events), ["nee"])
        assert text == plain


def _year(measured_from=None, measured=True):
    """An invented calendar year of 30-min records, |NEE| 1 everywhere, measured from
    `measured_from` on (or nowhere, or everywhere)."""
    import numpy as np

    index = pd.date_range("2021-01-01", "2021-12-31 23:30", freq="30min")
    quality = np.full(index.size, 0 if measured else 3)
    if measured_from is not None:
        quality[index < pd.Timestamp(measured_from)] = 3
    timeseries = pd.DataFrame({"nee_filled": -1.0, "nee_fill_quality": quality}, index=index)
    row = pd.Series({"complete": True})
    return timeseries, row, np.ones(index.size, dtype=bool)


def test_months_without_measured_nee_are_named_with_their_share_of_the_year():
    """Known truth on an invented year (a tower installed on 1 September): such a year was
    `complete` in the annual table, its 95 % intervals stated, and only the gap-filling
    warning and share_measured told that eight months were invented. The warning names
    the months and their share of the year's |NEE|: January–August 2021 hold 243 of its
    365 days (the standard library's calendar.monthrange), so 67 % of a constant flux."""
    import calendar

    from fluxpart.budget_warnings import _unmeasured_months_warning

    days = sum(calendar.monthrange(2021, month)[1] for month in range(1, 9))
    assert days == 243
    timeseries, row, in_year = _year("2021-09-01")
    (text,) = _unmeasured_months_warning(2021, row, timeseries, in_year)
    assert text.startswith("2021: 8 of its 12 months hold no measured NEE (2021-01 to "
                           f"2021-08), {100 * days / 365:.0f} % of the year's sum of |NEE|")
    assert "model output" in text and "although the year is complete" in text
    assert "no calibrated interval" in text
    # a year measured in every month (one record in March is enough for March) is not named
    timeseries, row, in_year = _year()
    assert _unmeasured_months_warning(2021, row, timeseries, in_year) == []
    timeseries, row, in_year = _year("2021-03-31 23:30")
    timeseries.loc["2021-01-15 12:00", "nee_fill_quality"] = 0
    timeseries.loc["2021-02-15 12:00", "nee_fill_quality"] = 0
    timeseries.loc["2021-03-31 23:30", "nee_fill_quality"] = 0
    assert _unmeasured_months_warning(2021, row, timeseries, in_year) == []
    # months apart are written apart
    timeseries.loc[timeseries.index.month.isin([2, 5, 6]), "nee_fill_quality"] = 3
    (text,) = _unmeasured_months_warning(2021, row, timeseries, in_year)
    assert "3 of its 12 months hold no measured NEE (2021-02, 2021-05 to 2021-06)" in text


def test_a_year_without_any_measured_nee_is_named_as_model_output():
    """Known truth on an invented year with no measured NEE at all (a second year of
    drivers beside a first year of fluxes): said to be model output, not a measured
    budget, and its intervals no calibrated interval for it."""
    from fluxpart.budget_warnings import _unmeasured_months_warning

    timeseries, row, in_year = _year(measured=False)
    (text,) = _unmeasured_months_warning(2022, row, timeseries, in_year)
    assert text.startswith("2022: no measured NEE in any of its records (2021-01 to 2021-12)")
    assert "not a measured budget, although the year is complete" in text
    (text,) = _unmeasured_months_warning(2022, pd.Series({"complete": False}), timeseries,
                                         in_year)
    assert "although the year is complete" not in text


def test_unmeasured_months_follow_the_calendar():
    """fluxpart.measured_months against pandas' own monthly periods (Period.month): the
    months of the records with no measured one, leap day and a budget year from July."""
    import numpy as np

    from fluxpart.measured_months import month_runs_text, unmeasured_months

    index = pd.date_range("2023-07-01", "2024-06-30 23:30", freq="30min")
    measured = np.isin(index.month, [7, 8, 12, 1, 3])
    months = unmeasured_months(index, measured)
    expected = sorted(set(index.to_period("M")) - set(index[measured].to_period("M")))
    assert months == expected
    assert month_runs_text(months) == "2023-09 to 2023-11, 2024-02, 2024-04 to 2024-06"
    assert unmeasured_months(index[:0], measured[:0]) == []
    with pytest.raises(ValueError, match="one per stamp"):
        unmeasured_months(index, measured[:5])


def test_a_few_unmeasured_hours_of_a_month_at_the_records_edge_are_not_named():
    """Known truth on an invented tower installed on 31 March 2021 at 18:00 whose first
    six hours of NEE were rejected (round review31): the warning named March as "a month
    without measured NEE", its sums model output and its intervals no calibrated
    interval, for 12 half-hours (0 % of the year's |NEE|), and so did the report's card.
    Six hours are an outage the intervals' coverage was measured on (outages of up to 21
    days, DEVELOPERS.md); a whole calendar month without a measured record lasts 28 to 31
    days (the standard library's calendar.monthrange) and is always named, and so is an
    edge of a month unmeasured for longer than 21 days."""
    import calendar

    import numpy as np

    from fluxpart import report
    from fluxpart.budget_warnings import _unmeasured_months_warning
    from fluxpart.figures import Written
    from fluxpart.measured_months import CHECKED_OUTAGE_DAYS, unchecked_months

    assert min(calendar.monthrange(year, month)[1] for year in (2021, 2024)
               for month in range(1, 13)) == 28 > CHECKED_OUTAGE_DAYS
    index = pd.date_range("2021-03-31 18:00", "2021-12-31 23:30", freq="30min")
    quality = np.where(index < pd.Timestamp("2021-04-01 00:00"), 3, 0)
    timeseries = pd.DataFrame({"nee_filled": -1.0, "nee_fill_quality": quality}, index=index)
    row, in_year = pd.Series({"complete": False}), np.ones(index.size, dtype=bool)
    assert _unmeasured_months_warning(2021, row, timeseries, in_year) == []
    assert unchecked_months(index, quality == 0) == []
    annual = pd.DataFrame({"nee": [-150.0], "nee_ci95_low": [-300.0], "nee_ci95_high": [0.0],
                           "ustar_threshold": [0.15]}, index=pd.Index([2021], name="year"))
    written = Written(manifest={}, tables={"timeseries": timeseries, "annual": annual,
                                           "ustar": pd.DataFrame()})
    assert "unmeasured_months" not in report._summary_card(written)[0]
    # installed on 7 March, measured from 1 April: 25 days unmeasured, March named
    index = pd.date_range("2021-03-07", "2021-12-31 23:30", freq="30min")
    quality = np.where(index < pd.Timestamp("2021-04-01"), 3, 0)
    timeseries = pd.DataFrame({"nee_filled": -1.0, "nee_fill_quality": quality}, index=index)
    (text,) = _unmeasured_months_warning(2021, row, timeseries,
                                         np.ones(index.size, dtype=bool))
    assert "1 of its 10 months hold no measured NEE (2021-03)" in text
    # a record ending on 20 December: December's 20 unmeasured days not named; an outage
    # from 25 November on (26 days) names December (November holds measured records)
    index = pd.date_range("2021-01-01", "2021-12-20 23:30", freq="30min")
    for start, expected in (("2021-12-01", []), ("2021-11-25", [pd.Period("2021-12", "M")])):
        assert unchecked_months(index, index < pd.Timestamp(start)) == expected
