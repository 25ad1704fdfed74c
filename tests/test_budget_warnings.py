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
