"""Daytime partitioning: light-response curve with VPD limitation (Lasslop et al. 2010).

Measured daytime NEE is fitted, window by window, to

    NEE = -alpha beta Rg / (alpha Rg + beta) + Rref LT(T; E0),
    beta = beta0 exp(-k (VPD - VPD0)) for VPD > VPD0, beta = beta0 otherwise,

with alpha, beta0, k and Rref fitted and E0 estimated by this module from the
night records around each window (it takes nothing from the nighttime method).
All windows of a record are fitted at once by a batched, bounded
Levenberg–Marquardt iteration with analytic Jacobians over padded arrays (no
Python loop over windows). GPP and Reco of each record are evaluated on the
supplied (gap-filled) drivers with the curves of the two windows in use whose
centres enclose it, weighted linearly in time.

Rules and their sources (``(m)`` = recalled from memory, check against the paper):

- 4-day windows moved by 2 days: Lasslop et al. (2010) (m).
- **E0 from the night data around the windows, pooled per year.** Lasslop et
  al. (2010) fix E0 in the daytime fit at a value estimated from night-time NEE
  around the window (m). Rule here, in two steps:

  1. *Each window's own estimate.* The measured night NEE of a window centred on
     the daytime window, first 4 days wide (the window itself), then 8 and 16
     days where the narrower one holds fewer than `e0_min_points` records or a
     temperature range under `e0_min_temperature_range` (5 K, Reichstein et al.
     2005); never wider than the 15-day windows of the nighttime method
     (Reichstein et al. 2005), rounded to the doubling sequence. Within a wider
     window each 4-day block has its own Rref, so that the seasonal change of
     Rref is not read as a temperature response. E0 and the Rrefs by least
     squares (the global optimum on a 10 K grid, refined by golden-section search
     on the profile), with the standard error of E0 from the Schur complement of
     the Rref block. Which width is used depends only on how much the night data
     hold (records, temperature range), never on the estimate.
  2. *Pooled per calendar year* (of the window centre) by inverse variance: every
     window's estimate counts, whatever its value, at its own precision. The
     pool is accepted when it lies strictly inside `e0_bounds` (30–450 K,
     Reichstein et al. 2005 (m)) with a standard error of at most
     `e0_max_relative_error` (0.5, our choice, as the nighttime method) of E0;
     a year whose pool fails takes the pool of all years, and none accepted
     uses `e0_fallback` (flagged) if given, else raises
     :class:`~fluxpart.errors.InsufficientDataError`.

  Why pooled: accepting only the windows whose own fit has a relative standard
  error under 0.5 keeps the windows whose noise steepened the curve (a larger
  E0 has a smaller *relative* error), and interpolating between those few biased
  E0 high. On generated site-years with one planted E0 the windows that passed
  that test had median E0 of 215–440 K where 134–181 K was planted, and the
  too-steep response, applied to warm daytime temperatures, raised daytime Reco
  and GPP by up to 18 %; the pool of all windows gave 104–205 K. Reichstein et
  al. (2005) likewise take one E0 per year for the nighttime method, because
  short windows alone do not constrain it. The overlapping windows serve each
  night record several times, so the pooled standard error is inflated by
  ``sqrt(width / window_step_days)`` (our choice). The window's own estimate is
  kept in the parameter table (``e0_window``, ``e0_window_se``).
- VPD0 = 10 hPa: Lasslop et al. (2010), eq. 4 (m).
- Starting values alpha = 0.01 µmol J-1, k = 0, beta0 = |q03 - q97| of the
  window's daytime NEE: Lasslop et al. (2010) (m). Rref starts from the window's
  night data (the night Rref below).
- **Night Rref.** For every window the least-squares Rref of its own measured
  night NEE with the window's E0 (a closed form), with its standard error; at
  least `night_min_points` records (5, our choice) and a standard error of at most
  100 µmol m-2 s-1 (the plausible range of a flux; since round trial14: on the
  fourteenth trial's tundra on soil temperature, night NEE at −26 °C divided by a factor
  of ~1e-3 gave night
  Rref of 250–420 ± 120–210 in February, whose refits carried 50 g C m-2 of daytime
  Reco into the two months of polar night, where the truth is ~0). It starts the fit,
  and it replaces the fitted Rref where the daytime fit cannot be trusted (below).
- **Weighting.** With `random_error` (σ of each record's NEE) the fit
  minimises ``sum((model - NEE)^2 / σ^2)``: Lasslop et al. (2010) weight the
  cost by the flux uncertainty (m). Without it all records weigh the same.
- Bounds: alpha in [0, 0.22] µmol J-1, beta0 in [0, 250] µmol m-2 s-1,
  k >= 0, Rref >= 0: Lasslop et al. (2010) (m). k is fixed at 0 when fewer
  than `k_min_points` records of the window have VPD above VPD0 (our count), or
  when the fit drives k to its bound 0: Lasslop et al. (2010) set k = 0 and refit
  when the fit gives k < 0 (m); the bounded optimum with k at 0 is that refit.
- **Judging a window** (status ``accepted``, ``replaced`` or ``rejected``, with
  the reason):

  * rejected: fewer than `min_points` usable daytime records; no convergence.
  * replaced, when the daytime fit sits at a bound or contradicts the night:
    Rref at 0, alpha at its upper bound, alpha at 0 (no light response
    found), beta0 at its upper bound (the curve does not saturate within the
    window, so alpha and Rref trade off along a ridge), a singular fit, or a
    fitted Rref that differs from the window's night Rref by more than
    `consistency_z` (1.96: 95 %, two-sided) combined standard errors, or whose
    standard error exceeds `rref_max_relative_error` (0.5) of the night Rref. The
    last rule (our choice, since 0.5.0): with a standard error of half the
    respiration the night measures, the fit's 95 % interval runs from about zero
    to twice it, so the daytime data do not resolve respiration; such fits trade
    Rref against alpha along a ridge bounded below by Rref = 0 and not above, so
    their errors are skewed high (on generated dry-season savanna windows the
    fitted Rref reached 2–6 times the planted one, and annual daytime Reco was
    +11 to +13 % with the planted E0). The rule compares with the night Rref, not
    with the fit's own value, so it does not keep the windows whose noise shrank
    their error. On the calibration benchmark it took the mean daytime Reco error
    from +2.4 % to 0.0 %. A fitted Rref whose standard error exceeds 100 µmol m-2 s-1
    (the plausible range of a measured flux, as below) is unresolved too, night Rref
    or not (since round trial14). The
    replacement is a constrained refit: Rref fixed at the night Rref and alpha,
    beta0, k fitted on the daytime data. Physical argument: the light response
    extrapolated to Rg = 0 is respiration, and night records are direct
    measurements of it at Rg = 0; when the daytime data alone cannot separate
    the two fluxes (weak or non-saturating light response in dormant and cold
    months, or photosynthesis that rises with temperature through the day,
    which the daytime fit otherwise reads as negative respiration), the measured
    respiration is the defensible anchor. Lasslop et al. (2010) instead reuse
    the previous window's parameters (m); that is our fall-back below.
  * also replaced: a curve half-saturated (``beta0 / alpha``) below the 5th
    percentile of the window's daytime Rg (our threshold). It is flat over
    nearly all observed light, a constant daytime offset that trades off against
    a free Rref, so neither flux is identified from the daytime data alone.
  * rejected after the refit: no night Rref (too few night records), or the
    refit itself fails (no convergence, singular).
  * rejected, last (since 0.17.0): a window whose respiration curve gives more
    than 100 µmol m-2 s-1 (the plausible range of a measured flux) at a record it
    is applied to, i.e. between the centres of the windows in use before and after
    it; repeated until no curve in use does. Near T0 (−46.02 °C) Lloyd–Taylor's
    factor falls towards 0 so steeply that night NEE of a window at −40 °C divided
    by it gave Rref of 10^7 µmol m-2 s-1 (a fictional Siberian site of review round
    ten), and the curve carried to records 12 K warmer made January's daytime Reco
    59 536 g C m-2 (annual 62 604 against the nighttime method's 354; with the rule
    367). Rules on the night Rref's relative error instead (rejecting at 1 or
    10 times the value) changed 28 and 7 of the 70 calibration site-years, where cold
    windows anchored near zero respiration are harmless, and lowered the daytime
    coverage; this rule changes none of them (the tables of the 168 generated
    site-years are identical).
  * accepted with a note: beta0 at its upper bound after the refit (crops, C4
    canopies whose light response barely saturates: within the observed light
    the curve is nearly linear and alpha absorbs the rest); alpha at 0 after
    the refit (no detectable assimilation: GPP = 0); alpha at its upper bound
    or the curve half-saturated below the window's light after the refit
    (since 0.12.0). With Rref fixed, a curve saturated below the window's light
    is identified: its plateau beta0 is how far the daytime NEE falls below the
    respiration the night measured, i.e. the daytime uptake, and GPP is nearly
    that constant through the day. A sparse canopy does this: regrowth after a
    harvest or a cut, or a canopy whose capacity is small while its quantum
    efficiency is not, saturates at a few W m-2. Before 0.12.0 such windows were
    rejected and their records took the curves of the windows in use around
    them, across a harvest for months: on an independent known-truth trial's
    wheat (a crop harvested in July, `tests/benchmarks/trial_third.py`) daytime
    GPP was +90 and +76 g C m-2 in August and September (true 24 each) and the
    year's +16 % and +12 %; with the anchored plateau −2 % and −3 %. The
    price: where GPP is truly 0 (bare soil), noise and any error of the night
    respiration's extrapolation to daytime temperatures can only raise the
    plateau (beta0 >= 0), a few g C m-2 per month on generated bare-soil
    months, as the nighttime method's GPP = Reco − NEE does.

- **Curvature** (option; default 0, the published rectangular hyperbola). A fixed
  curvature replaces the rectangular hyperbola by the non-rectangular one
  (Johnson & Thornley 1984 (m)), whose sharper bend canopies often show (Gilmanov
  et al. 2003 (m)). ``"fit"`` profiles one curvature per record: every window with
  enough daytime records is fitted at curvatures 0, 0.1, ..., 0.9, the summed
  weighted cost of the windows that converged at every value is minimised, and
  the best grid value is refined by a parabola through it and its neighbours (our
  choice). The profile also absorbs other bends of the diurnal light response
  (temperature-limited photosynthesis), which is why it is not the default.
- Rejected windows are skipped, so their records take the curves of the
  neighbouring windows in use. The fluxes of the two neighbours, not their
  parameters, are interpolated linearly in time between centres (constant
  beyond the first and last): mixing alpha of one window with beta0 of another
  across a run of rejected windows gives curves neither fitted (measured on a
  generated C4 crop before this rule: a spurious 130 g C m-2 of GPP in one bare
  month). Lasslop et al. (2010) use the previous window's parameters (m); the
  time weighting is our choice.

Standard errors are ``sqrt(diag((J^T W J)^-1 s^2))`` over the parameters left
free at the solution, with ``s^2`` the (weighted) residual variance; parameters
fixed or at a bound get NaN, except a fixed night Rref, which keeps its own
standard error. They are per-window sampling errors for a later bootstrap over
windows, not a full parameter uncertainty.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from .._quantile import nanquantile
from .._validate import as_float
from ..constants import KELVIN_OFFSET, LLOYD_TAYLOR_T0_KELVIN, LLOYD_TAYLOR_TREF_KELVIN
from ..errors import (
    ConfigError,
    DuplicateTimestampError,
    ImplausibleValueError,
    InsufficientDataError,
    LengthMismatchError,
    NonMonotonicTimestampError,
    TimestampError,
)
from ..responses import (
    LASSLOP_VPD0_HPA,
    light_response,
)
from . import pieces

__all__ = ["DaytimeResult", "PARAMETER_COLUMNS", "STATUSES", "partition_daytime"]

#: Columns of :attr:`DaytimeResult.parameters`, one row per window.
PARAMETER_COLUMNS = (
    "window_start", "window_end", "window_centre", "points", "night_points",
    "alpha", "beta0", "k", "rref", "e0",
    "alpha_se", "beta0_se", "k_se", "rref_se", "e0_se",
    "e0_points", "e0_window_days", "e0_window", "e0_window_se", "e0_source",
    "rref_night", "rref_night_se",
    "rmse", "weighted", "curvature", "accepted", "status", "reason", "k_fixed",
)

#: Values of the ``status`` column.
STATUSES = ("accepted", "replaced", "rejected")

_ALPHA, _BETA0, _K, _RREF = range(4)
_MODEL_INPUTS = ("nee", "rg", "vpd", "factor", "weight", "curvature")
_ALPHA_START = 0.01          # µmol J-1, Lasslop et al. (2010) (m)
_RREF_FLOOR_START = 0.1      # µmol m-2 s-1, keeps the start off the bound (our choice)
# µmol m-2 s-1: a fitted Rref below this is the bound 0 reached to within the iteration's
# tolerance (a thousandth of the smallest night respiration a tower resolves; our choice)
_RREF_AT_ZERO = 1e-3
# Largest respiration [µmol m-2 s-1] a window's curve may give at a record it is applied
# to: the plausible range of a measured flux (fluxpart.variables, NEE ±100: the largest
# half-hourly crop uptake reported is about -70 (common practice)); since 0.17.0, see
# the module docstring.
_MAX_CURVE_RESPIRATION = 100.0
_SATURATED = "light response half-saturated below the window's lowest light"
_OFFSET_NOTE = ("saturated below the window's light: GPP is the daytime uptake below the "
                "night-anchored respiration")
_LAMBDA_START = 1e-3         # Marquardt damping, usual starting value (common practice)
_LAMBDA_MAX = 1e10
_FTOL = 1e-10                # relative cost change at convergence
_XTOL = 1e-8                 # relative step at convergence
_SE_TOL = 1e-2               # remaining step in standard errors at convergence
# packed records (windows x width) iterated together by the fit: one site-year's
# windows (~20k) in one block, many years in blocks (our choice)
_FIT_BLOCK_ELEMENTS = 1 << 16
_MAX_CONDITION = 1e12        # largest condition number of the scaled J^T J (our choice)
_E0_GRID_STEP = 10.0         # K, coarse grid of the E0 profile (our choice)
_E0_BOUND_MARGIN = 0.5       # K, an E0 this close to a bound counts as at the bound
_GOLDEN_ITERATIONS = 30      # shrinks the bracket by 0.618^30 ~ 5e-7 (our choice)
# curvatures profiled by daytime_curvature = "fit": 0 (the rectangular hyperbola of
# Lasslop et al. 2010) to 0.9, the upper end of canopy-scale values (our reading of the
# range; leaf-level values reach 0.7-0.9, Ogren & Evans 1993 (m))
_CURVATURE_GRID = np.round(np.arange(0.0, 0.91, 0.1), 1)


@dataclass(frozen=True)
class DaytimeResult:
    """Result of :func:`partition_daytime`.

    Attributes
    ----------
    gpp : numpy.ndarray
        Gross primary production per record, positive = uptake [µmol m-2 s-1];
        zero where Rg <= 0, NaN where a driver is NaN.
    reco : numpy.ndarray
        Ecosystem respiration per record, Lloyd–Taylor with the interpolated
        Rref and E0 [µmol m-2 s-1].
    e0 : numpy.ndarray
        E0 per record, interpolated between window centres [K].
    parameters : pandas.DataFrame
        One row per window, columns :data:`PARAMETER_COLUMNS`:
        ``window_start``, ``window_end`` (exclusive), ``window_centre``
        (timestamps); ``points`` (usable daytime records); ``night_points``
        (measured night records of the window); ``alpha`` [µmol J-1],
        ``beta0`` [µmol m-2 s-1], ``k`` [hPa-1], ``rref`` [µmol m-2 s-1] as
        used (after a replacement, the refit's values), ``e0`` [K]; their
        standard errors ``alpha_se``, ``beta0_se``, ``k_se``, ``rref_se``,
        ``e0_se`` (NaN where fixed or at a bound; for E0 the pooled standard
        error); ``e0_points``, ``e0_window_days``, ``e0_window`` [K] and
        ``e0_window_se`` [K] (night records, width [days], estimate and standard
        error of the window's own E0 fit that entered the pool; 0 and NaN where
        its night data were too few), ``e0_source`` (``"year"``, ``"all_years"``,
        ``"fallback"`` or ``"supplied"``); ``rref_night``,
        ``rref_night_se`` (the window's night Rref); ``rmse`` of the fit
        [µmol m-2 s-1]; ``weighted`` (bool: fitted with the random error as
        weights); ``accepted`` (bool: the window's parameters are used);
        ``status`` (one of :data:`STATUSES`); ``reason`` (why); ``k_fixed``
        (bool). Parameters of windows too small to fit are NaN.
    gpp_before, gpp_after : numpy.ndarray or None
        GPP of each record from the light response of the window in use centred
        before it and after it alone [µmol m-2 s-1] (``gpp`` is their time-weighted
        mean); None where not computed.
    span_days : numpy.ndarray or None
        Time between the centres of those two windows [days] (0 before the first
        and after the last window).
    stretch : numpy.ndarray of int or None
        Number of the window in use centred before each record: the records
        between two window centres share it.
    fits : tuple of numpy.ndarray or None
        Per pass (unweighted, then weighted where it is), the converged window fits'
        ``alpha``, ``beta0``, ``k``, ``rref`` (2 x windows x 4): ``[0]`` with Rref free,
        ``[1]`` the refit with the night Rref (NaN where a window had no such
        converged fit); what another run of the same windows starts from
        (:func:`partition_daytime`'s ``start``). None where not computed.
    """

    gpp: np.ndarray
    reco: np.ndarray
    e0: np.ndarray
    parameters: pd.DataFrame
    gpp_before: np.ndarray | None = None
    gpp_after: np.ndarray | None = None
    span_days: np.ndarray | None = None
    stretch: np.ndarray | None = None
    fits: tuple | None = None


def partition_daytime(index, nee_measured, rg, vpd, temperature, is_night, *,
                      random_error=None, e0=None, window_days=4.0, window_step_days=2.0,
                      min_points=10, k_min_points=5, vpd0=LASSLOP_VPD0_HPA,
                      alpha_bounds=(0.0, 0.22), beta0_max=250.0,
                      e0_window_days=(4.0, 8.0, 16.0), e0_min_points=6,
                      e0_min_temperature_range=5.0, e0_bounds=(30.0, 450.0),
                      e0_max_relative_error=0.5, e0_fallback=None, night_min_points=5,
                      consistency_z=1.96, rref_max_relative_error=0.5,
                      night_in_fit=False, curvature=0.0, max_iterations=200,
                      tref_kelvin=LLOYD_TAYLOR_TREF_KELVIN,
                      t0_kelvin=LLOYD_TAYLOR_T0_KELVIN, breaks=None,
                      start=None) -> DaytimeResult:
    """Partition NEE into GPP and Reco by the daytime light-response method.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record start times, increasing, regular 30- or 60-minute spacing; any
        number of years.
    nee_measured : array_like
        Measured NEE, NaN where not measured or rejected (including the u*
        filter) [µmol m-2 s-1, positive = release].
    rg : array_like
        Global radiation, gap-filled [W m-2].
    vpd : array_like
        Vapour pressure deficit, gap-filled [hPa].
    temperature : array_like
        Respiration driving temperature (air or soil), gap-filled [°C].
    is_night : array_like of bool
        True for night records; only records with ``is_night`` False and
        ``rg > 0`` enter the light-response fit, only night records the E0 and
        night Rref fits.
    random_error : callable, optional
        The random-error model of NEE: a function mapping NEE [µmol m-2 s-1] to
        the standard deviation of its random error [µmol m-2 s-1] (e.g.
        :meth:`fluxpart.uncertainty.RandomErrorModel.predict`). When given, the
        method runs twice: unweighted, then with weights ``1/σ^2``, σ evaluated
        at the first pass's modelled NEE of each record (Lasslop et al. 2010
        weight the cost by the flux uncertainty (m)). σ is not taken at the
        measured values, because a weight that depends on a record's own noise
        biases the fit. Non-finite or non-positive σ take the median of the
        others. Default None: unweighted.
    e0 : array_like, optional
        E0 per record [K] to use instead of the estimate (for comparisons with
        a fixed E0). Default None: estimated from night data, see the module
        docstring.
    window_days : float, optional
        Window length [days]; default 4, Lasslop et al. (2010) (m).
    window_step_days : float, optional
        Step between window starts [days]; default 2, Lasslop et al. (2010) (m).
    min_points : int, optional
        Fewest usable daytime records for a window fit; default 10 (our choice:
        well above the 4 parameters, and reached by a single clear day of
        hourly data).
    k_min_points : int, optional
        Fewest records with VPD above `vpd0` for k to be fitted; otherwise k is
        fixed at 0. Default 5 (our choice).
    vpd0 : float, optional
        VPD threshold of the limitation [hPa]; default 10, Lasslop et al. (2010) (m).
    alpha_bounds : tuple of float, optional
        Bounds of alpha [µmol J-1]; default (0, 0.22), Lasslop et al. (2010) (m).
    beta0_max : float, optional
        Upper bound of beta0 [µmol m-2 s-1]; default 250, Lasslop et al.
        (2010) (m).
    e0_window_days : tuple of float, optional
        Widths [days] of the night windows centred on each daytime window tried
        in turn for the window's own E0 estimate; default (4, 8, 16), see the
        module docstring.
    e0_min_points : int, optional
        Fewest night records for an E0 fit; default 6 (the nighttime method's,
        Reichstein et al. 2005 (m)).
    e0_min_temperature_range : float, optional
        Smallest night temperature range for an E0 fit [K]; default 5,
        Reichstein et al. (2005).
    e0_bounds : tuple of float, optional
        Accepted E0 range [K], exclusive; default (30, 450), Reichstein et al.
        (2005) (m).
    e0_max_relative_error : float, optional
        Largest standard error of the pooled E0 relative to E0; default 0.5 (our
        choice).
    e0_fallback : float, optional
        E0 [K] for every window, flagged ``"fallback"`` in ``e0_source``, when the
        night data give no acceptable pooled E0. Default None: such a
        record raises :class:`~fluxpart.errors.InsufficientDataError`.
    night_min_points : int, optional
        Fewest night records of a window for its night Rref; default 5 (our choice).
    consistency_z : float, optional
        Largest difference between the fitted and the night Rref, in combined
        standard errors, before the fit is replaced; default 1.96 (95 %,
        two-sided; common practice). ``numpy.inf`` disables the check.
    rref_max_relative_error : float, optional
        Largest standard error of the fitted Rref, relative to the window's night
        Rref, before the fit is replaced (its Rref not resolved by the daytime
        data); default 0.5, see the module docstring. ``numpy.inf`` disables it.
    night_in_fit : bool, optional
        Also fit the window's measured night NEE (model ``Rref LT(T)``, no
        light) in the daytime fit. Default False: the published method fits
        daytime data only (Lasslop et al. 2010 (m)).
    curvature : float or "fit", optional
        Curvature of the light response [1], 0 <= curvature < 1. Default 0: the
        rectangular hyperbola of Lasslop et al. (2010). Above 0, the
        non-rectangular hyperbola (Johnson & Thornley 1984, eq. 2 (m)) with
        ``pmax = beta``. ``"fit"``: one curvature for the record, profiled on the
        window fits (see the module docstring).
    max_iterations : int, optional
        Levenberg–Marquardt iterations before a window counts as not converged;
        default 200 (our choice).
    tref_kelvin, t0_kelvin : float, optional
        Lloyd–Taylor reference temperature and T0 [K]; defaults 283.15 K and
        227.13 K, Lloyd & Taylor (1994).
    breaks : array_like of int, optional
        Record positions where a declared event (harvest, cut, fire, thinning;
        ``Config.events`` through :func:`fluxpart.gapfill.event_breaks`) starts a new
        piece of the record. Each window, and the night windows of its E0 estimate,
        is cut to the piece holding its centre
        (:func:`fluxpart.partition.pieces.centre_piece_windows`), and each record
        takes the curves of the windows in use of its own piece only
        (:func:`fluxpart.partition.pieces.piece_neighbours`; a piece without one takes
        those beside it, across the events, named by
        :func:`fluxpart.partition.pieces.window_notes`). The E0 pool stays per
        calendar year. Default None: no events.
    start : DaytimeResult, optional
        The result of another run of the same record, settings and windows, e.g. the
        central u* run's for a u* scenario, whose NEE differs at some night records:
        each window's fit with Rref free (both passes) starts from that run's where it
        converged, and its refit with the night Rref from that run's refit's alpha,
        beta0 and k where it had one (:attr:`DaytimeResult.fits`), instead of the
        starting values from its own data. The fits converge to the same tolerance in
        fewer iterations; the result moves within that tolerance (mostly hundredths of
        the parameters' standard errors, see :func:`_levenberg_marquardt`; the weighted
        pass also moves with the weights the first pass gives), and a window whose
        verdict hangs on where the iteration stops (a bound reached or not, a singular
        refit) tends to take the other run's. Default None: the starting values from
        the data.

    Returns
    -------
    DaytimeResult
        Per-record ``gpp``, ``reco`` and ``e0`` and the per-window ``parameters``.

    Raises
    ------
    TimestampError, NonMonotonicTimestampError, DuplicateTimestampError
        If `index` is not an increasing DatetimeIndex of unique stamps.
    FluxpartError
        If an array is not one-dimensional with one value per record.
    ImplausibleValueError
        If `is_night` is not boolean or a supplied `e0` is not finite and positive.
    ConfigError
        If a setting is out of range.
    InsufficientDataError
        If no window has an acceptable E0 or light-response fit.

    Notes
    -----
    Model: Lasslop et al. (2010), eqs. 3–4 (m), with Reco by Lloyd & Taylor
    (1994), eq. 11. The rules for E0, bounds, starting values, fixing k and
    judging windows are listed, each with its source, in the module docstring.
    Rref is defined at `tref_kelvin` (10 °C by default), so it is directly
    comparable with the nighttime method's Rref.

    References
    ----------
    Lasslop, G., Reichstein, M., Papale, D., Richardson, A. D., Arneth, A.,
    Barr, A., Stoy, P. & Wohlfahrt, G. (2010). Separation of net ecosystem
    exchange into assimilation and respiration using a light response curve
    approach: critical issues and global evaluation. Global Change Biology
    16:187–208. doi:10.1111/j.1365-2486.2009.02041.x

    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange
    into assimilation and ecosystem respiration: review and improved algorithm.
    Global Change Biology 11:1424–1439. doi:10.1111/j.1365-2486.2005.001002.x

    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
    respiration. Functional Ecology 8:315–323. doi:10.2307/2389824

    Marquardt, D. W. (1963). An algorithm for least-squares estimation of
    nonlinear parameters. Journal of the Society for Industrial and Applied
    Mathematics 11:431–441. doi:10.1137/0111030

    Johnson, I. R. & Thornley, J. H. M. (1984). A model of instantaneous and
    daily canopy photosynthesis. Journal of Theoretical Biology 107:531–545
    (the non-rectangular hyperbola of the curvature option) (m).

    Gilmanov, T. G. et al. (2003). Global Biogeochemical Cycles 17(2), 1071
    (non-rectangular light responses of tower NEE) (m).
    """
    _check_settings(window_days, window_step_days, min_points, k_min_points, vpd0,
                    alpha_bounds, beta0_max, max_iterations)
    _check_e0_settings(e0_window_days, e0_min_points, e0_min_temperature_range, e0_bounds,
                       e0_max_relative_error, e0_fallback, night_min_points, consistency_z,
                       rref_max_relative_error)
    if not isinstance(night_in_fit, (bool, np.bool_)):
        raise ConfigError(f"daytime night_in_fit = {night_in_fit!r}: expected true or false")
    if not (curvature == "fit" or (_is_number(curvature) and 0.0 <= curvature < 1.0)):
        raise ConfigError(f"daytime curvature = {curvature!r}: expected \"fit\" or a number "
                          "from 0 (the rectangular hyperbola) up to, not including, 1")
    days = _days_since_start(index)
    n = len(days)
    nee = as_float(nee_measured, "nee_measured", n)
    rg = as_float(rg, "rg", n)
    vpd = as_float(vpd, "vpd", n)
    temperature = as_float(temperature, "temperature", n)
    night = _as_bool_array(is_night, "is_night", n)
    if random_error is not None and not callable(random_error):
        raise ConfigError("daytime random_error: expected a function of NEE returning its "
                          "standard deviation [µmol m-2 s-1], or None")
    supplied_e0 = None if e0 is None else _supplied_e0(e0, n, index)
    arrhenius = _arrhenius(temperature, tref_kelvin, t0_kelvin)
    measured = np.isfinite(nee) & np.isfinite(arrhenius)
    data = {"days": days, "origin": index[0].normalize(), "nee": nee, "rg": rg, "vpd": vpd,
            "edges": pieces.break_times(days, breaks),
            "temperature": temperature, "arrhenius": arrhenius, "supplied_e0": supplied_e0,
            "usable_day": measured & ~night & np.isfinite(vpd) & np.isfinite(rg) & (rg > 0),
            "usable_night": measured & night}
    settings = {"window_days": window_days, "window_step_days": window_step_days,
                "min_points": min_points, "k_min_points": k_min_points, "vpd0": vpd0,
                "alpha_bounds": alpha_bounds, "beta0_max": beta0_max,
                "e0_window_days": e0_window_days, "e0_min_points": e0_min_points,
                "e0_min_temperature_range": e0_min_temperature_range, "e0_bounds": e0_bounds,
                "e0_max_relative_error": e0_max_relative_error, "e0_fallback": e0_fallback,
                "night_min_points": night_min_points, "consistency_z": consistency_z,
                "rref_max_relative_error": rref_max_relative_error,
                "night_in_fit": night_in_fit, "max_iterations": max_iterations,
                "curvature": 0.0 if curvature == "fit" else float(curvature)}
    # another run's fits, pass by pass (its last pass's for a pass it did not make)
    starts = () if start is None or start.fits is None else start.fits
    fit = _partition(data, None, {**settings, "start": starts[0] if starts else None})
    fits = [fit["fits"]]
    weight = None
    if random_error is not None:
        # Weights from the error model at the first fit's modelled NEE, not at the
        # measured values: a weight that depends on a record's own noise biases the
        # fit (records whose noise points towards zero flux would weigh more).
        sigma = np.asarray(random_error(fit["reco"] - fit["gpp"]), dtype=float)
        if sigma.shape != (n,):
            raise LengthMismatchError(f"daytime random_error: the function returned shape "
                                      f"{sigma.shape}, expected ({n},)")
        valid = np.isfinite(sigma) & (sigma > 0)
        if valid.any():
            weight = 1.0 / np.where(valid, sigma, np.median(sigma[valid]))
    if curvature == "fit":
        # one curvature for the whole record, profiled on the final weights
        settings["curvature"] = _profile_curvature(data, weight, settings)
    if weight is not None or curvature == "fit":
        fit = _partition(data, weight, {**settings, "start": starts[-1] if starts else None})
        fits.append(fit["fits"])
    parameters = _parameter_table(index, fit)
    return DaytimeResult(gpp=fit["gpp"], reco=fit["reco"], e0=fit["e0"], parameters=parameters,
                         gpp_before=fit["gpp_sides"][0], gpp_after=fit["gpp_sides"][1],
                         span_days=fit["span_days"], stretch=np.asarray(fit["stretch"]),
                         fits=tuple(fits))


def _prepare(data, weight, settings) -> dict:
    """Windows, E0, night Rref, starting values, bounds and fixed parameters of one pass."""
    days, nee, arrhenius = data["days"], data["nee"], data["arrhenius"]
    usable_day, usable_night = data["usable_day"], data["usable_night"]
    supplied_e0 = data["supplied_e0"]
    vpd0 = settings["vpd0"]
    starts, ends = _window_bounds(days, settings["window_days"], settings["window_step_days"])
    edges = data["edges"]
    if len(edges):
        starts, ends = pieces.centre_piece_windows(starts, ends, edges)
    centres = (starts + ends) / 2.0
    if supplied_e0 is None:
        centre_years = (data["origin"] + pd.to_timedelta(centres, unit="D")).year.to_numpy()
        e0_fit = _window_e0(days, centres, centre_years, usable_night, nee, arrhenius,
                            data["temperature"], weight, settings["e0_window_days"],
                            settings["window_days"], settings["window_step_days"],
                            settings["e0_min_points"],
                            settings["e0_min_temperature_range"], settings["e0_bounds"],
                            settings["e0_max_relative_error"], settings["e0_fallback"],
                            edges=edges)
    else:
        e0_fit = None
    windows = _gather_windows(days, starts, ends, usable_day, usable_night, nee, data["rg"],
                              data["vpd"], arrhenius, weight, vpd0, settings["night_in_fit"],
                              e0_fit, supplied_e0)
    windows["curvature"] = np.full(len(starts), float(settings["curvature"]))
    rref_night, rref_night_se = _night_rref(windows, settings["night_min_points"])

    alpha_bounds = settings["alpha_bounds"]
    lower = np.array([alpha_bounds[0], 0.0, 0.0, 0.0])
    upper = np.array([alpha_bounds[1], settings["beta0_max"], np.inf, np.inf])
    theta0 = _starting_values(windows, rref_night, lower, upper)
    k_free = windows["high_vpd_points"] >= settings["k_min_points"]
    fitted = windows["points"] >= settings["min_points"]
    refit_theta0 = theta0
    start = settings.get("start")
    if start is not None:
        # another run's fits of the same windows (partition_daytime's `start`)
        if start.shape[1] != len(starts):
            raise LengthMismatchError(
                f"daytime start: {start.shape[1]} windows, the record has {len(starts)}")
        theta0, refit_theta0 = theta0.copy(), theta0.copy()
        for values, fit in ((theta0, start[0]), (refit_theta0, start[1])):
            warm = fitted & np.isfinite(fit).all(axis=1)
            values[warm] = np.clip(fit[warm], lower, upper)
    fixed = np.zeros(theta0.shape, dtype=bool)
    fixed[:, _K] = ~k_free
    fixed[~fitted] = True
    theta0[~k_free, _K] = 0.0
    refit_theta0[~k_free, _K] = 0.0
    mask = windows["mask"] & fitted[:, None]
    return {"starts": starts, "ends": ends, "centres": centres, "e0_fit": e0_fit,
            "windows": windows, "rref_night": rref_night, "rref_night_se": rref_night_se,
            "lower": lower, "upper": upper, "theta0": theta0, "refit_theta0": refit_theta0,
            "fixed": fixed, "fitted": fitted, "mask": mask}


def _partition(data, weight, settings) -> dict:
    """One pass of the method with fixed weights (None: unweighted); see the module docstring."""
    days, arrhenius, supplied_e0 = data["days"], data["arrhenius"], data["supplied_e0"]
    vpd0, max_iterations = settings["vpd0"], settings["max_iterations"]
    prepared = _prepare(data, weight, settings)
    starts, ends, centres, e0_fit, windows = (prepared[name] for name in (
        "starts", "ends", "centres", "e0_fit", "windows"))
    rref_night, rref_night_se, lower, upper, theta0, fixed, fitted, mask = (
        prepared[name] for name in ("rref_night", "rref_night_se", "lower", "upper", "theta0",
                                    "fixed", "fitted", "mask"))
    theta, converged = _levenberg_marquardt(theta0, fixed, lower, upper, windows, mask,
                                            vpd0, max_iterations)
    # the converged fits, with Rref free and refitted: another run's starting values
    fits = np.full((2, *theta.shape), np.nan)
    fits[0] = np.where((converged & fitted)[:, None], theta, np.nan)
    errors, rmse = _standard_errors(theta, fixed, lower, upper, windows, mask, vpd0)
    status, reason, refit = _judge(theta, errors, fixed, fitted, converged, lower, upper,
                                   rref_night, rref_night_se, settings["consistency_z"],
                                   settings["rref_max_relative_error"],
                                   _saturated_below_light(theta, windows))
    if refit.any():
        theta, errors, rmse, fixed, status, reason = _refit_with_night_rref(
            refit, theta, errors, rmse, fixed, status, reason, rref_night, rref_night_se,
            prepared["refit_theta0"], lower, upper, windows,
            usable_day_mask=windows["day"] & fitted[:, None], vpd0=vpd0,
            max_iterations=max_iterations)
        replaced = status == "replaced"
        fits[1][replaced] = theta[replaced]

    status, reason = _reject_runaway_curves(status, reason, theta, windows["e0"], days,
                                            centres, arrhenius, supplied_e0, data["edges"])
    used = status != "rejected"
    theta[~fitted] = np.nan
    if not used.any():
        counts = pd.Series(reason).value_counts()
        summary = ", ".join(f"{count} {why}" for why, count in counts.items())
        raise InsufficientDataError(
            f"daytime partitioning: none of the {len(reason)} windows of "
            f"{settings['window_days']} days has an acceptable light-response fit ({summary}); "
            f"the record needs measured daytime NEE (at least {settings['min_points']} "
            "records in some window) and night NEE.")

    before, after, share = pieces.piece_neighbours(days, centres[used], data["edges"],
                                                   _neighbours)
    window_e0 = windows["e0"][used]
    e0_record = (supplied_e0 if supplied_e0 is not None
                 else (1.0 - share) * window_e0[before] + share * window_e0[after])
    gpp = np.zeros(len(days))
    reco = np.zeros(len(days))
    # At or below T0 (-46.02 °C) Lloyd-Taylor respiration has reached its limit, 0 (T0 is
    # the temperature at which respiration vanishes, Lloyd & Taylor 1994); the fits leave
    # such records out (their term is NaN), the fluxes take the limit: exp(E0 x -inf) = 0
    arrhenius = np.where(np.isfinite(data["temperature"]) & np.isnan(arrhenius), -np.inf,
                         arrhenius)
    # Fluxes, not parameters, are interpolated: each record takes the time-weighted
    # mean of the two neighbouring windows' curves, so it never gets a curve that
    # neither window fitted (alpha of one with beta0 of the other).
    sides = []
    for side, time_share in ((before, 1.0 - share), (after, share)):
        parameters = theta[used][side]
        e0_side = supplied_e0 if supplied_e0 is not None else window_e0[side]
        sides.append(light_response(data["rg"], data["vpd"], parameters[:, _ALPHA],
                                    parameters[:, _BETA0], parameters[:, _K], vpd0=vpd0,
                                    curvature=settings["curvature"]))
        gpp += time_share * sides[-1]
        with np.errstate(over="ignore", invalid="ignore"):
            reco += time_share * parameters[:, _RREF] * np.exp(e0_side * arrhenius)
    if e0_fit is None:
        count = len(starts)
        e0_fit = {"e0_se": np.full(count, np.nan), "points": np.zeros(count, dtype=np.int64),
                  "width": np.full(count, np.nan), "window_e0": np.full(count, np.nan),
                  "window_e0_se": np.full(count, np.nan),
                  "source": np.full(count, "supplied", dtype=object)}
    return {"gpp": gpp, "reco": reco, "e0": e0_record, "gpp_sides": sides,
            "span_days": centres[used][after] - centres[used][before], "stretch": before,
            "starts": starts, "ends": ends,
            "windows": windows, "theta": theta, "errors": errors, "rmse": rmse,
            "status": status, "reason": reason, "k_fixed": fixed[:, _K] | (theta[:, _K] == 0.0),
            "e0_fit": e0_fit, "rref_night": rref_night, "rref_night_se": rref_night_se,
            "weighted": weight is not None, "curvature": settings["curvature"], "fits": fits}


def _profile_curvature(data, weight, settings):
    """The light-response curvature of a whole record, by profiling the window fits.

    Every window with enough daytime records is fitted (all four parameters free
    within their bounds) at each curvature of `_CURVATURE_GRID`; the summed cost
    (half the weighted sum of squares, over the windows that converged at every
    grid value) is the profile of the record's likelihood in the curvature when
    the weights are ``1/σ``. The best grid value is refined by the vertex of the
    parabola through it and its two neighbours (our choice; the profile is smooth),
    kept within the grid's range.

    Returns
    -------
    float
        The chosen curvature [1]; 0 where no window could be compared.
    """
    prepared = _prepare(data, weight, {**settings, "curvature": 0.0})
    windows, fitted, mask = prepared["windows"], prepared["fitted"], prepared["mask"]
    rows = np.flatnonzero(fitted)
    if len(rows) == 0:
        return 0.0
    costs = np.empty((len(_CURVATURE_GRID), len(rows)))
    converged_everywhere = np.ones(len(rows), dtype=bool)
    for number, value in enumerate(_CURVATURE_GRID):
        windows["curvature"][:] = value
        theta, converged = _levenberg_marquardt(
            prepared["theta0"], prepared["fixed"], prepared["lower"], prepared["upper"],
            windows, mask, settings["vpd0"], settings["max_iterations"])
        packed = _packed_fit_data(windows, mask, rows, settings["vpd0"])
        costs[number], _ = _cost(theta[rows], packed)
        converged_everywhere &= converged[rows] & np.isfinite(costs[number])
    if not converged_everywhere.any():
        return 0.0
    profile = costs[:, converged_everywhere].sum(axis=1)
    best = int(np.argmin(profile))
    chosen = float(_CURVATURE_GRID[best])
    if 0 < best < len(_CURVATURE_GRID) - 1:
        below, centre, above = profile[best - 1:best + 2]
        bend = below - 2.0 * centre + above
        if bend > 0:
            step = _CURVATURE_GRID[1] - _CURVATURE_GRID[0]
            chosen += 0.5 * step * (below - above) / bend
    return float(np.clip(chosen, _CURVATURE_GRID[0], _CURVATURE_GRID[-1]))


def _check_settings(window_days, window_step_days, min_points, k_min_points, vpd0,
                    alpha_bounds, beta0_max, max_iterations):
    for name, value in (("window_days", window_days), ("window_step_days", window_step_days),
                        ("beta0_max", beta0_max)):
        if not _is_number(value) or not value > 0:
            raise ConfigError(f"daytime {name} = {value!r}: expected a positive number")
    if window_step_days > window_days:
        raise ConfigError(f"daytime window_step_days = {window_step_days!r} exceeds "
                          f"window_days = {window_days!r}: records between windows would "
                          "never be fitted; use a step no longer than the window")
    if not _is_number(vpd0) or vpd0 < 0:
        raise ConfigError(f"daytime vpd0 = {vpd0!r}: expected a number of hPa >= 0")
    for name, value, smallest in (("min_points", min_points, 5),
                                  ("k_min_points", k_min_points, 1),
                                  ("max_iterations", max_iterations, 1)):
        _check_count(name, value, smallest)
    if (not isinstance(alpha_bounds, (tuple, list)) or len(alpha_bounds) != 2
            or not all(_is_number(v) for v in alpha_bounds)
            or not 0 <= alpha_bounds[0] < alpha_bounds[1]):
        raise ConfigError(f"daytime alpha_bounds = {alpha_bounds!r}: expected [low, high] "
                          "in µmol J-1 with 0 <= low < high")


def _check_count(name, value, smallest):
    if not isinstance(value, (int, np.integer)) or isinstance(value, bool) or value < smallest:
        raise ConfigError(f"daytime {name} = {value!r}: expected a whole number >= {smallest}")


def _check_e0_settings(widths, min_points, min_range, bounds, max_relative_error, fallback,
                       night_min_points, consistency_z, rref_max_relative_error):
    if (not isinstance(widths, (tuple, list)) or len(widths) == 0
            or not all(_is_number(w) and w > 0 for w in widths)
            or any(b <= a for a, b in zip(widths, widths[1:], strict=False))):
        raise ConfigError(f"daytime e0_window_days = {widths!r}: expected a list of "
                          "increasing positive widths in days, e.g. [4, 8, 16]")
    _check_count("e0_min_points", min_points, 3)
    _check_count("night_min_points", night_min_points, 1)
    if not _is_number(min_range) or min_range < 0:
        raise ConfigError(f"daytime e0_min_temperature_range = {min_range!r}: expected a "
                          "number of K >= 0")
    if (not isinstance(bounds, (tuple, list)) or len(bounds) != 2
            or not all(_is_number(v) for v in bounds) or not 0 < bounds[0] < bounds[1]):
        raise ConfigError(f"daytime e0_bounds = {bounds!r}: expected [low, high] in K with "
                          "0 < low < high")
    if fallback is not None and (not _is_number(fallback) or fallback <= 0):
        raise ConfigError(f"daytime e0_fallback = {fallback!r}: expected a positive number "
                          "of kelvin, or None")
    if not _is_number(max_relative_error) or max_relative_error <= 0:
        raise ConfigError(f"daytime e0_max_relative_error = {max_relative_error!r}: expected "
                          "a positive number")
    _check_positive_or_inf("consistency_z", consistency_z, "number of standard errors")
    _check_positive_or_inf("rref_max_relative_error", rref_max_relative_error, "number")


def _check_positive_or_inf(name, value, what):
    if (isinstance(value, bool) or not isinstance(value, (int, float, np.number))
            or np.isnan(value) or value <= 0):
        raise ConfigError(f"daytime {name} = {value!r}: expected a positive {what} (inf "
                          "disables the check)")


def _supplied_e0(e0, n, index):
    e0 = as_float(e0, "e0", n)
    bad = ~(np.isfinite(e0) & (e0 > 0))
    if bad.any():
        row = int(np.flatnonzero(bad)[0])
        raise ImplausibleValueError(
            f"e0: expected a finite, positive temperature sensitivity [K] for every record; "
            f"found {e0[row]!r} at row {row} ({index[row]}); leave e0 out to estimate it.")
    return e0


def _arrhenius(temperature, tref_kelvin, t0_kelvin):
    """Lloyd–Taylor exponent per unit E0, 1/(Tref - T0) - 1/(T - T0) [K-1]; NaN at or below T0."""
    kelvin = temperature + KELVIN_OFFSET
    with np.errstate(divide="ignore", invalid="ignore"):
        term = 1.0 / (tref_kelvin - t0_kelvin) - 1.0 / (kelvin - t0_kelvin)
    return np.where(kelvin > t0_kelvin, term, np.nan)


def _is_number(value) -> bool:
    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(
        value, bool) and np.isfinite(value)


def _days_since_start(index) -> np.ndarray:
    if not isinstance(index, pd.DatetimeIndex):
        raise TimestampError(f"index: expected a pandas DatetimeIndex, found "
                             f"{type(index).__name__}")
    if len(index) == 0:
        raise InsufficientDataError("daytime partitioning: the record is empty")
    if index.hasnans:
        row = int(np.flatnonzero(index.isna())[0])
        raise TimestampError(f"index: missing timestamp at row {row}")
    seconds = np.asarray((index - index[0]) / pd.Timedelta(seconds=1), dtype=float)
    steps = np.diff(seconds)
    if (steps < 0).any():
        row = int(np.flatnonzero(steps < 0)[0]) + 1
        raise NonMonotonicTimestampError(f"index: timestamp at row {row} ({index[row]}) "
                                         "is earlier than the one before; sort the records")
    if (steps == 0).any():
        row = int(np.flatnonzero(steps == 0)[0]) + 1
        raise DuplicateTimestampError(f"index: timestamp {index[row]} occurs twice "
                                      f"(rows {row - 1} and {row})")
    return np.asarray((index - index[0].normalize()) / pd.Timedelta(days=1), dtype=float)


def _as_bool_array(values, name, n) -> np.ndarray:
    if isinstance(values, pd.Series) and values.dtype == "boolean" and not values.hasnans:
        values = values.to_numpy(dtype=bool)
    array = np.asarray(values)
    if array.dtype != bool:
        raise ImplausibleValueError(f"{name}: expected booleans without missing values, "
                                    f"found dtype {array.dtype}")
    if array.shape != (n,):
        raise LengthMismatchError(f"{name}: expected one value per record ({n}), found shape "
                                  f"{array.shape}")
    return array


def _window_bounds(days, window_days, window_step_days):
    """Window starts and (exclusive) ends [days], covering the record to its end."""
    spacing = np.median(np.diff(days)) if len(days) > 1 else 1.0 / 48.0
    record_end = days[-1] + spacing
    count = max(1, int(np.ceil((record_end - window_days) / window_step_days - 1e-9)) + 1)
    starts = np.arange(count) * float(window_step_days)
    return starts, starts + float(window_days)


def _padded_positions(days, starts, ends):
    """Positions (windows x width) of the records in [start, end) and where they are real."""
    first = np.searchsorted(days, starts, side="left")
    last = np.searchsorted(days, ends, side="left")
    width = max(1, int((last - first).max()))
    positions = first[:, None] + np.arange(width)[None, :]
    inside = positions < last[:, None]
    return np.minimum(positions, len(days) - 1), inside


def _window_e0(days, centres, centre_years, usable_night, nee, arrhenius, temperature, weight,
               widths, block_days, step_days, min_points, min_range, bounds, max_relative_error,
               fallback, edges=()) -> dict:
    """E0 of every window: the inverse-variance mean of the year's window estimates.

    Each window's own estimate comes from the night records of the narrowest width
    in `widths` that holds `min_points` records spanning `min_range` K, with one
    Rref per `block_days` block; the choice looks at the data's information, never at
    the estimate. The estimates of a calendar year (by window centre) are pooled by
    inverse variance; a year whose pool is not accepted takes the pool of all years.
    `edges` (the start days of pieces after events): each night window is cut to the
    piece holding its centre.
    """
    count = len(centres)
    own = {"e0": np.full(count, np.nan), "e0_se": np.full(count, np.nan),
           "points": np.zeros(count, dtype=np.int64), "width": np.full(count, np.nan)}
    night_positions = np.flatnonzero(usable_night)
    night_days = days[night_positions]
    for width in widths if len(night_positions) else ():
        todo = np.flatnonzero(np.isnan(own["e0"]))
        if len(todo) == 0:
            break
        low = centres[todo] - width / 2.0
        if len(edges):
            positions, inside = _padded_positions(
                night_days, *pieces.centre_piece_windows(low, low + width, edges))
        else:
            positions, inside = _padded_positions(night_days, low, low + width)
        records = night_positions[positions]
        t = temperature[records]
        points = inside.sum(axis=1)
        with np.errstate(invalid="ignore"):
            span = (np.where(inside, t, -np.inf).max(axis=1)
                    - np.where(inside, t, np.inf).min(axis=1))
        informative = (points >= min_points) & (span >= min_range)
        if not informative.any():
            continue
        rows, positions, inside = todo[informative], positions[informative], inside[informative]
        records = records[informative]
        blocks = max(1, int(round(width / block_days)))
        offset = night_days[positions] - low[informative][:, None]
        block = np.clip((offset * blocks / width).astype(np.int64), 0, blocks - 1)
        e0, e0_se, positive = _profile_e0(
            np.where(inside, nee[records], 0.0), np.where(inside, arrhenius[records], 0.0),
            np.where(inside, 1.0 if weight is None else weight[records], 0.0),
            points[informative], bounds, block, blocks)
        estimated = np.isfinite(e0) & np.isfinite(e0_se) & (e0_se > 0) & positive
        own["e0"][rows[estimated]] = e0[estimated]
        own["e0_se"][rows[estimated]] = e0_se[estimated]
        own["points"][rows[estimated]] = points[informative][estimated]
        own["width"][rows[estimated]] = width
    out = {"e0": np.full(count, np.nan), "e0_se": np.full(count, np.nan),
           "source": np.full(count, "fallback", dtype=object), "points": own["points"],
           "width": own["width"], "window_e0": own["e0"], "window_e0_se": own["e0_se"]}
    pool = dict(step_days=step_days, bounds=bounds, max_relative_error=max_relative_error)
    whole = _pooled_e0(own, np.ones(count, dtype=bool), **pool)
    for year in np.unique(centre_years):
        members = centre_years == year
        pooled = _pooled_e0(own, members, **pool)
        chosen, source = (pooled, "year") if pooled is not None else (whole, "all_years")
        if chosen is not None:
            out["e0"][members], out["e0_se"][members] = chosen
            out["source"][members] = source
    good = np.isfinite(out["e0"])
    if not good.all() and fallback is not None:
        out["e0"][~good] = fallback
        return out
    if not good.all():
        raise InsufficientDataError(
            "daytime partitioning: the night data give no acceptable E0 (the windows' "
            f"estimates from at least {min_points} night records spanning {min_range} K "
            f"within {max(widths)} days, pooled over the year, must lie inside "
            f"{list(bounds)} K with a standard error of at most {100 * max_relative_error:.0f} %); "
            "set [processing] e0_fallback to use a fixed E0, flagged")
    return out


def _pooled_e0(own, members, step_days, bounds, max_relative_error):
    """Inverse-variance mean of the members' own E0 estimates and its standard error
    [K], or None when it is not accepted.

    The windows overlap (each night record serves several of them), so the standard
    error of the mean is inflated by the square root of the mean number of windows a
    night record serves, ``width / step_days`` (our choice: the windows' information would
    otherwise be counted that many times)."""
    has = members & np.isfinite(own["e0"])
    if not has.any():
        return None
    weight = 1.0 / own["e0_se"][has] ** 2
    mean = float(np.sum(weight * own["e0"][has]) / np.sum(weight))
    overlap = float(np.mean(own["width"][has])) / step_days
    se = float(np.sqrt(max(overlap, 1.0) / np.sum(weight)))
    accepted = (bounds[0] + _E0_BOUND_MARGIN < mean < bounds[1] - _E0_BOUND_MARGIN
                and se <= max_relative_error * mean)
    return (mean, se) if accepted else None


def _profile_e0(y, x, w, points, bounds, block, blocks):
    """Least-squares E0 and its standard error per row, with one Rref per block.

    For fixed E0 the best Rref of each block is ``sum(w² y f) / sum(w² f²)`` over
    the block's records, with ``f = exp(E0 x)``; the remaining sum of squares,
    summed over the blocks, is scanned on a grid and the best grid cell refined by
    golden-section search (the profile is smooth). `block` (the shape of `y`,
    integers ``0 .. blocks - 1``) gives each record its block.

    Returns E0 [K], its standard error [K] and whether every block's Rref is
    positive, per row.
    """
    w2 = w**2
    w2y = w2 * y
    rows = y.shape[0]
    cells = (np.arange(rows)[:, None] * blocks + block).ravel()
    yy = (w2y * y).sum(axis=1)

    def block_sums(values):
        if blocks == 1:
            return values.sum(axis=1)[:, None]
        return np.bincount(cells, weights=values.ravel(),
                           minlength=rows * blocks).reshape(rows, blocks)

    def profile(e0, f=None):
        if f is None:
            f = np.exp(e0[:, None] * x)
        sf, ff = block_sums(w2y * f), block_sums(w2 * f * f)
        with np.errstate(divide="ignore", invalid="ignore"):
            explained = np.where(ff > 0, sf**2 / ff, 0.0).sum(axis=1)
            return yy - explained, np.where(ff > 0, sf / ff, np.nan)

    grid = np.arange(bounds[0], bounds[1] + _E0_GRID_STEP / 2, _E0_GRID_STEP)
    grid[-1] = bounds[1]
    # exp(E0 x) along the regular grid by repeated multiplication with exp(step x)
    # (a relative drift of ~1e-14 over the grid, which only chooses the bracket)
    f = np.exp(grid[0] * x)
    costs = [profile(None, f)[0]]
    if len(grid) > 1:
        growth = np.exp((grid[1] - grid[0]) * x)
        for _ in grid[1:-1]:
            f = f * growth
            costs.append(profile(None, f)[0])
        costs.append(profile(None, np.exp(grid[-1] * x))[0])      # the last may be shorter
    costs = np.stack(costs, axis=1)
    costs = np.where(np.isfinite(costs), costs, np.inf)
    best = np.argmin(costs, axis=1)
    low = grid[np.maximum(best - 1, 0)]
    high = grid[np.minimum(best + 1, len(grid) - 1)]
    ratio = (np.sqrt(5.0) - 1.0) / 2.0
    a, b = low.copy(), high.copy()
    c, d = b - ratio * (b - a), a + ratio * (b - a)
    fc, fd = profile(c)[0], profile(d)[0]
    for _ in range(_GOLDEN_ITERATIONS):
        left = fc < fd
        b = np.where(left, d, b)
        a = np.where(left, a, c)
        new_c, new_d = b - ratio * (b - a), a + ratio * (b - a)
        c, d = np.where(left, new_c, d), np.where(left, c, new_d)
        # one new point per row: c where the bracket moved left, d where it moved right
        fresh = profile(np.where(left, c, d))[0]
        fc, fd = np.where(left, fresh, fd), np.where(left, fc, fresh)
    e0 = (a + b) / 2.0
    sse, rref = profile(e0)
    f = np.exp(e0[:, None] * x)
    # E0 variance: s² over the Schur complement of the blocks' Rref (each Rref enters
    # only its own block), s² / (J_e0ᵀJ_e0 - Σ_b (J_rref,bᵀ J_e0)² / J_rref,bᵀ J_rref,b)
    j_e0 = np.take_along_axis(np.nan_to_num(rref), block, axis=1) * f * x
    rr, re = block_sums(w2 * f * f), block_sums(w2 * f * j_e0)
    used = (rr > 0).sum(axis=1)
    dof = points - used - 1
    with np.errstate(divide="ignore", invalid="ignore"):
        reduced = (w2 * j_e0 * j_e0).sum(axis=1) - np.where(rr > 0, re**2 / rr, 0.0).sum(axis=1)
        e0_se = np.sqrt(np.where(dof > 0, sse / dof, np.nan) / reduced)
    e0_se = np.where(reduced > 0, e0_se, np.nan)
    positive = np.where(rr > 0, rref > 0, True).all(axis=1)
    return np.where(dof > 0, e0, np.nan), e0_se, positive


def _gather_windows(days, starts, ends, usable_day, usable_night, nee, rg, vpd, arrhenius,
                    weight, vpd0, night_in_fit, e0_fit, supplied_e0) -> dict:
    """Padded (windows x records) arrays of each window's usable records."""
    positions, inside = _padded_positions(days, starts, ends)
    day = inside & usable_day[positions]
    night = inside & usable_night[positions]
    fit = day | night if night_in_fit else day
    if supplied_e0 is None:
        e0 = e0_fit["e0"][:, None]
        e0_window = e0_fit["e0"]
    else:
        e0 = supplied_e0[positions]
        with np.errstate(invalid="ignore"):
            e0_window = np.where(inside, e0, 0.0).sum(1) / np.maximum(inside.sum(1), 1)
    with np.errstate(over="ignore", invalid="ignore"):
        factor = np.exp(e0 * arrhenius[positions])
    record_weight = np.ones(len(days)) if weight is None else weight

    def take(values, where):
        return np.where(where, values[positions], 0.0)

    return {
        "mask": fit,
        "day": day,
        "nee": take(nee, fit),
        "rg": take(rg, day),             # night records in the fit see no light
        "vpd": take(vpd, day),
        "factor": np.where(fit, factor, 0.0),
        "weight": take(record_weight, fit),
        "night_nee": take(nee, night),
        "night_factor": np.where(night, factor, 0.0),
        "night_weight": take(record_weight, night),
        "points": day.sum(axis=1),
        "night_points": night.sum(axis=1),
        "high_vpd_points": (day & (take(vpd, day) > vpd0)).sum(axis=1),
        "e0": e0_window,
    }


def _night_rref(windows, min_points):
    """Weighted least-squares Rref of each window's night NEE with E0 fixed, and its error."""
    y, f, w2 = windows["night_nee"], windows["night_factor"], windows["night_weight"] ** 2
    points = windows["night_points"]
    sf = (w2 * y * f).sum(axis=1)
    ff = (w2 * f * f).sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        rref = sf / ff
        residual = np.where(f > 0, y - rref[:, None] * f, 0.0)
        variance = (w2 * residual**2).sum(axis=1) / (points - 1)
        se = np.sqrt(variance / ff)
    # a night Rref whose standard error exceeds the plausible range of a flux (nights so
    # cold that Lloyd–Taylor's factor is ~0) is no anchor (round trial14)
    usable = ((points >= min_points) & (ff > 0) & np.isfinite(rref) & (rref > 0)
              & np.isfinite(se) & ~(se > _MAX_CURVE_RESPIRATION))
    return np.where(usable, rref, np.nan), np.where(usable, se, np.nan)


def _starting_values(windows, rref_night, lower, upper) -> np.ndarray:
    """Starting alpha, beta0, k (Lasslop et al. 2010 (m)) and Rref from night data.

    Rref: the window's night Rref; where it has none, the median of the other
    windows' values, else 1 µmol m-2 s-1 (our choices).
    """
    mask = windows["day"]
    count = len(mask)
    theta = np.empty((count, 4))
    theta[:, _ALPHA] = np.clip(_ALPHA_START, lower[_ALPHA], upper[_ALPHA])
    day_nee = np.where(mask, windows["nee"], np.nan)
    spread = np.zeros(count)
    has_day = mask.any(axis=1)
    if has_day.any():
        quantiles = nanquantile(day_nee[has_day], [0.03, 0.97], axis=1)
        spread[has_day] = np.abs(quantiles[1] - quantiles[0])
    theta[:, _BETA0] = np.clip(spread, 1.0, 0.9 * upper[_BETA0])
    theta[:, _K] = 0.0
    usable = np.isfinite(rref_night)
    fallback = float(np.median(rref_night[usable])) if usable.any() else 1.0
    theta[:, _RREF] = np.maximum(np.where(usable, rref_night, fallback), _RREF_FLOOR_START)
    return theta


def _levenberg_marquardt(theta, fixed, lower, upper, windows, mask, vpd0, max_iterations):
    """Bounded Levenberg–Marquardt over all windows at once.

    Bounds are kept by projection with an active set: a parameter at a bound
    whose gradient points outwards is held for that step (common practice for
    box-constrained Gauss–Newton methods). Damping follows Marquardt (1963):
    ``(J^T J + lambda diag(J^T J)) delta = -J^T r``. A window has converged when
    an accepted step changes the cost by less than a relative 1e-10, or moves
    every parameter by less than a relative 1e-8, or when the remaining
    Gauss–Newton step would move the fit by less than 0.01 standard errors
    (``delta^T J^T J delta <= 1e-4 s^2``), or when no damping gives a smaller
    cost (our choices of tolerance).

    For speed, each window's usable records are packed to the left of a narrow
    array once, a trial point is evaluated without its Jacobian, and ``J^T J`` and
    ``J^T r`` are recomputed only where a step was accepted (a rejected step leaves
    the point, so they are unchanged); windows leave the arrays as they converge.
    Many years of windows are iterated in blocks of ``_FIT_BLOCK_ELEMENTS`` packed
    records (a site-year's windows are one block), so that an iteration's arrays
    stay ~0.5 MB; every window is computed on its own, in arrays of the same width,
    so the blocks do not change the numbers.
    """
    theta = theta.copy()
    done = fixed.all(axis=1)
    converged = done.copy()
    active = np.flatnonzero(~done)
    if len(active) == 0:
        return theta, converged
    data = _packed_fit_data(windows, mask, active, vpd0)
    rows = max(1, _FIT_BLOCK_ELEMENTS // data["nee"].shape[1])
    if rows >= len(active):
        _iterate(theta, converged, active, fixed, lower, upper, data, max_iterations)
        return theta, converged
    for first in range(0, len(active), rows):
        block = slice(first, first + rows)
        _iterate(theta, converged, active[block], fixed, lower, upper,
                 _take_rows(data, block), max_iterations)
    return theta, converged


def _iterate(theta, converged, active, fixed, lower, upper, data, max_iterations) -> None:
    """The iterations of :func:`_levenberg_marquardt` for the windows `active`, packed in
    `data`: writes their parameters into `theta` and their convergence into `converged`."""
    current, held = theta[active], fixed[active]
    damping = np.full(len(active), _LAMBDA_START)
    cost, parts = _cost(current, data)
    gradient, normal = _normal_equations(data, parts)
    live = np.ones(len(active), dtype=bool)
    for _ in range(max_iterations):
        trial, negligible = _marquardt_step(current, held, lower, upper, gradient, normal,
                                            cost, data["points"], damping)
        trial_cost, trial_parts = _cost(trial, data)
        better = live & ~negligible & np.isfinite(trial_cost) & (trial_cost <= cost)
        small_change = better & ((cost - trial_cost) <= _FTOL * np.maximum(cost, 1e-300))
        small_step = better & np.all(np.abs(trial - current) <= _XTOL * (np.abs(current) + _XTOL),
                                     axis=1)
        # windows that finished stay in the arrays until they are dropped, inert
        damping = np.where(negligible | ~live, damping,
                           np.where(better, damping / 3.0, damping * 4.0))
        finished = live & (negligible | small_change | small_step | (damping > _LAMBDA_MAX))
        current = np.where(better[:, None], trial, current)
        cost = np.where(better, trial_cost, cost)
        live &= ~finished
        if not live.any():
            break
        if better.any():
            # computed for every row (cheaper than gathering the improved ones), kept where
            # the step was accepted
            new_gradient, new_normal = _normal_equations(data, trial_parts)
            gradient = np.where(better[:, None], new_gradient, gradient)
            normal = np.where(better[:, None, None], new_normal, normal)
        if live.sum() < 0.75 * len(live):
            # converged windows leave the arrays once a quarter of them has finished;
            # a window's parameters change only while it is live, so they are written
            # back as it leaves (and at the end)
            theta[active[~live]] = current[~live]
            converged[active[~live]] = True
            active, current, held, cost, damping = (active[live], current[live], held[live],
                                                    cost[live], damping[live])
            gradient, normal, data = gradient[live], normal[live], _take_rows(data, live)
            live = live[live]
    theta[active] = current
    converged[active[~live]] = True


def _packed_fit_data(windows, mask, rows, vpd0) -> dict:
    """The fit inputs of the chosen windows, their usable records packed to the left.

    Returns light [W m-2], VPD above `vpd0` [hPa], the Lloyd–Taylor factor, NEE and
    the weight (zero where a record is not in the fit), each (windows x width), the
    width being the most usable records of any chosen window, and ``points``.
    """
    mask = mask[rows]
    points = mask.sum(axis=1)
    width = max(1, int(points.max()))
    row, column = np.nonzero(mask)                  # row by row, in time order
    slot = np.arange(len(row)) - (np.cumsum(points) - points)[row]
    picked = np.zeros((len(rows), width), dtype=bool)
    target = row * width + slot                     # flat positions: one take, one put
    picked.ravel()[target] = True
    source = rows[row] * mask.shape[1] + column

    def pack(values):
        packed = np.zeros((len(rows), width))
        packed.ravel()[target] = values.ravel()[source]
        return packed

    light = np.clip(pack(windows["rg"]), 0.0, None)
    vpd_excess = pack(windows["vpd"]) - vpd0
    factor = pack(windows["factor"])
    weight = pack(windows["weight"])
    return _with_derived({
        "light": light, "excess": np.where(vpd_excess > 0.0, vpd_excess, 0.0),
        "factor": factor, "nee": pack(windows["nee"]), "weight": weight,
        "factor_weight": factor * weight, "points": points, "inside": picked,
        "curvature": windows["curvature"][rows][:, None]})


_DERIVED = ("excess_flat", "excess_row", "excess_values", "jacobian")


def _with_derived(data: dict) -> dict:
    """`data` with what the iteration reuses: the records above VPD0 and a Jacobian buffer.

    ``excess_flat``, ``excess_row``, ``excess_values``: the flat positions of the records
    above VPD0, their rows and excesses; only there does the VPD limitation differ from 1
    (see :func:`_vpd_reduction`), a few per cent of the packed array in a year's daytime
    records. ``jacobian``: (windows x 4 x width), its Rref column (the constant
    ``factor_weight``) filled, the others written by :func:`_normal_equations`.
    """
    excess = data["excess"]
    flat = np.flatnonzero(excess)
    jacobian = np.empty((excess.shape[0], 4, excess.shape[1]))
    jacobian[:, _RREF] = data["factor_weight"]
    return {**data, "excess_flat": flat, "excess_row": flat // excess.shape[1],
            "excess_values": excess.ravel()[flat], "jacobian": jacobian}


def _take_rows(arrays: dict, rows) -> dict:
    return _with_derived({name: values[rows] for name, values in arrays.items()
                          if name not in _DERIVED})


def _vpd_reduction(k, data):
    """The VPD limitation ``exp(-k (VPD - VPD0))`` of the packed records (windows x width).

    Equal bit for bit to ``np.exp(-k[:, None] * data["excess"])``: where the excess or k
    is 0 the exponent is ±0 and its exponential exactly 1, so the exponential is taken
    only at the records above VPD0 of windows with k > 0.
    """
    if not np.isfinite(k).all():
        return np.exp(-k[:, None] * data["excess"])       # inf * 0 is NaN there
    reduction = np.ones(data["excess"].shape)
    rows = data["excess_row"]
    moving = k[rows] != 0.0
    reduction.ravel()[data["excess_flat"][moving]] = np.exp(
        -k[rows[moving]] * data["excess_values"][moving])
    return reduction


def _cost(theta, data):
    """Half the weighted sum of squares per window, and the parts its Jacobian reuses.

    The model: Lloyd–Taylor Reco minus the light response of Lasslop et al. (2010)
    (:func:`fluxpart.responses.light_response`), on the packed arrays of
    :func:`_packed_fit_data`.
    """
    alpha, beta0, rref = theta[:, _ALPHA, None], theta[:, _BETA0, None], theta[:, _RREF, None]
    curvature = data["curvature"]
    parts = {}
    with np.errstate(over="ignore", invalid="ignore"):
        reduction = _vpd_reduction(theta[:, _K], data)
        beta = beta0 * reduction
        assimilation = alpha * data["light"]
        total = assimilation + beta
        if curvature.any():
            # the smaller root of curvature P^2 - (a + beta) P + a beta = 0, cancellation-free
            root = np.sqrt(np.clip(np.square(total) - 4.0 * curvature * assimilation * beta,
                                   0.0, None))
            denominator = total + root
            gpp = np.divide(2.0 * assimilation * beta, denominator,
                            out=np.zeros_like(denominator), where=denominator != 0.0)
            parts["root"] = root
        else:
            inverse = np.divide(1.0, total, out=np.zeros_like(total), where=total != 0.0)
            gpp = assimilation * beta * inverse
            parts["inverse"] = inverse
        residual = (rref * data["factor"] - gpp - data["nee"]) * data["weight"]
        cost = 0.5 * np.square(residual).sum(axis=1)
    parts.update(residual=residual, reduction=reduction, beta=beta, assimilation=assimilation,
                 gpp=gpp)
    return cost, parts


def _normal_equations(data, parts):
    """``J^T r`` (windows x 4) and ``J^T J`` (windows x 4 x 4) of the weighted residuals.

    Derivatives as :func:`fluxpart.responses.light_response_derivatives`.
    """
    weight, beta = data["weight"], parts["beta"]
    with np.errstate(over="ignore", invalid="ignore"):
        if "root" in parts:
            # implicit differentiation of curvature P^2 - (a + beta) P + a beta = 0:
            # dP/da = (beta - P) / root, dP/dbeta = (a - P) / root (root = the square root
            # of the discriminant); both reduce to the rectangular forms at curvature 0
            root, gpp = parts["root"], parts["gpp"]
            inverse_root = np.divide(weight, root, out=np.zeros_like(root), where=root > 0.0)
            d_alpha = -(beta - gpp) * inverse_root * data["light"]
            d_beta = (parts["assimilation"] - gpp) * inverse_root
        else:
            inverse_square = parts["inverse"] * parts["inverse"]
            d_alpha = -np.square(beta) * data["light"] * inverse_square * weight
            d_beta = np.square(parts["assimilation"]) * inverse_square * weight
        # into the packed data's buffer (its Rref column is the constant factor x weight):
        # the same array np.stack would build
        jacobian = data["jacobian"]
        jacobian[:, _ALPHA] = d_alpha
        np.multiply(-d_beta, parts["reduction"], out=jacobian[:, _BETA0])
        np.multiply(d_beta * beta, data["excess"], out=jacobian[:, _K])
        gradient = (jacobian @ parts["residual"][:, :, None])[:, :, 0]
        normal = jacobian @ jacobian.transpose(0, 2, 1)
    return gradient, normal


def _marquardt_step(theta, fixed, lower, upper, gradient, normal, cost, points, damping):
    """One damped, bounded Gauss–Newton trial point for each window.

    Returns the trial point and whether the remaining Gauss–Newton step is negligible
    (the window has converged).
    """
    count = len(theta)
    diagonal = np.diagonal(normal, axis1=1, axis2=2)
    hold = (fixed | ((theta <= lower) & (gradient > 0)) | ((theta >= upper) & (gradient < 0))
            | (diagonal <= 0))
    keep = ~hold
    descent = np.where(keep, -gradient, 0.0)
    # the undamped (Gauss–Newton) and the damped system, solved in one call: held
    # parameters get a unit row and column, the others diag(J^T J) times the damping
    systems = np.empty((2, count, 4, 4))
    systems[:] = np.where(keep[:, :, None] & keep[:, None, :], normal, 0.0)
    on_diagonal = systems.reshape(2, count, 16)[:, :, ::5]       # a view of the diagonals
    on_diagonal[0] = np.where(keep, diagonal + 1e-12 * diagonal, 1.0)
    on_diagonal[1] = np.where(keep, diagonal + damping[:, None] * diagonal, 1.0)
    steps = np.linalg.solve(systems.reshape(2 * count, 4, 4),
                            np.concatenate([descent, descent])[:, :, None])[:, :, 0]
    newton_step, step = steps[:count], steps[count:]
    # a window whose system is singular gives a non-finite step: its predicted decrease
    # is NaN, read below as not negligible, and the damped step decides (round trial22
    # saw NumPy's bare "invalid value" warning of this product reach a user's terminal)
    with np.errstate(invalid="ignore", over="ignore"):
        predicted = (newton_step * (-gradient * keep)).sum(axis=1)
    variance = 2.0 * cost / np.maximum(points - keep.sum(axis=1), 1)
    negligible = predicted <= (_SE_TOL**2) * variance
    trial = np.clip(theta + step, lower, upper)
    return trial, negligible


def _standard_errors(theta, fixed, lower, upper, windows, mask, vpd0):
    """Standard errors from (J^T W J)^-1 s^2 over the free parameters, and the fit RMSE."""
    data = _packed_fit_data(windows, mask, np.arange(len(theta)), vpd0)
    cost, parts = _cost(np.nan_to_num(theta), data)
    _, normal = _normal_equations(data, parts)
    points = data["points"]
    diagonal = np.diagonal(normal, axis1=1, axis2=2)
    free = ~fixed & (theta > lower) & (theta < upper) & (diagonal > 0)
    free_count = free.sum(axis=1)
    sum_squares = 2.0 * cost
    gpp = parts["gpp"]
    with np.errstate(invalid="ignore"):
        plain = np.nan_to_num(theta)[:, _RREF, None] * data["factor"] - gpp - data["nee"]
    plain_squares = np.where(data["inside"], np.square(plain), 0.0).sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        variance = np.where(points > free_count, sum_squares / (points - free_count), np.nan)
        rmse = np.where(points > 0, np.sqrt(plain_squares / points), np.nan)
    identity = np.eye(4)
    # Invert the correlation form D^-1/2 N D^-1/2 so that the very different
    # scales of the parameters do not count as ill-conditioning.
    with np.errstate(invalid="ignore", over="ignore", divide="ignore"):
        scale = np.where(free, 1.0 / np.sqrt(np.where(diagonal > 0, diagonal, 1.0)), 0.0)
        correlation = normal * scale[:, :, None] * scale[:, None, :]
    correlation = correlation + (~free)[:, :, None] * identity
    # A window whose Jacobian holds non-finite values (an overflowing exponent at a
    # parameter far from its data) has no standard errors; np.linalg.cond cannot take it.
    finite = np.isfinite(correlation).all(axis=(1, 2))
    well_posed = np.zeros(len(correlation), dtype=bool)
    if finite.any():
        well_posed[finite] = np.linalg.cond(correlation[finite]) < _MAX_CONDITION
    inverse = np.full_like(correlation, np.nan)
    if well_posed.any():
        # a parameter the window hardly constrains (a VPD term far beyond its data: a
        # diagonal below about 1e-308) has a scale above 1e154, whose square overflows to
        # an infinite variance: the unbounded error it has, without a NumPy warning
        with np.errstate(over="ignore", invalid="ignore"):
            inverse[well_posed] = (np.linalg.inv(correlation[well_posed])
                                   * scale[well_posed][:, :, None]
                                   * scale[well_posed][:, None, :])
    with np.errstate(invalid="ignore"):
        errors = np.sqrt(np.diagonal(inverse, axis1=1, axis2=2) * variance[:, None])
    return np.where(free, errors, np.nan), rmse


def _singular(theta, errors, fixed, lower, upper):
    alpha = theta[:, _ALPHA]
    with np.errstate(invalid="ignore"):
        interior = ~fixed & (theta > lower) & (theta < upper)
        interior[:, [_BETA0, _K]] &= (alpha > 0)[:, None]
        return (interior & ~np.isfinite(errors)).any(axis=1)


def _judge(theta, errors, fixed, fitted, converged, lower, upper, rref_night, rref_night_se,
           consistency_z, rref_max_relative_error, saturated):
    """Status, reason and whether to refit with the night Rref, per window.

    ``saturated`` marks fits whose light response is half-saturated below the window's
    light (:func:`_saturated_below_light`).
    """
    alpha, beta0, rref = theta[:, _ALPHA], theta[:, _BETA0], theta[:, _RREF]
    with np.errstate(invalid="ignore"):
        distance = np.abs(rref - rref_night) / np.sqrt(errors[:, _RREF] ** 2 + rref_night_se**2)
        inconsistent = np.isfinite(rref_night) & np.where(
            np.isfinite(distance), distance > consistency_z, False)
        # judged against the night Rref, never against the fit's own value (which would
        # keep the windows whose noise happened to shrink their standard error)
        unresolved = (np.isfinite(rref_night) & (rref_night > 0)
                      & ~(errors[:, _RREF] <= rref_max_relative_error * rref_night))
        # nor is an Rref whose standard error exceeds the plausible range of a flux (a
        # window of deep cold without a night Rref to judge it by; round trial14)
        unresolved |= errors[:, _RREF] > _MAX_CURVE_RESPIRATION
    rejections = [(~fitted, "too few daytime records"), (~converged, "no convergence")]
    replacements = [
        (rref <= _RREF_AT_ZERO, "rref at zero"),
        (alpha >= upper[_ALPHA], "alpha at upper bound"),
        (alpha <= lower[_ALPHA], "alpha at lower bound"),
        (beta0 >= upper[_BETA0], "beta0 at upper bound"),
        (_singular(theta, errors, fixed, lower, upper), "singular fit"),
        (inconsistent, "rref differs from night rref"),
        (unresolved, "rref not resolved by the daytime data"),
        (saturated, _SATURATED),
    ]

    status = np.full(len(theta), "accepted", dtype=object)
    reason = np.full(len(theta), "", dtype=object)
    open_ = np.ones(len(theta), dtype=bool)
    for condition, why in rejections:
        chosen = open_ & condition
        status[chosen], reason[chosen] = "rejected", why
        open_ &= ~condition
    refit = np.zeros(len(theta), dtype=bool)
    for condition, why in replacements:
        chosen = open_ & condition
        reason[chosen] = why
        refit |= chosen
        open_ &= ~condition
    no_night = refit & ~np.isfinite(rref_night)
    status[no_night] = "rejected"
    reason[no_night] = reason[no_night] + "; too few night records to refit"
    return status, reason, refit & ~no_night


def _refit_with_night_rref(refit, theta, errors, rmse, fixed, status, reason, rref_night,
                           rref_night_se, theta0, lower, upper, windows, usable_day_mask,
                           vpd0, max_iterations):
    """Constrained refit of the chosen windows: Rref fixed at the night Rref."""
    rows = np.flatnonzero(refit)
    subset = {name: windows[name][rows] for name in _MODEL_INPUTS}
    mask = usable_day_mask[rows]
    subset = {**subset, "nee": np.where(mask, subset["nee"], 0.0)}
    start = theta0[rows].copy()
    start[:, _RREF] = rref_night[rows]
    sub_fixed = fixed[rows].copy()
    sub_fixed[:, _RREF] = True
    new_theta, converged = _levenberg_marquardt(start, sub_fixed, lower, upper, subset, mask,
                                                vpd0, max_iterations)
    new_errors, new_rmse = _standard_errors(new_theta, sub_fixed, lower, upper, subset, mask,
                                            vpd0)
    new_errors[:, _RREF] = rref_night_se[rows]
    alpha, beta0 = new_theta[:, _ALPHA], new_theta[:, _BETA0]
    failed = [(~converged, "no convergence"),
              (_singular(new_theta, new_errors, sub_fixed, lower, upper), "singular fit")]
    sub_status = np.full(len(rows), "replaced", dtype=object)
    sub_reason = np.array([f"{why}; refit with night rref" for why in reason[rows]],
                          dtype=object)
    open_ = np.ones(len(rows), dtype=bool)
    for condition, why in failed:
        chosen = open_ & condition
        sub_status[chosen] = "rejected"
        sub_reason[chosen] = [f"{text}, which failed: {why}" for text in sub_reason[chosen]]
        open_ &= ~condition
    notes = open_ & (alpha <= lower[_ALPHA])
    sub_reason[notes] = [f"{text} (alpha at lower bound: no assimilation)"
                         for text in sub_reason[notes]]
    notes = open_ & (alpha > lower[_ALPHA]) & (beta0 >= upper[_BETA0])
    sub_reason[notes] = [f"{text} (beta0 at upper bound)" for text in sub_reason[notes]]
    notes = open_ & (alpha > lower[_ALPHA]) & (
        (alpha >= upper[_ALPHA])
        | _saturated_below_light(new_theta, {"day": mask, "rg": subset["rg"]}))
    sub_reason[notes] = [f"{text} ({_OFFSET_NOTE})" for text in sub_reason[notes]]
    theta, errors, rmse, fixed = theta.copy(), errors.copy(), rmse.copy(), fixed.copy()
    theta[rows], errors[rows], rmse[rows], fixed[rows] = new_theta, new_errors, new_rmse, \
        sub_fixed
    status, reason = status.copy(), reason.copy()
    status[rows], reason[rows] = sub_status, sub_reason
    return theta, errors, rmse, fixed, status, reason


def _saturated_below_light(theta, windows):
    """Per window: the light response is half-saturated (``beta0 / alpha``) below the
    5th percentile of the window's daytime Rg (our threshold), i.e. flat over nearly all
    observed light.

    With Rref free such a curve is a constant daytime offset that trades off against
    Rref, so neither flux is identified; the window is refitted with Rref fixed at the
    night Rref, where the offset is the daytime uptake below the respiration the night
    measured (see the module docstring).
    """
    day_rg = np.where(windows["day"], windows["rg"], np.nan)
    has_day = windows["day"].any(axis=1)
    lowest = np.full(len(theta), np.nan)
    if has_day.any():
        lowest[has_day] = nanquantile(day_rg[has_day], 0.05, axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        half_saturation = theta[:, _BETA0] / theta[:, _ALPHA]
        return (theta[:, _ALPHA] > 0) & (half_saturation < lowest)


def _reject_runaway_curves(status, reason, theta, window_e0, days, centres, arrhenius,
                           supplied_e0, edges=()):
    """Reject the windows in use whose respiration curve exceeds ``_MAX_CURVE_RESPIRATION``
    (or is not finite) at a record it is applied to, until none does (module docstring)."""
    status, reason = status.copy(), reason.copy()
    for _ in range(len(status)):
        used = np.flatnonzero(status != "rejected")
        if used.size == 0:
            break
        before, after, _ = pieces.piece_neighbours(days, centres[used], edges, _neighbours)
        runaway = np.zeros(used.size, dtype=bool)
        for side in (before, after):
            window = used[side]
            e0 = supplied_e0 if supplied_e0 is not None else window_e0[window]
            with np.errstate(over="ignore", invalid="ignore"):
                curve = theta[window, _RREF] * np.exp(e0 * arrhenius)
            bad = np.isfinite(arrhenius) & ~(curve <= _MAX_CURVE_RESPIRATION)
            runaway[np.unique(side[bad])] = True
        if not runaway.any():
            break
        chosen = used[runaway]
        status[chosen] = "rejected"
        note = (f"respiration curve above {_MAX_CURVE_RESPIRATION:g} µmol m-2 s-1 at a record "
                "it applies to")
        reason[chosen] = [f"{text}; {note}" if text else note for text in reason[chosen]]
    return status, reason


def _neighbours(days, centres):
    """Per record: the window in use centred at or before it, the one after, and the
    time share of the latter (0 at the first centre, 1 at the second; constant beyond
    the first and last centres)."""
    after = np.searchsorted(centres, days, side="right")
    before = np.clip(after - 1, 0, len(centres) - 1)
    after = np.clip(after, 0, len(centres) - 1)
    span = centres[after] - centres[before]
    with np.errstate(divide="ignore", invalid="ignore"):
        share = np.where(span > 0, (days - centres[before]) / span, 0.0)
    return before, after, np.clip(share, 0.0, 1.0)


def _parameter_table(index, fit) -> pd.DataFrame:
    origin = index[0].normalize()

    def to_time(offsets):
        times = origin + pd.to_timedelta(offsets, unit="D")
        if times.unit != origin.unit:
            # a window cut at an event (pieces) ends at a fractional day that the
            # nanosecond unit pandas then picks shows as 00:29:59.999999997: the second,
            # on the records' unit, as the windows without events are
            times = times.round("s").as_unit(origin.unit)
        return times

    starts, ends, windows, theta, errors = (fit["starts"], fit["ends"], fit["windows"],
                                            fit["theta"], fit["errors"])
    e0_fit, status, count = fit["e0_fit"], fit["status"], len(fit["starts"])
    reason = np.where(fit["reason"] == "", "ok", fit["reason"])
    return pd.DataFrame({          # the columns in the order of PARAMETER_COLUMNS
        "window_start": to_time(starts),
        "window_end": to_time(ends),
        "window_centre": to_time((starts + ends) / 2.0),
        "points": windows["points"].astype(np.int64),
        "night_points": windows["night_points"].astype(np.int64),
        "alpha": theta[:, _ALPHA],
        "beta0": theta[:, _BETA0],
        "k": theta[:, _K],
        "rref": theta[:, _RREF],
        "e0": windows["e0"],
        "alpha_se": errors[:, _ALPHA],
        "beta0_se": errors[:, _BETA0],
        "k_se": errors[:, _K],
        "rref_se": errors[:, _RREF],
        "e0_se": e0_fit["e0_se"],
        "e0_points": e0_fit["points"].astype(np.int64),
        "e0_window_days": e0_fit["width"],
        "e0_window": e0_fit["window_e0"],
        "e0_window_se": e0_fit["window_e0_se"],
        "e0_source": e0_fit["source"].astype(str),
        "rref_night": fit["rref_night"],
        "rref_night_se": fit["rref_night_se"],
        "rmse": fit["rmse"],
        "weighted": np.full(count, bool(fit["weighted"])),
        "curvature": np.full(count, float(fit["curvature"])),
        "accepted": status != "rejected",
        "status": status.astype(str),
        "reason": reason.astype(str),
        "k_fixed": fit["k_fixed"],
    })
