"""Night NEE that still rises with u* above the detected threshold: a trend test, a raise.

The u* filter rests on one premise: above the threshold, night NEE (respiration) no longer
depends on u* once temperature is held (Goulden et al. 1996; the plateau of Papale et al.
2006). Where the flux loss of calm nights fades gradually, the detector's plateau test can
pass at a u* whose kept nights still carry loss, and the gap filling copies that loss into
every night gap they fill. With ``ustar_kept_trend = "raise"`` each year's kept night
records in darkness (twilight uptake would confound the test) are tested for the premise with the site's own data: the records with u* at or
above the year's threshold t are sorted into temperature classes, within each into u*
classes, and a stratified Kendall test (one-sided, the class means as its units) asks
whether night NEE still rises with u* (:func:`rising_trend`). Where it does, the threshold
is raised past the lowest u* class and the test repeated, until the trend is no longer
significant or half the kept records would be filtered (:func:`raise_factor`). Day records
and NEE below the threshold are never read.

References
----------
Goulden, M. L. et al. (1996). Measurements of carbon sequestration by long-term eddy
covariance: methods and a critical evaluation of accuracy. Global Change Biology 2,
169-182.
Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
measured with eddy covariance technique. Biogeosciences 3, 571-583.
Hirsch, R. M., Slack, J. R. and Smith, R. A. (1982). Techniques of trend analysis for
monthly water quality data. Water Resources Research 18, 107-121 (the Kendall S statistic
summed over strata, its variance the sum of theirs).
Kendall, M. G. (1975). Rank Correlation Methods, 4th ed. Griffin, London (the null
variance of S without ties, n(n - 1)(2n + 5) / 18).
"""

from __future__ import annotations

from statistics import NormalDist
from typing import NamedTuple

import numpy as np
import pandas as pd

#: One-sided significance level of the trend test: 5 %, common practice.
ALPHA = 0.05

#: Fewest records per u* class: a class mean of 10 night records (our choice, the
#: detector's classes hold more).
MIN_CLASS_RECORDS = 10

#: Fewest u* classes a temperature class needs to enter the test (S of 3 points has
#: 3 pairs; our choice: at least 4 classes, 6 pairs).
MIN_CLASSES = 4

#: The raise stops before the kept night records of a year fall below this share of
#: those kept at the detected threshold (our choice: half, so the test keeps its power
#: and the fill its donors).
MIN_KEPT_SHARE = 0.5


