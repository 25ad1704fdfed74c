"""Tests of fluxpart.night_donors: night records just above the u* threshold stay measured
but fill no night gap (``night_donor_margin``, round donormargin51).

The threshold's 1-sigma is checked against the standard normal quantiles of SciPy
(``scipy.stats.norm.ppf``, a general-purpose reference library); the fill against a hand
computation of the donors' mean (Reichstein et al. 2005, appendix A: a gap filled with
the mean of the records of similar conditions in its window). The record is invented.
"""

import numpy as np
import pandas as pd
import pytest
from scipy.stats import norm

from fluxpart import Config, night_donors
from fluxpart.errors import ConfigError
from fluxpart.method_settings import fill_nee


def test_the_threshold_spread_is_one_sigma_from_the_bootstrap_percentiles():
    """Half the 16–84 range over their normal quantiles' span (≈ 1.989, SciPy), and the
    5–95 range over 3.290 where only those are the scenarios' ends; per record."""
    low, high = np.array([0.15, 0.20]), np.array([0.19, 0.26])
    runs = {"central": np.array([0.17, 0.23]), "ustar_p16": low, "ustar_p50": low + 0.01,
            "ustar_p84": high}
    expected = (high - low) / (norm.ppf(0.84) - norm.ppf(0.16))
    np.testing.assert_allclose(night_donors.threshold_spread(runs), expected, rtol=1e-12)
    wide = {"central": low, "ustar_p05": low, "ustar_p95": high}
    np.testing.assert_allclose(night_donors.threshold_spread(wide),
                               (high - low) / (norm.ppf(0.95) - norm.ppf(0.05)), rtol=1e-12)
    # no bootstrap (a fixed threshold, one scenario) or the setting "none": no margin
    assert night_donors.threshold_spread({"central": low, "ustar_p50": low}) is None
    assert night_donors.threshold_spread(runs, "none") is None


def test_withheld_records_are_measured_night_records_within_the_spread():
    """threshold <= u* < threshold + spread, at night, NEE measured: by hand."""
    ustar = np.array([0.10, 0.20, 0.22, 0.25, 0.30, np.nan, 0.22, 0.22])
    is_night = np.array([True, True, True, True, True, True, False, True])
    nee = np.array([np.nan, 2.0, 2.0, 2.0, 2.0, np.nan, -5.0, np.nan])   # u* filter applied
    withheld = night_donors.withheld_donors(nee, ustar, is_night, np.full(8, 0.2),
                                            np.full(8, 0.05))
    assert withheld.tolist() == [False, True, True, False, False, False, False, False]
    assert not night_donors.withheld_donors(nee, ustar, is_night, np.full(8, 0.2), None).any()


def _night_record():
    """Three invented nights of one weather: u* 0.40 (clear of the threshold, NEE 3.0),
    0.21 (within the spread above the threshold 0.20, NEE 1.0: part of the flux lost)
    and 0.10 (below it: rejected, a gap), in turn."""
    index = pd.date_range("2025-07-01", periods=3 * 48, freq="30min")
    ustar = np.resize([0.40, 0.21, 0.10], len(index))
    nee = np.where(ustar > 0.3, 3.0, np.where(ustar > 0.2, 1.0, np.nan))
    conditions = pd.DataFrame({"rg": 0.0, "tair": 12.0, "vpd": 2.0}, index=index)
    return index, ustar, nee, conditions, np.ones(len(index), dtype=bool)


def test_a_donor_within_the_margin_is_withheld_from_the_fill():
    """The gaps take the mean of the clear records alone (3.0), where with every kept
    record as donor they take the counts' weighted mean, (3.0·48 + 1.0·48) / 96 = 2.0;
    the withheld records keep their own NEE, labelled measured (method and quality 0)."""
    index, ustar, nee, conditions, is_night = _night_record()
    config = Config(gapfill_estimate="donor_mean", gapfill_night_light="off")
    threshold = np.full(len(index), 0.20)
    withheld = night_donors.withheld_donors(nee, ustar, is_night, threshold,
                                            np.full(len(index), 0.03))
    assert withheld.sum() == 48 and (ustar[withheld] == 0.21).all()
    missing = np.isnan(nee)
    filled = fill_nee(night_donors.donor_values(nee, withheld), conditions, index, is_night,
                      config, gaps=missing)
    filled = night_donors.as_measured(filled, nee, withheld)
    np.testing.assert_allclose(filled["value"].to_numpy()[missing], 3.0, rtol=1e-12)
    every_donor = fill_nee(nee, conditions, index, is_night, config)
    np.testing.assert_allclose(every_donor["value"].to_numpy()[missing], 2.0, rtol=1e-12)
    # the withheld records are measurements, as the fill labels one
    for column in ("method", "quality", "window_days", "count", "std"):
        pd.testing.assert_series_equal(filled[column][~missing], every_donor[column][~missing])
    np.testing.assert_array_equal(filled["value"].to_numpy()[~missing], nee[~missing])


def test_none_withholds_nothing_and_leaves_the_fill_as_it_was():
    """``"none"`` (0.33.0's rule): no margin, nothing withheld, the fill's table itself;
    a fill of the missing records named is the fill of every missing record, bit for bit."""
    index, ustar, nee, conditions, is_night = _night_record()
    config = Config(night_donor_margin="none")
    margin = night_donors.threshold_spread(
        {"central": np.full(len(index), 0.2), "ustar_p16": np.full(len(index), 0.18),
         "ustar_p84": np.full(len(index), 0.24)}, config.night_donor_margin)
    withheld = night_donors.withheld_donors(nee, ustar, is_night, np.full(len(index), 0.2),
                                            margin)
    assert margin is None and not withheld.any()
    plain = fill_nee(nee, conditions, index, is_night, config)
    named = fill_nee(night_donors.donor_values(nee, withheld), conditions, index, is_night,
                     config, gaps=np.isnan(nee))
    assert night_donors.as_measured(named, nee, withheld) is named
    pd.testing.assert_frame_equal(named, plain, check_exact=True)


@pytest.mark.parametrize("value", ["wide", "Threshold_spread", 1.0])
def test_a_bad_setting_names_it(value):
    with pytest.raises(ConfigError, match=r"\[processing\] night_donor_margin = .*"
                                          r"\"threshold_spread\" or \"none\""):
        Config(night_donor_margin=value)


def test_the_run_labels_withheld_records_measured(demo_draws20_run):
    """In a run with the default margin, the night records kept just above the threshold
    are measured in the time series: their own NEE, fill quality "measured", and the
    measured counts of the fill and of the rejection reasons agree."""
    series = demo_draws20_run.timeseries
    measured = series["nee_measured"].notna().to_numpy()
    near = (series["is_night"].to_numpy() & measured
            & (series["ustar"] >= series["ustar_threshold"]).to_numpy()
            & (series["ustar"] < series["ustar_threshold"] + 0.005).to_numpy())
    assert near.sum() > 50
    quality = series["nee_fill_quality"].astype(str).to_numpy()
    assert (quality[near] == "measured").all()
    assert (quality == "measured").sum() == measured.sum() == (
        series["rejection_reason"].astype(str) == "kept").sum()
    np.testing.assert_array_equal(series["nee_filled"].to_numpy()[measured],
                                  series["nee_measured"].to_numpy()[measured])
