"""The mixture test's sides (``mixture_test``, an option after release 0.39.0, off).

The nights show a mixture of air and soil temperature where the other temperature's
share is shown above 0 (:func:`fluxpart.driver_mixture.mixture_shown`): by default its
two-sided 95 % interval excludes 0; with ``mixture_test = "one_sided"`` the share exceeds
0 at the one-sided 5 % level. Sources: the standard normal's quantiles from scipy (a
general-purpose reference library); the binomial tail of a test's false alarms
(Lehmann & Romano 2005, Testing Statistical Hypotheses, ch. 3 (m)).
"""
import numpy as np
import pandas as pd
import pytest
from scipy.stats import binom, norm

from fluxpart import driver_mixture, uncertainty
from fluxpart.config import Config
from fluxpart.driver_mixture import (
    SHARE_DRAWS,
    critical_value,
    mixture_share,
    mixture_share_draws,
    mixture_shown,
)
from fluxpart.uncertainty import mixture_day_weight


def _eq11(temperature_celsius, rref, e0=308.56):
    """Lloyd & Taylor (1994) eq. 11, written out independently of fluxpart."""
    kelvin = np.asarray(temperature_celsius, dtype=float) + 273.15
    return rref * np.exp(e0 * (1.0 / (283.15 - 227.13) - 1.0 / (kelvin - 227.13)))


def _two_fits(seed, n):
    """Invented night records: air and a damped, lagged soil temperature, and the Reco
    each alone would give."""
    rng = np.random.default_rng(seed)
    days = np.arange(n) / 20.0
    tair = 12 + 8 * np.sin(2 * np.pi * days / 365) + 4 * np.sin(2 * np.pi * days)
    tsoil = 12 + 6 * np.sin(2 * np.pi * (days - 10) / 365) + 0.8 * np.sin(
        2 * np.pi * (days - 0.2))
    tair = tair + pd.Series(rng.normal(0, 2.5, n)).rolling(20, min_periods=1).mean().to_numpy()
    return rng, _eq11(tair, 3.0), _eq11(tsoil, 3.0)


def _index(n):
    return pd.date_range("2021-01-01", periods=n, freq="72min").to_numpy()


def test_the_critical_values_are_the_normal_quantiles():
    """Two-sided 95 %: the 97.5 % quantile; one-sided 5 %: the 95 % quantile (scipy)."""
    assert critical_value("two_sided") == pytest.approx(norm.ppf(0.975), abs=1e-6)
    assert critical_value("one_sided") == pytest.approx(norm.ppf(0.95), abs=1e-6)
    assert critical_value("two_sided") == driver_mixture.SHOWN_Z
    with pytest.raises(KeyError):
        critical_value("both")


def test_a_share_between_the_two_critical_values_is_shown_one_sided_only():
    """A share of 0.2 whose draws spread 0.11 (1.82 standard errors above 0) passes the
    one-sided test at 5 % (1.645) and not the two-sided interval (1.96); the daytime
    records' weight follows (max(w, 1/2) where shown, None elsewhere)."""
    draws = np.random.default_rng(5).standard_normal(SHARE_DRAWS)
    draws = 0.2 + 0.11 * (draws - draws.mean()) / draws.std()
    assert not mixture_shown(0.2, draws)
    assert not mixture_shown(0.2, draws, critical_value("two_sided"))
    assert mixture_shown(0.2, draws, critical_value("one_sided"))
    assert mixture_day_weight(0.04, 0.2, draws) is None
    assert mixture_day_weight(0.04, 0.2, draws, critical_value("one_sided")) == 0.5
    assert mixture_day_weight(0.7, 0.2, draws, critical_value("one_sided")) == 0.7
    assert not mixture_shown(0.2, [], critical_value("one_sided"))


