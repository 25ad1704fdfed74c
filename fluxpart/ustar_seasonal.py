"""Seasons whose u* threshold clearly differs from the one of the whole year.

The detector gives one u* threshold per calendar year (the median of the year's
temperature classes by default, see :mod:`fluxpart.ustar`). Where the canopy's
coupling to the air above changes through the year (leaf-out of a deciduous
forest, a growing crop), a season can need a clearly higher threshold: its
nights between the year's threshold and its own lost flux, yet would be kept as
measured and serve as donors of the night gaps, and annual NEE comes out too
negative. The bootstrap of the year's threshold does not see this.

This module finds such years from the u* table and gives the per-record
thresholds of every run (:func:`threshold_runs`). In such a year each season
takes the larger of its own detected threshold and the year's (a season is
never filtered below the year's threshold: a threshold read too high costs
data, one read too low biases the budget, the asymmetry behind the annual
maximum of Papale et al. 2006); the u* scenarios take each season's own
bootstrap percentile in the same way. With ``ustar_distinct_seasons =
"own_threshold"`` (default since 0.11.0) these are the central run and its
scenarios, and a run with the year's threshold on every night (``ustar_year``)
is the alternative; with ``"uncertainty_only"`` (0.8.1–0.10.0) the central run
keeps the year's threshold and the seasonal run (``ustar_seasonal``) is the
alternative. Either way the alternative's difference from the central sums is
added to the u* part of the uncertainty
(:func:`fluxpart.uncertainty.ustar_sigma`), and the run warns.

A year counts when two of its seasons' thresholds differ by more than their
bootstrap spreads allow at the level :data:`SEASONAL_TEST_LEVEL` (since 0.39.0), and
the higher season's threshold exceeds the year's by more than :data:`SEASONAL_MARGIN`
(``separated``), or the higher season lies more than that factor above the lower
one, judged the same way, and its threshold above the year's at all (``far_apart``).
Each season's bootstrap draws give its centre (their median) and two standard
errors, one from each half of its range (median minus 5th percentile, 95th
minus median, each over 1.645, a normal distribution's): the draws are skewed
(a detector's threshold cannot fall below the floor, and a noisy season reads
high more often than low), and whether season h lies above season l is a
question of h's lower half and l's upper half. A pair's difference of centres
over the root sum of squares of those two errors is a z statistic (Efron and
Tibshirani 1993, ch. 6, 13 and 16 (m): bootstrap standard errors, percentile
intervals, a two-sample test; the seasons' records are resampled independently).
On the thirtieth trial's spruce-lichen woodland (planted 0.22 m s-1 all year) the
whole ranges read winter 3.6 standard errors above spring, the facing halves 2.9. With k seasons a year has k(k - 1)/2 pairs, and the rule takes
the pair most apart, so the level is shared by every pair of every year of the
record (Bonferroni, m pairs in all): a pair counts where its z exceeds the
normal quantile 1 - level / (2 m) (two-sided: which season is higher is read from
the data), 3.14 for one year of four seasons, 3.39 for two. Where the bootstrap
spreads are honest, noise alone then raises the warning in at most one record in a
hundred whatever its length. A
season whose bootstrap found no threshold in more than 5 % of its draws is not
compared: its percentiles are those of the draws that found one, and the draws
that did not could lie beyond either end of its range (the thirty-second trial's
tundra: a midnight-sun summer of 865 night records found one in 60 of 100 draws,
read 0.069 m s-1 against autumn's 0.166 and a planted 0.12 all year). The
point thresholds are not the centres: on the moving point test they lie a median
1.7 % above their draws' median and can fall outside their own 16–84 % range
(:func:`fluxpart.ustar.detect_threshold`), so a z from point thresholds exceeded
the Bonferroni 1 % quantile in 7 of 164 generated site-years with one planted
threshold, the draws' medians and facing halves in none (largest 2.86 against
3.14). Before 0.39.0 a year counted when the higher season's bootstrap 5th percentile lay above the
lower one's 95th (1.2 times it for ``far_apart``), with the highest 5th and the
lowest 95th percentile of four seasons compared: about a 1 % test of one named
pair, run on twelve ordered pairs at once and on percentiles of 100 draws; it
warned on the planted CONSTANT thresholds of a silage sward and a tundra of the
thirty-second trial (autumn's median 2.97 standard errors above winter's, under
the 3.14 of the new rule). The margin of 20 % stays: a difference that is
resolved but smaller is within what the detector is held to.

Where the higher season's threshold lies above the year's only a little (after
0.19.0, ``far_apart``): the year's threshold is the median of its classes, so
where the tower's coupling changed within the year (a sonic raised on a growing
canopy, a new mast) it lies between the two regimes, near the one with more
nights: the later seasons then need a higher threshold that is less than 20 %
above the year's, and were kept at the year's, their nights between the two
thresholds kept as measured with their lost flux. Raising a season to its own
threshold only ever costs data (the asymmetry of Papale et al. 2006). A loss that
grows gradually with u* (no sharp threshold) can qualify (1.30 in one year of the
ninth trial), and its seasons are then filtered higher.

References
----------
Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
Exchange measured with eddy covariance technique: algorithms and uncertainty
estimation. Biogeosciences 3:571–583 (thresholds per season; the year's
threshold as the largest seasonal one) (m).

Barr, A. G. et al. (2013). Use of change-point detection for friction-velocity
threshold evaluation in eddy-covariance studies. Agricultural and Forest
Meteorology 171–172:31–45 (thresholds that vary with season and canopy) (m).

Efron, B. and Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman &
Hall, New York (bootstrap standard errors, ch. 6; percentile intervals, ch. 13;
two-sample tests, ch. 16) (m).

Dunn, O. J. (1961). Multiple comparisons among means. Journal of the American
Statistical Association 56:52–64 (the Bonferroni bound over m comparisons) (m).
"""

