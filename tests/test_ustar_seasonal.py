"""Seasons whose u* threshold clearly differs from the year's (fluxpart.ustar_seasonal).

Thresholds per season are those of Papale et al. (2006) (m); the rule for "clearly
differs" (two seasons' bootstrap medians apart by more than their bootstrap standard
errors allow at 1 %, Bonferroni over the pairs of seasons compared, and the higher more
than 20 % above the year's threshold, or more than 20 % above the lower and above the
year's) and the floor at the year's threshold are ours; the normal quantiles are checked
against scipy.stats.norm (a reference library). The known-truth tests use the invented
demo site and u* tables of invented known-truth trials.
"""

from statistics import NormalDist

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import fluxpart
from fluxpart import demo, ustar_seasonal
from fluxpart.errors import ConfigError
from fluxpart.uncertainty import ustar_sigma
from fluxpart.units import flux_to_carbon


def _table(year_threshold, seasons):
    """A u* table: the year's row and one row per season (threshold, p05, p95)."""
    rows = [{"year": 2021, "period": "year", "threshold": year_threshold,
             "threshold_p05": year_threshold * 0.9, "threshold_p95": year_threshold * 1.1}]
    rows += [{"year": 2021, "period": name, "threshold": t, "threshold_p05": lo,
              "threshold_p95": hi} for name, (t, lo, hi) in seasons.items()]
    return pd.DataFrame(rows)


def test_separated_season_well_above_the_year_is_found():
    table = _table(0.24, {"winter": (0.20, 0.19, 0.21), "summer": (0.37, 0.35, 0.39),
                          "spring": (0.23, 0.20, 0.26)})
    found = ustar_seasonal.seasonal_contrast(table)
    assert found[["year", "season", "lowest_season"]].values.tolist() == [[2021, "summer",
                                                                            "winter"]]
    assert found["season_threshold"].iloc[0] == pytest.approx(0.37)
    assert found["year_threshold"].iloc[0] == pytest.approx(0.24)


@pytest.mark.parametrize("summer", [
    (0.37, 0.20, 0.45),     # its 5-95 % range reaches the winter range: not resolved
    (0.28, 0.25, 0.31),     # resolved, but within 20 % of the year's threshold
])
def test_overlapping_or_small_differences_are_not_flagged(summer):
    table = _table(0.24, {"winter": (0.20, 0.19, 0.215), "summer": summer})
    assert ustar_seasonal.seasonal_contrast(table).empty


def test_seasons_resolved_well_apart_count_though_the_year_lies_near_the_higher():
    # Known-truth recovery on invented data: the bootstrap table of site H:2024 of
    # tests/benchmarks/trial_ninth.py, a sonic raised on 15 May (planted threshold 0.12
    # before, 0.28 after). The year's threshold (the median of its classes) sits between
    # the two regimes, near the later one with more nights: summer and autumn are
    # resolved far above spring (5th percentile 0.236 > 1.2 x 0.155) but less than 20 %
    # above the year's 0.237. Raising a season only costs data (Papale et al. 2006 (m)).
    rows = {"winter": (0.1415, 0.1181, 0.1881), "spring": (0.1298, 0.1159, 0.1546),
            "summer": (0.2662, 0.2353, 0.2850), "autumn": (0.2706, 0.2360, 0.3006)}
    table = _table(0.2367, rows)
    found = ustar_seasonal.seasonal_contrast(table)
    # the pair most apart judged by the bootstrap spreads (summer's is narrower than autumn's)
    assert found[["season", "lowest_season"]].values.tolist() == [["summer", "spring"]]
    assert found["separation"].iloc[0] > found["critical"].iloc[0]
    index = pd.date_range("2021-01-01", periods=365 * 24, freq="60min")
    central = np.full(len(index), 0.2367)
    applied = ustar_seasonal.seasonal_thresholds(index, 51.4, table, central, found["year"])
    later = index.month.isin([6, 7, 8, 9, 10, 11])
    planted = 0.28
    assert np.all(np.abs(applied[later] - planted) < abs(0.2367 - planted))
    assert applied[~later] == pytest.approx(0.2367)         # never below the year's
    # the same seasons, but the higher ones below the year's threshold: nothing to raise
    assert ustar_seasonal.seasonal_contrast(_table(0.30, rows)).empty


def _bootstrap_table(year_threshold, seasons, year=2024):
    """A u* table from (threshold, p05, p16, p50, p84, p95) per season."""
    names = ["threshold", "threshold_p05", "threshold_p16", "threshold_p50",
             "threshold_p84", "threshold_p95"]
    rows = [{"year": year, "period": "year", "threshold": year_threshold,
             **dict(zip(names[1:], [year_threshold] * 5, strict=True))}]
    rows += [{"year": year, "period": name, **dict(zip(names, values, strict=True))}
             for name, values in seasons.items()]
    return pd.DataFrame(rows)


