"""The uncertainty budget: random error of NEE, its annual sum, u* and partitioning parts.

Three parts of the uncertainty of an annual carbon budget are estimated and then
combined (DESIGN.md §5, "Random uncertainty"):

1. **Random error** of each NEE record. The paired-observation method
   (Hollinger & Richardson 2005; Richardson et al. 2006) compares two measured
   records exactly 24 h apart under similar conditions: the true flux is then
   nearly the same, so their difference is mostly the random error of two
   measurements. Its standard deviation divided by √2 estimates the error of one
   record. Binned by flux magnitude, separately for uptake and release, the
   error grows linearly with ``|NEE|`` (:func:`random_error_model`). Each record
   gets a standard deviation (:func:`record_random_error`), and annual sums get
   their random uncertainty by Monte Carlo with Laplace-distributed errors
   (:func:`monte_carlo_sums`).
2. **u* threshold**: half the range of the annual sums obtained with the u*
   threshold at the bootstrap percentiles (the pipeline's scenario runs).
3. **Partitioning method** (GPP and Reco only): half the absolute difference of
   the daytime and nighttime methods.

:func:`uncertainty_budget` combines them by root sum of squares and
:func:`carbon_accounting_units` restates net uptake in t CO2 ha-1.

Caution: these are the uncertainties the tower data themselves reveal. Systematic
errors (energy-balance closure, advection, storage, footprint, calibration) are
not included. A tower budget is one line of evidence for carbon-credit
quantification, not a certified credit; the applicable crediting methodology and
accredited verification decide how, and whether, such numbers may be used.

References
----------
Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy covariance
measurements and its application to physiological models. Tree Physiology 25,
873–885. doi:10.1093/treephys/25.7.873

Richardson, A. D., Hollinger, D. Y., Burba, G. G., et al. (2006). A multi-site
analysis of random error in tower-based measurements of carbon and energy
fluxes. Agricultural and Forest Meteorology 136, 1–18.
doi:10.1016/j.agrformet.2006.01.007
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ._validate import as_float
from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS
from .errors import (
    FluxpartError,
    InsufficientDataError,
    MissingColumnError,
    SpacingError,
)

__all__ = [
    "ANNUAL_COLUMNS",
    "MODEL_COLUMNS",
    "RandomErrorModel",
    "carbon_accounting_units",
    "draw_random_errors",
    "monte_carlo_sums",
    "paired_differences",
    "random_error_model",
    "record_random_error",
    "timeseries_random_error",
    "uncertainty_budget",
]

#: Pairing criteria of the paired-observation method. Richardson et al. (2006)
#: accept two records 24 h apart when PPFD differs by less than 75 µmol m-2 s-1,
#: air temperature by less than 3 °C and wind speed by less than 1 m s-1 (m).
#: fluxpart reads global radiation, not PPFD: 75 µmol m-2 s-1 of PPFD is about
#: 35 W m-2 of Rg at ~2.1 µmol J-1 (about 0.46 of Rg is PAR at 4.57 µmol J-1;
#: common practice (m)). Wind speed is not a canonical variable; VPD within
#: 5 hPa (the marginal-distribution-sampling tolerance of Reichstein et al. 2005)
#: stands in for it as our choice, because VPD limits daytime uptake.
_PAIR_RG_TOLERANCE = 35.0  # [W m-2]
_PAIR_TAIR_TOLERANCE = 3.0  # [°C]
_PAIR_VPD_TOLERANCE = 5.0  # [hPa]
#: Equal-count flux bins per sign class and fewest pairs in a bin; our choice.
_BINS = 10
_MIN_PAIRS_PER_BIN = 30
#: Fewest records averaged into a gap fill for its spread to count; our choice.
_MIN_FILL_COUNT = 5
#: Monte Carlo: default number of draws, and the largest draws x records block
#: held in memory at once (2**21 doubles = 16 MiB per temporary).
_DRAWS = 500
_BLOCK_ELEMENTS = 1 << 21
#: Tonnes per hectare in one gram per square metre: 1 ha = 1e4 m2, 1 t = 1e6 g (SI).
_T_HA_PER_G_M2 = 1e4 / 1e6
_MINUTES_PER_DAY = 1440
_CLASSES = ("uptake", "release")
_FLUXES = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")

_CARBON = "g C m-2"
_FLUX = "µmol m-2 s-1"

#: Unit and description of every column :func:`uncertainty_budget` and
#: :func:`carbon_accounting_units` add to the annual table.
ANNUAL_COLUMNS: dict[str, tuple[str, str]] = {
    "nee_uncertainty_random": (_CARBON, "random error of the annual NEE sum: standard deviation "
                               "of the Monte Carlo sums of Laplace record errors"),
    "nee_uncertainty_random_percentile_2_5": (_CARBON, "2.5th percentile of the Monte Carlo "
                                              "random error of the annual NEE sum (add to nee "
                                              "for the lower end of a 95 % interval)"),
    "nee_uncertainty_random_percentile_97_5": (_CARBON, "97.5th percentile of the Monte Carlo "
                                               "random error of the annual NEE sum (add to nee "
                                               "for the upper end of a 95 % interval)"),
    "nee_uncertainty_random_analytic": (_CARBON, "random error of the annual NEE sum from the "
                                        "record variances, assuming independent errors"),
    "nee_uncertainty_ustar": (_CARBON, "half the range of annual NEE over the u* threshold "
                              "scenarios"),
    "nee_uncertainty_total": (_CARBON, "root sum of squares of the random and u* parts of NEE "
                              "(systematic errors not included)"),
    "gpp_nighttime_uncertainty_random": (_CARBON, "random error of nighttime GPP = random error "
                                         "of NEE (GPP = Reco - NEE)"),
    "gpp_uncertainty_partitioning": (_CARBON, "half the absolute difference of daytime and "
                                     "nighttime annual GPP"),
    "reco_uncertainty_partitioning": (_CARBON, "half the absolute difference of daytime and "
                                      "nighttime annual Reco"),
    "uncertainty_parts_missing": ("", "parts of the budget that could not be estimated this "
                                  "year (left out of the totals)"),
    "net_uptake_t_co2_per_ha": ("t CO2 ha-1", "net CO2 uptake in the year, positive = uptake "
                                "(= -NEE x 44.009/12.011 x 0.01)"),
    "net_uptake_t_co2_per_ha_uncertainty": ("t CO2 ha-1", "total uncertainty of the net uptake "
                                            "(nee_uncertainty_total converted)"),
    "net_uptake_t_co2_per_ha_uncertainty_random": ("t CO2 ha-1", "random part of the "
                                                   "uncertainty of the net uptake"),
}
for _flux in _FLUXES[1:]:
    ANNUAL_COLUMNS[f"{_flux}_uncertainty_ustar"] = (
        _CARBON, f"half the range of annual {_flux} over the u* threshold scenarios")
    ANNUAL_COLUMNS[f"{_flux}_uncertainty_total"] = (
        _CARBON, f"root sum of squares of the parts of {_flux}: "
        + ("random, u* and partitioning" if _flux == "gpp_nighttime" else
           "u* and partitioning (no random part: a model output)"))
del _flux

#: Unit and description of the columns of :meth:`RandomErrorModel.table` and
#: :attr:`RandomErrorModel.bins` (parameter tables).
MODEL_COLUMNS: dict[str, tuple[str, str]] = {
    "flux_class": ("", "uptake (NEE < 0) or release (NEE >= 0)"),
    "intercept": (_FLUX, "random error model: standard deviation at |NEE| = 0"),
    "slope": ("1", "random error model: increase of the standard deviation per unit |NEE|"),
    "lowest_abs_nee": (_FLUX, "smallest binned mean |NEE|; the model is not extrapolated below"),
    "floor": (_FLUX, "smallest standard deviation the model returns (smallest binned value)"),
    "pairs": ("1", "record pairs 24 h apart under similar conditions"),
    "bins": ("1", "flux bins the line was fitted to"),
    "source": ("", "fitted, constant (one bin), or borrowed from the other flux class"),
    "bin": ("1", "flux bin number within its class, by increasing |NEE|"),
    "mean_abs_nee": (_FLUX, "mean |NEE| of the pairs in the bin (pair means)"),
    "sigma": (_FLUX, "standard deviation of the pair differences / sqrt(2)"),
    "laplace_scale": (_FLUX, "Laplace scale: mean |pair difference| / sqrt(2)"),
}


@dataclass(frozen=True)
class RandomErrorModel:
    """Random error of NEE as a linear function of |NEE|, for uptake and release.

    Attributes
    ----------
    coefficients : pandas.DataFrame
        Indexed by ``flux_class`` (``"uptake"``, ``"release"``): ``intercept``
        [µmol m-2 s-1], ``slope`` [1], ``lowest_abs_nee`` [µmol m-2 s-1], ``floor``
        [µmol m-2 s-1], ``pairs``, ``bins`` and ``source``.
    bins : pandas.DataFrame
        One row per flux bin: ``flux_class``, ``bin``, ``pairs``, ``mean_abs_nee``,
        ``sigma`` and ``laplace_scale`` [µmol m-2 s-1].

    Notes
    -----
    σ(NEE) = max(intercept + slope · max(|NEE|, lowest_abs_nee), floor), with the
    coefficients of the record's class (uptake where NEE < 0). Below the smallest
    binned flux the line is not extrapolated; the floor (the smallest binned σ)
    keeps a fit with a negative intercept or slope from predicting σ <= 0.
    """

    coefficients: pd.DataFrame
    bins: pd.DataFrame

    def predict(self, nee) -> np.ndarray:
        """Return the random error (standard deviation) at each NEE [µmol m-2 s-1].

        Parameters
        ----------
        nee : array_like
            NEE [µmol m-2 s-1]; NaN gives NaN.

        Returns
        -------
        numpy.ndarray
            Standard deviation of the record's random error [µmol m-2 s-1].
        """
        nee = np.asarray(nee, dtype=float)
        out = np.full(nee.shape, np.nan)
        for name, mask in (("uptake", nee < 0), ("release", nee >= 0)):
            row = self.coefficients.loc[name]
            magnitude = np.maximum(np.abs(nee[mask]), row["lowest_abs_nee"])
            out[mask] = np.maximum(row["intercept"] + row["slope"] * magnitude, row["floor"])
        return out

    def table(self) -> pd.DataFrame:
        """Return the coefficients as a parameter table (index ``flux_class``)."""
        return self.coefficients.copy()


# --------------------------------------------------------------------------- helpers

def _interval_minutes(index) -> int:
    """Regular spacing of a DatetimeIndex [minutes], or a SpacingError."""
    if not isinstance(index, pd.DatetimeIndex):
        raise FluxpartError(f"uncertainty: expected a DatetimeIndex of interval starts, found "
                            f"{type(index).__name__}")
    if len(index) < 2:
        raise SpacingError("uncertainty: the time axis has fewer than two records")
    steps = np.diff(index.to_numpy().astype("datetime64[s]").astype(np.int64))
    if (not (steps == steps[0]).all() or steps[0] <= 0 or steps[0] % 60
            or (_MINUTES_PER_DAY * 60) % steps[0]):
        row = int(np.flatnonzero(steps != steps[0])[0]) + 1 if not (steps == steps[0]).all() \
            else 1
        raise SpacingError(f"uncertainty: records must be regularly spaced by a divisor of a "
                           f"day; found a step of {steps[row - 1] / 60:g} minutes at row {row} "
                           f"({index[row]})")
    return int(steps[0] // 60)


def _values(values, name: str, n: int) -> np.ndarray:
    return as_float(values, f"uncertainty: {name}", n)


def _seconds_factor(interval_minutes) -> float:
    """Grams of carbon per record per µmol m-2 s-1 [g C m-2 per (µmol m-2 s-1)]."""
    if (isinstance(interval_minutes, bool) or not isinstance(interval_minutes, (int, np.integer))
            or interval_minutes <= 0 or _MINUTES_PER_DAY % int(interval_minutes)):
        raise SpacingError(f"interval_minutes = {interval_minutes!r}: expected a whole number "
                           "of minutes that divides a day, e.g. 30 or 60")
    return float(interval_minutes) * 60.0 * CARBON_MOLAR_MASS * 1e-6


def _fit_class(magnitude, difference, bins, min_pairs_per_bin, name):
    """Bin one flux class by |NEE| and fit sigma = a + b |NEE|; return (row, bin rows)."""
    n_bins = min(bins, magnitude.size // min_pairs_per_bin)
    if n_bins == 0:
        return None, []
    order = np.argsort(magnitude, kind="stable")
    rows = []
    for number, take in enumerate(np.array_split(order, n_bins), start=1):
        delta = difference[take]
        rows.append({"flux_class": name, "bin": number, "pairs": int(take.size),
                     "mean_abs_nee": float(magnitude[take].mean()),
                     "sigma": float(delta.std(ddof=1) / np.sqrt(2.0)),
                     "laplace_scale": float(np.abs(delta).mean() / np.sqrt(2.0))})
    x = np.array([r["mean_abs_nee"] for r in rows])
    y = np.array([r["sigma"] for r in rows])
    if n_bins == 1:
        intercept, slope, source = float(y[0]), 0.0, "constant"
    else:
        slope, intercept = (float(v) for v in np.polyfit(x, y, 1))
        source = "fitted"
    row = {"intercept": intercept, "slope": slope, "lowest_abs_nee": float(x.min()),
           "floor": float(y.min()), "pairs": int(magnitude.size), "bins": n_bins,
           "source": source}
    return row, rows


# --------------------------------------------------------------------------- public

def paired_differences(index, nee, rg, tair, vpd, *, rg_tolerance=_PAIR_RG_TOLERANCE,
                       tair_tolerance=_PAIR_TAIR_TOLERANCE,
                       vpd_tolerance=_PAIR_VPD_TOLERANCE) -> pd.DataFrame:
    """Find pairs of measured records 24 h apart under similar conditions.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Regular time axis of interval starts (any spacing that divides a day).
    nee : array_like
        Measured NEE [µmol m-2 s-1], NaN where not measured (after screening and
        the u* filter).
    rg, tair, vpd : array_like
        Measured drivers: global radiation [W m-2], air temperature [°C], vapour
        pressure deficit [hPa]; NaN where not measured.
    rg_tolerance : float, optional
        Largest accepted |ΔRg| (exclusive) [W m-2]; default 35, about the
        75 µmol m-2 s-1 of PPFD of Richardson et al. (2006) (m).
    tair_tolerance : float, optional
        Largest accepted |ΔTair| (exclusive) [°C]; default 3, Richardson et al. (2006) (m).
    vpd_tolerance : float, optional
        Largest accepted |ΔVPD| (exclusive) [hPa]; default 5, our choice (see Notes).

    Returns
    -------
    pandas.DataFrame
        One row per accepted pair, indexed by the first record's time: ``first``,
        ``second`` (NEE of the two records [µmol m-2 s-1]), ``difference``
        (first − second) and ``mean`` (their mean) [µmol m-2 s-1].

    Raises
    ------
    SpacingError
        If the time axis is not regular.
    FluxpartError
        If an array does not have one value per record.

    Notes
    -----
    Both records must be measured and all three drivers measured at both. The
    second record is the one exactly one day later (same time of day). Richardson
    et al. (2006) also require wind speed within 1 m s-1 (m); fluxpart has no wind
    speed, and uses VPD within 5 hPa instead (our choice: the tolerance of
    marginal distribution sampling, Reichstein et al. 2005).

    References
    ----------
    Hollinger, D. Y. & Richardson, A. D. (2005). Tree Physiology 25, 873–885.
    Richardson, A. D. et al. (2006). Agric. For. Meteorol. 136, 1–18.
    """
    minutes = _interval_minutes(index)
    n = len(index)
    arrays = {name: _values(v, name, n) for name, v in
              (("nee", nee), ("rg", rg), ("tair", tair), ("vpd", vpd))}
    lag = _MINUTES_PER_DAY // minutes
    if n <= lag:
        return pd.DataFrame({"first": [], "second": [], "difference": [], "mean": []},
                            index=index[:0])
    first = {k: v[:-lag] for k, v in arrays.items()}
    second = {k: v[lag:] for k, v in arrays.items()}
    with np.errstate(invalid="ignore"):
        accept = (np.isfinite(first["nee"]) & np.isfinite(second["nee"])
                  & (np.abs(first["rg"] - second["rg"]) < rg_tolerance)
                  & (np.abs(first["tair"] - second["tair"]) < tair_tolerance)
                  & (np.abs(first["vpd"] - second["vpd"]) < vpd_tolerance))
    a, b = first["nee"][accept], second["nee"][accept]
    return pd.DataFrame({"first": a, "second": b, "difference": a - b, "mean": (a + b) / 2},
                        index=index[:-lag][accept])


def random_error_model(pairs: pd.DataFrame, *, bins=_BINS,
                       min_pairs_per_bin=_MIN_PAIRS_PER_BIN) -> RandomErrorModel:
    """Fit the random error of NEE as a linear function of |NEE| from paired records.

    Parameters
    ----------
    pairs : pandas.DataFrame
        From :func:`paired_differences`: columns ``difference`` and ``mean``
        [µmol m-2 s-1].
    bins : int, optional
        Equal-count bins of |mean| per flux class; default 10 (our choice).
    min_pairs_per_bin : int, optional
        Fewest pairs in a bin; fewer bins are used when pairs are scarce;
        default 30 (our choice).

    Returns
    -------
    RandomErrorModel
        Coefficients per class (uptake: pair mean < 0; release: >= 0) and the bins.

    Raises
    ------
    MissingColumnError
        If `pairs` lacks ``difference`` or ``mean``.
    InsufficientDataError
        If neither class has `min_pairs_per_bin` pairs.

    Notes
    -----
    In each bin the random error of one record is estimated as
    σ = sd(δ)/√2, δ = x(t) − x(t + 24 h) (Hollinger & Richardson 2005): for two
    independent errors of equal variance Var(δ) = 2σ², whatever their
    distribution. The Laplace scale reported beside it, β = mean|δ|/√2, is the
    estimator of Hollinger & Richardson (2005) (m); for exactly Laplace errors of
    scale b it gives 3b/(2√2) ≈ 1.06 b (E|δ| = 3b/2 for the difference of two
    Laplace variables), so the linear model is fitted to σ, which is unbiased.
    The line σ = a + b|NEE| is fitted by least squares to the bin means, one line
    for uptake and one for release, after Richardson et al. (2006) (m). A class
    with a single bin gets a constant; a class without enough pairs borrows the
    other class's line (``source`` says so).

    The pair difference also holds any true change of the flux between the two
    days, so σ is an upper estimate of the random error (Hollinger & Richardson
    2005).

    References
    ----------
    Hollinger, D. Y. & Richardson, A. D. (2005). Tree Physiology 25, 873–885.
    doi:10.1093/treephys/25.7.873
    Richardson, A. D. et al. (2006). Agric. For. Meteorol. 136, 1–18.
    doi:10.1016/j.agrformet.2006.01.007
    """
    missing = [c for c in ("difference", "mean") if c not in pairs.columns]
    if missing:
        raise MissingColumnError(f"random_error_model: pairs lack column(s) {missing}; build "
                                 "them with fluxpart.uncertainty.paired_differences")
    for name, value in (("bins", bins), ("min_pairs_per_bin", min_pairs_per_bin)):
        if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
            raise FluxpartError(f"random_error_model: {name} = {value!r}: expected a whole "
                                "number >= 1")
    mean = pairs["mean"].to_numpy(dtype=float)
    difference = pairs["difference"].to_numpy(dtype=float)
    rows, bin_rows = {}, []
    for name, mask in (("uptake", mean < 0), ("release", mean >= 0)):
        row, found = _fit_class(np.abs(mean[mask]), difference[mask], bins, min_pairs_per_bin,
                                name)
        rows[name] = row
        bin_rows.extend(found)
    if rows["uptake"] is None and rows["release"] is None:
        raise InsufficientDataError(
            f"random error: only {len(pairs)} record pairs 24 h apart under similar conditions; "
            f"at least {min_pairs_per_bin} of one flux class are needed (both records measured, "
            "drivers similar)")
    for name, other in (("uptake", "release"), ("release", "uptake")):
        if rows[name] is None:
            rows[name] = {**rows[other], "pairs": 0, "bins": 0, "source": f"from {other}"}
    coefficients = pd.DataFrame([rows[name] for name in _CLASSES],
                                index=pd.Index(list(_CLASSES), name="flux_class"))
    bins_table = pd.DataFrame(bin_rows, columns=["flux_class", "bin", "pairs", "mean_abs_nee",
                                                 "sigma", "laplace_scale"])
    bins_table.index = pd.RangeIndex(len(bins_table), name="index")
    return RandomErrorModel(coefficients=coefficients, bins=bins_table)


def record_random_error(model: RandomErrorModel, nee, fill_quality, fill_std, fill_count, *,
                        min_fill_count=_MIN_FILL_COUNT) -> np.ndarray:
    """Standard deviation of the random error of each NEE record.

    Parameters
    ----------
    model : RandomErrorModel
        From :func:`random_error_model`.
    nee : array_like
        Gap-filled NEE (measured where available) [µmol m-2 s-1].
    fill_quality : array_like of int
        0 measured, 1/2/3 filled with quality A/B/C, -1 unfilled.
    fill_std : array_like
        Standard deviation of the records averaged into each fill [µmol m-2 s-1]
        (NaN for measured records).
    fill_count : array_like of int
        Number of records averaged into each fill.
    min_fill_count : int, optional
        Fewest averaged records for the fill's spread to count; default 5 (our choice).

    Returns
    -------
    numpy.ndarray
        σ per record [µmol m-2 s-1]; NaN where NEE is unfilled.

    Notes
    -----
    - Measured record: the model at its measured value, σ = model(NEE).
    - Filled record: σ = max(model(filled NEE), spread), the spread being the
      standard deviation of the measured records the fill averaged (counted
      only where at least `min_fill_count` records were averaged). The spread of
      records under similar conditions is the error of a fill as an estimate of
      the missing flux: it holds their random error and the variability the
      drivers do not explain. Taking the larger of the two never makes a filled
      record look more certain than a measured one of the same flux.

    Included: the random measurement error, and for fills the spread under similar
    conditions. Not included: systematic errors (energy-balance closure,
    advection, storage, calibration), the bias of fills in long gaps, the u*
    threshold (a separate part of the budget) and the correlation of errors
    between fills that share source records.
    """
    nee = np.asarray(nee, dtype=float)
    n = nee.size
    quality = _values(fill_quality, "fill_quality", n)
    spread = _values(fill_std, "fill_std", n)
    count = _values(fill_count, "fill_count", n)
    sigma = model.predict(nee)
    filled = (quality >= 1) & np.isfinite(nee)
    usable_spread = np.where(filled & (count >= min_fill_count) & np.isfinite(spread), spread, 0.0)
    sigma = np.where(filled, np.maximum(sigma, usable_spread), sigma)
    sigma[~np.isfinite(nee) | (quality == -1)] = np.nan
    return sigma


def timeseries_random_error(timeseries: pd.DataFrame, **settings):
    """Random error of every NEE record of a pipeline timeseries, and its model.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        The pipeline's timeseries: ``nee_measured``, ``nee_filled``,
        ``nee_fill_quality``, ``nee_fill_std``, ``nee_fill_count`` [µmol m-2 s-1 or
        1] and the drivers ``rg_filled``, ``tair_filled``, ``vpd_filled`` with their
        ``*_fill_quality`` (only measured driver values, quality 0, are compared).
    **settings
        Keyword arguments of :func:`paired_differences` (tolerances),
        :func:`random_error_model` (``bins``, ``min_pairs_per_bin``) and
        :func:`record_random_error` (``min_fill_count``).

    Returns
    -------
    sigma : numpy.ndarray
        σ per record [µmol m-2 s-1] (:func:`record_random_error`).
    model : RandomErrorModel
        The fitted model.

    Raises
    ------
    MissingColumnError
        If a column is absent.
    InsufficientDataError
        If too few pairs are found.
    """
    needed = ["nee_measured", "nee_filled", "nee_fill_quality", "nee_fill_std", "nee_fill_count"]
    needed += [f"{d}_{part}" for d in ("rg", "tair", "vpd") for part in ("filled", "fill_quality")]
    absent = [c for c in needed if c not in timeseries.columns]
    if absent:
        raise MissingColumnError(f"random error: timeseries lacks column(s) "
                                 f"{', '.join(map(repr, absent))}")
    pair_keys = {"rg_tolerance", "tair_tolerance", "vpd_tolerance"}
    model_keys = {"bins", "min_pairs_per_bin"}
    record_keys = {"min_fill_count"}
    unknown = set(settings) - pair_keys - model_keys - record_keys
    if unknown:
        raise FluxpartError(f"timeseries_random_error: unknown setting(s) {sorted(unknown)}; "
                            f"valid: {sorted(pair_keys | model_keys | record_keys)}")
    drivers = {d: np.where(timeseries[f"{d}_fill_quality"].to_numpy() == 0,
                           timeseries[f"{d}_filled"].to_numpy(dtype=float), np.nan)
               for d in ("rg", "tair", "vpd")}
    pairs = paired_differences(timeseries.index, timeseries["nee_measured"].to_numpy(dtype=float),
                               drivers["rg"], drivers["tair"], drivers["vpd"],
                               **{k: v for k, v in settings.items() if k in pair_keys})
    model = random_error_model(pairs, **{k: v for k, v in settings.items() if k in model_keys})
    sigma = record_random_error(
        model, timeseries["nee_filled"].to_numpy(dtype=float),
        timeseries["nee_fill_quality"].to_numpy(), timeseries["nee_fill_std"].to_numpy(),
        timeseries["nee_fill_count"].to_numpy(),
        **{k: v for k, v in settings.items() if k in record_keys})
    return sigma, model


def draw_random_errors(sigma, draws, rng) -> np.ndarray:
    """Draw Laplace-distributed random errors with standard deviation `sigma`.

    Parameters
    ----------
    sigma : array_like
        Standard deviation of each record's error [µmol m-2 s-1].
    draws : int
        Number of draws (rows of the result).
    rng : numpy.random.Generator
        The generator to draw from.

    Returns
    -------
    numpy.ndarray
        Shape ``(draws, len(sigma))`` [µmol m-2 s-1]; NaN where sigma is NaN.

    Notes
    -----
    A Laplace distribution of scale b has variance 2b², so b = σ/√2; its excess
    kurtosis is 3. Flux random errors are closer to Laplace than to normal
    (Hollinger & Richardson 2005; Richardson et al. 2006).
    """
    sigma = np.asarray(sigma, dtype=float)
    return rng.laplace(0.0, 1.0, size=(int(draws), sigma.size)) * (sigma / np.sqrt(2.0))


def monte_carlo_sums(sigma, index, interval_minutes, *, draws=_DRAWS, seed=0) -> pd.DataFrame:
    """Random uncertainty of annual NEE sums by Monte Carlo with Laplace errors.

    Parameters
    ----------
    sigma : array_like
        Standard deviation of each record's random error [µmol m-2 s-1]
        (:func:`record_random_error`); NaN where NEE is unfilled.
    index : pandas.DatetimeIndex
        Time axis of the records (interval starts, local standard time).
    interval_minutes : int
        Record length [min], e.g. 30 or 60.
    draws : int, optional
        Monte Carlo draws; default 500 (our choice: the standard deviation is then
        known to about ±3 %, 1/√(2·draws)).
    seed : int, optional
        Seed of :func:`numpy.random.default_rng`; default 0.

    Returns
    -------
    pandas.DataFrame
        Indexed by calendar ``year``: ``random_sd`` (standard deviation of the
        annual sums of the drawn errors), ``random_percentile_2_5`` and
        ``random_percentile_97_5`` (their 2.5th and 97.5th percentiles),
        ``analytic_sd`` (√Σσ² converted, the same quantity without sampling)
        [g C m-2], ``records`` and ``draws``. NaN for a year with any NaN sigma
        (its NEE sum is not defined either).

    Raises
    ------
    FluxpartError
        If the arrays do not match or `draws` is not a whole number >= 2.
    SpacingError
        If `interval_minutes` is not a divisor of a day.

    Notes
    -----
    Assumption: the random errors of different records are independent, so the
    variance of an annual sum is the sum of the record variances. Errors of
    fills that share source records are in fact correlated; the sum's random
    uncertainty is then somewhat underestimated.

    The draws are made block by block of records in time order (at most 2**21
    draws × records at a time, ~16 MiB), so memory stays small for many years and
    the numbers depend only on the inputs, `draws` and `seed`.
    """
    sigma = np.asarray(sigma, dtype=float)
    if not isinstance(index, pd.DatetimeIndex) or len(index) != sigma.size:
        raise FluxpartError(f"monte_carlo_sums: expected a DatetimeIndex with one stamp per "
                            f"sigma ({sigma.size})")
    if isinstance(draws, bool) or not isinstance(draws, (int, np.integer)) or draws < 2:
        raise FluxpartError(f"monte_carlo_sums: draws = {draws!r}: expected a whole number >= 2")
    factor = _seconds_factor(interval_minutes)
    years, codes = np.unique(index.year.to_numpy(), return_inverse=True)
    rng = np.random.default_rng(seed)
    sums = np.zeros((int(draws), years.size))
    block = max(1, _BLOCK_ELEMENTS // int(draws))
    for start in range(0, sigma.size, block):
        stop = min(start + block, sigma.size)
        errors = draw_random_errors(sigma[start:stop], draws, rng)
        part = codes[start:stop]
        # Sum each run of records of one year at once (records in time order: one or two runs).
        edges = np.flatnonzero(np.diff(part)) + 1
        for first, last in zip(np.r_[0, edges], np.r_[edges, part.size], strict=True):
            sums[:, part[first]] += errors[:, first:last].sum(axis=1)
    sums *= factor
    variance = np.bincount(codes, weights=np.square(sigma), minlength=years.size)
    low, high = np.percentile(sums, [2.5, 97.5], axis=0)
    out = pd.DataFrame({"random_sd": sums.std(axis=0, ddof=1), "random_percentile_2_5": low,
                        "random_percentile_97_5": high, "analytic_sd": np.sqrt(variance) * factor,
                        "records": np.bincount(codes, minlength=years.size).astype(np.int64),
                        "draws": np.full(years.size, int(draws), dtype=np.int64)},
                       index=pd.Index(years.astype(np.int64), name="year"))
    return out


def _half_range(annual: pd.DataFrame, flux: str) -> pd.Series:
    column = f"{flux}_ustar_spread"
    if column in annual.columns:
        return annual[column].astype(float) / 2.0
    return pd.Series(np.nan, index=annual.index)


def _partitioning(annual: pd.DataFrame, kind: str) -> pd.Series:
    column = f"{kind}_method_difference"
    if column in annual.columns:
        return annual[column].astype(float).abs() / 2.0
    day, night = f"{kind}_daytime", f"{kind}_nighttime"
    if day in annual.columns and night in annual.columns:
        return (annual[day] - annual[night]).astype(float).abs() / 2.0
    return pd.Series(np.nan, index=annual.index)


def _root_sum_of_squares(*parts: pd.Series) -> pd.Series:
    table = pd.concat(parts, axis=1)
    total = np.sqrt(np.square(table).sum(axis=1, min_count=1))
    return total


def uncertainty_budget(annual: pd.DataFrame, random: pd.DataFrame) -> pd.DataFrame:
    """Combine the random, u* threshold and partitioning parts of the annual sums.

    Parameters
    ----------
    annual : pandas.DataFrame
        The pipeline's annual table, indexed by year: ``nee`` and the partitioned
        sums [g C m-2], the u* scenario spreads ``<flux>_ustar_spread`` and the
        method differences ``gpp_method_difference``, ``reco_method_difference``
        [g C m-2] where available.
    random : pandas.DataFrame
        From :func:`monte_carlo_sums`, indexed by year.

    Returns
    -------
    pandas.DataFrame
        Indexed like `annual`, the columns of :data:`ANNUAL_COLUMNS` except the
        t CO2 ha-1 ones [g C m-2]; ``uncertainty_parts_missing`` names parts that
        could not be estimated in a year.

    Raises
    ------
    MissingColumnError
        If `random` lacks its columns or `annual` lacks ``nee``.

    Notes
    -----
    Parts:

    - random: the Monte Carlo standard deviation of the annual NEE sum. It is
      also the random part of nighttime GPP, because GPP = Reco − NEE record by
      record (Reco being a smooth function of temperature). Nighttime Reco and
      both daytime fluxes are model outputs fitted to many records; the random
      error of single records largely averages out of them, and their parameter
      (model) error is not included here.
    - u*: half the range (max − min) of the annual sums over the central and the
      scenario thresholds; with scenarios at the 5th, 50th and 95th bootstrap
      percentiles this spans the 5–95 % range of the threshold. The sum is not
      monotonic in the threshold, so the range over all runs is used rather than
      p95 − p05. NaN when no scenarios were run.
    - partitioning (GPP and Reco): half of |daytime − nighttime|.

    Total: root sum of squares of the available parts, assuming the three are
    independent (the random errors of the records do not depend on which
    threshold or method is chosen). The u* and partitioning parts are
    half-ranges rather than standard deviations, which makes the total
    conservative. A missing part is left out of the total and named in
    ``uncertainty_parts_missing``.

    Caution: systematic errors are not included; defer to the applicable
    crediting methodology and accredited verification.
    """
    needed = ("random_sd", "random_percentile_2_5", "random_percentile_97_5", "analytic_sd")
    absent = [c for c in needed if c not in random.columns]
    if absent:
        raise MissingColumnError(f"uncertainty_budget: random lacks column(s) {absent}; build "
                                 "it with fluxpart.uncertainty.monte_carlo_sums")
    if "nee" not in annual.columns:
        raise MissingColumnError("uncertainty_budget: the annual table has no column 'nee'")
    r = random.reindex(annual.index)
    out = pd.DataFrame(index=annual.index.copy())
    out["nee_uncertainty_random"] = r["random_sd"].astype(float)
    out["nee_uncertainty_random_percentile_2_5"] = r["random_percentile_2_5"].astype(float)
    out["nee_uncertainty_random_percentile_97_5"] = r["random_percentile_97_5"].astype(float)
    out["nee_uncertainty_random_analytic"] = r["analytic_sd"].astype(float)
    out["nee_uncertainty_ustar"] = _half_range(annual, "nee")
    out["nee_uncertainty_total"] = _root_sum_of_squares(out["nee_uncertainty_random"],
                                                        out["nee_uncertainty_ustar"])
    partitioning = {kind: _partitioning(annual, kind) for kind in ("gpp", "reco")}
    out["gpp_uncertainty_partitioning"] = partitioning["gpp"]
    out["reco_uncertainty_partitioning"] = partitioning["reco"]
    out["gpp_nighttime_uncertainty_random"] = out["nee_uncertainty_random"]
    missing = {"random": out["nee_uncertainty_random"].isna(),
               "ustar": out["nee_uncertainty_ustar"].isna(),
               "partitioning": partitioning["gpp"].isna() | partitioning["reco"].isna()}
    for flux in _FLUXES[1:]:
        kind = flux.split("_")[0]
        ustar_part = _half_range(annual, flux)
        out[f"{flux}_uncertainty_ustar"] = ustar_part
        missing["ustar"] = missing["ustar"] | ustar_part.isna()
        parts = [ustar_part, partitioning[kind]]
        if flux == "gpp_nighttime":
            parts.append(out["gpp_nighttime_uncertainty_random"])
        out[f"{flux}_uncertainty_total"] = _root_sum_of_squares(*parts)
    labels = [", ".join(name for name, mask in missing.items() if mask.loc[year])
              for year in out.index]
    out["uncertainty_parts_missing"] = pd.Series(labels, index=out.index)
    return out


def carbon_accounting_units(annual: pd.DataFrame) -> pd.DataFrame:
    """Restate annual net uptake in tonnes of CO2 per hectare.

    Parameters
    ----------
    annual : pandas.DataFrame
        Indexed by year: ``nee`` [g C m-2] and, where available,
        ``nee_uncertainty_total`` and ``nee_uncertainty_random`` [g C m-2].

    Returns
    -------
    pandas.DataFrame
        Indexed like `annual`: ``net_uptake_t_co2_per_ha`` (positive = net uptake
        of CO2 by the ecosystem = −NEE) and, where the inputs exist,
        ``net_uptake_t_co2_per_ha_uncertainty`` and
        ``net_uptake_t_co2_per_ha_uncertainty_random`` [t CO2 ha-1].

    Raises
    ------
    MissingColumnError
        If ``nee`` is absent.

    Notes
    -----
    g C → g CO2: × 44.009/12.011 (IUPAC conventional atomic weights, one C per
    CO2); g m-2 → t ha-1: × 0.01 (1 ha = 10⁴ m², 1 t = 10⁶ g). So 1 g C m-2 =
    0.036641 t CO2 ha-1.

    Caution: a tower's net uptake is not a certified credit. Harvest export,
    leakage, permanence and baselines are outside the tower's view; defer to the
    applicable crediting methodology and accredited verification.
    """
    if "nee" not in annual.columns:
        raise MissingColumnError("carbon_accounting_units: the annual table has no column 'nee'")
    factor = CO2_MOLAR_MASS / CARBON_MOLAR_MASS * _T_HA_PER_G_M2
    out = pd.DataFrame(index=annual.index.copy())
    out["net_uptake_t_co2_per_ha"] = -annual["nee"].astype(float) * factor
    for source, target in (("nee_uncertainty_total", "net_uptake_t_co2_per_ha_uncertainty"),
                           ("nee_uncertainty_random",
                            "net_uptake_t_co2_per_ha_uncertainty_random")):
        if source in annual.columns:
            out[target] = annual[source].astype(float) * factor
    return out
