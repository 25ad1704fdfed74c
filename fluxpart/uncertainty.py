"""The uncertainty budget: 1-sigma parts of every period sum and the stated 95 % intervals.

Every part is stated as one standard deviation; the parts are combined by root
sum of squares and the annual interval is ``sum ± 1.96 σ`` (DESIGN.md §4.1):

1. **Random error** of each measured NEE record. The paired-observation method
   (Hollinger & Richardson 2005; Richardson et al. 2006) compares two measured
   records exactly 24 h apart under similar conditions; binned by flux
   magnitude, the error grows linearly with ``|NEE|`` (:func:`random_error_model`).
   Annual sums of the measured records get their random uncertainty by Monte
   Carlo with Laplace-distributed errors (:func:`monte_carlo_sums`).
2. **Gap filling**: artificial gaps with the site's own gap lengths are cut into
   its measured records, filled by the same method and scored
   (:func:`artificial_gap_errors`); the error of a gap's sum is modelled as
   a·n + b·n² (independent and within-gap correlated parts, the correlation
   growing with gap length as Richardson & Hollinger 2007 describe) plus a
   systematic fill bias (:func:`gapfill_error_model`).
3. **u* threshold**: the spread of the sums over the u* scenario runs divided by
   the span of the standard-normal quantiles of their percentiles (:func:`ustar_sigma`).
4. **Fitted parameters**: E0 (its standard error, propagated through the
   night-to-day extrapolation, :func:`e0_sensitivity`), the reference
   respiration of every window (:func:`window_membership`) and, between window
   centres, the error of its linear interpolation (a Brownian bridge of the site's
   own window-to-window drift, :func:`interpolation_error`).
5. **Partitioning structure** (GPP and Reco): |daytime − nighttime| / √2, and
   where air and soil temperature are both measured the choice of respiration
   temperature, weighted by how well each fits the night data (:func:`driver_weight`).

:func:`period_uncertainty` computes the parts per day, month or year;
:func:`uncertainty_budget` adds the annual intervals; :func:`carbon_accounting_units`
restates net uptake in t CO2 ha-1.

Caution: these are the uncertainties the tower data themselves reveal.
:data:`NOT_QUANTIFIED` lists what they do not contain (systematic measurement
errors: energy-balance closure, advection, storage, footprint, calibration; a
model structure shared by both partitioning methods). A tower budget is one line
of evidence for carbon-credit quantification, not a certified credit; the
applicable crediting methodology and accredited verification decide how, and
whether, such numbers may be used.

References
----------
Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy covariance
measurements and its application to physiological models. Tree Physiology 25,
873–885. doi:10.1093/treephys/25.7.873

Richardson, A. D., Hollinger, D. Y., Burba, G. G., et al. (2006). A multi-site
analysis of random error in tower-based measurements of carbon and energy
fluxes. Agricultural and Forest Meteorology 136, 1–18.
doi:10.1016/j.agrformet.2006.01.007

Richardson, A. D. & Hollinger, D. Y. (2007). A method to estimate the additional
uncertainty in gap-filled NEE resulting from long gaps in the CO2 flux record.
Agricultural and Forest Meteorology 147, 199–208. doi:10.1016/j.agrformet.2007.06.004
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from statistics import NormalDist

import numpy as np
import pandas as pd

from . import driver_mixture, gap_sides
from ._validate import as_float
from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS
from .errors import (
    FluxpartError,
    InsufficientDataError,
    MissingColumnError,
    SpacingError,
)
from .gap_sides import gap_runs, run_ids
from .partition import pieces
from .robust_scale import scaled_mad
from .schema import NOT_QUANTIFIED, RANDOM_ERROR_MODEL_COLUMNS, UNCERTAINTY_COLUMNS

__all__ = [
    "ANNUAL_COLUMNS",
    "CALIBRATION_CHECK",
    "CONFIDENCE",
    "MODEL_COLUMNS",
    "NOT_QUANTIFIED",
    "RandomErrorModel",
    "UncertaintyInputs",
    "artificial_gap_errors",
    "bic_weight",
    "carbon_accounting_units",
    "draw_random_errors",
    "combined_driver_weight",
    "driver_day_weight",
    "driver_weight",
    "e0_sensitivity",
    "e0_sigma",
    "effective_records",
    "gap_runs",
    "gapfill_error_model",
    "interpolation_error",
    "laplace_delta_bic",
    "monte_carlo_sums",
    "paired_differences",
    "period_uncertainty",
    "random_error_model",
    "record_inputs",
    "record_random_error",
    "mixture_day_weight",
    "share_second_moment",
    "structural_sigma",
    "timeseries_random_error",
    "uncertainty_budget",
    "ustar_sigma",
    "window_membership",
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
# Float64 errors scaled at a time in monte_carlo_sums (~256 KiB: within a core's L2 cache);
# changes no number (each draw's sums are its own row's)
_SCALED_ELEMENTS = 1 << 15
#: Tonnes per hectare in one gram per square metre: 1 ha = 1e4 m2, 1 t = 1e6 g (SI).
_T_HA_PER_G_M2 = 1e4 / 1e6
_MINUTES_PER_DAY = 1440
_CLASSES = ("uptake", "release")
#: Artificial gaps: rounds (one extra fill each) and share of measured records held
#: out per round; fewest scored records of a class for its error model. Our choices:
#: 12 rounds give about two thousand scored gaps in a year (three, before 0.8.0, left
#: the fill bias's standard error as large as the rest of the gap-filling part; six,
#: 0.8.0 to 0.28.0, still let the annual NEE σ of one site-year range by a factor of
#: 1.9 in the median over placements of the gaps, 1.5 with 12 and 1.3 with 24, which
#: cost +22 % of `process` CPU: round gapsigma, :func:`artificial_gap_errors` Notes);
#: holding out a tenth keeps the donors nearly as plentiful as in the real fill.
_GAP_ROUNDS = 12
_GAP_SHARE = 0.1
_GAP_MIN_RECORDS = 50
#: An artificial gap longer than a day is placed where its own length of measured
#: records lies on each side (no real long gap or earlier artificial gap there), as
#: around the real gap it copies; random starts tried before one is taken anyway.
_CLEAR_TRIES = 50
#: Batches of artificial gaps placed at their real gap's time of day in a round; the
#: hours a site's real gaps start at may hold too few measured records for the round's
#: share (all real gaps at night, say), and later batches start at random. A year's round
#: of short gaps needs about 5 batches of 64, a round of long gaps one batch per gap
#: (1-30); placing a batch costs well under a millisecond, the round's fill ~20 ms.
_TIME_OF_DAY_BATCHES = 200
#: Fills of different gaps at most this far apart [days] share part of their error: the
#: first window of marginal distribution sampling's driver steps is ±7 days (Reichstein,
#: gap-filling flow chart, workshop slides 2004), so fills that close draw on
#: overlapping donors and conditions.
_NEIGHBOUR_DAYS = 7.0
#: Length classes of the gaps longer than a day [days]: up to 7 (days), up to 28 (weeks),
#: longer (months); each class's shared fill error is scored on the artificial gaps of
#: its own lengths (:func:`gapfill_error_model`, Notes). 7 days: the first donor window
#: of marginal distribution sampling (``_NEIGHBOUR_DAYS``), a gap within it lies in one
#: 7-day block; 28 days: the widest full window of quality A (Reichstein, gap-filling
#: flow chart, workshop slides 2004; :data:`fluxpart.gapfill.QUALITY_A_WINDOW_DAYS`):
#: the middle of a longer gap lies more than 14 days from any measured NEE and is filled
#: from other weeks or seasons.
_GAP_CLASS_DAYS = (7.0, 28.0)
_LONG_CLASSES = ("long", "weeks", "months")   # column suffixes of the classes, shortest first
#: Confidence level of the stated intervals (DESIGN.md §4.1).
CONFIDENCE = 0.95
#: How the stated intervals were checked, for the manifest and the report: measured by
#: ``tests/benchmarks/bench_calibration.py``, ``bench_generalisation.py``,
#: ``bench_other_physics.py``, ``bench_period_coverage.py`` and the independent trials for
#: this release (DEVELOPERS.md, "Calibration benchmark" and the changelog); the figures are
#: the README's cautions' (``tests/test_calibration_statement.py``), restated at each
#: release (until review33 it still gave 0.16.0's; until review43 it left out the six
#: trials after the eleventh, whose per-trial NEE coverage reaches down to 7 of 12).
CALIBRATION_CHECK = (
    "fluxpart 0.40.0 (the generated sets' coverage and central values those of 0.39.0 "
    "and 0.38.0, whose coverage is 0.36.0's; 0.38.0 widens the partitioned intervals where the nights "
    "show a mixture of air and soil temperature: 3 of 168 site-years, 1.2- to 5.8-fold; "
    "0.36.0's u* "
    "scenarios start their daytime fits from the central run's: the daytime intervals moved "
    "by at most 1.4 g C m-2, no coverage and no central value did; the four partitioned "
    "fluxes share one structural part, estimated from both method differences (nighttime "
    "GPP = Reco − NEE), since 0.35.0; night gaps "
    "take no donor within the u* threshold's own 1-sigma above it since 0.34.0; the "
    "gap-filling part models a long gap's shared error by its length since 0.33.0) "
    "on 70 generated known-truth "
    "site-years of seven invented archetypes (35 held out while most rules were chosen): "
    "the stated 95 % intervals contained the true "
    "annual sum in 99 % (NEE), 100 % and 100 % (nighttime GPP and Reco) and 97 % and 91 % "
    "(daytime GPP and Reco) of site-years; on 56 site-years of seven further invented "
    "climates in 93 % (NEE), 96 % and 98 % (nighttime GPP and Reco) and 93 % and 96 % "
    "(daytime GPP and Reco); on 42 site-years whose fluxes follow other functional forms "
    "(Q10 respiration, temperature-optimum photosynthesis, correlated errors) in 95 %, 98 % "
    "and 98 %, and 95 % and 90 %; on 77 site-years of six independent trials with physics "
    "the methods do not assume, NEE in 84 % (every miss too much uptake): where a site's "
    "physics departs from the methods', the intervals are too narrow; on 675 site-years "
    "of twenty-two later trials (measured on 0.22.0–0.39.0; wet-leaf and fog gaps, sunlit and "
    "vented release, cold-air drainage, gradual flux loss below the u* threshold, an "
    "analyser's residual self-heating, multi-week outages across leaf-out or a flood, "
    "ordinary site-years, drought, snow, paddy and hourly tropical site-years, and a "
    "network's year through batch, long records with change, sites at the methods' edges, "
    "ordinary sites in other model forms, hard but ordinary years, and canopies and "
    "respiration in parts beyond the methods' forms, leaf biochemistry, tides and a "
    "road's traffic, wet soils, rain pulses and shaded crops, ordinary sites, respiration "
    "that follows the season's litter and uptake, ordinary sites with one complication "
    "each, peatlands, rain pulses and the polar day), NEE in 92 % (7 of "
    "12 to 36 of 36 per trial); the partitioned intervals of the three latest "
    "trials (114 site-years on 0.38.0–0.39.0) held the truth in only 77 % and 88 % "
    "(nighttime GPP and Reco) and 73 % and 51 % (daytime): both methods read low where "
    "plants' own respiration follows the air; "
    "monthly NEE sums "
    "+/- 1.96 sigma in 96.9 % of 420 generated months; a real site can "
    "differ from any generator")
#: What the stated intervals do not contain (column descriptions, manifest, README).
_FLUXES = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime")

#: Unit and description of every column :func:`uncertainty_budget`,
#: :func:`period_uncertainty` and :func:`carbon_accounting_units` add to the budget
#: tables, and of the error-model tables: kept in the column catalogue
#: (:mod:`fluxpart.schema`), named here for the stage's own use.
ANNUAL_COLUMNS = UNCERTAINTY_COLUMNS
MODEL_COLUMNS = RANDOM_ERROR_MODEL_COLUMNS


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


def _quality_codes(column: pd.Series) -> np.ndarray:
    """Fill-quality codes as numbers, from int codes or their text labels."""
    if pd.api.types.is_numeric_dtype(column.dtype):
        return column.to_numpy(dtype=float)
    labels = {"unfilled": -1.0, "measured": 0.0, "A": 1.0, "B": 2.0, "C": 3.0}
    return column.astype(object).map(labels).to_numpy(dtype=float)


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
    for uptake and one for release, after Richardson et al. (2006), whose abstract
    states that the random error grows linearly with the flux's magnitude. A class
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
    drivers = {d: np.where(_quality_codes(timeseries[f"{d}_fill_quality"]) == 0,
                           timeseries[f"{d}_filled"].to_numpy(dtype=float), np.nan)
               for d in ("rg", "tair", "vpd")}
    pairs = paired_differences(timeseries.index, timeseries["nee_measured"].to_numpy(dtype=float),
                               drivers["rg"], drivers["tair"], drivers["vpd"],
                               **{k: v for k, v in settings.items() if k in pair_keys})
    model = random_error_model(pairs, **{k: v for k, v in settings.items() if k in model_keys})
    sigma = record_random_error(
        model, timeseries["nee_filled"].to_numpy(dtype=float),
        _quality_codes(timeseries["nee_fill_quality"]),
        timeseries["nee_fill_std"].to_numpy(),
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
    kurtosis is 3. The difference of two independent unit exponentials is a
    unit Laplace variable (Kotz, Kozubowski & Podgórski 2001, The Laplace
    Distribution and Generalizations, Birkhäuser (m)); the tests check the
    draws against ``scipy.stats.laplace``. Flux random errors are closer to
    Laplace than to normal (Hollinger & Richardson 2005; Richardson et al. 2006).
    """
    sigma = np.asarray(sigma, dtype=float)
    return _laplace_errors(sigma, int(draws), rng, _ErrorBuffers(int(draws) * sigma.size))


class _ErrorBuffers:
    """Work arrays of :func:`_laplace_errors` for up to `size` draws x records, so that the
    blocks of :func:`monte_carlo_sums` reuse them instead of allocating ~34 MB each.
    ``errors_size``: the float64 errors' own size, where a caller scales the draws a few
    rows at a time (:func:`monte_carlo_sums`); default `size`."""

    def __init__(self, size: int, errors_size: int | None = None):
        self.unit = np.empty(size, dtype=np.float32)
        self.other = np.empty(size, dtype=np.float32)
        self.errors = np.empty(size if errors_size is None else errors_size)

    def take(self, shape):
        """Views of the first ``prod(shape)`` elements of each array, in `shape`."""
        count = shape[0] * shape[1]
        return (self.unit[:count].reshape(shape), self.other[:count].reshape(shape),
                self.errors[:count].reshape(shape))


def _laplace_units(shape, rng, buffers) -> np.ndarray:
    """Laplace(0, 1) draws of `shape` (draws x records), float32, times √2 (the
    difference of two unit exponentials, variance 2), in `buffers`' ``unit`` array."""
    count = shape[0] * shape[1]
    unit = buffers.unit[:count].reshape(shape)
    other = buffers.other[:count].reshape(shape)
    # Laplace(0, 1) as the difference of two unit exponentials (ziggurat draws in float32:
    # about half the CPU of numpy's inverse-CDF Laplace; float32 resolves a record's error
    # to 1e-7 of itself, far below the ~3 % Monte Carlo precision of a sum)
    rng.standard_exponential(dtype=np.float32, out=unit)
    rng.standard_exponential(dtype=np.float32, out=other)
    unit -= other
    return unit


def _laplace_errors(sigma, draws, rng, buffers) -> np.ndarray:
    """:func:`draw_random_errors` written into `buffers` (an :class:`_ErrorBuffers`)."""
    unit = _laplace_units((draws, sigma.size), rng, buffers)
    errors = buffers.errors[:unit.size].reshape(unit.shape)
    return np.multiply(unit, sigma / np.sqrt(2.0), out=errors)


