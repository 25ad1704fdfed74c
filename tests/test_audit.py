"""The audit trail: records per stage and year add up to the records present."""

import numpy as np
import pandas as pd
import pytest

from fluxpart import demo
from fluxpart.audit import AUDIT_COLUMNS, audit_trail
from fluxpart.config import Config
from fluxpart.errors import ImplausibleValueError, MissingColumnError
from fluxpart.pipeline import process
from fluxpart.screening import REASON_CODES

_REJECTED = [f"rejected_{name}" for code, name in REASON_CODES.items() if code != 0]
_FILL = ["nee_measured", "nee_filled_a", "nee_filled_b", "nee_filled_c", "nee_unfilled"]


@pytest.fixture(scope="module")
def two_year_result():
    """Two demo years (a leap year first) processed with the u* bootstrap off, for speed."""
    frame, _ = demo.site_year(seed=4, year=2024, years=2)
    return process(frame, demo.site(), Config(ustar_bootstrap_draws=0))


def test_counts_add_up_to_the_records(two_year_result):
    """Kept + rejected = present = measured + filled + unfilled, per year (a leap year too)."""
    trail = audit_trail(two_year_result.timeseries)
    assert list(trail.index) == [2024, 2025]
    # Gregorian calendar (common practice): 366 x 48 and 365 x 48 half-hours.
    assert list(trail["records_present"]) == [17568, 17520]
    np.testing.assert_array_equal(trail["screening_kept"] + trail[_REJECTED].sum(axis=1),
                                  trail["records_present"])
    np.testing.assert_array_equal(trail[_FILL].sum(axis=1), trail["records_present"])
    np.testing.assert_array_equal(trail["screening_kept"], trail["nee_measured"])
    assert trail["records_present"].sum() == len(two_year_result.timeseries)
    np.testing.assert_allclose(trail["abs_nee_share_measured"] + trail["abs_nee_share_filled"], 1.0)


def test_audit_agrees_with_the_pipeline_counts(two_year_result):
    """Summed over the years, the reasons equal the pipeline's screening counts."""
    trail = audit_trail(two_year_result.timeseries)
    counts = two_year_result.screening_counts
    assert trail["screening_kept"].sum() == counts["kept"]
    for code, name in REASON_CODES.items():
        if code:
            assert trail[f"rejected_{name}"].sum() == counts[name], name


def test_filled_share_matches_the_budget(two_year_result):
    """The |NEE| share from filled records equals the budget's nee_share_from_filled."""
    trail = audit_trail(two_year_result.timeseries)
    annual = two_year_result.annual
    np.testing.assert_allclose(trail["abs_nee_share_filled"],
                               annual.loc[trail.index, "nee_share_from_filled"], rtol=1e-12)


def test_hand_counted_example():
    """Six hourly records over New Year: every stage counted by hand."""
    index = pd.date_range("2021-12-31 21:00", periods=6, freq="60min")
    timeseries = pd.DataFrame({"rejection_reason": np.array([0, 1, 5, 0, 4, 1], dtype=np.int8),
                               "nee_fill_quality": np.array([0, 1, 3, 0, 2, -1], dtype=np.int8),
                               "nee_filled": [2.0, -1.0, 3.0, -4.0, 1.0, np.nan]}, index=index)
    trail = audit_trail(timeseries)
    first, second = trail.loc[2021], trail.loc[2022]
    assert first["records_present"] == 3 and second["records_present"] == 3
    assert first["rejected_missing"] == 1 and first["rejected_low_ustar"] == 1
    assert second["rejected_spike"] == 1 and second["nee_unfilled"] == 1
    # 1 µmol m-2 s-1 over an hour = 3600 x 12.011e-6 g C m-2 (IUPAC atomic weight of carbon).
    per_hour = 3600 * 12.011e-6
    assert first["abs_nee_measured"] == pytest.approx(2.0 * per_hour)
    assert first["abs_nee_filled"] == pytest.approx(4.0 * per_hour)
    assert second["abs_nee_share_filled"] == pytest.approx(1.0 / 5.0)
    assert set(trail.columns) <= set(AUDIT_COLUMNS)


def test_bad_codes_and_missing_columns_are_named():
    """An unknown reason code names the row; a missing column is named."""
    index = pd.date_range("2021-01-01", periods=3, freq="30min")
    bad = pd.DataFrame({"rejection_reason": [0, 9, 0], "nee_fill_quality": [0, 0, 0],
                        "nee_filled": [1.0, 1.0, 1.0]}, index=index)
    with pytest.raises(ImplausibleValueError, match="rejection_reason.*row 1"):
        audit_trail(bad)
    with pytest.raises(MissingColumnError, match="nee_fill_quality"):
        audit_trail(bad.drop(columns="nee_fill_quality"))
