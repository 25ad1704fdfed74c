"""Daytime vs nighttime agreement diagnostics."""

import numpy as np
import pandas as pd

from fluxpart.agreement import disagreements, method_agreement


def _annual(gpp_day, gpp_night, reco_day, reco_night):
    return pd.DataFrame({"gpp_daytime": gpp_day, "gpp_nighttime": gpp_night,
                         "reco_daytime": reco_day, "reco_nighttime": reco_night},
                        index=pd.Index([2020, 2021], name="year"))


def test_differences_and_flags():
    """Differences are daytime - nighttime; relative to the mean of both; flagged beyond the margin."""
    table = method_agreement(_annual([1100.0, 1300.0], [1000.0, 1000.0],
                                     [900.0, 800.0], [900.0, 800.0]), margin=0.15)
    np.testing.assert_allclose(table["gpp_method_difference"], [100.0, 300.0])
    np.testing.assert_allclose(table["gpp_relative_difference"], [100 / 1050, 300 / 1150])
    np.testing.assert_allclose(table["reco_relative_difference"], [0.0, 0.0])
    assert table["methods_agree"].tolist() == [True, False]
    messages = disagreements(table, 0.15)
    assert len(messages) == 1 and messages[0].startswith("2021") and "+300" in messages[0]
    # the fluxes named as everywhere else (the message said "RECO"; review46)
    assert "GPP daytime - nighttime = +300 g C m-2 (+26 %)" in messages[0]
    assert "Reco daytime - nighttime = +0 g C m-2 (+0 %)" in messages[0]
    assert "RECO" not in messages[0]


def test_undefined_difference_does_not_count_as_agreement():
    """A NaN sum (e.g. unfilled NEE) never counts as agreement."""
    table = method_agreement(_annual([np.nan, 1.0], [1.0, 1.0], [1.0, 1.0], [1.0, 1.0]))
    assert table["methods_agree"].tolist() == [False, True]


def test_a_year_without_sums_gives_no_disagreement_warning():
    """A budget year whose sums are all NaN (no data) is not compared, so no 'disagree by
    +nan%' warning (fresh-eyes campaign: an empty year between two input files)."""
    annual = pd.DataFrame({"gpp_daytime": [np.nan, 1200.0], "gpp_nighttime": [np.nan, 900.0],
                           "reco_daytime": [np.nan, 1000.0], "reco_nighttime": [np.nan, 700.0]},
                          index=pd.Index([2020, 2021], name="year"))
    messages = disagreements(method_agreement(annual, 0.15), 0.15)
    assert len(messages) == 1 and messages[0].startswith("2021") and "nan" not in messages[0]


def test_a_flux_one_method_left_unsummed_is_reported_as_not_compared():
    """A year where one method has no GPP sum and Reco agrees is 'not compared', not
    'disagree by +nan%' (seen in a run with no night data and a fixed E0)."""
    annual = pd.DataFrame({"gpp_daytime": [np.nan], "gpp_nighttime": [900.0],
                           "reco_daytime": [1000.0], "reco_nighttime": [1010.0]},
                          index=pd.Index([2021], name="year"))
    messages = disagreements(method_agreement(annual, 0.15), 0.15)
    assert messages == ["2021: the daytime and nighttime partitionings could not be compared "
                        "for GPP: a method gave no annual sum"]


def test_a_stub_year_is_not_compared():
    """Ten records of the next year (a file that ends a few hours into it) give sums whose
    relative difference is noise; only a year with a month of records is compared."""
    annual = method_agreement(pd.DataFrame(
        {"gpp_daytime": [1300.0, 0.1, 150.0], "gpp_nighttime": [1000.0, -0.04, 100.0],
         "reco_daytime": [900.0, 0.1, 80.0], "reco_nighttime": [900.0, 0.2, 80.0],
         "records": [17520, 10, 2000], "records_expected": [17520, 17520, 17568]},
        index=pd.Index([2021, 2022, 2024], name="year")), 0.15)
    messages = disagreements(annual, 0.15)
    assert [m[:4] for m in messages] == ["2021", "2024"]      # 2000 records: 41 days