# Known truth, invented: the u* table of the silage sward (site R) of
# tests/benchmarks/trial_thirtysecond.py, draw 1, whose planted threshold is 0.14 m s-1 ALL
# YEAR. Autumn's point threshold lies 31 % above the year's and its 5th percentile above
# winter's 95th, which the rule before 0.39.0 read as a seasonal change; its draws' median
# lies 2.97 standard errors above winter's, less than noise reaches among six pairs.
SWARD_CONSTANT = {"winter": (0.1340, 0.1190, 0.1240, 0.1310, 0.1360, 0.1380),
                  "spring": (0.1330, 0.1220, 0.1250, 0.1320, 0.1400, 0.1470),
                  "summer": (0.1430, 0.1360, 0.1390, 0.1460, 0.1550, 0.1620),
                  "autumn": (0.1870, 0.1500, 0.1560, 0.1710, 0.1830, 0.1970)}


def test_a_constant_planted_threshold_read_apart_by_noise_is_not_a_seasonal_change():
    table = _bootstrap_table(0.1430, SWARD_CONSTANT)
    autumn, winter = SWARD_CONSTANT["autumn"], SWARD_CONSTANT["winter"]
    assert autumn[1] > winter[5] and autumn[0] > 1.2 * 0.1430     # the old rule's reading
    assert ustar_seasonal.seasonal_contrast(table).empty
    # the same seasons resolved by a year with four times the nights (spreads halved
    # about each draws' median) are a change: the rule tests, it does not refuse
    halved = {name: (t, *(m + (p - m) / 2 for p in (p05, p16, m, p84, p95)))
              for name, (t, p05, p16, m, p84, p95) in SWARD_CONSTANT.items()}
    found = ustar_seasonal.seasonal_contrast(_bootstrap_table(0.1430, halved))
    assert found[["season", "lowest_season"]].values.tolist() == [["autumn", "winter"]]


def test_each_season_is_judged_by_the_half_of_its_draws_facing_the_other():
    # Known truth, invented: the spruce-lichen woodland (site N) of trial_thirtieth.py,
    # draw 0, planted 0.22 m s-1 all year. Spring's draws are skewed upward (median 0.157,
    # 95th percentile 0.212): whether spring lies below winter is a question of its upper
    # half and of winter's lower half; the whole ranges read a z of 3.6 (named), the
    # facing halves 2.9 (not named; Efron and Tibshirani 1993, percentile intervals (m)).
    seasons = {"winter": (0.2753, 0.2357, 0.2590, 0.2779, 0.2955, 0.3200),
               "spring": (0.1603, 0.1403, 0.1469, 0.1570, 0.1994, 0.2119),
               "summer": (0.2263, 0.2037, 0.2119, 0.2249, 0.2445, 0.2590),
               "autumn": (0.2230, 0.1995, 0.2064, 0.2182, 0.2295, 0.2410)}
    assert ustar_seasonal.seasonal_contrast(_bootstrap_table(0.2262, seasons, 2022)).empty
    # the same spring with its draws symmetric about the median would be a change
    symmetric = {**seasons, "spring": (0.1603, 0.1403, 0.1469, 0.1570, 0.1671, 0.1737)}
    found = ustar_seasonal.seasonal_contrast(_bootstrap_table(0.2262, symmetric, 2022))
    assert found[["season", "lowest_season"]].values.tolist() == [["winter", "spring"]]


def test_a_season_whose_bootstrap_often_fails_is_not_compared():
    # Known truth, invented: the tussock tundra (site T) of trial_thirtysecond.py, draw 2,
    # planted 0.12 m s-1 all year. Its midnight-sun summer (865 night records) gave a
    # threshold in 60 of 100 draws; the others could lie anywhere, so its 5-95 % range
    # over the 60 is no range of the season's threshold.
    seasons = {"summer": (0.069, 0.038, 0.041, 0.066, 0.071, 0.078),
               "autumn": (0.166, 0.116, 0.117, 0.133, 0.167, 0.170)}
    table = _bootstrap_table(0.117, seasons, year=2021)
    table["draws_valid"] = [100, 60, 100]
    assert ustar_seasonal.seasonal_contrast(table).empty
    # the same percentiles from every draw would be a change (z 3.3 > 2.58, one pair)
    table["draws_valid"] = 100
    found = ustar_seasonal.seasonal_contrast(table)
    assert found[["season", "lowest_season"]].values.tolist() == [["autumn", "summer"]]
    assert found["critical"].iloc[0] == pytest.approx(stats.norm.isf(0.01 / 2))


