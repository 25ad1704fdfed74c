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