from __future__ import annotations

from statistics import NormalDist

import numpy as np
import pandas as pd

from .errors import ConfigError
from .ustar import SEASONS, assign_seasons

__all__ = ["DISTINCT_SEASON_RULES", "SEASONAL_MARGIN", "SEASONAL_TEST_LEVEL", "contrast_warnings",
           "critical_separation", "seasonal_contrast", "seasonal_thresholds", "threshold_runs"]

#: A season's threshold counts as clearly above the year's when it exceeds it by more
#: than this factor [1]: 1.2, the ±20 % within which the detector is expected to
#: recover a threshold (the calibration target of the u* detector); our choice.
SEASONAL_MARGIN = 1.2

#: Chance that noise alone makes a record's seasons differ [1]: 0.01, shared by every
#: pair of seasons of every year compared (Bonferroni). A year that counts changes its
#: seasons' thresholds and warns that the canopy's coupling changed: a claim about the
#: site, so it is held to a stricter level than the usual 5 %; our choice. A season
#: resolved 30-60 % above another by a year of nights is resolved far beyond it
#: (DEVELOPERS.md, round falsealarm60, for the figures).
SEASONAL_TEST_LEVEL = 0.01

#: Share of the bootstrap draws beyond each end of a season's range (its 5th and 95th
#: percentiles) [1], and that range's half-width in a normal distribution's standard
#: deviations [1].
_TAIL = 0.05
_Z95 = NormalDist().inv_cdf(1 - _TAIL)

#: Values of ``ustar_distinct_seasons``: which run is central in a year whose seasons differ.
DISTINCT_SEASON_RULES = ("own_threshold", "uncertainty_only")


def critical_separation(pairs: int, level: float = SEASONAL_TEST_LEVEL) -> float:
    """The z two seasons' centres must exceed when `pairs` pairs are compared [1].

    The normal quantile 1 - level / (2 pairs): a two-sided test at ``level / pairs``
    (Bonferroni; Dunn 1961 (m)). 3.14 for six pairs at 1 %; infinite without pairs.
    """
    if pairs < 1:
        return float("inf")
    return NormalDist().inv_cdf(1.0 - level / (2.0 * pairs))


def _season_rows(group: pd.DataFrame, draws: float) -> pd.DataFrame:
    """The seasons of one year's u* table rows with a threshold and a 5–95 % range.

    A season whose bootstrap found no threshold in more than 5 % of the `draws` has
    none: its percentiles are those of the draws that found one, and the others could
    lie anywhere, beyond its 5th or its 95th percentile.
    """
    seasons = group[group["period"].isin(SEASONS)].dropna(
        subset=["threshold", "threshold_p05", "threshold_p95"])
    if "draws_valid" in seasons.columns and np.isfinite(draws):
        seasons = seasons[seasons["draws_valid"].astype(float) >= (1 - _TAIL) * draws]
    return seasons