def test_one_temperature_is_judged_a_mixture_at_about_each_tests_level():
    """Known truth: night NEE = Reco(soil) + Laplace noise (Hollinger & Richardson 2005),
    200 independent noise draws on the same nights. The one-sided test must wrongly show a
    mixture in about 5 % of draws and the two-sided one in about 2.5 %: at most the
    binomial 99.9 % quantile of each (scipy), and the one-sided more often, never less."""
    rng, air, soil = _two_fits(seed=11, n=1000)
    night = np.ones(air.size, bool)
    index = _index(air.size)
    one = two = 0
    for _ in range(200):
        nee = soil + rng.laplace(0, 1.0, air.size)
        share = mixture_share(nee, night, soil, air)
        draws = mixture_share_draws(nee, night, soil, air, index, clip=False)
        one += mixture_shown(share, draws, critical_value("one_sided"))
        two += mixture_shown(share, draws, critical_value("two_sided"))
    assert two <= binom.ppf(0.999, 200, 0.025)
    assert one <= binom.ppf(0.999, 200, 0.05)
    assert one > two


def test_the_setting_is_off_by_default_and_refused_when_misspelt():
    """Default "two_sided" (0.38.0's test, every table of a default run unchanged); the
    uncertainty's own default the same; a misspelt value refused, naming the setting."""
    from fluxpart.errors import ConfigError

    assert Config().mixture_test == "two_sided"
    assert Config(mixture_test="one_sided").mixture_test == "one_sided"
    assert uncertainty.record_inputs.__kwdefaults__["mixture_test"] == "two_sided"
    assert "mixture_test" not in Config().to_dict()
    assert Config(mixture_test="one_sided").to_dict()["mixture_test"] == "one_sided"
    with pytest.raises(ConfigError, match=r'mixture_test = "one" is not allowed'):
        Config(mixture_test="one")


def test_the_share_prior_gives_the_day_records_at_least_the_share():
    """``driver_day_prior = "share"``: the daytime records' weight is at least the night's
    mixture share s, so their part is at least the root mean square error of the central
    fit under a two-point predictive mixture that takes the other temperature's fit with
    probability s (Yao et al. 2018, Bayesian Analysis 13, 917–1007 (m)), written out here
    from the two outcomes; where a mixture is shown, 1/2 stands if larger."""
    from fluxpart.driver_mixture import share_day_weight

    assert share_day_weight(0.04, 0.2) == 0.2
    assert share_day_weight(0.5, 0.2) == 0.5
    assert share_day_weight(0.0, 0.0) == 0.0
    day_difference = 40.0                    # Σ_day (Reco other − Reco central) [g C m-2]
    outcomes = np.array([0.0, day_difference])
    probabilities = np.array([0.8, 0.2])
    rms = np.sqrt(probabilities @ outcomes ** 2)
    assert np.sqrt(share_day_weight(0.0, 0.2)) * day_difference == pytest.approx(rms)
    draws = np.random.default_rng(5).standard_normal(SHARE_DRAWS)
    shown = 0.2 + 0.05 * (draws - draws.mean()) / draws.std()
    unshown = 0.2 + 0.15 * (draws - draws.mean()) / draws.std()
    assert share_day_weight(mixture_day_weight(0.04, 0.2, shown), 0.2) == 0.5
    assert mixture_day_weight(0.04, 0.2, unshown) is None
    assert Config(driver_day_prior="share").driver_day_prior == "share"


def test_the_daytime_temperature_test_takes_the_setting():
    """``daytime_temperature = "mixture"`` asks :func:`fluxpart.daytime_temperature.
    night_shown` with the ``mixture_test`` setting: invented nights with 5 % of the Reco on
    air temperature and Laplace noise (a draw whose share lies 1.90 sd above 0) show a
    mixture to the one-sided test at 5 % (1.645) and not to the two-sided interval (1.96;
    the normal quantiles as above)."""
    from fluxpart.daytime_temperature import night_shown

    rng, air, soil = _two_fits(seed=37, n=1000)
    nee = 0.95 * soil + 0.05 * air + rng.laplace(0, 1.0, air.size)
    night = np.ones(air.size, bool)
    index = _index(air.size)
    share = mixture_share(nee, night, soil, air)
    spread = np.std(mixture_share_draws(nee, night, soil, air, index, clip=False))
    assert norm.ppf(0.95) < share / spread < norm.ppf(0.975)
    assert not night_shown(nee, night, soil, air, index)
    assert not night_shown(nee, night, soil, air, index, "two_sided")
    assert night_shown(nee, night, soil, air, index, "one_sided")