def test_the_critical_separation_is_a_bonferroni_normal_quantile():
    # two-sided normal quantile at level / pairs (Dunn 1961 (m)); scipy.stats.norm as reference
    for pairs, level in [(1, 0.05), (6, 0.01), (12, 0.01), (3, 0.05)]:
        assert ustar_seasonal.critical_separation(pairs, level) == pytest.approx(
            stats.norm.isf(level / (2 * pairs)), rel=1e-9)
    assert ustar_seasonal.critical_separation(6) == pytest.approx(3.144, abs=1e-3)
    assert ustar_seasonal.critical_separation(0) == np.inf
    # two years of four seasons share the level: twelve pairs
    one = _bootstrap_table(0.1430, SWARD_CONSTANT)
    two = pd.concat([one, _bootstrap_table(0.1430, SWARD_CONSTANT, year=2025)])
    halved = {name: (t, *(m + (p - m) / 2.2 for p in (p05, p16, m, p84, p95)))
              for name, (t, p05, p16, m, p84, p95) in SWARD_CONSTANT.items()}
    separated = _bootstrap_table(0.1430, halved)
    found_one = ustar_seasonal.seasonal_contrast(separated)
    found_two = ustar_seasonal.seasonal_contrast(pd.concat(
        [separated, _bootstrap_table(0.1430, halved, year=2025)]))
    assert found_one["critical"].iloc[0] == pytest.approx(stats.norm.isf(0.01 / 12))
    assert found_two["critical"].tolist() == pytest.approx([stats.norm.isf(0.01 / 24)] * 2)
    assert ustar_seasonal.seasonal_contrast(two).empty


def _null_tables(rng, count, spread_range=(0.005, 0.04), shift=1.0):
    """`count` one-year tables of four seasons whose true thresholds are equal (0.2 m s-1,
    `shift` times it in summer), each season's draws normal about a centre that scatters by
    its own standard error (an honest bootstrap)."""
    tables = []
    for _ in range(count):
        error = rng.uniform(*spread_range, size=4)
        truth = np.array([0.2, 0.2, 0.2 * shift, 0.2])
        centre = truth + error * rng.standard_normal(4)
        seasons = {name: (c, c - 1.645 * e, c - e, c, c + e, c + 1.645 * e)
                   for name, c, e in zip(("winter", "spring", "summer", "autumn"), centre,
                                         error, strict=True)}
        tables.append(_bootstrap_table(0.15, seasons))
    return tables


def test_noise_alone_qualifies_about_the_stated_share_of_years_and_a_real_change_most():
    # The level's claim on simulated bootstrap tables (normal draws, equal true thresholds):
    # with the margin set to 1 only the test decides; the Bonferroni bound holds the share
    # of qualifying years at or under 1 % (expected 0.6-1 % for six correlated pairs).
    rng = np.random.default_rng(60)
    null = _null_tables(rng, 500)
    fired = sum(not ustar_seasonal.seasonal_contrast(t, margin=1.0).empty for t in null)
    assert fired / 500 < 0.02
    assert fired > 0                                    # a test, not a refusal
    # a summer threshold 40 % above the others, resolved as a year of nights resolves
    # the seasons (standard errors 3-8 % of the threshold), is found nearly always
    planted = _null_tables(rng, 60, spread_range=(0.006, 0.016), shift=1.4)
    found = sum(not ustar_seasonal.seasonal_contrast(t).empty for t in planted)
    assert found / 60 > 0.9


def test_table_without_bootstrap_percentiles_gives_nothing():
    table = _table(0.24, {"winter": (0.20, 0.19, 0.21), "summer": (0.37, 0.35, 0.39)})
    assert ustar_seasonal.seasonal_contrast(table.drop(columns="threshold_p05")).empty


@pytest.mark.parametrize("latitude, january_season", [(50.0, "winter"), (-35.0, "summer")])
def test_seasonal_thresholds_follow_the_hemisphere(latitude, january_season):
    # meteorological seasons, shifted by six months in the south (common practice);
    # a season is never filtered below the year's threshold (our rule)
    index = pd.date_range("2021-01-01", periods=365 * 48, freq="30min")
    table = _table(0.24, {"winter": (0.20, 0.19, 0.21), "summer": (0.37, 0.35, 0.39),
                          "spring": (np.nan, np.nan, np.nan)})
    central = np.full(len(index), 0.24)
    values = ustar_seasonal.seasonal_thresholds(index, latitude, table, central, [2021])
    expected_january = {"winter": 0.24, "summer": 0.37}[january_season]
    expected_july = {"winter": 0.37, "summer": 0.24}[january_season]
    assert values[index.month == 1] == pytest.approx(expected_january)
    assert values[index.month == 7] == pytest.approx(expected_july)
    # a season without its own threshold keeps the year's
    undetected = "MAM" if latitude >= 0 else "SON"
    months = {"MAM": [3, 4, 5], "SON": [9, 10, 11]}[undetected]
    assert values[index.month.isin(months)] == pytest.approx(0.24)
    # years not named keep the central threshold
    assert ustar_seasonal.seasonal_thresholds(index, latitude, table, central, []) \
        == pytest.approx(central)


