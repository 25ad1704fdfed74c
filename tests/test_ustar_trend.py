"""The kept nights' u* trend test and the threshold raise (fluxpart.ustar_trend).

References: scipy.stats.kendalltau (SciPy, the reference library for Kendall's tau and
its asymptotic test); Kendall (1975), the null variance of S without ties,
n(n - 1)(2n + 5) / 18; Hirsch et al. (1982), S and its variance summed over strata. The
size check uses the definition of a one-sided 5 % test: without a trend it rejects in
about 5 % of samples. The known-truth recovery uses invented night records.
"""

import numpy as np
import pandas as pd
import pytest
import scipy
from scipy.stats import kendalltau, norm

from fluxpart import ustar_trend
from fluxpart.config import Config, ConfigError


def test_one_stratum_agrees_with_scipy_kendalltau():
    """S and its variance of one stratum: S = tau n(n-1)/2 (no ties) and, without the
    continuity correction, the one-sided p of scipy's asymptotic test (SciPy printed)."""
    rng = np.random.default_rng(3)
    x = np.sort(rng.uniform(1, 2, 18))
    y = 0.4 * x + rng.normal(0, 0.3, x.size)
    means = pd.DataFrame({"stratum": 0, "ratio": x, "nee": y, "upper": x})
    test = ustar_trend.rising_trend(means)
    tau, p_scipy = kendalltau(x, y, alternative="greater", method="asymptotic")
    n = x.size
    assert test.statistic == pytest.approx(tau * n * (n - 1) / 2), scipy.__version__
    variance = n * (n - 1) * (2 * n + 5) / 18
    assert test.z == pytest.approx((test.statistic - 1) / np.sqrt(variance))
    assert 1 - norm.cdf(test.statistic / np.sqrt(variance)) == pytest.approx(
        p_scipy, rel=1e-9), scipy.__version__


def test_strata_sum_their_statistics_and_variances():
    """Hirsch et al. (1982): S and var S of the strata add."""
    rng = np.random.default_rng(5)
    parts, total, variance = [], 0.0, 0.0
    for stratum, n in enumerate((8, 12, 15)):
        x = np.sort(rng.uniform(1, 2, n))
        y = rng.normal(0, 1, n) + x
        parts.append(pd.DataFrame({"stratum": stratum, "ratio": x, "nee": y, "upper": x}))
        tau, _ = kendalltau(x, y)
        total += tau * n * (n - 1) / 2
        variance += n * (n - 1) * (2 * n + 5) / 18
    test = ustar_trend.rising_trend(pd.concat(parts, ignore_index=True))
    assert test.statistic == pytest.approx(total)
    assert test.p_value == pytest.approx(1 - norm.cdf((total - 1) / np.sqrt(variance)))


def _nights(rng, n=6000, plateau=None):
    """Invented kept night records: respiration 2 exp(0.07 T) µmol m-2 s-1 with noise,
    u* over the threshold from 1 to 3; below `plateau` (a ratio) a loss fading linearly
    from 40 % at the threshold to none at the plateau."""
    tair = rng.uniform(0, 25, n)
    ratio = 1 + rng.gamma(2.0, 0.35, n)
    nee = 2 * np.exp(0.07 * tair) + rng.normal(0, 1.0, n)
    if plateau is not None:
        share = np.clip((plateau - ratio) / (plateau - 1), 0, 1)
        nee = nee * (1 - 0.4 * share)
    return ratio, nee, tair


def test_no_trend_is_kept_at_about_the_test_level():
    """Without a trend the one-sided 5 % test rejects about 5 % of the time (its size):
    over 100 independent years, at most 12 raised (binomial(100, 0.05) exceeds 12 with
    chance 0.002)."""
    rng = np.random.default_rng(11)
    raised = sum(ustar_trend.raise_factor(*_nights(rng, 2500), 6, 20).factor > 1
                 for _ in range(100))
    assert raised <= 12


def test_a_gradual_loss_is_passed_by_the_raise():
    """Known truth: loss fading to none at 1.4 times the threshold. The raise goes past
    most of it (factor 1.2-1.6) and the kept records above the raised threshold lose
    on average under 3 % (40 % at the detected threshold)."""
    rng = np.random.default_rng(7)
    ratio, nee, tair = _nights(rng, plateau=1.4)
    found = ustar_trend.raise_factor(ratio, nee, tair, 6, 20)
    assert found.first_p < 0.001
    assert 1.2 <= found.factor <= 1.6
    kept = ratio >= found.factor
    loss = 0.4 * np.clip((1.4 - ratio[kept]) / 0.4, 0, 1)
    assert loss.mean() < 0.03


def test_yearly_factors_and_raised_tables():
    """Each year tested on its own; a raised year's thresholds (central, scenarios, the
    table's year and season rows) all scaled, the detector's value kept."""
    rng = np.random.default_rng(2)
    index = pd.date_range("2021-01-01", periods=2 * 17520, freq="30min")
    n = index.size
    ratio, nee, tair = _nights(rng, n)
    lossy = index.year == 2022
    nee = np.where(lossy, nee * (1 - 0.4 * np.clip((1.5 - ratio) / 0.5, 0, 1)), nee)
    central = pd.Series([0.2, 0.2], index=pd.Index([2021, 2022], name="year"))
    factors = ustar_trend.yearly_factors(index, nee, ratio * 0.2, tair,
                                         np.ones(n, dtype=bool), central, 6, 20)
    assert factors[2022].factor > 1.2
    table = pd.DataFrame({"year": [2021, 2022, 2022], "period": ["year", "year", "winter"],
                          "threshold_detected": [0.2, 0.2, 0.25], "threshold": [0.2, 0.2, 0.25],
                          "threshold_p84": [0.22, 0.22, 0.27], "reason": ["", "", ""]})
    scenarios = {"ustar_p84": central * 1.1}
    new_table, new_central, new_scenarios = ustar_trend.raised(table, central, scenarios,
                                                               factors)
    f = factors[2022].factor
    assert new_central[2022] == pytest.approx(0.2 * f)
    assert new_scenarios["ustar_p84"][2022] == pytest.approx(0.22 * f)
    assert new_table["threshold"].iloc[2] == pytest.approx(0.25 * f)
    assert new_table["threshold_detected"].tolist() == [0.2, 0.2, 0.25]
    assert "raised" in new_table["reason"].iloc[1]
    assert (new_central[2021] == 0.2) == (factors[2021].factor == 1)
    # a year tested and not raised keeps a trail of the test (review67: with the option
    # on and nothing raised the table said nothing), and a year that could not be tested
    # says so rather than "not raised"
    held = ustar_trend.Raise(1.0, 0, 0.4321, 0.4321)
    untested = ustar_trend.Raise(1.0, 0, 1.0, 1.0)
    kept_table, kept_central, _ = ustar_trend.raised(table, central, scenarios,
                                                     {2021: held, 2022: untested})
    assert kept_table["reason"].iloc[0] == ("kept nights tested: night NEE did not rise "
                                            "with u* above the threshold (one-sided p = "
                                            "0.432); not raised")
    assert kept_table["reason"].iloc[1].startswith("kept nights not tested")
    assert kept_table["reason"].iloc[2] == ""               # a season's row: no test of its own
    assert kept_table["threshold"].tolist() == table["threshold"].tolist()
    assert kept_central.equals(central)


def test_bad_setting_is_named():
    with pytest.raises(ConfigError, match="ustar_kept_trend"):
        Config(ustar_kept_trend="up")
    assert Config().ustar_kept_trend == "off"