def seasonal_contrast(table: pd.DataFrame, margin: float = SEASONAL_MARGIN,
                      level: float = SEASONAL_TEST_LEVEL) -> pd.DataFrame:
    """Years whose seasons' u* thresholds clearly differ, with the seasons most apart.

    Parameters
    ----------
    table : pandas.DataFrame
        The u* table (:meth:`fluxpart.ustar.UstarResult.table` with ``source``):
        ``year``, ``period`` (``"year"`` or a season), ``threshold`` [m s-1] and
        ``threshold_p05``, ``threshold_p95`` (bootstrap percentiles) [m s-1];
        ``threshold_p50`` (the draws' median) [m s-1] where present, else the middle
        of the 5–95 % range is a season's centre; ``draws_valid`` where present (a
        season whose bootstrap failed in more than 5 % of the draws, the most valid
        in any period, has no range and is not compared).
    margin : float, optional
        Factor by which the higher season's threshold must exceed the year's, or
        else its centre the lower season's centre (judged at `level`; then its
        threshold need only exceed the year's).
    level : float, optional
        Chance that noise alone qualifies a year, shared by every pair of seasons
        of every year in `table` (see the module docstring).

    Returns
    -------
    pandas.DataFrame
        One row per such year: ``year``, ``season`` (the higher of the pair most
        apart), ``season_threshold``, ``season_p05``, ``lowest_season`` (the
        lower), ``lowest_p95`` and ``year_threshold`` [m s-1], ``separation`` (the
        pair's z) and ``critical`` (:func:`critical_separation`) [1]; empty where
        no year qualifies (also without bootstrap percentiles).
    """
    columns = ["year", "season", "season_threshold", "season_p05", "lowest_season",
               "lowest_p95", "year_threshold", "separation", "critical"]
    needed = {"year", "period", "threshold", "threshold_p05", "threshold_p95"}
    if not needed <= set(table.columns):
        return pd.DataFrame(columns=columns)
    # the draws of the bootstrap: the most that gave a threshold in any period
    draws = (float(table["draws_valid"].max()) if "draws_valid" in table.columns
             else float("nan"))
    years = []
    for year, group in table.groupby("year", sort=True):
        whole = group.loc[group["period"] == "year", "threshold"].astype(float)
        seasons = _season_rows(group, draws)
        # only a year with a threshold of its own and two seasons is compared
        if not whole.empty and np.isfinite(whole.iloc[0]) and len(seasons) >= 2:
            years.append((int(year), seasons, float(whole.iloc[0])))
    # the pairs compared: the level is shared by these, not by years never compared
    pairs = sum(len(seasons) * (len(seasons) - 1) // 2 for _, seasons, _ in years)
    critical = critical_separation(pairs, level)
    rows = []
    for year, seasons, year_threshold in years:
        threshold = seasons["threshold"].to_numpy(dtype=float)
        low_end = seasons["threshold_p05"].to_numpy(dtype=float)
        high_end = seasons["threshold_p95"].to_numpy(dtype=float)
        centre = (seasons["threshold_p50"].to_numpy(dtype=float)
                  if "threshold_p50" in seasons.columns else (low_end + high_end) / 2)
        centre = np.where(np.isfinite(centre), centre, (low_end + high_end) / 2)
        # each side's standard error from its own half of the range: the higher season's
        # draws below its median, the lower season's above (bootstrap draws are skewed)
        below = (centre - low_end) / _Z95
        above_centre = (high_end - centre) / _Z95
        high, low = np.meshgrid(np.arange(len(seasons)), np.arange(len(seasons)),
                                indexing="ij")
        with np.errstate(divide="ignore", invalid="ignore"):
            # the plain difference, and the difference beyond the margin factor
            apart = (centre[high] - centre[low]) / np.hypot(below[high], above_centre[low])
            beyond = ((centre[high] - margin * centre[low])
                      / np.hypot(below[high], margin * above_centre[low]))
        above = threshold[high] / year_threshold
        # resolved and well above the year's, or resolved well apart and above the year's
        separated = (apart > critical) & (above > margin)
        far_apart = (beyond > critical) & (above > 1.0)
        counted = (separated | far_apart) & (high != low)
        if not counted.any():
            continue
        z = np.where(counted, np.fmax(np.where(separated, apart, -np.inf),
                                      np.where(far_apart, beyond, -np.inf)), -np.inf)
        h, lo = np.unravel_index(np.argmax(z), z.shape)
        rows.append((year, seasons["period"].iloc[h], float(threshold[h]), float(low_end[h]),
                     seasons["period"].iloc[lo], float(high_end[lo]), year_threshold,
                     float(z[h, lo]), critical))
    return pd.DataFrame(rows, columns=columns)


def seasonal_thresholds(index, latitude, table: pd.DataFrame, central: np.ndarray,
                        years, column: str = "threshold") -> np.ndarray:
    """Per-record thresholds with each season of `years` at its own [m s-1].

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval start times (local standard time).
    latitude : float
        Site latitude [degrees] (the hemisphere names the seasons).
    table : pandas.DataFrame
        The u* table (``year``, ``period`` and `column`).
    central : numpy.ndarray
        The year's threshold per record [m s-1] (of the same run: the detected
        value or a bootstrap percentile).
    years : iterable of int
        The years whose seasons take their own thresholds
        (``seasonal_contrast(table)["year"]``).
    column : str, optional
        The table's column of the seasons' thresholds: ``"threshold"`` (detected,
        default) or ``"threshold_pXX"`` (a bootstrap percentile).

    Returns
    -------
    numpy.ndarray
        Each record of those years at the larger of its season's own threshold
        and `central` where the season has one; every other record at `central`.
    """
    seasons = assign_seasons(index, latitude)
    own = table[table["period"].isin(SEASONS) & table["year"].isin(list(years))]
    lookup = pd.Series(own[column].astype(float).to_numpy(),
                       index=pd.MultiIndex.from_arrays([own["year"].astype(np.int64),
                                                        own["period"].astype(str)]))
    keys = pd.MultiIndex.from_arrays([seasons["year"].to_numpy(),
                                      seasons["season"].astype(str).to_numpy()])
    values = lookup.reindex(keys).to_numpy(dtype=float)
    central = np.asarray(central, dtype=float)
    # never below the year's: a threshold read too high costs data, one too low biases
    return np.where(np.isfinite(values), np.fmax(values, central), central)


def threshold_runs(index, latitude, table: pd.DataFrame, year_runs: dict,
                   contrast: pd.DataFrame, rule: str = "own_threshold") -> dict:
    """Per-record u* thresholds of every run, seasons included where they differ.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval start times (local standard time).
    latitude : float
        Site latitude [degrees].
    table : pandas.DataFrame
        The u* table (``year``, ``period``, ``threshold``, ``threshold_pXX``).
    year_runs : dict of str to numpy.ndarray
        The year's threshold per record [m s-1] of the run ``central`` and of
        each scenario ``ustar_pXX``.
    contrast : pandas.DataFrame
        :func:`seasonal_contrast` of `table`.
    rule : str, optional
        One of :data:`DISTINCT_SEASON_RULES` (see the module docstring).

    Returns
    -------
    dict of str to numpy.ndarray
        `year_runs` unchanged where no year qualifies. Otherwise, with
        ``"own_threshold"``: ``central`` and the scenarios with the seasons of
        the qualifying years at their own thresholds (:func:`seasonal_thresholds`,
        the scenarios at the seasons' own percentiles) and ``ustar_year`` (the
        year's threshold on every night); with ``"uncertainty_only"``:
        `year_runs` and ``ustar_seasonal`` (the seasonal central thresholds).
    """
    if rule not in DISTINCT_SEASON_RULES:
        raise ConfigError(f"ustar_distinct_seasons = {rule!r}: expected one of "
                         f"{', '.join(DISTINCT_SEASON_RULES)}")
    if contrast.empty:
        return dict(year_runs)
    years = contrast["year"]

    def seasonal(name):
        column = "threshold" if name == "central" else f"threshold_{name.split('_')[-1]}"
        if column not in table.columns:
            return year_runs[name]
        return seasonal_thresholds(index, latitude, table, year_runs[name], years, column)

    if rule == "uncertainty_only":
        return {**year_runs, "ustar_seasonal": seasonal("central")}
    return {**{name: seasonal(name) for name in year_runs}, "ustar_year": year_runs["central"]}


def contrast_warnings(contrast: pd.DataFrame, rule: str = "own_threshold") -> list[str]:
    """One warning per row of :func:`seasonal_contrast`, naming the seasons and thresholds."""
    if rule == "own_threshold":
        what = ("Each season of that year is filtered at its own threshold where it is higher "
                "than the year's; the run with the year's threshold on every night (annual "
                "columns *_ustar_year) is added to the u* part of the uncertainty")
    else:
        what = ("Nights between the two thresholds lost flux but are kept "
                "(ustar_distinct_seasons = \"uncertainty_only\"): annual NEE may be too "
                "negative. The run with each season's own threshold (annual columns "
                "*_ustar_seasonal) is added to the u* part of the uncertainty")
    return [f"u* threshold in {row.year} changes with the season: {row.season} "
            f"{row.season_threshold:.3f} m s-1 (bootstrap 5th percentile "
            f"{row.season_p05:.3f}) against the year's {row.year_threshold:.3f}, while "
            f"{row.lowest_season} lies at most {row.lowest_p95:.3f}; judged by their "
            f"bootstrap spreads the two differ {_separation_text(row.separation)}, beyond "
            f"the {row.critical:.2f} that noise alone exceeds in 1 record in "
            f"{1 / SEASONAL_TEST_LEVEL:.0f}. {what}"
            for row in contrast.itertuples()]


def _separation_text(separation: float) -> str:
    """A pair's z as the warning states it; an infinite one (neither season's draws spread
    between its median and the facing percentile, as where half of them sit at one value)
    said in words, not as ``z = inf``."""
    if np.isfinite(separation):
        return f"at z = {separation:.1f}"
    return "with no spread between either median and its facing percentile (z unbounded)"