def test_threshold_runs_put_the_seasons_in_the_central_run_and_its_scenarios():
    index = pd.date_range("2021-01-01", periods=365 * 48, freq="30min")
    table = _table(0.24, {"winter": (0.20, 0.19, 0.21), "summer": (0.37, 0.35, 0.39)})
    table["threshold_p16"] = table["threshold"] - 0.01
    table["threshold_p84"] = table["threshold"] + 0.01
    year_runs = {"central": np.full(len(index), 0.24), "ustar_p16": np.full(len(index), 0.23),
                 "ustar_p84": np.full(len(index), 0.25)}
    contrast = ustar_seasonal.seasonal_contrast(table)
    july = index.month == 7

    runs = ustar_seasonal.threshold_runs(index, 50.0, table, year_runs, contrast)
    assert set(runs) == {"central", "ustar_p16", "ustar_p84", "ustar_year"}
    assert runs["central"][july] == pytest.approx(0.37)
    assert runs["ustar_p16"][july] == pytest.approx(0.36)   # the season's own percentile
    assert runs["ustar_p84"][july] == pytest.approx(0.38)
    assert runs["ustar_year"] == pytest.approx(year_runs["central"])
    assert runs["central"][index.month == 1] == pytest.approx(0.24)    # floor: the year's
    # the central run is the time series' ustar_threshold column, whose description said
    # "(its year's central value)" while July held the season's 0.37 (review49)
    from fluxpart.schema import describe
    described = describe("timeseries", "ustar_threshold")[1]
    assert "season's own" in described and "ustar_distinct_seasons" in described

    kept = ustar_seasonal.threshold_runs(index, 50.0, table, year_runs, contrast,
                                         "uncertainty_only")
    assert kept["central"] == pytest.approx(year_runs["central"])
    assert kept["ustar_seasonal"][july] == pytest.approx(0.37)
    # no qualifying year: the year's thresholds, nothing added
    none = ustar_seasonal.threshold_runs(index, 50.0, table, year_runs, contrast.iloc[:0])
    assert set(none) == set(year_runs)
    with pytest.raises(ConfigError, match="ustar_distinct_seasons"):
        ustar_seasonal.threshold_runs(index, 50.0, table, year_runs, contrast, "summer")


@pytest.mark.parametrize("alternative", ["ustar_seasonal", "ustar_year"])
def test_ustar_sigma_adds_the_seasonal_shift_in_quadrature(alternative):
    sums = pd.DataFrame({"central": [-250.0], "ustar_p16": [-256.0], "ustar_p84": [-248.0],
                         alternative: [-238.0]})
    # (max - min) over the z span of the 16th and 84th percentiles (standard normal)
    bootstrap = 8.0 / (2.0 * NormalDist().inv_cdf(0.84))
    expected = np.hypot(bootstrap, 12.0)
    assert ustar_sigma(sums, (16, 84)).iloc[0] == pytest.approx(expected, rel=1e-12)
    assert ustar_sigma(sums.drop(columns=alternative), (16, 84)).iloc[0] == \
        pytest.approx(bootstrap, rel=1e-12)


def test_summer_threshold_raised_on_known_truth_is_warned_and_covered():
    # Invented known truth: the demo site's recorded u* doubled in summer, so its summer
    # nights lose flux below twice the planted threshold (0.36 instead of 0.18 m s-1).
    frame, truth = demo.site_year(seed=0)
    frame = frame.copy()
    summer = frame.index.month.isin([6, 7, 8])
    frame.loc[summer, "ustar"] = frame.loc[summer, "ustar"] * 2.0
    config = fluxpart.Config(ustar_bootstrap_draws=20, random_error_draws=50)
    result = fluxpart.process(frame, demo.site(), config)
    annual = result.annual.iloc[0]
    true_nee = float(np.sum(flux_to_carbon(truth["nee"].to_numpy(), 30)))

    assert any("changes with the season: summer" in w for w in result.warnings)
    # the central run filters summer at its own threshold; the year's is the alternative
    year_only, central = float(annual["nee_ustar_year"]), float(annual["nee"])
    assert abs(central - true_nee) < abs(year_only - true_nee)
    assert float(annual["nee_uncertainty_ustar"]) >= abs(year_only - central)
    assert annual["nee_ci95_low"] <= true_nee <= annual["nee_ci95_high"]
    thresholds = result.timeseries["ustar_threshold"]
    in_summer = thresholds[summer].median()
    assert in_summer > 1.2 * float(annual["ustar_threshold"])      # summer's own, higher
    assert thresholds[~summer].min() == pytest.approx(float(annual["ustar_threshold"]))