def class_means(ratio, nee, tair, temperature_classes, ustar_classes):
    """Mean u* ratio and mean NEE of each u* class within each temperature class.

    Parameters
    ----------
    ratio : numpy.ndarray
        u* over the record's threshold [1], kept night records only (all >= 1).
    nee : numpy.ndarray
        Their NEE [µmol m-2 s-1].
    tair : numpy.ndarray
        Their air temperature [°C].
    temperature_classes : int
        Number of temperature classes (equal counts; ``Config.ustar_temperature_classes``).
    ustar_classes : int
        Most u* classes per temperature class (equal counts; ``Config.ustar_classes``),
        fewer where a class would hold under :data:`MIN_CLASS_RECORDS` records.

    Returns
    -------
    pandas.DataFrame
        One row per u* class: ``stratum`` (temperature class), ``ratio`` and ``nee``
        (class means), ``upper`` (the class's highest ratio), sorted by stratum and ratio.
        Strata with fewer than :data:`MIN_CLASSES` classes are left out.

    References
    ----------
    Papale, D. et al. (2006), see the module (u* classes within temperature classes, as
    the threshold's own detector sorts the night records).
    """
    rows = []
    order = np.argsort(tair, kind="stable")
    for stratum, members in enumerate(np.array_split(order, temperature_classes)):
        classes = min(ustar_classes, members.size // MIN_CLASS_RECORDS)
        if classes < MIN_CLASSES:
            continue
        by_ustar = members[np.argsort(ratio[members], kind="stable")]
        for part in np.array_split(by_ustar, classes):
            rows.append((stratum, ratio[part].mean(), nee[part].mean(), ratio[part].max()))
    return pd.DataFrame(rows, columns=["stratum", "ratio", "nee", "upper"])


class TrendTest(NamedTuple):
    """A stratified Kendall test of night NEE rising with u*.

    Attributes
    ----------
    statistic : float
        S summed over strata (pairs concordant minus discordant).
    z : float
        ``(S - 1) / sqrt(var S)`` (continuity-corrected; 0 where S <= 0).
    p_value : float
        One-sided: the chance of a z this high without a trend.
    """

    statistic: float
    z: float
    p_value: float


def rising_trend(means: pd.DataFrame) -> TrendTest:
    """The one-sided stratified Kendall test of NEE rising with u* over the class means.

    Parameters
    ----------
    means : pandas.DataFrame
        :func:`class_means`.

    Returns
    -------
    TrendTest
        p-value 1 where no stratum enters the test.

    References
    ----------
    Hirsch, R. M. et al. (1982); Kendall, M. G. (1975), see the module.
    """
    statistic = variance = 0.0
    for _, stratum in means.groupby("stratum", sort=True):
        x = stratum["ratio"].to_numpy()
        y = stratum["nee"].to_numpy()
        n = x.size
        upper = np.triu_indices(n, 1)
        statistic += float(np.sum(np.sign(x[upper[1]] - x[upper[0]])
                                  * np.sign(y[upper[1]] - y[upper[0]])))
        variance += n * (n - 1) * (2 * n + 5) / 18
    if variance == 0:
        return TrendTest(0.0, 0.0, 1.0)
    z = (statistic - 1) / np.sqrt(variance) if statistic > 0 else 0.0
    return TrendTest(statistic, float(z), 1 - NormalDist().cdf(z))


class Raise(NamedTuple):
    """How far one year's threshold is raised.

    Attributes
    ----------
    factor : float
        The raised threshold over the detected one [1]; 1 where the first test holds.
    steps : int
        Classes passed.
    first_p : float
        The first test's one-sided p-value (at the detected threshold).
    last_p : float
        The p-value at the raised threshold (the one that stopped the raise).
    """

    factor: float
    steps: int
    first_p: float
    last_p: float


def raise_factor(ratio, nee, tair, temperature_classes, ustar_classes) -> Raise:
    """Raise the threshold past the lowest u* class until night NEE no longer rises.

    Parameters
    ----------
    ratio, nee, tair : numpy.ndarray
        One year's kept night records (:func:`class_means`).
    temperature_classes, ustar_classes : int
        As :func:`class_means`.

    Returns
    -------
    Raise
        The factor is the median over temperature classes of the lowest class's highest
        ratio at each step where the test rejects (:data:`ALPHA`); the raise stops where
        it no longer rejects or fewer than :data:`MIN_KEPT_SHARE` of the records would
        stay.

    References
    ----------
    Papale, D. et al. (2006), see the module (the plateau: no dependence of night NEE
    on u* above the threshold).
    """
    factor, steps, first_p = 1.0, 0, None
    while True:
        kept = ratio >= factor
        means = class_means(ratio[kept], nee[kept], tair[kept], temperature_classes,
                            ustar_classes)
        test = rising_trend(means)
        first_p = test.p_value if first_p is None else first_p
        if test.p_value >= ALPHA:
            return Raise(factor, steps, first_p, test.p_value)
        lowest = means.groupby("stratum", sort=True)["upper"].first()
        candidate = max(float(np.median(lowest.to_numpy())), np.nextafter(factor, np.inf))
        if np.count_nonzero(ratio >= candidate) < MIN_KEPT_SHARE * ratio.size:
            return Raise(factor, steps, first_p, test.p_value)
        factor, steps = candidate, steps + 1


def yearly_factors(index, nee, ustar, tair, is_night, central: pd.Series,
                   temperature_classes, ustar_classes) -> dict:
    """:func:`raise_factor` of each year's kept night records at its threshold.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        The record's stamps.
    nee : numpy.ndarray
        Screened NEE before the u* filter [µmol m-2 s-1] (NaN where rejected).
    ustar, tair : numpy.ndarray
        Friction velocity [m s-1], air temperature [°C].
    is_night : numpy.ndarray of bool
        The night mask.
    central : pandas.Series
        Each calendar year's threshold [m s-1].
    temperature_classes, ustar_classes : int
        As :func:`class_means`.

    Returns
    -------
    dict of int to Raise
        Every year with a finite threshold.

    References
    ----------
    Goulden, M. L. et al. (1996); Papale, D. et al. (2006), see the module (above the
    threshold night NEE no longer depends on u*).
    """
    years = index.year.to_numpy()
    out = {}
    for year, threshold in central.items():
        if not np.isfinite(threshold) or threshold <= 0:
            continue
        use = ((years == year) & is_night & np.isfinite(nee) & np.isfinite(ustar)
               & np.isfinite(tair) & (ustar >= threshold))
        out[int(year)] = raise_factor(ustar[use] / threshold, nee[use], tair[use],
                                      temperature_classes, ustar_classes)
    return out


def raised(table: pd.DataFrame, central: pd.Series, scenarios: dict, factors: dict):
    """The u* table, central and scenario thresholds with each year's factor applied.

    Parameters
    ----------
    table : pandas.DataFrame
        The u* table (``year``, ``period``, ``threshold``, ``threshold_pXX``, ``reason``);
        ``threshold_detected`` keeps the detector's value.
    central : pandas.Series
        Each year's threshold [m s-1].
    scenarios : dict of str to pandas.Series
        Each scenario's threshold per year [m s-1].
    factors : dict of int to Raise
        :func:`yearly_factors`.

    Returns
    -------
    tuple
        ``(table, central, scenarios)``, every threshold of a raised year (its seasons'
        and its bootstrap percentiles' too) times its factor; each tested year's row
        says in ``reason`` what the test found (raised, not raised with its p-value, or
        too few night records to test).
    """
    factor = pd.Series({year: found.factor for year, found in factors.items()}, dtype=float)
    if not factors:
        return table, central, scenarios
    table = table.copy()
    per_row = table["year"].map(factor).fillna(1.0).to_numpy()
    for column in [name for name in table.columns if name == "threshold"
                   or name.startswith("threshold_p")]:
        table[column] = table[column] * per_row
    for year, found in factors.items():
        # every tested year says what the test found: with the option on and nothing
        # raised, the table had kept no trace that the test ran (review67)
        row = (table["year"] == year) & (table["period"] == "year")
        text = (f"raised x{found.factor:.3f}: night NEE still rose with u* above the "
                f"detected threshold (one-sided p = {found.first_p:.3g}), "
                f"{found.steps} u* classes passed" if found.factor > 1 else
                "kept nights not tested for a rise of NEE with u*: no temperature class "
                f"holds {MIN_CLASSES} u* classes of {MIN_CLASS_RECORDS} night records in "
                "darkness" if found.first_p >= 1 else
                "kept nights tested: night NEE did not rise with u* above the threshold "
                f"(one-sided p = {found.first_p:.3g}); not raised")
        table.loc[row, "reason"] = [f"{old}; {text}" if isinstance(old, str) and old
                                    else text for old in table.loc[row, "reason"]]
    scale = factor.reindex(central.index).fillna(1.0)
    return (table, central * scale,
            {name: values * scale.reindex(values.index).fillna(1.0)
             for name, values in scenarios.items()})


def raise_notes(factors: dict) -> list:
    """One warning naming the years whose threshold was raised, empty where none was.

    Parameters
    ----------
    factors : dict of int to Raise
        :func:`yearly_factors`.

    Returns
    -------
    list of str
    """
    up = {year: found for year, found in sorted(factors.items()) if found.factor > 1}
    if not up:
        return []
    return ["u* threshold raised where night NEE still rose with u* above it (one-sided "
            "stratified Kendall test, 5 %): " + ", ".join(
                f"{year} x{found.factor:.3f}" for year, found in up.items())]