def monte_carlo_sums(sigma, index, interval_minutes, *, draws=_DRAWS, seed=0,
                     year_keys=None) -> pd.DataFrame:
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
    year_keys : array_like of int, optional
        Budget year of each record (:func:`fluxpart.budget_calendar.budget_years`),
        non-decreasing in time; default the calendar year of `index`.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``year`` (calendar, or the keys of `year_keys`): ``random_sd``
        (standard deviation of the
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
    keys = index.year.to_numpy() if year_keys is None else np.asarray(year_keys)
    if keys.size != sigma.size:
        raise FluxpartError(f"monte_carlo_sums: {keys.size} year keys for {sigma.size} records")
    years, codes = np.unique(keys, return_inverse=True)
    rng = np.random.default_rng(seed)
    sums = np.zeros((int(draws), years.size))
    block = max(1, _BLOCK_ELEMENTS // int(draws))
    width = min(block, sigma.size)
    # the draws are scaled and summed a few rows at a time, in a float64 array of ~256 KiB
    # (cache-resident, not 16 MiB): each row's sums are the same whatever rows are beside
    # it (elementwise products, then a reduction along each row)
    rows = max(2, _SCALED_ELEMENTS // width)
    buffers = _ErrorBuffers(int(draws) * width, min(rows, int(draws)) * width)
    for start in range(0, sigma.size, block):
        stop = min(start + block, sigma.size)
        unit = _laplace_units((int(draws), stop - start), rng, buffers)
        scale = sigma[start:stop] / np.sqrt(2.0)
        part = codes[start:stop]
        # Sum each run of records of one year at once (records in time order: one or two runs).
        edges = np.flatnonzero(np.diff(part)) + 1
        runs = list(zip(np.r_[0, edges], np.r_[edges, part.size], strict=True))
        for row in range(0, int(draws), rows):
            chunk = unit[row:row + rows]
            errors = np.multiply(chunk, scale,
                                 out=buffers.errors[:chunk.size].reshape(chunk.shape))
            for first, last in runs:
                sums[row:row + rows, part[first]] += errors[:, first:last].sum(axis=1)
    sums *= factor
    variance = np.bincount(codes, weights=np.square(sigma), minlength=years.size)
    low, high = np.percentile(sums, [2.5, 97.5], axis=0)
    out = pd.DataFrame({"random_sd": sums.std(axis=0, ddof=1), "random_percentile_2_5": low,
                        "random_percentile_97_5": high, "analytic_sd": np.sqrt(variance) * factor,
                        "records": np.bincount(codes, minlength=years.size).astype(np.int64),
                        "draws": np.full(years.size, int(draws), dtype=np.int64)},
                       index=pd.Index(years.astype(np.int64), name="year"))
    return out


# --------------------------------------------------------------------------- gap filling

def _block_ids(mask, block_records: int) -> np.ndarray:
    """Number of the block each record belongs to, the runs of True cut into blocks of
    `block_records` from each run's start (0, 1, ... in time order); -1 outside runs."""
    mask = np.asarray(mask, dtype=bool)
    run = run_ids(mask)
    starts = np.flatnonzero(np.diff(np.concatenate([[0], mask.astype(np.int8)])) == 1)
    offset = np.arange(mask.size) - starts[np.maximum(run, 0)] if starts.size else run
    begins = mask & (offset % max(int(block_records), 1) == 0)
    return np.where(mask, np.cumsum(begins) - 1, -1)


def _clear_start(start, length, occupied, rng, tries=_CLEAR_TRIES) -> int:
    """A start for an artificial gap of `length` records with measured records around it.

    The first of `start` and up to `tries` further random starts whose gap, widened
    by its own length on each side, meets no `occupied` record (a real long gap or
    an artificial one placed before); the last start drawn if none does. `occupied`:
    boolean masks of one size, a record occupied where any is True (each looked at
    over the widened gap only, not joined over the whole record on each draw).
    """
    n = occupied[0].size
    for _ in range(tries):
        window = slice(max(start - length, 0), start + 2 * length)
        if not any(mask[window].any() for mask in occupied):
            return int(start)
        start = int(rng.integers(0, n))
    return int(start)


def _offsets(lengths) -> np.ndarray:
    """0, 1, ..., length - 1 for each of `lengths` in turn, joined."""
    return np.arange(lengths.sum()) - np.repeat(np.cumsum(lengths) - lengths, lengths)


def _newly_marked(mask, measured, starts, stops) -> int:
    """The `measured` records not yet in `mask` within the union of ``[starts, stops)``,
    each counted once: the spans sorted by start and each cut to what the spans before
    it have not reached, so that no record's position is listed twice (a sort of the
    draw's few spans, not of its records' positions, round speed59)."""
    order = np.argsort(starts, kind="stable")
    starts, stops = starts[order], stops[order]
    reached = np.concatenate([[0], np.maximum.accumulate(stops)[:-1]])
    begins = np.maximum(starts, reached)
    widths = np.maximum(stops - begins, 0)
    position = np.repeat(begins, widths) + _offsets(widths)
    return int(np.count_nonzero(measured[position] & ~mask[position]))


def _hold_out(mask, hidden, hidden_real, starts, lengths, sources, measured) -> int:
    """Mark the artificial gaps ``[start, start + length)`` in `mask` (cut at the end of
    the record) and, where `hidden` is given, add to it the pattern of `hidden_real`
    of the real gap each copies (starting at `sources`), all gaps of a draw at once.
    Returns the `measured` records newly marked (each once, where gaps overlap), so that
    a round counts its held-out records draw by draw, not over the whole record after
    each draw (a pass per draw: ~50 draws a round on ten site-years, round speed55)."""
    fresh = _newly_marked(mask, measured, starts, np.minimum(starts + lengths, mask.size))
    offset = _offsets(lengths)
    position = np.repeat(starts, lengths) + offset
    inside = position < mask.size
    position = position[inside]
    mask[position] = True
    if hidden is not None:
        rows, *columns = np.nonzero(hidden_real[(np.repeat(sources, lengths) + offset)[inside]])
        hidden[(position[rows], *columns)] = True
    return fresh


def artificial_gap_errors(nee_measured, noise_sigma, is_night, fill, *, rounds=_GAP_ROUNDS,
                          share=_GAP_SHARE, seed=0, records_per_day=None,
                          conditions_missing=None) -> pd.DataFrame:
    """Score gap filling on artificial gaps cut into the site's own measured records.

    Parameters
    ----------
    nee_measured : array_like
        NEE after screening and the u* filter [µmol m-2 s-1], NaN where missing.
    noise_sigma : array_like
        Random error (standard deviation) of each measured record [µmol m-2 s-1]
        (:func:`record_random_error`); its variance is removed from the scores.
    is_night : array_like of bool
        Night records.
    fill : callable
        ``fill(values, hidden) -> filled values``: the pipeline's own NEE gap
        filling of a series with NaN gaps (same method and settings as the real
        fill), with the similarity conditions marked True in `hidden` (a boolean
        array like `conditions_missing`, or None) treated as unavailable.
    rounds : int, optional
        Independent sets of artificial gaps, one fill each; default 12 (our
        choice; see ``_GAP_ROUNDS`` and Notes).
    share : float, optional
        Share of the measured records held out per round; default 0.1 (our choice:
        small enough that donors stay nearly as plentiful as in the real fill).
    seed : int, optional
        Seed of the gap placement.
    records_per_day : int, optional
        Records per day. Given, gaps longer than one day get rounds of their own
        (``long``) and every gap its ``start_day``; None (default): neither.
    conditions_missing : array_like of bool, optional
        Shape (records,) or (records, conditions): True where a similarity
        condition of the real fill (a driver: Rg, Tair, VPD) was unavailable.
        Given, each artificial gap also hides the conditions that were missing in
        the real gap it takes its length from, record by record from the gap's
        start, so that a site's outages of every sensor are scored as the fills
        of such outages (by the mean diurnal course) are made. None (default):
        no condition is hidden (`fill` gets ``hidden=None``).

    Returns
    -------
    pandas.DataFrame
        One row per artificial gap and record class (``night``, ``day``); in the
        rounds of gaps longer than a day, one row per 7-day block of a gap (cut
        from the gap's start) and record class: ``round``, ``gap`` (number of the
        gap, or of the block, in the round), ``records`` (held-out measured
        records of the class), ``length`` (records in the whole gap),
        ``size_records`` (Σ max(|fill| / r, 1) over them [1], r =
        ``size_reference``, the class's mean |NEE| over its measured records
        [µmol m-2 s-1]), ``error_sum`` (Σ fill − measured [µmol m-2 s-1]),
        ``noise_variance``
        (Σ σ² of the measured values [(µmol m-2 s-1)²]), ``long`` (the row
        belongs to a round of gaps longer than one day), ``start_day`` (the
        gap's, or block's, first record [days from the first record]; NaN
        without `records_per_day`) and ``parent`` (number of the gap in its
        round that the row's gap or block lies in).

    Notes
    -----
    The gap lengths are drawn from the site's own real gaps (each real gap equally
    likely), each placed on a random day at the time of day its real gap started
    (with `records_per_day`; without it, at random starts); only the measured
    records inside an artificial gap are scored. The time of day is kept since
    0.15.0: a fill's error depends on the hour (dawn and dusk fills draw on other
    donors than midday ones, and night gaps take night donors only), and real gaps
    are not spread evenly over the day (the u* filter's at night, a wet sensor's in
    rain hours, mornings excluded for a storage release), while random starts scored
    the hours in proportion to the measured records. Over three sets of artificial
    gaps each, the NEE interval held the truth in 96.7 / 92.9 / 96.8 % of the three
    generated benchmark sets (random starts: 97.6 / 92.3 / 94.4 %; generalisation
    89.3–96.4 % between sets before, 92.9 % in all three now), mean width +3 / 0 /
    +7 %. With `conditions_missing`, an artificial gap
    copies the driver gaps of its real gap as well: a gap whose drivers were
    recorded is filled from similar conditions, one in an outage of the whole
    station only from the diurnal course of other days, which errs more. Gaps
    longer than a day are rare among a site's gaps (a few in thousands) but
    carry most of a month's gap-filling error, so where the site has any,
    `rounds` further rounds hold out only such gaps, their lengths drawn from the
    site's own gaps longer than a day. The fill of a held-out record differs from
    its measured value by the fill error minus the measurement's random error; the
    latter is independent of the fill, so its variance is subtracted when the
    error model is fitted (:func:`gapfill_error_model`). An artificial gap longer
    than a day is placed with its own length of records clear of real long gaps and
    of the round's other gaps on each side, as the real gap it copies lies among
    measured records: stacked against another outage it would be filled from
    donors twice as far away (our choice; on the 70 calibration site-years the
    mean NEE interval narrowed from 34.5 to 33.4 g C m-2 with it). Falge et al. (2001)
    and Moffat et al. (2007) scored gap-filling methods in this way on
    artificial gaps of several lengths.

    Rounds: 12 by default since round gapsigma (6 from 0.8.0). The gap-filling
    part is estimated from one set of artificial gaps and moves with the set:
    over 12 placements on 10 generated site-years (``bench_gap_seeds.py``) the
    annual NEE σ of a site-year ranged by a factor of 1.87 in the median
    (1.30–2.23; coefficient of variation 0.21) with 6 rounds, 1.48 (1.17–1.64;
    0.12) with 12 and 1.32 (0.08) with 24. With 6 rounds most of it (61 % of the
    variance of the part's square, in the median) was the fill-bias term
    max(B² − S², 0) of :func:`period_uncertainty`: B's spread over placements
    equals its standard error S (ratio 1.0 in the median), so the term switched
    on and off with the draw; S falls as 1/√rounds and the term's noise with it.
    The term's upward bias (E max(B² − S², 0) exceeds the squared bias by up to
    S²) falls alike: the mean annual NEE interval of the three generated
    benchmark sets went from 37.3 / 35.6 / 36.0 to 34.7 / 34.0 / 36.3 g C m-2,
    coverage 97.1 / 94.6 / 97.6 % → 97.1 / 96.4 / 97.6 % (24 rounds: 33.1 / 34.6 /
    34.6, the same coverage). Cost: one fill per round, about +0.1 s CPU per
    site-year of 30-min records at 12 rounds (+8 % of `process`; +14 % in the
    test files that run `process` most), +0.3 s at 24 (+22 %; +30 % in those
    files, beyond the test suite's time budget), which is why 12.

    References
    ----------
    Falge, E. et al. (2001). Agric. For. Meteorol. 107, 43–69.
    Moffat, A. M. et al. (2007). Agric. For. Meteorol. 147, 209–232.
    """
    nee = np.asarray(nee_measured, dtype=float)
    n = nee.size
    noise = _values(noise_sigma, "noise_sigma", n)
    night = np.asarray(is_night, dtype=bool)
    measured = np.isfinite(nee)
    real_starts, real_lengths = gap_runs(~measured)
    hidden_real = None
    if conditions_missing is not None:
        hidden_real = np.asarray(conditions_missing, dtype=bool)
        if hidden_real.shape[0] != n:
            raise ValueError(f"conditions_missing has {hidden_real.shape[0]} records; "
                             f"nee_measured has {n}")
        # only the pattern inside the real gaps is copied
        hidden_real = hidden_real & ~measured.reshape((n,) + (1,) * (hidden_real.ndim - 1))
    columns = ["round", "gap", "record_class", "records", "length", "size_records",
               "size_reference", "error_sum", "noise_variance", "long", "start_day", "parent"]
    if real_lengths.size == 0 or measured.sum() < 10:
        return pd.DataFrame(columns=columns)
    rng = np.random.default_rng([int(seed), 2007])
    target = share * measured.sum()
    # each class's typical flux: the mean |NEE| of its measured records
    typical = {name: float(np.abs(nee[measured & in_class]).mean())
               if (measured & in_class).any() else np.nan
               for name, in_class in (("night", night), ("day", ~night))}
    per_day = np.nan if records_per_day is None else float(records_per_day)
    every_gap = np.arange(real_lengths.size)
    long_gaps = every_gap[real_lengths > per_day] if records_per_day else every_gap[:0]
    long_real = np.zeros(n, dtype=bool)
    for gap in long_gaps:
        long_real[real_starts[gap]:real_starts[gap] + real_lengths[gap]] = True
    day_count = -(-n // int(per_day)) if records_per_day else 0    # days, the last cut
    plan = [(every_gap, False)] * int(rounds)
    if long_gaps.size:
        plan += [(long_gaps, True)] * int(rounds)
    rows = []                   # per round and class: the columns, made a table once at the end
    classes = (("night", night), ("day", ~night))       # the masks once, not per round
    for number, (pool, is_long) in enumerate(plan):
        mask = np.zeros(n, dtype=bool)
        hidden = None if hidden_real is None else np.zeros_like(hidden_real)
        draws = 1 if is_long else 64       # a long gap alone can hold out the round's share
        batches = 0
        held_count = 0                     # the round's measured records held out
        while held_count < target:
            gaps = rng.choice(pool, size=draws)
            batches += 1
            # on a random day, at its real gap's time of day; where those hours hold too few
            # measured records for the round's share, the rest at random starts
            if records_per_day and batches <= _TIME_OF_DAY_BATCHES:
                starts = (rng.integers(0, day_count, size=draws) * int(per_day)
                          + real_starts[gaps] % int(per_day))
            else:
                starts = rng.integers(0, n, size=draws)
            if is_long:                                 # one gap a draw
                starts = np.array([_clear_start(starts[0], real_lengths[gaps[0]],
                                                (mask, long_real), rng)])
            held_count += _hold_out(mask, hidden, hidden_real, starts, real_lengths[gaps],
                                    real_starts[gaps], measured)
        held = mask & measured
        filled = np.asarray(fill(np.where(mask, np.nan, nee), hidden), dtype=float)
        error = np.where(held, filled - nee, 0.0)
        gap_id = run_ids(mask)
        # a gap longer than a day is scored by blocks of 7 days (gapfill_error_model)
        unit = _block_ids(mask, int(_NEIGHBOUR_DAYS * per_day)) if is_long else gap_id
        first = np.flatnonzero(np.diff(np.concatenate([[-1], unit])) != 0)
        first = first[unit[first] >= 0]                 # first record of each unit
        parent = gap_id[first]                          # the gap each unit lies in
        lengths = np.bincount(gap_id[mask])[parent]
        for name, in_class in classes:
            scored = held & in_class & np.isfinite(filled)
            ids = unit[scored]
            if ids.size == 0:
                continue
            count = np.bincount(ids, minlength=lengths.size)
            keep = np.flatnonzero(count)
            rows.append({
                "round": np.full(keep.size, number), "gap": keep,
                "record_class": np.full(keep.size, name, dtype=object),
                "records": count[keep],
                "length": lengths[keep],
                "size_records": np.bincount(ids, weights=_fill_size(filled[scored],
                                                                    typical[name]),
                                            minlength=lengths.size)[keep],
                "size_reference": np.full(keep.size, typical[name]),
                "error_sum": np.bincount(ids, weights=error[scored],
                                         minlength=lengths.size)[keep],
                "noise_variance": np.bincount(ids, weights=np.square(noise[scored]),
                                              minlength=lengths.size)[keep],
                "long": np.full(keep.size, is_long), "start_day": first[keep] / per_day,
                "parent": parent[keep]})
    if not rows:
        return pd.DataFrame(columns=columns)
    return pd.DataFrame({column: np.concatenate([row[column] for row in rows])
                         for column in columns})


def artificial_gap_seed(nee_measured) -> int:
    """Seed of the artificial-gap placement, drawn from the measured NEE itself.

    Parameters
    ----------
    nee_measured : array_like
        NEE after screening and the u* filter [µmol m-2 s-1], NaN where missing.

    Returns
    -------
    int
        The first 8 bytes of the SHA-256 of the series (float64, NaN written as one
        fixed value and -0.0 as 0.0, plus the missing-record mask), as an unsigned
        integer.

    Notes
    -----
    The gap-filling part of the uncertainty is estimated from one random set of
    artificial gaps; another set gives another estimate (on the demo site-year
    the annual NEE σ ranged from 6.4 to 19.0 g C m-2 over seeds 0–11 with six
    rounds, mostly the fill bias term max(B² − S², 0), whose estimate B has the
    standard error S; over 12 placements on the demo year of today's code, σ
    5.8–12.3 with six rounds, 6.3–11.3 with the 12 of round gapsigma and 6.7–10.9
    with 24, :func:`artificial_gap_errors` Notes).
    Drawn from the user's seed, that noise could be chosen: a run could be
    repeated with seeds until the interval is narrow. Drawn from the data, the
    set is fixed by the input, so the seed no longer moves the stated interval
    (beyond the Monte Carlo and bootstrap draws it still seeds) while the
    estimate's noise stays what the calibration benchmarks measured. Since 0.13.0.
    """
    values = np.asarray(nee_measured, dtype=np.float64)
    missing = np.isnan(values)
    # + 0.0: a negative zero ("-0.000", a logger's rounding) hashed as 0.0, the same
    # number (layouts50: the intervals of such a file differed from its "0.000" twin's)
    digest = hashlib.sha256((np.where(missing, 0.0, values) + 0.0).tobytes()
                            + np.packbits(missing).tobytes()).digest()
    return int.from_bytes(digest[:8], "little")


def gapfill_error_model(errors: pd.DataFrame, records_per_day=None) -> pd.DataFrame:
    """Fit the error of gap-filled sums from artificial-gap scores.

    Parameters
    ----------
    errors : pandas.DataFrame
        From :func:`artificial_gap_errors`.
    records_per_day : int, optional
        Records per day. Given, the long gaps' shared error is fitted per length
        class and the short gaps' model from gaps of at most a day (Notes, "Length
        classes"); None (default): one class of long gaps, the short gaps' model
        from the rounds' gaps of every length (as before gaplength50).

    Returns
    -------
    pandas.DataFrame
        Indexed by ``record_class`` (``night``, ``day``): ``bias`` (mean fill
        error per record [µmol m-2 s-1]), ``bias_se`` (its standard error),
        ``independent_variance`` a, ``correlated_variance`` b,
        ``correlated_variance_long``, ``_weeks``, ``_months`` b_long and
        ``block_covariance_long``, ``_weeks``, ``_months`` d for gaps of 1-7,
        7-28 and over 28 days, ``neighbour_covariance`` c [(µmol m-2 s-1)²],
        ``gaps`` and ``records`` scored, ``long_gap_blocks`` (7-day blocks of
        the gaps longer than one day scored), ``day_night_correlation`` and ``day_night_correlation_long`` ρ
        [1] (the same in both rows). A class without scores gets NaN.

    Notes
    -----
    For a gap with n scored records of a class, the fill error summed over the
    gap, after removing the mean bias, has variance a·n + b·n²: a is the part of
    each record's fill error that is independent of its neighbours, b the part
    shared by every record of the gap (the error of the conditions the donors
    represent: weather, phenology, a drifting respiration level). Its share
    grows with the gap's length, which gives the growth of the error correlation
    with gap length described by Richardson & Hollinger (2007). a and b are
    fitted by non-negative least squares to ``(S − bias·n)² − Σσ²`` divided by
    n (so that long and short gaps weigh alike), S being the scored error sum
    and Σσ² the measurement noise of the held-out values. ``bias`` is
    ``ΣS / Σn``; its standard error ``sqrt(Σ(S − bias·n)²) / Σn`` treats gaps as
    independent. These come from the rounds of gaps of all lengths. Where the
    noise is unknown (NaN: no random-error model), nothing is subtracted, so a
    and b then also hold the measurement noise of the held-out values, an upper
    bound rather than a part silently left out.

    Gaps longer than a day: the b·n² that fits gaps of hours reads the error of
    gaps of days to weeks 2–8 times too small on generated known-truth
    site-years (their fills come from donors days away or from the diurnal
    course alone), so they get their own b from the rounds of long gaps, each
    scored by blocks of 7 days (rows of :func:`artificial_gap_errors`): within
    a block the shared error is b_long·m² for its m records (beyond a week the
    fills draw on other donors, as for the neighbour covariance below).
    ``b_long = Σ((S − bias·m)² − Σσ² − a·m) / Σm²`` over the blocks, at least b
    (equal to b where the site has no gap longer than a day).

    Since 0.13.0 two refinements of the long-gap part, both measured on the
    artificial gaps themselves (before, blocks were independent and every
    record counted alike):

    - *Blocks of one gap are not independent.* In the middle of a gap of weeks
      every block is filled from the same distant days (or, where every sensor
      was out, from the mean diurnal course of other weeks), so their errors
      share a part. Its covariance d per record pair of two different blocks of
      one gap is the moment estimate ``Σ_g (T_g² − Σ S_i²) / Σ_g (M_g² − Σ m_i²)``
      over the artificial long gaps (S_i, m_i a block's centred error sum and
      records, T_g, M_g the gap's sums; :func:`_between_block_covariance`),
      within [0, b_long]: ``block_covariance_long``.
    - *The shared error of a long gap grows with the size of its fills.* A
      block in the growing season errs by more than one in the dormant season
      (the fill errors follow the weather and the canopy the donors miss, which
      act on the flux in proportion to its size, as the random error does,
      Richardson et al. 2006). Within gaps longer than a day each record counts
      max(|fill| / r, 1) in place of 1 in the shared parts (b_long, d, ρ_long),
      r the class's mean |NEE| over its measured records
      (``size_reference_long``). The floor of 1 keeps a fill smaller than the
      class's typical flux from claiming a smaller error: a gap that spans a
      change of the canopy (leaf-out, a harvest) is filled from donors of the
      other state, so its fills can understate the truth.

    Measured in the contributor guide (changelog 0.13.0).

    *Length classes* (since gaplength50, with `records_per_day`). A block of a
    gap of a few days is filled from donors days away, a block in the middle of
    a gap of months from the mean diurnal course of other seasons, so its shared
    error is larger (Richardson & Hollinger 2007: the error grows with the gap's
    length). One b_long and d for every long gap let a site's longest outage set
    them for all: a 100-day outage of every sensor on a known-truth tundra
    record raised the day class's pooled b_long to 0.81 (µmol m-2 s-1)² (the blocks
    of its 1-7-day artificial gaps alone: 0.041, of its 7-28-day ones 0.082, of its
    100-day ones 1.23) and d to 0.46 (0.027 from the 7-28-day gaps alone; round
    gaplength50's changelog), and with them the NEE interval of a year after the
    outage, with no long gap of its own, from ±6.4 to ±12.1 g C m-2 (trial 23).
    The long gaps are therefore split by the length of the gap into days (1-7),
    weeks (7-28) and months (over 28 days; ``_GAP_CLASS_DAYS``: the first donor
    window and the widest window of quality A of the fill), each class's b_long
    and d scored on the blocks of the artificial gaps of its own lengths
    (:func:`_long_class_variances`); a real gap takes its class's. b_long is at
    least the next shorter class's (the days class's at least b); a class
    without blocks of its own takes the next shorter class's values, never a
    longer one's. ρ_long stays one value over all long blocks. The rounds of
    gaps of every length draw long gaps too (a 100-day gap in 7 of 12 rounds on
    that record); a, b, c, ρ and the bias then come from their gaps of at most a
    day, which are the gaps a and b are used for (that outage had raised the
    day class's b from 0.06 to 0.98 and its bias's standard error tenfold).

    Night and day records of one gap (or 7-day block) share their errors with
    correlation ρ (short gaps) and ρ_long (the blocks of gaps longer than a day):
    the shared variance of a gap with n_n night and n_d day records is
    b_n n_n² + b_d n_d² + 2ρ √(b_n b_d) n_n n_d. ρ is the moment estimate of the
    cross products of the two classes' centred error sums over the gaps scored in
    both (:func:`_day_night_correlation`), within [0, 1]. Before 0.9.0 ρ was 1
    (fully shared): night fill errors follow the respiration level, day fill
    errors the light response and the weather of the days the donors come
    from, and in the real outages of 20 generated known-truth site-years the
    two classes' block errors correlated at −0.34, while the estimate gave
    0–0.65 (median ~0.2). Estimating ρ narrowed the mean 95 % interval of annual
    NEE from 33.4 to 31.9, 37.8 to 36.3 and 37.7 to 36.0 g C m-2 on the three
    generated benchmark sets.

    Fills of different gaps: gaps within a week of each other are filled from
    overlapping donors under the same weather, so their errors are correlated.
    The covariance c per pair of records of two such gaps is the moment
    estimate ``Σ_g S_g (W_g − S_g) / Σ_g n_g (M_g − n_g)`` over the gaps of each
    round, S_g and n_g being a gap's centred error sum and records and W_g, M_g
    their sums over the gaps starting within ±7 days of it (the gap included);
    0 where negative. Ignoring it made the 1-sigma of monthly NEE sums 1.3
    times too small on generated known-truth site-years (their 95 % interval
    held the truth in 88 % of months).

    References
    ----------
    Richardson, A. D. & Hollinger, D. Y. (2007). A method to estimate the
    additional uncertainty in gap-filled NEE resulting from long gaps in the
    CO2 flux record. Agric. For. Meteorol. 147, 199–208.
    doi:10.1016/j.agrformet.2007.06.004

    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agric. For. Meteorol.
    136, 1–18.
    """
    needed = {"record_class", "records", "error_sum", "noise_variance"}
    if not needed <= set(errors.columns):
        raise MissingColumnError(f"gapfill_error_model: errors lack {sorted(needed - set(errors.columns))}; "
                                 "build them with artificial_gap_errors")
    rows, pooled = {}, {}
    long = errors["long"].to_numpy(dtype=bool) if "long" in errors else np.zeros(len(errors), bool)
    length_class = np.zeros(len(errors), dtype=int)
    short = ~long
    if records_per_day and "length" in errors:
        days = errors["length"].to_numpy(dtype=float) / float(records_per_day)
        length_class = np.searchsorted(_GAP_CLASS_DAYS, days, side="left")
        if long.any():              # the rounds of long gaps model the gaps longer than a day
            short = ~long & (days <= 1.0)
    for name in ("night", "day"):
        in_class = (errors["record_class"] == name).to_numpy()
        part, long_part = errors[in_class & short], errors[in_class & long]
        if part["records"].sum() < _GAP_MIN_RECORDS or len(part) < 3:
            # too few gaps of at most a day (a record whose gaps all last longer): the
            # rounds' gaps of every length, as before gaplength50, not an unknown part
            part = errors[in_class & ~long]
        count = part["records"].to_numpy(dtype=float)
        total = part["error_sum"].to_numpy(dtype=float)
        if count.sum() < _GAP_MIN_RECORDS or len(part) < 3:
            rows[name] = {"bias": np.nan, "bias_se": np.nan, "independent_variance": np.nan,
                          "correlated_variance": np.nan,
                          **{f"{kind}_{label}": np.nan for label in _LONG_CLASSES
                             for kind in ("correlated_variance", "block_covariance")},
                          "size_reference_long": np.nan,
                          "neighbour_covariance": np.nan, "gaps": len(part),
                          "records": int(count.sum()), "long_gap_blocks": len(long_part)}
            pooled[name] = np.nan
            continue
        bias = total.sum() / count.sum()
        centred = total - bias * count
        # unknown noise (no random-error model) is not subtracted: a and b then hold it too
        excess = np.square(centred) - np.nan_to_num(part["noise_variance"].to_numpy(dtype=float))
        a, b = _nonnegative_line_fit(count, excess / count)
        reference = float(long_part["size_reference"].iloc[0]) \
            if len(long_part) and "size_reference" in long_part else np.nan
        pooled[name] = _long_shared_variance(long_part, bias, a, b)
        rows[name] = {"bias": float(bias),
                      "bias_se": float(np.sqrt(np.square(centred).sum()) / count.sum()),
                      "independent_variance": float(a), "correlated_variance": float(b),
                      **_long_class_variances(long_part, length_class[in_class & long],
                                              bias, a, b),
                      "size_reference_long": reference,
                      "neighbour_covariance": _neighbour_covariance(part, bias),
                      "gaps": len(part), "records": int(count.sum()),
                      "long_gap_blocks": len(long_part)}
    table = pd.DataFrame.from_dict(rows, orient="index")
    table.index.name = "record_class"
    # ρ_long of all long gaps together, scaled by their pooled shared variance
    for is_long, variance, column in ((False, table["correlated_variance"],
                                       "day_night_correlation"),
                                      (True, pd.Series(pooled), "day_night_correlation_long")):
        table[column] = _day_night_correlation(errors[long if is_long else short],
                                               table["bias"], variance, sized=is_long)
    return table


def _long_shared_variance(long_part: pd.DataFrame, bias: float, a: float, b: float) -> float:
    """Shared variance b_long per (size-counted) record pair of a 7-day block of a long gap.

    ``Σ((S − bias·m)² − Σσ² − a·m) / Σm²`` over the blocks (m counted by the size of
    their fills, :func:`_size_records`), at least the short gaps' b; b without blocks.
    See :func:`gapfill_error_model`, Notes.
    """
    if long_part.empty:
        return float(b)
    count = long_part["records"].to_numpy(dtype=float)
    excess = np.square(long_part["error_sum"].to_numpy(dtype=float) - bias * count) \
        - np.nan_to_num(long_part["noise_variance"].to_numpy(dtype=float)) - a * count
    return max(float(excess.sum() / np.square(_size_records(long_part)).sum()), float(b))


def _long_class_variances(long_part: pd.DataFrame, length_class, bias: float, a: float,
                          b: float) -> dict:
    """b_long and the between-block covariance d of each length class of the long gaps.

    Columns ``correlated_variance_<class>`` and ``block_covariance_<class>`` for the
    classes of ``_LONG_CLASSES`` (gaps of 1-7, 7-28 and over 28 days, ``_GAP_CLASS_DAYS``),
    each from the blocks of the artificial gaps of its own lengths
    (:func:`_long_shared_variance`, :func:`_between_block_covariance`, d within
    [0, b_long]). b_long is at least the next shorter class's (the shortest's at least
    the short gaps' b): a fill's error grows with its distance from the donors
    (Richardson & Hollinger 2007). A class without its own blocks takes the next shorter
    class's values, never a longer one's.
    """
    out, shared, between = {}, float(b), 0.0
    for number, label in enumerate(_LONG_CLASSES):
        own = long_part[np.asarray(length_class) == number]
        if len(own):
            shared = _long_shared_variance(own, bias, a, shared)
            between = min(_between_block_covariance(own, bias), shared)
        out[f"correlated_variance_{label}"] = shared
        out[f"block_covariance_{label}"] = between
    return out


def _fill_size(fill, reference) -> np.ndarray:
    """Size of each fill against the class's typical flux: max(|fill| / reference, 1) [1].

    1 everywhere where `reference` is not a positive number. See
    :func:`gapfill_error_model`, Notes.
    """
    fill = np.abs(np.nan_to_num(np.asarray(fill, dtype=float)))
    reference = float(reference)
    if not np.isfinite(reference) or reference <= 0:
        return np.ones_like(fill)
    return np.maximum(fill / reference, 1.0)


def _size_records(part: pd.DataFrame) -> np.ndarray:
    """Each row's records counted by the size of their fills (``size_records``), or the
    records themselves for rows without that column."""
    column = "size_records" if "size_records" in part else "records"
    return part[column].to_numpy(dtype=float)


def _day_night_correlation(errors: pd.DataFrame, bias: pd.Series, shared: pd.Series,
                           sized: bool = False) -> float:
    """Correlation of the shared fill errors of the night and the day records of one gap.

    Moment estimate over the gaps (or 7-day blocks) scored in both classes: the
    covariance per (night, day) record pair ``Σ S_n S_d / Σ n_n n_d`` of the
    centred error sums, divided by ``√(b_night b_day)`` (`shared`), within
    [0, 1]; 1 (fully shared, the upper bound) where it cannot be estimated. With
    `sized` (gaps longer than a day), n counts records by the size of their
    fills (:func:`_size_records`), as b_long does.
    The measurement noise of night and day records is independent, so nothing
    is subtracted from the cross products.
    """
    if not {"round", "gap"} <= set(errors.columns) or bias.isna().any():
        return 1.0
    centred = errors["error_sum"].to_numpy(dtype=float) \
        - bias.reindex(errors["record_class"]).to_numpy(dtype=float) \
        * errors["records"].to_numpy(dtype=float)
    night = (errors["record_class"] == "night").to_numpy()
    weighted = _size_records(errors) if sized else errors["records"].to_numpy(float)
    table = pd.DataFrame({"round": errors["round"].to_numpy(), "gap": errors["gap"].to_numpy(),
                          "night": night, "centred": centred, "records": weighted})
    pairs = table[table["night"]].merge(table[~table["night"]], on=["round", "gap"],
                                        suffixes=("_night", "_day"))
    weight = float(np.sum(pairs["records_night"] * pairs["records_day"]))
    scale = float(np.sqrt(shared.get("night", np.nan) * shared.get("day", np.nan)))
    if pairs.empty or weight <= 0 or not np.isfinite(scale) or scale <= 0:
        return 1.0
    covariance = float(np.sum(pairs["centred_night"] * pairs["centred_day"])) / weight
    return float(np.clip(covariance / scale, 0.0, 1.0))


def _between_block_covariance(part: pd.DataFrame, bias: float) -> float:
    """Covariance per record pair of the fill errors of two 7-day blocks of one long gap.

    Moment estimate over the blocks of the artificial gaps longer than a day
    (rows of one class with the same ``round`` and ``parent``):
    ``Σ_g Σ_{i≠j} S_i S_j / Σ_g Σ_{i≠j} m_i m_j`` of the blocks' centred error sums
    S and records m, i.e. ``Σ_g (T_g² − Σ S_i²) / Σ_g (M_g² − Σ m_i²)`` with T_g and
    M_g the gap's sums; m counts records by the size of their fills
    (:func:`_size_records`). The measurement noise of
    different blocks is independent, so nothing is subtracted. 0 without the
    ``parent`` column, without a gap of two blocks, or where negative.
    """
    if part.empty or "parent" not in part:
        return 0.0
    count = part["records"].to_numpy(dtype=float)
    centred = part["error_sum"].to_numpy(dtype=float) - bias * count
    weighted = _size_records(part)
    key = [part["round"].to_numpy(), part["parent"].to_numpy()]
    sums = pd.DataFrame({"t": centred, "q": np.square(centred), "m": weighted,
                         "mm": np.square(weighted)}).groupby(key).sum()
    numerator = float(np.sum(np.square(sums["t"]) - sums["q"]))
    denominator = float(np.sum(np.square(sums["m"]) - sums["mm"]))
    return max(numerator / denominator, 0.0) if denominator > 0 else 0.0


def _neighbour_covariance(part: pd.DataFrame, bias: float) -> float:
    """Covariance per record pair of the fill errors of two gaps within ±7 days.

    Moment estimate over the artificial gaps of each round (see
    :func:`gapfill_error_model`); 0 without gap starts, or where negative.
    """
    if "start_day" not in part or not np.isfinite(part["start_day"].to_numpy(float)).all():
        return 0.0
    numerator = denominator = 0.0
    for _, one in part.groupby("round", sort=True):
        one = one.sort_values("start_day", kind="stable")
        day = one["start_day"].to_numpy(dtype=float)
        count = one["records"].to_numpy(dtype=float)
        centred = one["error_sum"].to_numpy(dtype=float) - bias * count
        low = np.searchsorted(day, day - _NEIGHBOUR_DAYS, side="left")
        high = np.searchsorted(day, day + _NEIGHBOUR_DAYS, side="right")
        error_sums = np.concatenate([[0.0], np.cumsum(centred)])
        count_sums = np.concatenate([[0.0], np.cumsum(count)])
        numerator += float(np.sum(centred * (error_sums[high] - error_sums[low] - centred)))
        denominator += float(np.sum(count * (count_sums[high] - count_sums[low] - count)))
    return max(numerator / denominator, 0.0) if denominator > 0 else 0.0


def _nonnegative_line_fit(x: np.ndarray, y: np.ndarray) -> tuple[float, float]:
    """Least-squares ``y ≈ a + b·x`` with ``a, b ≥ 0`` (two-variable non-negative least squares).

    Exact: the objective is a convex quadratic, so its minimum over the quadrant
    lies at the unconstrained solution when that is feasible, else on one of the
    faces ``b = 0`` (a = max(mean y, 0)) or ``a = 0`` (b = max(Σxy / Σx², 0)); the
    feasible candidate with the smallest residual is the solution. This replaces a
    general NNLS solver for the two parameters of :func:`gapfill_error_model`
    (checked against ``scipy.optimize.nnls`` in the tests).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    candidates = [(max(float(y.mean()), 0.0), 0.0), (0.0, 0.0)]
    xx = float(np.dot(x, x))
    if xx > 0:
        candidates.append((0.0, max(float(np.dot(x, y)) / xx, 0.0)))
    design = np.column_stack([np.ones_like(x), x])
    if np.linalg.matrix_rank(design) == 2:
        a, b = np.linalg.lstsq(design, y, rcond=None)[0]
        if a >= 0 and b >= 0:
            return float(a), float(b)
    residual = [float(np.sum(np.square(y - a - b * x))) for a, b in candidates]
    return candidates[int(np.argmin(residual))]


# --------------------------------------------------------------------------- parameters

def e0_sensitivity(reco, temperature, is_night, e0, e0_sigma, block_keys) -> np.ndarray:
    """Change of each record's Lloyd–Taylor Reco when E0 is one standard error higher.

    Parameters
    ----------
    reco : array_like
        Modelled Reco [µmol m-2 s-1].
    temperature : array_like
        Driving temperature [°C].
    is_night : array_like of bool
        Night records (those the reference respiration is fitted to).
    e0, e0_sigma : array_like
        E0 applied to each record and its standard error [K].
    block_keys : array_like
        Label of the block within which the reference respiration is refitted
        (e.g. the 4-day window); night sums are kept equal per block.

    Returns
    -------
    numpy.ndarray
        ΔReco per record [µmol m-2 s-1] (0 where an input is NaN).

    Notes
    -----
    With E0 → E0 + δ each record scales by exp(δ (1/(Tref − T0) − 1/(T − T0)))
    (Lloyd & Taylor 1994, T0 = 227.13 K, Tref = 283.15 K). The reference rate is
    refitted to the night data, which keeps the night-time respiration of each
    block nearly unchanged; so the scaled series is renormalised per block to the
    same night sum. What remains is the extrapolation from night to day
    temperatures, the part of E0's error that reaches the annual sum.
    """
    from .constants import LLOYD_TAYLOR_T0_KELVIN, LLOYD_TAYLOR_TREF_KELVIN

    reco = np.asarray(reco, dtype=float)
    kelvin = np.asarray(temperature, dtype=float) + 273.15
    delta = np.asarray(e0_sigma, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        scale = np.exp(delta * (1.0 / (LLOYD_TAYLOR_TREF_KELVIN - LLOYD_TAYLOR_T0_KELVIN)
                                - 1.0 / np.maximum(kelvin - LLOYD_TAYLOR_T0_KELVIN, 1.0)))
    shifted = reco * scale
    usable = np.isfinite(shifted) & np.isfinite(reco)
    night = np.asarray(is_night, dtype=bool) & usable
    keys = pd.Index(np.asarray(block_keys))
    frame = pd.DataFrame({"old": np.where(night, reco, 0.0), "new": np.where(night, shifted, 0.0)})
    sums = frame.groupby(keys.to_numpy()).sum()
    ratio = (sums["old"] / sums["new"]).where(sums["new"] > 0, 1.0)
    factor = ratio.reindex(keys.to_numpy()).to_numpy()
    factor = np.where(np.isfinite(factor), factor, 1.0)
    return np.where(usable, shifted * factor - reco, 0.0)


def e0_sigma(e0_annual: pd.DataFrame, e0_windows: pd.DataFrame) -> pd.Series:
    """Standard error of each year's E0 [K], from its fit and from the windows' spread.

    Parameters
    ----------
    e0_annual : pandas.DataFrame
        Per year (index): ``e0``, ``e0_se``, ``windows_used``
        (:func:`fluxpart.partition.nighttime.annual_e0`).
    e0_windows : pandas.DataFrame
        Every window fit: ``year``, ``e0``, ``accepted``.

    Returns
    -------
    pandas.Series
        Per year: the larger of ``e0_se`` and the standard deviation of the
        year's accepted window E0 values divided by √windows_used [K]. NaN where
        neither is known (a fall-back E0).

    Notes
    -----
    The year's E0 is a mean of a few short-window fits. The fits' own standard
    errors ignore that the short-term temperature sensitivity changes through
    the year; the spread of the accepted windows measures that, and its
    standard error of the mean is the uncertainty of the value applied to the
    whole year.
    """
    se = e0_annual["e0_se"].astype(float) if "e0_se" in e0_annual.columns else \
        pd.Series(np.nan, index=e0_annual.index)
    if e0_windows is None or not {"year", "e0", "accepted"} <= set(e0_windows.columns):
        return se
    accepted = e0_windows[e0_windows["accepted"].astype(bool)]
    spread = accepted.groupby("year")["e0"].std(ddof=1).reindex(e0_annual.index)
    used = e0_annual["windows_used"].astype(float).clip(lower=1) \
        if "windows_used" in e0_annual.columns else 1.0
    return pd.concat([se, spread / np.sqrt(used)], axis=1).max(axis=1, skipna=True)


def _retained_windows(windows: pd.DataFrame, value: str, se: str):
    """The windows a parameter part counts, in time order, and their relative errors.

    Rejected windows (an ``accepted`` column saying so) and values that are not
    finite and positive are left out; None when no window remains. Where a window's
    ``se / value`` is not finite or not below 1 (a parameter at its bound or fixed),
    the median of the other windows' stands in (NaN when none is resolved).
    """
    needed = {"window_start", "window_end", value, se}
    if windows is None or not needed <= set(windows.columns) or windows.empty:
        return None
    kept = windows
    if "accepted" in kept.columns:
        kept = kept[kept["accepted"].astype(bool)]
    kept = kept[np.isfinite(kept[value].to_numpy(dtype=float))
                & (kept[value].to_numpy(dtype=float) > 0)]
    if kept.empty:
        return None
    centres = (pd.DatetimeIndex(kept["window_start"]).asi8
               + pd.DatetimeIndex(kept["window_end"]).asi8) / 2.0
    kept = kept.iloc[np.argsort(centres, kind="stable")]
    relative = kept[se].to_numpy(dtype=float) / kept[value].to_numpy(dtype=float)
    # a value within one standard error of zero is a parameter at its bound: its records'
    # Reco comes mostly from the neighbouring windows, so se / value (up to 1e4 at a
    # fitted Rref of 1e-5) would scale their error by a ratio that is not theirs
    resolved = np.isfinite(relative) & (relative < 1.0)
    typical = np.median(relative[resolved]) if resolved.any() else np.nan
    return kept, np.where(resolved, relative, typical)


def _nearest_centre(times, centres) -> np.ndarray:
    """Position of the nearest of the increasing `centres` to each of `times`."""
    right = np.clip(np.searchsorted(centres, times), 0, centres.size - 1)
    left = np.clip(right - 1, 0, centres.size - 1)
    return np.where(np.abs(times - centres[left]) <= np.abs(centres[right] - times), left,
                    right)


def window_membership(index, windows: pd.DataFrame, value="rref", se="rref_se",
                      breaks=None) -> tuple:
    """Nearest window of each record and the window's relative standard error.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record times.
    windows : pandas.DataFrame
        Fitted windows with ``window_start``, ``window_end``, the parameter
        `value` and its standard error `se` (rejected windows, if an ``accepted``
        column says so, are left out).
    breaks : array_like of int, optional
        Record positions of declared events (:func:`fluxpart.gapfill.event_breaks`):
        the nearest window of the record's own piece, whose parameters it takes
        (:mod:`fluxpart.partition.pieces`); a piece without one, the nearest of all.

    Returns
    -------
    window : numpy.ndarray of int
        Position of the nearest retained window centre per record (-1 if none).
    relative_se : numpy.ndarray
        ``se / value`` of that window [1]. Where a window's standard error is not
        finite (a parameter at a bound or fixed) or not smaller than the value (a
        value indistinguishable from zero, i.e. at its bound), the median relative
        standard error of the site's other windows stands in.
    """
    n = len(index)
    retained = _retained_windows(windows, value, se)
    if retained is None:
        return np.full(n, -1), np.full(n, np.nan)
    kept, relative = retained
    # the window times on the records' own clock unit: asi8 counts that unit (a table of
    # ns windows against a µs index put every record at the first window)
    unit = pd.DatetimeIndex(index).unit
    centres = (pd.DatetimeIndex(kept["window_start"]).as_unit(unit).asi8
               + pd.DatetimeIndex(kept["window_end"]).as_unit(unit).asi8) / 2.0
    times = pd.DatetimeIndex(index).asi8.astype(float)
    nearest = _nearest_centre(times, centres)
    edges = pieces.break_times(times, breaks)
    if len(edges):
        record_piece, centre_piece = pieces.piece_of(times, edges), pieces.piece_of(centres,
                                                                                    edges)
        for piece in np.unique(record_piece):
            own = np.flatnonzero(centre_piece == piece)
            rows = record_piece == piece
            if own.size:
                nearest[rows] = own[_nearest_centre(times[rows], centres[own])]
    return nearest, relative[nearest]


def interpolation_error(index, windows: pd.DataFrame, value="rref", se="rref_se",
                        breaks=None) -> tuple:
    """Relative error of a window parameter interpolated between window centres.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record times.
    windows : pandas.DataFrame
        Fitted windows as for :func:`window_membership` (rejected windows left out).
    breaks : array_like of int, optional
        Record positions of declared events (:func:`fluxpart.gapfill.event_breaks`),
        where the methods interpolate within each piece only
        (:mod:`fluxpart.partition.pieces`): the stretches and the bridge are those of
        the record's own piece's centres (beyond its first and last, the random walk
        from the nearest), and neighbouring windows on two sides of an event do not
        enter the drift (the event's jump is no drift). A piece without a window of its
        own takes the stretches of all centres, as its parameters do.

    Returns
    -------
    interval : numpy.ndarray of int
        Which stretch between two retained window centres (or before the first,
        after the last) each record lies in (-1 if there is no window).
    relative_sd : numpy.ndarray
        Standard deviation of the relative error of the interpolated parameter at
        each record [1] (0 at a window centre).
    drift : float
        Drift rate q of the parameter's logarithm [day-1] (below).

    Notes
    -----
    Between window centres the methods interpolate the parameter linearly in time,
    which is exact only where the parameter changes linearly; what it does between
    centres is modelled as a random walk of ln(value) with variance q per day, tied
    to the two centres: a Brownian bridge, whose variance at time t between
    centres c1 < t < c2 is q (t − c1)(c2 − t) / (c2 − c1) (e.g. Ross 1996, ch. 8),
    and q times the distance beyond the first or last centre. q is measured on the
    site's own consecutive windows: E[(Δ ln value)²] = q Δt + r1² + r2², r being the
    windows' relative standard errors (see :func:`window_membership` for windows
    without one), so q = max(Σ(Δ ln value)² − Σ(r1² + r2²), 0) / ΣΔt over the pairs
    of neighbours no further apart than three times the median spacing (over longer
    stretches the linear interpolation takes up the seasonal course, which a random
    walk would read as drift). Within one stretch the errors are taken as fully
    correlated: the stretch is one group in :func:`period_uncertainty`. Across a
    gap of weeks without a retained window the interpolated respiration is much
    less certain than at the windows beside it; this part says by how much.

    References
    ----------
    Ross, S. M. (1996). Stochastic Processes, 2nd ed. Wiley (the Brownian bridge) (m).
    """
    n = len(index)
    retained = None if n == 0 else _retained_windows(windows, value, se)
    if retained is None or len(retained[0]) < 2:
        return np.full(n, -1), np.zeros(n), 0.0
    kept, relative = retained
    relative = np.nan_to_num(relative)          # no window resolved: no error to remove
    origin = pd.Timestamp(index[0])
    day = pd.Timedelta(days=1)
    centres = (((pd.DatetimeIndex(kept["window_start"]) - origin) / day).to_numpy()
               + ((pd.DatetimeIndex(kept["window_end"]) - origin) / day).to_numpy()) / 2.0
    log_value = np.log(kept[value].to_numpy(dtype=float))
    spacing = np.diff(centres)
    near = (spacing > 0) & (spacing <= 3.0 * np.median(spacing))
    times = ((index - origin) / day).to_numpy()
    edges = pieces.break_times(times, breaks)
    if len(edges):
        centre_piece = pieces.piece_of(centres, edges)
        near &= centre_piece[:-1] == centre_piece[1:]
    excess = (np.square(np.diff(log_value)) - np.square(relative[:-1])
              - np.square(relative[1:]))[near]
    drift = max(float(excess.sum()), 0.0) / float(spacing[near].sum()) if near.any() else 0.0
    interval, variance = _bridge(times, centres, drift)
    if len(edges):
        record_piece = pieces.piece_of(times, edges)
        # a piece without a window of its own keeps the stretches of all centres, as
        # labels apart from those of the pieces' own (the labels only group records)
        interval = interval + centres.size + len(edges) + 2
        for piece in np.unique(record_piece):
            own = np.flatnonzero(centre_piece == piece)
            if own.size:
                rows = record_piece == piece
                local, variance[rows] = _bridge(times[rows], centres[own], drift)
                interval[rows] = local + own[0] + piece
    return interval, np.sqrt(np.maximum(variance, 0.0)), drift


def _bridge(times, centres, drift) -> tuple:
    """Stretch between the increasing `centres` (0 .. len) of each time and the variance
    of the interpolated log parameter there: a Brownian bridge between the centres, a
    random walk from the nearest beyond the first and last (:func:`interpolation_error`)."""
    interval = np.searchsorted(centres, times, side="right")   # 0 .. len(centres)
    left = centres[np.clip(interval - 1, 0, centres.size - 1)]
    right = centres[np.clip(interval, 0, centres.size - 1)]
    inside = (interval > 0) & (interval < centres.size)
    with np.errstate(invalid="ignore", divide="ignore"):
        bridge = (times - left) * (right - times) / (right - left)
    variance = drift * np.where(inside, bridge, np.minimum(np.abs(times - left),
                                                           np.abs(times - right)))
    return interval, variance


# --------------------------------------------------------------------------- combination

def _neighbour_pairs(records, night, gap_id, codes, records_per_day) -> np.ndarray:
    """Per record of `records`: the records of its class (night or day) in other gaps
    within ±7 days and in the same period (`codes`: the period of each record)."""
    out = np.zeros(len(records))
    span = int(round(_NEIGHBOUR_DAYS * records_per_day))
    for in_class in (night, ~night):
        position = np.flatnonzero(records & in_class)
        if position.size == 0:
            continue
        # one sorted key per record: period first, then time, so that a window of
        # ±span records never reaches into another period
        key = codes[position].astype(np.int64) * (len(records) + 2 * span + 1) + position
        order = np.argsort(key, kind="stable")
        key, position = key[order], position[order]
        low = np.searchsorted(key, key - span, side="left")
        high = np.searchsorted(key, key + span, side="right")
        # a gap's records of this class and period are one run of the sorted keys
        gap = gap_id[position]
        new_run = np.concatenate([[True], (gap[1:] != gap[:-1])
                                  | (codes[position][1:] != codes[position][:-1])])
        run_start = np.flatnonzero(new_run)
        run_end = np.append(run_start[1:], position.size)
        run = np.cumsum(new_run) - 1
        own = np.maximum(np.minimum(run_end[run], high) - np.maximum(run_start[run], low), 0)
        out[position] = high - low - own
    return out


def _donor_noise(inputs: UncertaintyInputs, codes, filled, interval_minutes) -> np.ndarray:
    """Per filled record: its covariance with the measured records of its period
    [(µmol m-2 s-1)²], σ² times the share of its donor window inside the period.

    A fill is the mean of k donors, so its error holds their mean random error
    and covaries with their sum by σ² (k donors of error variance σ² each,
    weighted 1/k). The donors are taken as spread evenly over the fill's window
    cut at the ends of the record (donors are measured records), of which the
    share inside the record's period counts; 0 where the window or σ is unknown.
    """
    if inputs.fill_window_days is None or inputs.fill_noise_sigma is None:
        return np.zeros(len(filled))
    elapsed = ((inputs.fluxes.index - inputs.fluxes.index[0]) / pd.Timedelta(days=1)).to_numpy()
    step = int(interval_minutes) / _MINUTES_PER_DAY
    start = pd.Series(elapsed).groupby(codes).min().to_numpy()[codes]
    end = pd.Series(elapsed).groupby(codes).max().to_numpy()[codes] + step
    window = np.asarray(inputs.fill_window_days, dtype=float)
    width = np.maximum(np.nan_to_num(window), step)
    low, high = elapsed - width / 2, elapsed + width / 2
    inside = np.minimum(high, end) - np.maximum(low, start)
    # the donors are measured records, so the window ends where the record ends
    in_record = np.minimum(high, elapsed[-1] + step) - np.maximum(low, 0.0)
    share = np.where(np.isfinite(window),
                     np.clip(inside / np.maximum(in_record, step), 0.0, 1.0), 0.0)
    return np.where(filled, share * np.square(np.nan_to_num(inputs.fill_noise_sigma)), 0.0)


def _grouped_square(codes, periods, groups, values) -> np.ndarray:
    """Σ over groups of (Σ values of the group within the period)², per period.

    `codes`: each record's period as a position in ``range(periods)``; `groups`: each
    record's group (an integer >= 0; < 0: in none). Returns one value per period, 0 where
    a period has no group.
    """
    values = np.asarray(values, dtype=float)
    groups = np.asarray(groups)
    out = np.zeros(periods)
    # a record without a period (code -1) is left out, as groupby leaves out a missing key
    use = np.isfinite(values) & (groups >= 0) & (values != 0) & (codes >= 0)
    if not use.any():
        return out
    # one integer per (period, group) pair: the same sums, in the same record order, as
    # grouping on the two columns, without building a two-level index
    used_groups = groups[use].astype(np.int64)
    span = int(used_groups.max()) + 1
    pair = codes[use].astype(np.int64) * span + used_groups
    inner = pd.Series(values[use]).groupby(pair, sort=False).sum()
    outer = np.square(inner).groupby(inner.index.to_numpy() // span).sum()
    out[outer.index.to_numpy()] = outer.to_numpy()
    return out


def ustar_sigma(sums: pd.DataFrame, percentiles) -> pd.Series:
    """1-sigma u* threshold uncertainty of period sums from the scenario runs.

    Parameters
    ----------
    sums : pandas.DataFrame
        One column per run: ``central`` and ``ustar_pXX`` (sum with the threshold
        at bootstrap percentile XX) [g C m-2], one row per period.
    percentiles : sequence of int
        The scenario percentiles (for their standard-normal quantiles).

    Returns
    -------
    pandas.Series
        ``(max − min over runs) / (z_max − z_min)`` [g C m-2], z being the
        standard-normal quantile of each run's percentile (central run: 0). For
        16/50/84 percentiles this is half the 16–84 range, a standard deviation
        if the sum is normal in the threshold's distribution; for 5/50/95 it is
        the 5–95 range over 3.29. The range over all runs is used because the
        sum need not be monotonic in the threshold; it includes the central run,
        so where the applied threshold lies beyond a scenario percentile (the
        bootstrap reads low, :func:`fluxpart.ustar.detect_threshold`) the part
        spans from it to the farthest scenario. NaN without scenarios. With
        a column ``ustar_year`` or ``ustar_seasonal`` (the other way of applying
        thresholds in a year whose seasons clearly differ: the year's on every
        night, or each season at its own; :mod:`fluxpart.ustar_seasonal`) its
        difference from ``central`` is added in quadrature: which way is right is
        a systematic part the bootstrap does not see (counted at its full size,
        as the fill bias is).
    """
    z = {"central": 0.0}
    z.update({f"ustar_p{p:02d}": NormalDist().inv_cdf(p / 100.0) for p in percentiles})
    runs = [c for c in sums.columns if c in z]
    spans = [z[c] for c in runs]
    if len(runs) < 2 or max(spans) - min(spans) <= 0:
        sigma = pd.Series(np.nan, index=sums.index)
    else:
        table = sums[runs].to_numpy(dtype=float)
        # the range over the runs a period has (NaN-skipping, as DataFrame.max and min)
        spread = np.fmax.reduce(table, axis=1) - np.fmin.reduce(table, axis=1)
        sigma = pd.Series(spread / (max(spans) - min(spans)), index=sums.index)
    for alternative in ("ustar_year", "ustar_seasonal"):
        if alternative in sums.columns and "central" in sums.columns:
            shift = (sums[alternative] - sums["central"]).abs()
            sigma = np.sqrt(sigma.fillna(0.0) ** 2 + shift**2).where(
                sigma.notna() | shift.notna())
    return sigma


@dataclass(frozen=True)
class UncertaintyInputs:
    """Per-record inputs of :func:`period_uncertainty` (all arrays on one time axis).

    Attributes
    ----------
    measured : numpy.ndarray of bool
        NEE measured (not filled).
    noise_sigma : numpy.ndarray
        Random error of measured NEE [µmol m-2 s-1] (NaN or 0 where filled).
    is_night : numpy.ndarray of bool
    fluxes : pandas.DataFrame
        Central per-record ``nee``, ``gpp_nighttime``, ``reco_nighttime``,
        ``gpp_daytime``, ``reco_daytime`` [µmol m-2 s-1].
    runs : dict of str to pandas.DataFrame
        Per-record fluxes of the u* scenario runs, by run name (may be empty).
    gapfill_model : pandas.DataFrame or None
        From :func:`gapfill_error_model`.
    e0_delta : numpy.ndarray
        ΔReco (nighttime) per record for E0 + 1 standard error (:func:`e0_sensitivity`).
    night_window, night_relative_se : numpy.ndarray
        Nighttime Rref window of each record and its relative standard error.
    day_window, day_relative_se : numpy.ndarray
        Daytime window of each record and the relative standard error of its
        reference respiration.
    driver_delta : numpy.ndarray or None
        Nighttime Reco with the other respiration temperature (air or soil) minus
        the central Reco [µmol m-2 s-1]; None where only one temperature exists.
    driver_weight : float
        Probability that the other temperature is the better respiration driver
        (:func:`driver_weight`) [1].
    driver_day_weight : float or None
        The weight of the daytime records' part of `driver_delta`
        (:func:`driver_day_weight`) [1]; None: `driver_weight`.
    night_interval, night_interpolation_sd, day_interval, day_interpolation_sd : numpy.ndarray or None
        Stretch between Rref window centres of each record and the relative
        standard deviation of its interpolated Rref (:func:`interpolation_error`);
        None: not counted.
    fill_window_days, fill_noise_sigma : numpy.ndarray or None
        Full width of the window each filled NEE record's donors came from [days]
        and the random error the error model gives at the filled value
        [µmol m-2 s-1]: the covariance of fills with the measured records they
        average (:func:`period_uncertainty`); None: not counted.
    form_delta : numpy.ndarray or None
        Nighttime Reco with the exponential (constant-Q10) form minus the central
        Lloyd–Taylor Reco [µmol m-2 s-1]
        (:func:`fluxpart.partition.respiration_form.exponential_reco`); None: not
        counted.
    form_weight : float
        Probability that the exponential form describes the night data better
        (:func:`driver_weight`) [1].
    form_spread : float
        Root second moment of the form's error about the central estimate per
        |ΣΔ| (:attr:`fluxpart.partition.respiration_form.FormAverage.spread_factor`):
        √(w (1 − w)) when the central Reco is the forms' average, √w when it is
        Lloyd–Taylor's [1].
    fill_before, fill_after : numpy.ndarray or None
        Fills of the long gaps' records from the measured records before and after
        each gap only [µmol m-2 s-1], NaN elsewhere
        (:func:`fluxpart.gap_sides.one_sided_fills`); None: not counted.
    day_gpp_before, day_gpp_after, day_stretch : numpy.ndarray or None
        Daytime GPP of the records between two daytime windows whose centres lie
        more than :data:`fluxpart.gap_sides.MIN_GAP_DAYS` apart, from the light
        response of the window before alone and of the one after alone
        [µmol m-2 s-1], NaN elsewhere, and the number of the stretch each record
        lies in (:class:`fluxpart.partition.daytime.DaytimeResult`); None: not
        counted.
    shape_gpp_delta, shape_reco_delta : numpy.ndarray or None
        Daytime GPP and Reco with the profiled non-rectangular light response minus
        the rectangular one [µmol m-2 s-1]
        (:class:`fluxpart.partition.light_shape.ShapeAverage`); None: not counted
        (and the ``..._uncertainty_light_shape`` columns not written).
    shape_spread : float
        Standard deviation of the two shapes about the central estimate per |ΣΔ|
        (:attr:`fluxpart.partition.light_shape.ShapeAverage.spread_factor`) [1].
    mixture_judged : tuple or None
        (share, unclipped draws) the nights' mixture test of ``driver_day_prior =
        "mixture"`` or ``"share"`` judged (:func:`mixture_day_weight`); None where it
        judged none. Enters no sum: it tells whether ``mixture_test`` changed the run
        (:func:`fluxpart.driver_mixture.unchanged_note`).
    """

    measured: np.ndarray
    noise_sigma: np.ndarray
    is_night: np.ndarray
    fluxes: pd.DataFrame
    runs: dict
    gapfill_model: pd.DataFrame | None
    e0_delta: np.ndarray
    night_window: np.ndarray
    night_relative_se: np.ndarray
    day_window: np.ndarray
    day_relative_se: np.ndarray
    driver_delta: np.ndarray | None = None
    driver_weight: float = 0.0
    driver_day_weight: float | None = None
    night_interval: np.ndarray | None = None
    night_interpolation_sd: np.ndarray | None = None
    day_interval: np.ndarray | None = None
    day_interpolation_sd: np.ndarray | None = None
    fill_window_days: np.ndarray | None = None
    fill_noise_sigma: np.ndarray | None = None
    form_delta: np.ndarray | None = None
    form_weight: float = 0.0
    form_spread: float = 0.0
    fill_before: np.ndarray | None = None
    fill_after: np.ndarray | None = None
    day_gpp_before: np.ndarray | None = None
    day_gpp_after: np.ndarray | None = None
    day_stretch: np.ndarray | None = None
    shape_gpp_delta: np.ndarray | None = None
    shape_reco_delta: np.ndarray | None = None
    shape_spread: float = 0.0
    mixture_judged: tuple | None = None


def driver_weight(nee_measured, is_night, reco_central, reco_other) -> float:
    """Probability that the other respiration temperature describes the night data better.

    Parameters
    ----------
    nee_measured : array_like
        Measured night NEE after the u* filter [µmol m-2 s-1] (NaN elsewhere).
    is_night : array_like of bool
    reco_central, reco_other : array_like
        Nighttime Reco with the configured and with the other temperature
        [µmol m-2 s-1].

    Returns
    -------
    float
        w = 1 / (1 + exp(ΔBIC / 2)) with ΔBIC = :func:`laplace_delta_bic` of the
        other model against the central one over the night records both cover,
        counted as their effective number of independent records
        (:func:`effective_records`; equal parameter counts): the posterior weight of
        the other model under
        equal priors (Schwarz 1978; Burnham & Anderson 2002, ch. 6). 0 when fewer
        than 10 records are shared.

    Notes
    -----
    Night residuals are autocorrelated, so n records overstate the evidence:
    since 0.23.0 the BIC counts the effective number of independent records of the
    favoured model's residuals (:func:`effective_records`), before that all n, which
    made the weight too decisive. The annual error from the choice has second moment w·d² about the
    configured estimate, d being the difference the other driver makes; that is
    the part :func:`period_uncertainty` adds.

    References
    ----------
    Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics
    6, 461–464. Burnham, K. P. & Anderson, D. R. (2002). Model Selection and
    Multimodel Inference, 2nd ed. Springer.
    """
    nee = np.asarray(nee_measured, dtype=float)
    central = np.asarray(reco_central, dtype=float)
    other = np.asarray(reco_other, dtype=float)
    use = (np.asarray(is_night, dtype=bool) & np.isfinite(nee) & np.isfinite(central)
           & np.isfinite(other))
    if use.sum() < 10:
        return 0.0
    sad_central = float(np.sum(np.abs(nee[use] - central[use])))
    sad_other = float(np.sum(np.abs(nee[use] - other[use])))
    if sad_central <= 0 or sad_other <= 0:
        return 0.0
    favoured = central if sad_central <= sad_other else other
    return bic_weight(laplace_delta_bic(sad_other, sad_central,
                                        effective_records(nee - favoured, use)))


def combined_driver_weight(night_weight: float, day_statistic, critical: float) -> float:
    """The weight of the other respiration temperature, night and day evidence together.

    Parameters
    ----------
    night_weight : float
        :func:`driver_weight` from the night records [1].
    day_statistic : float or None
        :func:`fluxpart.partition.temperature_choice.daytime_evidence` (positive where
        the temperature in use fits the daytime records better) [1]; None or NaN where
        not computed.
    critical : float
        Its critical value [1] (1.96).

    Returns
    -------
    float
        1/2 where the two lines of evidence favour different temperatures, the daytime
        one significantly (|statistic| above `critical`); `night_weight` otherwise.

    Notes
    -----
    The night weight comes from a BIC over records, which assumes one of the two
    models true and independent residuals: on a site whose respiration follows
    neither temperature (a soil probe deeper than the respiring layer, plant
    respiration on air beside soil respiration on soil temperature), it is decisive
    for a model that is still wrong by day. Where the daytime records contradict it,
    the choice is open: equal weights, the equal prior of model averaging (Burnham &
    Anderson 2002, ch. 4 (m)), which makes the driver part |Δ|/√2 of the difference Δ
    the other temperature makes.

    References
    ----------
    Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel Inference,
    2nd ed. Springer.
    """
    if day_statistic is None or not np.isfinite(day_statistic):
        return night_weight
    if (night_weight < 0.5 and day_statistic < -critical) \
            or (night_weight > 0.5 and day_statistic > critical):
        return 0.5
    return night_weight


def driver_day_weight(weight: float, day_statistic, critical: float, prior: str) -> float:
    """The other respiration temperature's weight in the daytime records' part.

    Parameters
    ----------
    weight : float
        The weight of the night records' part (:func:`combined_driver_weight` with the
        mixture floor) [1].
    day_statistic, critical
        The daytime evidence and its critical value, as in
        :func:`combined_driver_weight`.
    prior : str
        ``"night"``: `weight` itself; ``"equal"``: at least 1/2 unless `day_statistic`
        exceeds `critical` (the daytime records favour the temperature in use).

    Returns
    -------
    float
        The weight w_day [1]; the part is |√w Σ_night Δ + √w_day Σ_day Δ|.

    Notes
    -----
    Both nighttime fits are fitted to the same night records, so they agree there
    whichever temperature drives them: the difference Δ the other temperature makes is
    almost all in daytime records, where air and soil temperature part most. The night
    weight and the night mixture share measure how well each fit describes the nights,
    not how a respiration split between the soil (on soil temperature) and the canopy
    (on air temperature) carries into the day; nights with air close to soil
    temperature cannot tell the split. Without daytime evidence for the temperature in
    use, the choice for the day is open: the equal prior of model averaging (Burnham &
    Anderson 2002, ch. 4 (m)), as :func:`combined_driver_weight` takes where night and
    day disagree, so the day part is at least |Σ_day Δ| / √2.

    References
    ----------
    Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel Inference,
    2nd ed. Springer.
    """
    if prior == "night":
        return weight
    if day_statistic is not None and np.isfinite(day_statistic) and day_statistic > critical:
        return weight
    return max(weight, 0.5)


def mixture_day_weight(weight: float, share: float, draws,
                       z: float = driver_mixture.SHOWN_Z) -> float | None:
    """The other respiration temperature's weight in the daytime records' part, where
    the nights show a mixture (``driver_day_prior = "mixture"``).

    Parameters
    ----------
    weight : float
        The weight of the night records' part (:func:`combined_driver_weight` with the
        mixture floor) [1].
    share : float
        The night's mixture share (:func:`fluxpart.driver_mixture.mixture_share`) [1].
    draws : array_like
        The share on resampled nights, unclipped
        (:func:`fluxpart.driver_mixture.mixture_share_draws` with ``clip=False``) [1].
    z : float, optional
        The test's critical value (:func:`fluxpart.driver_mixture.critical_value`; default the
        two-sided 95 % interval) [1].

    Returns
    -------
    float or None
        max(`weight`, 1/2) where the share's 95 % interval excludes 0
        (:func:`fluxpart.driver_mixture.mixture_shown`); None elsewhere (the daytime
        records take `weight`, as with ``"night"``).

    Notes
    -----
    Where the nights show that part of the respiration follows the other temperature,
    how that part carries into the day is not identified by the nights (both fits agree
    there; :func:`driver_day_weight`), and the daytime records' evidence compares two
    single-temperature models, neither of them true: on a known-truth trial it favoured
    the soil temperature in use significantly in 4 of 8 site-years with 28–47 % of the
    Reco on air temperature (round trace31). So the daytime records take the equal
    prior of model averaging (Burnham & Anderson 2002, ch. 4 (m)) whatever that
    evidence says; where the nights show no mixture, the night weight stands.

    References
    ----------
    Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel Inference,
    2nd ed. Springer.
    """
    return max(weight, 0.5) if driver_mixture.mixture_shown(share, draws, z) else None


def effective_records(residuals, use) -> float:
    """Records worth of independent evidence in autocorrelated residuals.

    Parameters
    ----------
    residuals : array_like
        Residuals of a fit, one per record [µmol m-2 s-1]; only those where `use`
        holds are read.
    use : array_like of bool
        The records compared, one per record; neighbours are consecutive records
        (one time step apart) that are both used.

    Returns
    -------
    float
        ``n (1 − ρ) / (1 + ρ)``, n the records used and ρ the lag-1 autocorrelation
        of their residuals over pairs of neighbours, taken as 0 when negative and at
        most 0.95; n itself where fewer than 10 pairs of neighbours exist. At least 2
        (never more than n).

    Notes
    -----
    A log-likelihood summed over n records counts each as independent evidence.
    Night residuals of a respiration fit are not independent: weather, soil moisture
    and the error of the flux itself persist from one half-hour to the next (the
    random error of neighbouring records correlates; Richardson et al. 2006), so a
    BIC difference over n records overstates the evidence by about the variance
    inflation (1 + ρ)/(1 − ρ) of a first-order autoregressive series, whose mean
    carries the information of n (1 − ρ)/(1 + ρ) independent records (Wilks 2011,
    section 5.2.4 (m); Zwiers & von Storch 1995 (m)). ρ is computed on residuals
    clipped at 3 scaled median absolute deviations from their median, so that the
    spikes left after screening (Laplace-like errors) do not set it. Used by
    :func:`driver_weight` and :mod:`fluxpart.partition.temperature_choice` (since
    0.23.0): a BIC difference is scaled to these records.

    References
    ----------
    Wilks, D. S. (2011). Statistical Methods in the Atmospheric Sciences, 3rd ed.
    Academic Press, section 5.2.4 (m).
    Zwiers, F. W. & von Storch, H. (1995). Taking serial correlation into account in
    tests of the mean. Journal of Climate 8, 336–351 (m).
    Richardson, A. D. et al. (2006). Agricultural and Forest Meteorology 136, 1–18.
    """
    values = np.asarray(residuals, dtype=float)
    used = np.asarray(use, dtype=bool) & np.isfinite(values)
    n = int(used.sum())
    pairs = used[:-1] & used[1:]
    if pairs.sum() < _MIN_NEIGHBOUR_PAIRS:
        return float(n)
    centre = float(np.median(values[used]))
    scale = scaled_mad(values[used], centre)
    anomaly = values - centre
    if scale > 0:
        anomaly = np.clip(anomaly, -3.0 * scale, 3.0 * scale)
    first, second = anomaly[:-1][pairs], anomaly[1:][pairs]
    first, second = first - first.mean(), second - second.mean()
    # sums of products, not np.corrcoef's BLAS dot products: the same bits on every CPU
    # and thread count, so that verify reruns it exactly elsewhere
    scale = float(np.sqrt(np.sum(first * first) * np.sum(second * second)))
    if not scale > 0:
        return float(n)
    rho = min(max(float(np.sum(first * second)) / scale, 0.0), _MAX_LAG_CORRELATION)
    return float(min(max(n * (1.0 - rho) / (1.0 + rho), 2.0), n))


_MIN_NEIGHBOUR_PAIRS = 10      # fewest neighbour pairs for a lag-1 autocorrelation
_MAX_LAG_CORRELATION = 0.95    # beyond it n_eff rests on the autocorrelation's last digits


def laplace_delta_bic(sad_model: float, sad_reference: float, records: float,
                      extra_parameters: int = 0) -> float:
    """BIC of a model minus that of a reference, both fitted to the same records,
    under Laplace (double-exponential) errors.

    Parameters
    ----------
    sad_model, sad_reference : float
        Sums of absolute residuals of the two models over the same `records`
        [µmol m-2 s-1].
    records : float
        Number of records n, or the effective number of independent records where
        the residuals are autocorrelated (:func:`effective_records`).
    extra_parameters : int, optional
        Parameters the model has beyond the reference's; default 0.

    Returns
    -------
    float
        ``2 n ln(SAD_model / SAD_reference) + k ln n``: negative favours the model.

    Notes
    -----
    With Laplace errors of scale b, −2 ln L = 2n ln(2b) + 2 SAD / b, smallest at
    b = SAD / n, where it is 2n ln(2 SAD / n) + 2n (Kotz et al. 2001 (m)); between
    two models of the same records the constant parts cancel. The random error of
    eddy-covariance fluxes is closer to a Laplace than to a normal distribution
    (Hollinger & Richardson 2005; Richardson et al. 2006), which is why the night
    fits take E0 by least absolute deviations (:mod:`fluxpart.partition.nighttime`).
    Compared by sums of squares (normal errors, n ln(SSR ratio), before 0.17.0), the
    few spikes left after screening decided the comparison: on an independent trial's
    site-years, marking 10–30 such records missing flipped the respiration temperature
    (ΔBIC −8.2 → +190.3, +59.8 → −55.5) and the respiration form's weight (0.994 →
    0.338).

    References
    ----------
    Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics 6,
    461–464.
    Kotz, S., Kozubowski, T. J. & Podgórski, K. (2001). The Laplace Distribution and
    Generalizations. Birkhäuser (m).
    Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy covariance
    measurements and its application to physiological models. Tree Physiology 25,
    873–885.
    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agric. For. Meteorol. 136,
    1–18.
    """
    return (2.0 * records * float(np.log(sad_model / sad_reference))
            + extra_parameters * float(np.log(records)))


def bic_weight(delta_bic: float) -> float:
    """Posterior weight of a model whose BIC exceeds the other's by `delta_bic`.

    ``1 / (1 + exp(ΔBIC / 2))``: two models under equal priors (Schwarz 1978;
    Burnham & Anderson 2002, ch. 6). ΔBIC < 0 favours the model, > 0 the other.
    """
    return float(1.0 / (1.0 + np.exp(np.clip(0.5 * delta_bic, -700.0, 700.0))))


def record_inputs(index, fluxes: pd.DataFrame, runs: dict, measured, noise_sigma, is_night,
                  temperature, nighttime_result, daytime_parameters, gapfill_model, *,
                  rref_window_days=4.0, other_driver_reco=None,
                  nee_measured=None, fill_window_days=None,
                  fill_noise_sigma=None, respiration_form=None, day_driver_statistic=None,
                  day_evidence_critical=1.96, breaks=None,
                  fill_sides=None, daytime_result=None, light_shape=None,
                  driver_day_prior="night", driver_share_spread="off",
                  mixture_test="two_sided") -> UncertaintyInputs:
    """Gather the per-record inputs of :func:`period_uncertainty` from the stage results.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record times.
    fluxes : pandas.DataFrame
        Central per-record ``nee``, ``gpp_nighttime``, ``reco_nighttime``,
        ``gpp_daytime``, ``reco_daytime`` [µmol m-2 s-1].
    runs : dict
        Per-record flux frames of the u* scenario runs (``central`` included).
    measured : array_like of bool
        NEE measured (after the u* filter).
    noise_sigma : array_like
        Random error of each measured record [µmol m-2 s-1].
    is_night : array_like of bool
    temperature : array_like
        Gap-filled respiration driver [°C].
    nighttime_result : NighttimeResult
        With ``e0``, ``e0_annual``, ``e0_windows`` and ``rref_windows``.
    daytime_parameters : pandas.DataFrame
        The daytime windows (``window_start``, ``window_end``, ``rref``,
        ``rref_se``, ``accepted``).
    gapfill_model : pandas.DataFrame or None
        From :func:`gapfill_error_model`.
    rref_window_days : float
        Length of the nighttime Rref windows [days] (blocks of the E0 sensitivity).
    other_driver_reco : array_like, optional
        Nighttime Reco computed with the other respiration temperature [µmol m-2 s-1].
    nee_measured : array_like, optional
        Measured NEE [µmol m-2 s-1], for :func:`driver_weight` (needed with
        `other_driver_reco`).
    fill_window_days, fill_noise_sigma : array_like, optional
        See :class:`UncertaintyInputs`.
    respiration_form : FormAverage, optional
        Both respiration forms' nighttime Reco, the weight and the share applied
        (:func:`fluxpart.partition.respiration_form.average_forms`).
    day_driver_statistic : float, optional
        The daytime records' evidence on the temperature
        (:func:`fluxpart.partition.temperature_choice.daytime_evidence`); where it
        contradicts the night records, the driver weight is 1/2
        (:func:`combined_driver_weight`, with `day_evidence_critical`). The weight is
        at least the square of the other temperature's share in the night's best
        mixture of the two fits (:func:`fluxpart.driver_mixture.mixture_share`), so
        that the part √w · |Δ| is at least that share of the difference Δ: where soil
        and canopy respire on different temperatures, the BIC weight goes to 0 for a
        model that is still wrong (since 0.24.0).
    breaks : array_like of int, optional
        Record positions of declared events (:func:`fluxpart.gapfill.event_breaks`):
        the windows' parts within each piece, as the methods take their parameters
        (:func:`window_membership`, :func:`interpolation_error`). Default None.
    fill_sides : tuple of array_like, optional
        ``(before, after)``: the long gaps' one-sided fills
        (:func:`fluxpart.gap_sides.one_sided_fills`) [µmol m-2 s-1]; default None
        (not counted).
    daytime_result : DaytimeResult, optional
        The central daytime partitioning, whose per-record GPP of the windows before
        and after each record (``gpp_before``, ``gpp_after``, ``span_days``,
        ``stretch``) give the change of the light response across a stretch of
        more than :data:`fluxpart.gap_sides.MIN_GAP_DAYS` without a window in use;
        default None (not counted).
    light_shape : fluxpart.partition.light_shape.ShapeAverage, optional
        The daytime light-response shapes' differences and spread
        (``daytime_curvature = "average"``); default None (not counted).
    driver_day_prior : str, optional
        ``"night"`` (default) or ``"equal"``: the weight of the daytime records' part
        of the respiration-temperature difference (:func:`driver_day_weight`);
        ``"mixture"``: at least 1/2 where the night's mixture share is shown above 0
        (:func:`fluxpart.driver_mixture.mixture_shown`), the night weight elsewhere;
        ``"share"``: as ``"mixture"`` and at least the share itself
        (:func:`fluxpart.driver_mixture.share_day_weight`).
    driver_share_spread : str, optional
        ``"off"`` (default): the weight is at least s², s the night's mixture share;
        ``"bootstrap"``: at least s² + v, v the sampling variance of s over resampled
        nights (:func:`fluxpart.driver_mixture.mixture_share_draws`), the second moment
        of a share known only to its sampling error (Notes of :func:`driver_weight`).
    mixture_test : str, optional
        ``"two_sided"`` (default) or ``"one_sided"``: the test of ``"mixture"``
        (:func:`fluxpart.driver_mixture.critical_value`).

    Returns
    -------
    UncertaintyInputs
    """
    years = pd.Index(index.year)
    sigma_e0 = e0_sigma(nighttime_result.e0_annual, nighttime_result.e0_windows)
    per_record_sigma = sigma_e0.reindex(years).to_numpy(dtype=float)
    elapsed = ((index - index[0]) / pd.Timedelta(days=1)).to_numpy()
    blocks = np.floor(elapsed / float(rref_window_days)).astype(np.int64)
    delta = e0_sensitivity(fluxes["reco_nighttime"].to_numpy(dtype=float), temperature,
                           is_night, nighttime_result.e0, np.nan_to_num(per_record_sigma),
                           blocks)
    # without events exactly the calls of before
    cut = {} if breaks is None or not len(breaks) else {"breaks": breaks}
    night_window, night_se = window_membership(index, nighttime_result.rref_windows, **cut)
    day_window, day_se = window_membership(index, daytime_parameters, **cut)
    night_interval, night_interpolation, _ = interpolation_error(
        index, nighttime_result.rref_windows, **cut)
    day_interval, day_interpolation, _ = interpolation_error(index, daytime_parameters, **cut)
    day_sides = {}
    if daytime_result is not None and daytime_result.gpp_before is not None:
        # the stretches between daytime windows more than two weeks apart
        wide = np.asarray(daytime_result.span_days, dtype=float) > gap_sides.MIN_GAP_DAYS
        day_sides = {
            "day_gpp_before": np.where(wide, daytime_result.gpp_before, np.nan),
            "day_gpp_after": np.where(wide, daytime_result.gpp_after, np.nan),
            "day_stretch": np.asarray(daytime_result.stretch, dtype=np.int64)}
    shape = {} if light_shape is None else {
        "shape_gpp_delta": light_shape.gpp_difference,
        "shape_reco_delta": light_shape.reco_difference,
        "shape_spread": light_shape.spread_factor}
    weight, share, share_draws = 0.0, 0.0, None
    if other_driver_reco is not None:
        central = fluxes["reco_nighttime"].to_numpy(float)
        share = driver_mixture.mixture_share(nee_measured, is_night, central,
                                             other_driver_reco)
        weight = max(combined_driver_weight(
            driver_weight(nee_measured, is_night, central, other_driver_reco),
            day_driver_statistic, day_evidence_critical), share ** 2)
        if driver_share_spread == "bootstrap" or driver_day_prior in ("mixture", "share"):
            # the share on resampled nights, drawn once for either use: unclipped for the
            # mixture test (clipping shrinks the spread near 0 and 1, round review87),
            # clipped to [0, 1] as the share itself for its second moment
            share_draws = driver_mixture.mixture_share_draws(
                nee_measured, is_night, central, other_driver_reco, index, clip=False)
        if driver_share_spread == "bootstrap":
            weight = max(weight, share_second_moment(share, np.clip(share_draws, 0.0, 1.0)))
    if other_driver_reco is None or driver_day_prior == "night":
        day_weight = None
    elif driver_day_prior in ("mixture", "share"):
        day_weight = mixture_day_weight(weight, share, share_draws,
                                        driver_mixture.critical_value(mixture_test))
        if driver_day_prior == "share":
            day_weight = driver_mixture.share_day_weight(
                weight if day_weight is None else day_weight, share)
    else:
        day_weight = driver_day_weight(weight, day_driver_statistic, day_evidence_critical,
                                       driver_day_prior)
    return UncertaintyInputs(
        **day_sides, **shape,
        measured=np.asarray(measured, dtype=bool), noise_sigma=np.asarray(noise_sigma, float),
        is_night=np.asarray(is_night, dtype=bool), fluxes=fluxes,
        runs={name: frame for name, frame in runs.items()}, gapfill_model=gapfill_model,
        e0_delta=delta, night_window=night_window, night_relative_se=night_se,
        day_window=day_window, day_relative_se=day_se,
        night_interval=night_interval, night_interpolation_sd=night_interpolation,
        day_interval=day_interval, day_interpolation_sd=day_interpolation,
        fill_window_days=None if fill_window_days is None else np.asarray(fill_window_days, float),
        fill_noise_sigma=None if fill_noise_sigma is None else np.asarray(fill_noise_sigma, float),
        form_delta=None if respiration_form is None or respiration_form.exponential is None
        else respiration_form.difference,
        form_weight=0.0 if respiration_form is None else respiration_form.weight,
        form_spread=0.0 if respiration_form is None else respiration_form.spread_factor,
        fill_before=None if fill_sides is None else np.asarray(fill_sides[0], dtype=float),
        fill_after=None if fill_sides is None else np.asarray(fill_sides[1], dtype=float),
        driver_delta=None if other_driver_reco is None else
        np.asarray(other_driver_reco, dtype=float) - fluxes["reco_nighttime"].to_numpy(float),
        driver_weight=weight, driver_day_weight=day_weight,
        mixture_judged=(share, share_draws) if other_driver_reco is not None
        and driver_day_prior in ("mixture", "share") else None)


def share_second_moment(share: float, draws) -> float:
    """The second moment of a mixture share known to its sampling error.

    Parameters
    ----------
    share : float
        The night's mixture share s (:func:`fluxpart.driver_mixture.mixture_share`) [1].
    draws : array_like
        The share on resampled nights
        (:func:`fluxpart.driver_mixture.mixture_share_draws`) [1]; empty: none.

    Returns
    -------
    float
        min(s² + v, 1), v the variance of `draws` (0 without draws) [1]: E[S²] = E[S]² +
        Var S for a share S about s, the weight whose root times |ΣΔ| is the root mean
        square error of the central Reco (as :func:`driver_weight`'s Notes).

    References
    ----------
    Efron, B. & Tibshirani, R. J. (1993). An Introduction to the Bootstrap. Chapman &
    Hall, ch. 6 (the bootstrap estimate of a standard error) (m).
    """
    draws = np.asarray(draws, dtype=float)
    spread = float(np.var(draws)) if draws.size else 0.0
    return min(float(share) ** 2 + spread, 1.0)


def _nan_to_zero(values) -> np.ndarray:
    """`values` with NaN as 0 (as Series.fillna(0.0); infinities kept)."""
    values = np.asarray(values, dtype=float)
    return np.where(np.isnan(values), 0.0, values)


def structural_sigma(gpp_excess, reco_excess) -> np.ndarray:
    """The structural standard deviation s of the partitioning methods, from both fluxes.

    Parameters
    ----------
    gpp_excess, reco_excess : numpy.ndarray
        Per period, d² − p_day² − p_night² of GPP and of Reco: the squared difference
        d = daytime − nighttime of the two methods' sums less the variance their own
        quantified parts explain [(g C m-2)²]; NaN where a method has no sum.

    Returns
    -------
    numpy.ndarray
        s = √(max(ΣE, 0) / (2k)) over the k finite excesses of a period (k = 2: the
        positive part of the mean of the two estimates of s²) [g C m-2]; NaN where
        neither is finite.

    Notes
    -----
    Each method's error is its quantified specific part plus a structural error of
    common standard deviation s, independent between the methods, so E[d²] = p_day² +
    p_night² + 2s² for GPP and for Reco alike (Bienaymé's formula). Nighttime GPP is
    Reco − NEE record by record and NEE, the data, has no structural error: the
    nighttime method's structural error is the same error in its GPP and its Reco, so
    both differences measure the one s (they differ by the daytime fit's NEE misfit,
    ΣNEE − Σ(Reco_day − GPP_day), not by a second error of the nighttime method). The two
    excesses are averaged before the positive part is taken, the usual estimator of
    a variance that an unbiased estimate can push below zero (as for the fill bias,
    :func:`period_uncertainty`). Before widths52 each flux took its own difference:
    nighttime GPP and Reco stated different structural errors although one error moves
    both (GPP 0.0 against Reco 8.2 g C m-2 in a trial site-year whose nighttime GPP
    missed its interval by z = −3.1).

    References
    ----------
    JCGM 100:2008, Evaluation of measurement data — Guide to the expression of
    uncertainty in measurement (GUM), §5.1.2: the variance of a sum of independent
    quantities is the sum of their variances (m).
    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration. Global Change Biology 11, 1424-1439
    (nighttime GPP = Reco − NEE).
    """
    excess = np.stack([np.asarray(gpp_excess, dtype=float),
                       np.asarray(reco_excess, dtype=float)])
    known = np.isfinite(excess)
    count = known.sum(axis=0)
    summed = np.where(known, excess, 0.0).sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(count > 0, np.sqrt(np.maximum(summed, 0.0) / (2.0 * count)), np.nan)


def period_uncertainty(inputs: UncertaintyInputs, keys, interval_minutes, *,
                       ustar_percentiles=(16, 50, 84)) -> pd.DataFrame:
    """1-sigma parts and total uncertainty of every flux summed per period.

    Parameters
    ----------
    inputs : UncertaintyInputs
        Per-record inputs.
    keys : array_like
        Period label of each record (day, month start, year).
    interval_minutes : int
        Record length [min].
    ustar_percentiles : sequence of int
        Percentiles of the u* scenario runs.

    Returns
    -------
    pandas.DataFrame
        Indexed by period: for NEE ``nee_uncertainty_random``,
        ``nee_uncertainty_gapfill``, ``nee_uncertainty_gapfill_bias``; for every flux X
        ``X_uncertainty_ustar``, ``X_uncertainty_total`` and ``X_sigma`` (= total);
        for the partitioned fluxes ``X_uncertainty_parameters``; and
        ``gpp_uncertainty_partitioning``, ``reco_uncertainty_partitioning``
        [g C m-2], all one standard deviation.

    Notes
    -----
    Parts, all stated as one standard deviation and combined as independent
    (root sum of squares):

    - random (NEE): √Σσ² of the measured records (Richardson et al. 2006). The
      random error of filled records is part of the gap-filling term.
    - gap filling (NEE), from the site's own artificial gaps
      (:func:`gapfill_error_model`), per record class (night, day):

      * a·n + b·n² per real gap of at most a day (within a period, n counts
        the gap's records in it);
      * for a gap longer than a day, a·n plus b_long·m² per 7-day block of m
        records (since 0.7.0; such gaps are scored on artificial gaps of the
        site's own long lengths, which since 0.9.0 also lack the drivers their
        real gaps lacked), plus d per pair of records in different blocks of the
        gap, and in both each record counted by the size of its fill,
        max(|fill| / r, 1) (since 0.13.0; :func:`gapfill_error_model`); b_long
        and d of the gap's length class, 1-7, 7-28 or over 28 days (since
        gaplength50);
      * the night and the day records of one gap or block share their errors
        with the correlation ρ the artificial gaps show (since 0.9.0; fully
        before): b_n n_n² + b_d n_d² + 2ρ √(b_n b_d) n_n n_d;
      * c per pair of filled records of one class in different gaps at most
        7 days apart in the period (since 0.7.0): fills that close draw on overlapping
        donors under the same weather, so their errors covary;
      * 2σ² per filled record times the share of its donor window inside the
        period (:func:`_donor_noise`; since 0.7.0): a fill is the mean of the
        measured records it draws on, so its error covaries with their random
        errors, which the random part already sums; ignored, it made monthly
        NEE sums 1.1 times too certain (measured and fill errors correlated
        0.30 within a month and within a year on generated site-years);
      * the systematic fill bias B: the mean artificial-gap error per filled
        record times the filled records (fully correlated over the period),
        added as max(B² − S², 0), S its standard error (reported as
        ``nee_uncertainty_gapfill_bias_se``; the night and day classes' biases
        are estimated from different artificial gaps, so their variances add,
        Bienaymé's formula, unless one class borrows the other's). B is **not** subtracted from the
        estimate (on known-truth site-years it hardly correlated with the actual
        error). The error of an estimate left uncorrected holds the squared bias
        (Nμ)², not the spread of its estimate; E[B²] = (Nμ)² + S², so
        B² − S² estimates (Nμ)² without bias and its positive part is the
        usual estimator of a squared mean. Since 0.8.0; 0.7.0 added B², which
        put S² on top of every interval at random: on the three known-truth
        benchmarks the median |B| (4.0–4.8 g C m-2) was what a B of pure
        noise gives for their median S (6.4–7.9), and the gap-filling part of
        one site-year moved by up to a factor of 2.9 between seeds. Before
        0.7.0 the part was max(B², S²), S computed as if all filled records
        shared one error, to stand in for the correlation between gaps that
        the per-gap terms then missed. Figures: DEVELOPERS.md, "Calibration".
      * a gap longer than 14 days across a change of state (since 0.24.0;
        :mod:`fluxpart.gap_sides`): the gap is filled again from the records
        before it only and after it only, and a change of the canopy from the
        one state to the other at a uniformly distributed time within the gap
        adds ``(m − F)² + D²/12`` per gap (F, B, A the central and the two
        one-sided fills' sums, m = (A + B)/2, D = A − B); a day, month or year
        holding part of a gap counts that part's mean square error under the same
        change time over the whole gap (a day mid-gap is one state or the other;
        :func:`fluxpart.gap_sides.state_change_variance`). The artificial gaps
        meet a change of state only as often as a gap placed at random does,
        so a real gap across the green-up was stated as certain as one in
        midsummer: on a known-truth leap year with a 34-day gap across the
        leaf-out the NEE error was −40.2 g C m-2 against a stated 1 σ of 10.9
        (gap-filling part 10.4 → 25.3 with the term).
    - u* threshold: :func:`ustar_sigma` of the scenario sums.
    - fitted parameters: nighttime Reco: E0 + 1 s.e. (:func:`e0_sensitivity`,
      fully correlated) and the relative standard error of each Rref window
      (records of one window fully correlated, windows independent). Daytime
      Reco: the same for the daytime windows' reference respiration. Daytime
      GPP: the same Reco error over the daylight records, because the fitted
      daytime NEE is held by the data, so an error of the respiration term is
      an equal error of GPP. Nighttime GPP = Reco − NEE takes the parts of both,
      but only over the records outside the night: at night the fitted Reco and
      the measured or night-filled NEE are two estimates of the same respiration
      from the same night records, so an error of the night data (its noise, the
      Rref of a window, E0 with the night sums held) moves both alike and cancels
      in their difference. What reaches nighttime GPP is Reco's error
      extrapolated into daylight and the random and gap-filling errors of the
      daytime NEE. On 35 known-truth site-years this moved nighttime GPP's median
      |error|/σ from 0.37 to 0.44 (coverage 100 % both ways). Both methods
      interpolate Rref linearly between window centres; the error of that
      interpolation (:func:`interpolation_error`, a Brownian bridge of the site's
      own window-to-window drift, fully correlated between two centres) is added
      to the window part. Since 0.6.0; on the three known-truth benchmarks
      (168 site-years) it raised the nighttime coverage from 94.3 / 95.7 %
      (GPP / Reco, calibration), 92.9 / 92.9 % (generalisation) and 88.1 / 92.9 %
      (other physics) to 98.6 / 97.1, 92.9 / 94.6 and 92.9 / 97.6 %, the
      daytime coverage on the other-physics site-years from 83.3 / 83.3 % to
      88.1 / 85.7 %, and the mean nighttime interval width by 7–9 % (most in
      site-years with weeks of gaps).
      Daytime GPP across a stretch of more than 14 days without a daytime
      window in use (an NEE outage of weeks; since 0.24.0): each record's GPP is
      the time-weighted mean of the light responses of the windows on either
      side, and a change of the canopy from the one to the other at an unknown
      time within the stretch adds ``(m − F)² + D²/12`` per stretch, and per
      part of it in a period as for a gap's part
      (:func:`fluxpart.gap_sides.state_change_variance`, the sums of the two
      windows' GPP over the stretch's records), as for a long NEE gap; the
      Rref bridge above covers the respiration only.
    - respiration temperature (structural, where both air and soil temperature
      exist): √w · |Σ(Reco(other temperature) − Reco)| of the nighttime method,
      w the weight the night data give the other temperature
      (:func:`driver_weight`); with ``driver_day_prior = "equal"``
      |√w Σ_night Δ + √w_day Σ_day Δ|, w_day at least 1/2 unless the daytime records
      favour the temperature in use (:func:`driver_day_weight`). Both methods use the same temperature, so a wrong
      choice moves both alike and the method difference cannot reveal it; the
      part is added to all four partitioned fluxes (GPP moves with Reco, NEE
      being fixed by the data).
    - respiration form (structural, since 0.7.0): s · |Σ(Reco(constant Q10) −
      Reco(Lloyd–Taylor))| of the nighttime method refitted with the exponential
      form, s = √(w (1 − w)) about the two forms' weighted average (the central
      estimate since 0.10.0) or √w about Lloyd–Taylor's
      (``respiration_form = "lloyd_taylor"``)
      (:func:`fluxpart.partition.respiration_form.exponential_reco`), w the
      weight the night data give it (:func:`driver_weight`), in the nighttime
      totals; the daytime method keeps Lloyd–Taylor, so its totals take √w ·
      |ΣΔ| (``reco_daytime_uncertainty_respiration_form``). A respiration that
      keeps one Q10 over a wide range moves both Lloyd–Taylor fits alike, so
      the method difference cannot show it. On the 42
      other-physics site-years (Q10 truth) it raised the 95 % coverage of
      nighttime GPP / Reco from 92.9 / 97.6 % to 97.6 / 100 % and of daytime
      GPP / Reco from 88.1 / 85.7 % to 97.6 / 90.5 %; on the 126 Lloyd–Taylor
      site-years mean widths grew by about 1 %.
    - light-response shape (structural, ``daytime_curvature = "average"`` only):
      ½ · |Σ(X(profiled curvature) − X(rectangular))| for daytime GPP and Reco
      (``X_uncertainty_light_shape``; :mod:`fluxpart.partition.light_shape`): the
      two shapes' spread about their equal-weight average, in the daytime totals
      and among the daytime method's own parts below.
    - partitioning (structural): the part of the differences d = daytime −
      nighttime of GPP and of Reco that the methods' own quantified parts do
      not explain, added to both methods: if each method's error is its
      quantified specific part (p_day, p_night: fitted parameters; for
      nighttime GPP also the daytime random and gap-filling parts) plus an
      unquantified structural error of common standard deviation s, all
      independent, then E[d²] = p_day² + p_night² + 2s² for each flux.
      Nighttime GPP = Reco − NEE and NEE has no structural error, so one s
      moves the nighttime GPP and Reco alike: since 0.35.0 both fluxes take
      s = √(max(ΣE, 0) / 4), E = d² − p_day² − p_night² of GPP and of Reco
      (:func:`structural_sigma`); before, each flux took
      √(max(E, 0) / 2) of its own d. Adding |d|/√2 instead would
      count the parameter parts twice. Measured on 34 known-truth site-years
      (DEVELOPERS.md): 95 % coverage of the four partitioned fluxes 100, 100,
      100, 97 % with |d|/√2 (median |error|/σ 0.34–0.81), 94, 94, 100, 97 %
      with the excess (0.40–0.92).

    Not quantified: systematic errors of the measurement (energy-balance
    closure, advection beyond the u* filter, storage, footprint, calibration)
    and model-structure errors shared by both partitioning methods.
    """
    factor = _seconds_factor(int(interval_minutes))
    keys = np.asarray(keys)
    index = pd.Index(pd.unique(keys))
    fluxes = inputs.fluxes
    out = {}                    # the columns, made a table once at the end

    codes = pd.factorize(keys)[0]            # position in `index` of each record's period

    def carbon_sums(frame):
        """Each column's sum per period [g C m-2]; NaN where a period has no value."""
        return (frame * factor).groupby(codes).sum(min_count=1).set_axis(index)

    carbon = carbon_sums(fluxes)

    # the parts are arrays in the order of `index` (the same element-wise arithmetic as on
    # Series, without building a Series for every intermediate), a table at the end
    def per_period(values):
        return pd.Series(np.asarray(values, dtype=float)).groupby(codes).sum().to_numpy()

    def grouped(groups, values):
        return _grouped_square(codes, len(index), groups, values)

    measured = np.asarray(inputs.measured, dtype=bool)
    night = np.asarray(inputs.is_night, dtype=bool)
    nee_finite = np.isfinite(fluxes["nee"].to_numpy(dtype=float))
    filled = ~measured & nee_finite
    noise = np.where(measured, np.nan_to_num(np.asarray(inputs.noise_sigma, dtype=float)), 0.0)
    random_var = per_period(np.square(noise)) * factor**2
    out["nee_uncertainty_random"] = np.sqrt(random_var)

    model = inputs.gapfill_model
    gap_var = gap_var_day = np.zeros(len(index))
    bias = bias_se = np.zeros(len(index))
    gapfill_known = model is not None and not model[["bias", "independent_variance"]].isna().all().all()
    if gapfill_known:
        # the two classes' biases come from different artificial gaps (independent
        # estimates), unless a class without scores takes the other's
        shared_estimate = bool(model["bias"].isna().any())
        model = model.fillna(model.mean(numeric_only=True))   # a class without scores: the other's
        if "correlated_variance_long" not in model:      # a model table from before 0.7.0
            model = model.assign(correlated_variance_long=model["correlated_variance"])
        if "neighbour_covariance" not in model:
            model = model.assign(neighbour_covariance=0.0)
        for column, before in (("block_covariance_long", 0.0),    # model tables from
                               ("size_reference_long", np.nan)):  # before 0.13.0
            if column not in model:
                model = model.assign(**{column: before})
        for label in _LONG_CLASSES[1:]:    # model tables from before gaplength50: one long class
            for kind in ("correlated_variance", "block_covariance"):
                if f"{kind}_{label}" not in model:
                    model = model.assign(**{f"{kind}_{label}": model[f"{kind}_long"]})
        night_day = model.reindex(["night", "day"])        # one row per class, night first
        by_class = {name: night_day[name].to_numpy(dtype=float)
                    for name in ("bias", "bias_se", "independent_variance", "correlated_variance",
                                 "neighbour_covariance", "size_reference_long",
                                 *(f"{kind}_{label}" for label in _LONG_CLASSES
                                   for kind in ("correlated_variance", "block_covariance")))}
        pick = {name: np.where(night, values[0], values[1]) for name, values in by_class.items()}
        # a model table from before 0.9.0 has no correlations: fully shared, as then
        correlation, correlation_long = (
            float(model[column].iloc[0]) if column in model else 1.0
            for column in ("day_night_correlation", "day_night_correlation_long"))

        def fill_variance(records):
            independent = per_period(np.where(records, pick["independent_variance"], 0.0))
            shared = np.where(long_gap, by_length("correlated_variance"),
                              pick["correlated_variance"])
            root = np.where(records, np.sqrt(shared) * size, 0.0)
            # per block, N = Σ night √b and D = Σ day √b share N² + D² + 2ρND
            # = (1 − ρ)(N² + D²) + ρ(N + D)² (ρ is one value per block: a block
            # lies in one gap, long or not)
            rho = np.where(long_gap, correlation_long, correlation)
            apart = root * np.sqrt(1.0 - rho)
            correlated = grouped(block_id, np.where(night, apart, 0.0)) \
                + grouped(block_id, np.where(night, 0.0, apart)) \
                + grouped(block_id, root * np.sqrt(rho))
            # different 7-day blocks of one long gap: d per record pair of a class, the
            # classes mixed with the same ρ_long; Σ over the gap minus Σ over its blocks
            # leaves the pairs of different blocks
            spread = np.where(records & long_gap,
                              np.sqrt(by_length("block_covariance")) * size, 0.0)
            mixed = spread * np.sqrt(1.0 - correlation_long)

            def pairs_within(groups):
                return grouped(groups, np.where(night, mixed, 0.0)) \
                    + grouped(groups, np.where(night, 0.0, mixed)) \
                    + grouped(groups, spread * np.sqrt(correlation_long))

            between_blocks = np.maximum(pairs_within(gap_id) - pairs_within(block_id), 0.0)
            neighbours = per_period(np.where(records, pick["neighbour_covariance"] * _neighbour_pairs(
                records, night, gap_id, codes, records_per_day), 0.0))
            # a fill averages measured records: 2 cov(fill, the period's measured records)
            donors = per_period(np.where(records, 2.0 * donor_noise, 0.0))
            bias = per_period(np.where(records, pick["bias"], 0.0)) * factor
            se_night = per_period(np.where(records & night, pick["bias_se"], 0.0)) * factor
            se_day = per_period(np.where(records & ~night, pick["bias_se"], 0.0)) * factor
            # independent estimates: their variances add (Bienaymé); one shared: N s
            bias_se = se_night + se_day if shared_estimate else np.hypot(se_night, se_day)
            # E[B²] = (Nμ)² + S²: B² - S² estimates the squared bias (positive part; Notes)
            squared_bias = np.maximum(np.square(bias) - np.square(bias_se), 0.0)
            return (independent + correlated + between_blocks + neighbours + donors) \
                * factor**2 + squared_bias, bias, bias_se

        gap_id = run_ids(filled)
        records_per_day = _MINUTES_PER_DAY // int(interval_minutes)
        gap_length = np.bincount(gap_id[filled], minlength=1)     # minlength: no filled record
        long_gap = filled & (gap_length[np.maximum(gap_id, 0)] > records_per_day)
        # the length class of each record's gap (days, weeks, months; _GAP_CLASS_DAYS)
        length_class = np.searchsorted(
            _GAP_CLASS_DAYS, gap_length[np.maximum(gap_id, 0)] / records_per_day, side="left")

        def by_length(kind):
            return np.choose(length_class, [pick[f"{kind}_{label}"] for label in _LONG_CLASSES])

        # a gap of a day or less is one block; a longer one shares its error by 7-day blocks
        block_id = _block_ids(filled, int(_NEIGHBOUR_DAYS * records_per_day))
        donor_noise = _donor_noise(inputs, codes, filled, interval_minutes)
        # in a gap longer than a day a fill's shared error grows with its size, never
        # below the class's typical flux (gapfill_error_model, Notes)
        nee_filled = fluxes["nee"].to_numpy(dtype=float)
        size = np.ones(len(filled))
        for in_class, reference in ((night, by_class["size_reference_long"][0]),
                                    (~night, by_class["size_reference_long"][1])):
            where = long_gap & in_class
            size[where] = _fill_size(nee_filled[where], reference)
        gap_var, bias, bias_se = fill_variance(filled)
        gap_var_day = fill_variance(filled & ~night)[0]
        if inputs.fill_before is not None:
            # a long gap across a change of the canopy (gap_sides.state_change_variance)
            sides = (nee_filled, inputs.fill_before, inputs.fill_after, codes, len(index))
            gap_var = gap_var + gap_sides.state_change_variance(*sides) * factor**2
            gap_var_day = gap_var_day + gap_sides.state_change_variance(
                *sides, records=~night) * factor**2
    unknown = np.full(len(index), np.nan)
    out["nee_uncertainty_gapfill"] = np.sqrt(gap_var) if gapfill_known else unknown
    out["gpp_nighttime_uncertainty_gapfill"] = np.sqrt(gap_var_day) if gapfill_known else unknown
    out["gpp_nighttime_uncertainty_random"] = np.sqrt(
        per_period(np.square(np.where(night, 0.0, noise))) * factor**2)
    out["nee_uncertainty_gapfill_bias"] = bias if gapfill_known else unknown
    out["nee_uncertainty_gapfill_bias_se"] = bias_se if gapfill_known else unknown

    # the central run is the central fluxes (record_inputs): summed once
    run_sums = {name: carbon if frame is fluxes else carbon_sums(frame)
                for name, frame in inputs.runs.items()}
    ustar = {}
    for flux in _FLUXES:
        if run_sums:
            table = pd.DataFrame({name: s[flux].to_numpy() for name, s in run_sums.items()},
                                 index=index)
            ustar[flux] = ustar_sigma(table, ustar_percentiles).to_numpy()
        else:
            ustar[flux] = np.full(len(index), np.nan)
        out[f"{flux}_uncertainty_ustar"] = ustar[flux]

    reco_night = fluxes["reco_nighttime"].to_numpy(dtype=float)
    reco_day = fluxes["reco_daytime"].to_numpy(dtype=float)
    daylight = fluxes["gpp_daytime"].to_numpy(dtype=float) > 0
    e0_delta = np.nan_to_num(inputs.e0_delta)
    e0_part = np.square(per_period(e0_delta) * factor)
    e0_part_day = np.square(per_period(np.where(night, 0.0, e0_delta)) * factor)
    night_rref = grouped(inputs.night_window, np.asarray(inputs.night_relative_se) * reco_night)
    night_rref_day = grouped(inputs.night_window, np.where(
        night, 0.0, np.asarray(inputs.night_relative_se) * reco_night))
    day_rref = grouped(inputs.day_window, np.asarray(inputs.day_relative_se) * reco_day)
    day_rref_gpp = grouped(inputs.day_window, np.where(daylight, np.asarray(
        inputs.day_relative_se) * reco_day, 0.0))
    def interpolated(interval, relative_sd, reco, within):
        """Rref interpolated between window centres, a Brownian bridge per stretch
        (:func:`interpolation_error`): Σ (Σ sd·Reco)² over all records and over `within`."""
        if interval is None:
            return 0.0, 0.0
        spread = np.nan_to_num(relative_sd) * reco
        return grouped(interval, spread), grouped(interval, np.where(within, spread, 0.0))

    night_bridge, night_bridge_day = interpolated(
        inputs.night_interval, inputs.night_interpolation_sd, reco_night, ~night)
    day_bridge, day_bridge_gpp = interpolated(
        inputs.day_interval, inputs.day_interpolation_sd, reco_day, daylight)
    night_rref, night_rref_day = night_rref + night_bridge, night_rref_day + night_bridge_day
    day_rref, day_rref_gpp = day_rref + day_bridge, day_rref_gpp + day_bridge_gpp
    night_known = np.isfinite(inputs.night_relative_se).any()
    day_known = np.isfinite(inputs.day_relative_se).any()
    parameters = {
        "reco_nighttime": np.sqrt(e0_part + night_rref * factor**2) if night_known else
        np.sqrt(e0_part),
        "reco_daytime": np.sqrt(day_rref) * factor if day_known else
        np.full(len(index), np.nan),
        "gpp_daytime": np.sqrt(day_rref_gpp) * factor if day_known else
        np.full(len(index), np.nan),
    }
    if day_known and inputs.day_gpp_before is not None:
        # a stretch of weeks without a daytime window: the light response of the one
        # side or the other (gap_sides.state_change_variance)
        capacity = gap_sides.state_change_variance(
            fluxes["gpp_daytime"].to_numpy(dtype=float), inputs.day_gpp_before,
            inputs.day_gpp_after, codes, len(index), groups=inputs.day_stretch)
        parameters["gpp_daytime"] = np.sqrt(np.square(parameters["gpp_daytime"])
                                            + capacity * factor**2)
    # nighttime GPP = Reco - NEE: at night both are estimates of the same night respiration
    # from the same night records, so only the part outside the night reaches it (Notes)
    parameters["gpp_nighttime"] = np.sqrt(e0_part_day + night_rref_day * factor**2) \
        if night_known else np.sqrt(e0_part_day)
    for flux, part in parameters.items():
        out[f"{flux}_uncertainty_parameters"] = part

    # the daytime light response's shape (daytime_curvature = "average"): the two shapes'
    # spread about their average, a part of the daytime method's own
    shape = {}
    if inputs.shape_gpp_delta is not None:
        for flux, delta in (("gpp_daytime", inputs.shape_gpp_delta),
                            ("reco_daytime", inputs.shape_reco_delta)):
            shape[flux] = np.abs(per_period(np.nan_to_num(delta))) * factor \
                * inputs.shape_spread
            out[f"{flux}_uncertainty_light_shape"] = shape[flux]
    # what each method's own quantified parts already explain of the difference
    specific = {flux: np.square(_nan_to_zero(part)) + np.square(shape.get(flux, 0.0))
                for flux, part in parameters.items()}
    specific["gpp_nighttime"] = specific["gpp_nighttime"] \
        + np.square(out["gpp_nighttime_uncertainty_random"]) \
        + np.square(_nan_to_zero(out["gpp_nighttime_uncertainty_gapfill"]))
    excess = {}
    for kind in ("gpp", "reco"):
        difference = (carbon[f"{kind}_daytime"].to_numpy()
                      - carbon[f"{kind}_nighttime"].to_numpy())
        excess[kind] = np.square(difference) - specific[f"{kind}_daytime"] \
            - specific[f"{kind}_nighttime"]
    # one structural error for every partitioned flux, from both differences (Notes)
    shared = structural_sigma(excess["gpp"], excess["reco"])
    method = {}
    for kind in ("gpp", "reco"):
        method[kind] = np.where(np.isnan(excess[kind]), np.nan, shared)
        out[f"{kind}_uncertainty_partitioning"] = method[kind]
    if inputs.driver_delta is not None and inputs.driver_day_weight is not None:
        scale = np.where(inputs.is_night, np.sqrt(inputs.driver_weight),
                         np.sqrt(inputs.driver_day_weight))
        driver = np.abs(per_period(np.nan_to_num(inputs.driver_delta) * scale)) * factor
    elif inputs.driver_delta is not None:
        driver = np.abs(per_period(np.nan_to_num(inputs.driver_delta))) * factor \
            * np.sqrt(inputs.driver_weight)
    else:
        driver = np.full(len(index), np.nan)
    out["reco_uncertainty_temperature_driver"] = driver
    if inputs.form_delta is not None:
        form_difference = np.abs(per_period(np.nan_to_num(inputs.form_delta))) * factor
        form = form_difference * inputs.form_spread
        form_day = form_difference * np.sqrt(inputs.form_weight)   # daytime keeps Lloyd–Taylor
    else:
        form = form_day = np.full(len(index), np.nan)
    out["reco_uncertainty_respiration_form"] = form
    out["reco_daytime_uncertainty_respiration_form"] = form_day

    def total(*parts):
        """√Σ part² per period over the parts it has; NaN where it has none."""
        squares = np.square(np.stack([np.asarray(p, dtype=float) for p in parts]))
        known = ~np.isnan(squares)
        # summed part after part, as DataFrame.sum(axis=1) sums its columns
        sums = np.where(known, squares, 0.0).sum(axis=0)
        return np.sqrt(np.where(known.any(axis=0), sums, np.nan))

    nee_parts = [out["nee_uncertainty_random"], out["nee_uncertainty_gapfill"], ustar["nee"]]
    out["nee_uncertainty_total"] = total(*nee_parts)
    out["reco_nighttime_uncertainty_total"] = total(
        ustar["reco_nighttime"], parameters["reco_nighttime"], method["reco"], driver, form)
    out["gpp_nighttime_uncertainty_total"] = total(
        ustar["gpp_nighttime"], parameters["gpp_nighttime"], method["gpp"], driver, form,
        out["gpp_nighttime_uncertainty_random"], out["gpp_nighttime_uncertainty_gapfill"])
    out["reco_daytime_uncertainty_total"] = total(
        ustar["reco_daytime"], parameters["reco_daytime"], method["reco"], driver, form_day,
        *[shape[flux] for flux in ("reco_daytime",) if flux in shape])
    out["gpp_daytime_uncertainty_total"] = total(
        ustar["gpp_daytime"], parameters["gpp_daytime"], method["gpp"], driver, form_day,
        *[shape[flux] for flux in ("gpp_daytime",) if flux in shape])
    for flux in _FLUXES:
        out[f"{flux}_sigma"] = np.where(carbon[flux].isna().to_numpy(), np.nan,
                                        out[f"{flux}_uncertainty_total"])
    return pd.DataFrame(out, index=index)


def uncertainty_budget(annual: pd.DataFrame, random: pd.DataFrame,
                       parts: pd.DataFrame | None = None, *,
                       confidence=CONFIDENCE) -> pd.DataFrame:
    """Annual uncertainty budget: 1-sigma parts, total and the stated 95 % interval.

    Parameters
    ----------
    annual : pandas.DataFrame
        The pipeline's annual table, indexed by year, with ``nee`` and the
        partitioned sums [g C m-2].
    random : pandas.DataFrame
        From :func:`monte_carlo_sums` over the measured records, indexed by year.
    parts : pandas.DataFrame, optional
        From :func:`period_uncertainty` with yearly keys. Without it only the
        random part is known and every other part is named missing.
    confidence : float, optional
        Confidence level of the interval; 0.95.

    Returns
    -------
    pandas.DataFrame
        Indexed like `annual`: the columns of :data:`ANNUAL_COLUMNS` except the
        t CO2 ha-1 ones, among them ``X_ci95_low`` and ``X_ci95_high`` for X in
        ``nee``, ``gpp_nighttime``, ``reco_nighttime``, ``gpp_daytime``,
        ``reco_daytime``.

    Raises
    ------
    MissingColumnError
        If `random` lacks its columns or `annual` lacks ``nee``.

    Notes
    -----
    The interval is ``X ± z·σ`` with σ the root sum of squares of the 1-sigma
    parts of :func:`period_uncertainty` and z = 1.959964 the 97.5 % quantile of
    the standard normal: an annual sum adds up thousands of record errors and a
    handful of independent parts, so its error is close to normal (central
    limit theorem) even though single-record errors are Laplace. The Monte
    Carlo percentiles of the random part are kept beside it as a check of that.

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
    out = {                     # the columns, made a table once at the end
        "nee_uncertainty_random": r["random_sd"].astype(float),
        "nee_uncertainty_random_percentile_2_5": r["random_percentile_2_5"].astype(float),
        "nee_uncertainty_random_percentile_97_5": r["random_percentile_97_5"].astype(float),
        "nee_uncertainty_random_analytic": r["analytic_sd"].astype(float)}
    if parts is None:
        parts = pd.DataFrame(index=annual.index)
    parts = parts.reindex(annual.index)
    for column in [c for c in ANNUAL_COLUMNS if c in parts.columns and c not in out
                   and not c.endswith("_sigma")]:
        out[column] = parts[column].astype(float)
    for column in ANNUAL_COLUMNS:
        if (column.endswith(("_uncertainty_ustar", "_uncertainty_gapfill",
                             "_uncertainty_parameters", "_uncertainty_partitioning",
                             "_uncertainty_total"))
                or column in ("nee_uncertainty_gapfill_bias", "nee_uncertainty_gapfill_bias_se")) \
                and column not in out:
            out[column] = pd.Series(np.nan, index=annual.index)
    # the Monte Carlo standard deviation replaces the analytic random part in the total
    random_part = out["nee_uncertainty_random"]
    fill_part = out["nee_uncertainty_gapfill"]
    out["nee_uncertainty_total"] = np.sqrt(np.square(pd.concat(
        [random_part, fill_part, out["nee_uncertainty_ustar"]], axis=1)).sum(axis=1, min_count=1))
    if "gpp_nighttime_uncertainty_random" not in parts.columns:
        out["gpp_nighttime_uncertainty_random"] = random_part
    z = NormalDist().inv_cdf(0.5 + confidence / 2.0)
    for flux in _FLUXES:
        sigma = out[f"{flux}_uncertainty_total"]
        value = annual[flux].astype(float) if flux in annual.columns else np.nan
        out[f"{flux}_ci95_low"] = value - z * sigma
        out[f"{flux}_ci95_high"] = value + z * sigma
    missing = {"random": out["nee_uncertainty_random"].isna(),
               "gap filling": out["nee_uncertainty_gapfill"].isna(),
               "ustar": out["nee_uncertainty_ustar"].isna(),
               "parameters": out["reco_nighttime_uncertainty_parameters"].isna()
               | out["reco_daytime_uncertainty_parameters"].isna(),
               "partitioning": out["gpp_uncertainty_partitioning"].isna()
               | out["reco_uncertainty_partitioning"].isna()}
    labels = [", ".join(name for name, mask in missing.items() if mask.loc[year])
              for year in annual.index]
    out["uncertainty_parts_missing"] = pd.Series(labels, index=annual.index)
    return pd.DataFrame(out, index=annual.index.copy())


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