def test_threshold_raised_within_the_year_is_followed_after_the_change():
    # Invented known truth: the demo site's recorded u* doubled from 15 May on (a sonic
    # moved), so the nights after it lose flux below twice the planted threshold (0.36
    # instead of 0.18 m s-1, in recorded units). The year's threshold lies between the
    # two; the seasons after the change take their own, closer to the planted one.
    frame, _ = demo.site_year(seed=0)
    frame = frame.copy()
    after = frame.index >= pd.Timestamp(f"{frame.index[0].year}-05-15")
    frame.loc[after, "ustar"] = frame.loc[after, "ustar"] * 2.0
    config = fluxpart.Config(ustar_bootstrap_draws=20, random_error_draws=50)
    result = fluxpart.process(frame, demo.site(), config)
    year = float(result.annual.iloc[0]["ustar_threshold"])
    applied = result.timeseries["ustar_threshold"]
    assert any("changes with the season" in w for w in result.warnings)
    assert year < 0.36
    assert abs(applied[after].median() - 0.36) < abs(year - 0.36)
    assert applied.min() == pytest.approx(year)             # never below the year's
    assert "nee_ustar_year" in result.annual.columns


def test_no_seasonal_run_where_one_threshold_holds(written_demo):
    result, _ = written_demo
    assert "nee_ustar_seasonal" not in result.annual.columns
    assert "nee_ustar_year" not in result.annual.columns
    assert not any("changes with the season" in w for w in result.warnings)


def test_the_level_is_shared_only_by_the_years_compared():
    # Bonferroni over the pairs compared (Dunn 1961 (m); scipy.stats.norm as reference): a
    # year without a threshold of its own, or with fewer than two seasons that have a range,
    # is not compared and so takes no share of the level. Invented tables.
    seasons = {"winter": (0.30, 0.27, 0.28, 0.30, 0.32, 0.33),
               "summer": (0.20, 0.18, 0.19, 0.20, 0.21, 0.22)}
    compared = _bootstrap_table(0.2, seasons, year=2020)
    alone = ustar_seasonal.seasonal_contrast(compared)
    assert alone["critical"].iloc[0] == pytest.approx(stats.norm.isf(0.01 / 2))
    four = {name: (0.2, 0.18, 0.19, 0.2, 0.21, 0.22)
            for name in ("winter", "spring", "summer", "autumn")}
    no_year_threshold = _bootstrap_table(np.nan, four, year=2021)
    one_season = _bootstrap_table(0.2, {"winter": four["winter"]}, year=2022)
    found = ustar_seasonal.seasonal_contrast(pd.concat([compared, no_year_threshold,
                                                        one_season]))
    assert found["year"].tolist() == [2020]
    assert found["critical"].iloc[0] == pytest.approx(stats.norm.isf(0.01 / 2))
    # a second compared year of four seasons does share it: 1 + 6 pairs
    shared = ustar_seasonal.seasonal_contrast(pd.concat(
        [compared, _bootstrap_table(0.2, four, year=2021)]))
    assert shared["critical"].iloc[0] == pytest.approx(stats.norm.isf(0.01 / 14))


def test_seasons_whose_facing_draws_do_not_spread_are_named_without_an_infinite_z():
    # Invented: half of each season's draws at one value (a detector's draws can tie), so
    # the facing halves have no width and the z has no bound; the old rule (5th above
    # 95th percentile) names the pair as well, and the warning says so in words.
    seasons = {"winter": (0.30, 0.30, 0.30, 0.30, 0.32, 0.33),
               "summer": (0.20, 0.18, 0.19, 0.20, 0.20, 0.20)}
    found = ustar_seasonal.seasonal_contrast(_bootstrap_table(0.2, seasons))
    assert found["separation"].iloc[0] == np.inf
    (text,) = ustar_seasonal.contrast_warnings(found)
    assert "inf" not in text.replace("in 1 record", "")
    assert "no spread between either median and its facing percentile" in text
