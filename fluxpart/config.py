"""Processing settings: :class:`Config`, a frozen dataclass of every method setting.

Each field defaults to the published setting of its method, or to a documented
choice of ours where the paper leaves it open. A site config's ``[processing]``
table overrides fields by name; unknown names are an error that suggests the
nearest valid one.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import asdict, dataclass, fields

from ._validate import read_toml
from .errors import ConfigError

__all__ = ["Config", "suggest_key"]


@dataclass(frozen=True)
class Config:
    """Every setting of the fluxpart pipeline.

    Attributes
    ----------
    seed : int
        Seed of every random draw (bootstrap, Monte Carlo); part of the result's
        identity.
    night_rg_threshold : float
        Records with global radiation below this are night [W m-2]. 10 W m-2 is
        common practice (m) (Reichstein et al. 2005 use 10 W m-2 (m)); where Rg is
        missing, night is where potential radiation is zero.
    despike_z : float
        Despiking: a record is a spike where its double difference departs from the
        block median by more than ``z MAD / 0.6745``; 4, Papale et al. (2006) (m).
    despike_block_days : float
        Length of the despiking blocks [days]; 13, Papale et al. (2006).
    rg_margin, rg_relative_margin : float
        Rg is rejected where it exceeds potential radiation by more than
        ``max(rg_margin, rg_relative_margin x potential)`` [W m-2], [1]; 50 W m-2
        and 0.2, our choice (clouds' edges can raise Rg above clear-sky values, never
        far above the top of the atmosphere).
    ustar_method : str
        How the u* threshold is found: ``"moving_point"`` (default; Reichstein et al.
        2005, Papale et al. 2006), ``"change_point"`` (Barr et al. 2013) or
        ``"fixed"`` (use `ustar_threshold` for every year).
    ustar_threshold : float
        Fixed friction-velocity threshold [m s-1] for ``ustar_method = "fixed"`` and
        the flagged fall-back for years where no threshold can be detected. 0.2 m s-1
        is our choice, a value typical of the thresholds reported for forests and
        grasslands (m).
    ustar_temperature_classes : int
        Moving point test: night data of a season split into this many temperature
        classes of equal size; 6, Reichstein et al. (2005) (m).
    ustar_classes : int
        u* classes of equal size within each temperature class; 20, Reichstein et
        al. (2005) (m).
    ustar_plateau_share : float
        The threshold is the first u* class whose mean night NEE reaches this share
        of the mean of the classes above it; 0.99, Reichstein et al. (2005) (m).
    ustar_correlation_limit : float
        Temperature classes are used only where |r(u*, T)| is below this; 0.4,
        Papale et al. (2006) (m).
    ustar_min_resolution : float
        Moving point test: a temperature class counts only where its plateau flux
        (mean night NEE of its upper half of u* classes) spans at least this many
        standard errors of one u* class mean [1]; a season where none does is split
        into fewer temperature classes. 4, our rule: a class that lost half its flux
        then lies two standard errors below the plateau. Noisier classes read the
        threshold low (by a median of 34 % at under one standard error, 10 % at three
        to four, 3 % at four to six, on generated known-truth site-years). 0 turns the check off (the published test).
    ustar_annual : str
        Moving point test, the year's threshold: ``"median"`` (default) of all counted
        temperature classes of the year, the aggregate of Barr et al. (2013) (m), or
        ``"maximum"`` of the seasonal thresholds, Papale et al. (2006) (m). The maximum
        of four noisy seasonal values reads high where every season is well resolved
        (up to +21 % on generated site-years); the median assumes one threshold per
        year, which is what the pipeline applies.
    ustar_plateau_reference : float
        Moving point test: a u* class is compared with the mean night NEE of the
        classes above it within the top share of the u* classes given here [1], in
        (0, 1]. 0.25, our rule: compared with all classes above (1, the published
        test), a class far below a threshold that lies high in the night u*
        distribution meets a plateau diluted by classes that still lose flux, and
        the threshold read low (median −18 % on demo years with 70–80 % of night
        records below it; −11 % with 0.25). See :func:`fluxpart.ustar.moving_point_threshold`.
    ustar_min_threshold : float or None
        Floor of a detected threshold [m s-1]. ``None`` (default): by the site's
        canopy (``[site] canopy``), 0.1 m s-1 for a tall canopy and 0.01 m s-1 for a
        short one, the floors used with the moving point test (Papale et al. 2006
        (m)): short crops and grass hold little CO2 below the sensor and often have
        thresholds under 0.1 m s-1, which a 0.1 floor would hide.
    ustar_bootstrap_draws : int
        Bootstrap resamples of the night data for the threshold's distribution; 100,
        Papale et al. (2006) (m). 0 skips the bootstrap and the scenarios.
    ustar_scenarios : tuple of int
        Bootstrap percentiles of the threshold with which gap filling and both
        partitionings are rerun, giving the threshold's share of the uncertainty;
        (16, 50, 84): half their spread is a 1-sigma-equivalent range (the 15.9 and
        84.1 percentiles of a normal distribution), so it can be combined with other
        1-sigma parts. Each must be one of 5, 16, 50, 84, 95, in increasing order;
        empty for none.
    gapfill_donors : str
        Which measured records may fill an NEE gap. ``"separate_day_night"``
        (default): night gaps only from night records and day gaps only from day
        records (Falge et al. 2001, Agric. For. Meteorol. 107:43–69, fill day and
        night separately); ``"similar_conditions_only"``: any record within the
        similarity tolerances, the single rule of Reichstein et al. (2005), under
        which twilight records with photosynthesis fill night gaps and bias annual
        NEE low (issue 11: median −17.5 g C m-2 on the demo).
    gapfill_min_donors : int
        Fewest records a gap-filling pass must average to fill an NEE gap; 3, our
        choice: one record's random error or an undetected spike must not set a
        fill alone, and the fill's spread needs more than one record.
    gapfill_interpolation_hours : float
        Driver gaps (Tair, VPD, Tsoil) up to this long [hours] are filled by linear
        interpolation (quality ``"interpolated"``); 0 turns it off. 3 h, our choice:
        these drivers change smoothly over hours (issue 11: 0.8–0.9 K RMSE against
        3.1–3.5 K for radiation-similarity fills).
    gapfill_max_window_days : float
        Largest half-width of any gap-filling window [days]; 140, Reichstein,
        gap-filling flow chart, workshop slides 2004 (the driver steps widen to
        ±140 days).
    rg_tolerance : float
        Marginal distribution sampling: similar global radiation within ± this
        [W m-2]; Reichstein et al. (2005), appendix: 50 W m-2.
    tair_tolerance : float
        Similar air temperature within ± this [°C]; Reichstein et al. (2005): 2.5 °C.
    vpd_tolerance : float
        Similar vapour pressure deficit within ± this [hPa]; Reichstein et al. (2005): 5 hPa.
    respiration_driver : str
        Temperature that drives Lloyd–Taylor respiration: ``"tair"``, ``"tsoil"``
        or ``"auto"`` (the one whose nighttime Lloyd–Taylor fit explains the
        measured, u*-filtered night NEE better: soil temperature where its BIC is
        lower by more than 2, "positive evidence" after Kass & Raftery 1995, air
        temperature otherwise and where there is no ``tsoil`` column; see
        :mod:`fluxpart.partition.temperature_choice`). The
        choice and both criterion values are in ``provenance["respiration_driver"]``.
        Default ``"auto"``: Lloyd & Taylor (1994) fitted soil respiration to soil
        temperature, while some ecosystems' respiration follows air temperature,
        and at night NEE is Reco, so the night data decide (on 8 generated
        site-years it picked the planted temperature every time).
    e0_window_days : float
        Length of the short windows in which E0 is fitted [days]; 15 days,
        Reichstein et al. (2005) (m).
    e0_window_step_days : float
        Step between E0 windows [days]; 5 days (m).
    e0_min_points : int
        Fewest measured night records in an E0 window for a fit; 6 (m).
    e0_min_temperature_range : float
        Smallest temperature range in an E0 window [K]; 5 K, Reichstein et al. (2005).
    e0_bounds : tuple of float
        Accepted E0 range [K]; 30–450 K, Reichstein et al. (2005) (m).
    e0_max_relative_error : float
        Largest accepted standard error of E0 relative to E0 [1]; 0.5, our choice.
    e0_method : str
        How each year's E0 is estimated. ``"joint"`` (default): one E0 fitted to
        all of the year's measured night NEE at once, with a free Rref in each
        consecutive ``e0_window_days`` window, by least absolute deviations (the
        maximum likelihood under the Laplace-distributed random error of flux
        measurements, Richardson & Hollinger 2005), so only the short-term
        temperature variation within windows informs it (Reichstein et al.
        2005's aim) while every window counts by its information; a year whose
        joint fit is at an ``e0_bounds`` limit or above ``e0_max_relative_error``
        falls back to the windows. ``"best_windows"``: the mean of the
        ``e0_best_windows`` windows with the smallest standard error (Reichstein
        et al. 2005). Why the default changed: a flatter fit has a smaller
        standard error, so that choice biases E0 low, and its three windows
        carry the noise of a few weeks (on 35 generated site-years, the central
        u* run's inputs: median E0 error −3 K joint vs +7 K, median |error|
        15 vs 26 K, worst 110 vs 226 K; annual nighttime Reco beyond ±5 % in 1
        instead of 4 site-years, together with ``rref_min_points`` = 6; see
        :func:`fluxpart.partition.nighttime.fit_e0_joint`).
    e0_best_windows : int
        How many accepted windows with the smallest standard error are averaged
        into the year's E0 when ``e0_method = "best_windows"`` or the joint fit
        is not accepted; 3, Reichstein et al. (2005) (m).
    e0_fallback : float or None
        E0 to use, flagged, when no window is acceptable [K]. ``None`` (default)
        makes such a year fail with an :class:`~fluxpart.errors.InsufficientDataError`.
        The daytime method uses it likewise when none of its night windows gives an E0;
        with ``None`` it then takes the year's nighttime E0 instead of failing, flagged
        ``"fallback"`` in its parameter table and warned about (the two methods then
        share E0, so their difference no longer tests it).
    rref_window_days : float
        Window for the reference respiration with E0 fixed [days]; 4 days,
        Reichstein et al. (2005).
    rref_min_points : int
        Fewest measured night records in an Rref window; 6 (was 2), the same as
        ``e0_min_points``: Rref from fewer records is mostly noise, and such
        windows sit at the edges of long gaps and high-latitude summers, where
        they anchor the interpolation (on generated 66° N site-years they moved
        annual Reco by +13 % and −8 %; our choice, measured).
    daytime_window_days : float
        Light-response fitting window [days]; 4, Lasslop et al. (2010).
    daytime_window_step_days : float
        Step between daytime windows [days]; 2, Lasslop et al. (2010).
    daytime_min_points : int
        Fewest measured daytime records for a window fit; 10, our choice.
    daytime_k_min_points : int
        Fewest records above VPD0 = 10 hPa in a window for the VPD coefficient k to
        be fitted; otherwise k is fixed at 0; 5, our choice.
    daytime_beta0_max : float
        Upper bound of the light-saturated assimilation beta0 [µmol m-2 s-1]; 250,
        Lasslop et al. (2010) (m). A window whose fit reaches it is refitted with Rref
        fixed at the window's night Rref (see ``daytime_consistency_z``).
    daytime_e0_window_days : tuple of float
        Widths [days] of the night windows, centred on each daytime window, tried in
        turn to estimate that window's E0 from night NEE; (4, 8, 16): the window
        itself first (Lasslop et al. 2010 estimate E0 from night data around the
        window (m)), widened up to about the 15 days of Reichstein et al. (2005).
        Windows where none gives an acceptable E0 (the ``e0_min_points``,
        ``e0_min_temperature_range``, ``e0_bounds`` and ``e0_max_relative_error``
        rules of the nighttime method) take E0 interpolated in time between those
        that do. Nothing is taken from the nighttime method's E0.
    daytime_consistency_z : float
        A daytime fit whose Rref differs from the window's night Rref (least squares
        of the window's night NEE with its E0) by more than this many combined
        standard errors, or that sits at a bound (Rref 0, alpha 0 or 0.22, beta0 at
        ``daytime_beta0_max``), is refitted with Rref fixed at the night Rref; 1.96
        (95 %, two-sided; common practice). Our rule: the light response at Rg = 0
        is respiration, which night records measure directly. ``inf`` keeps only
        the bound rules.
    daytime_night_min_points : int
        Fewest night records of a daytime window for its night Rref; 5, our choice.
        Windows that need the refit but lack them are rejected and take their
        parameters from the neighbouring windows.
    daytime_weighting : str
        ``"random_error"`` (default): weight the daytime fits by 1/σ², σ from the
        random-error model of NEE (the ``random_error_*`` pairing settings)
        evaluated at the first, unweighted fit's modelled NEE, as Lasslop et al.
        (2010) weight by the flux uncertainty (m); the fit falls back to unweighted
        (column ``weighted`` of the daytime parameter table) where too few pairs
        give a model. ``"none"``: unweighted.
    daytime_night_in_fit : bool
        Also fit each window's measured night NEE (as Rg = 0 records) in the daytime
        light-response fit; false (default): the published method fits daytime data
        only (Lasslop et al. 2010 (m)) and keeps the two partitionings independent
        except for the night-Rref refit above. True lets the night data pull the
        intercept that a rectangular hyperbola overestimates when the true light
        response bends more sharply, at the price of sharing the night data's
        biases (u* filtering) with the nighttime method (figures in DEVELOPERS.md).
    daytime_curvature : str or float
        Curvature of the daytime light response [1], 0 ≤ value < 1. ``0``
        (default): the rectangular hyperbola of Lasslop et al. (2010), the
        published method. A larger number fixes a sharper bend (the
        non-rectangular hyperbola, Johnson & Thornley 1984 (m)); ``"fit"`` profiles
        one curvature per run over 0, 0.1, ..., 0.9 on the window fits of the
        central u* run (summed weighted cost of all windows, refined by a parabola
        through the best grid value and its neighbours) and uses it in every window
        and u* scenario. Canopies often bend more sharply than a rectangular
        hyperbola (Gilmanov et al. 2003 (m)), which then raises the fitted
        intercept (daytime Reco and GPP high); but on our generated site-years the
        profile also absorbs temperature limitation of photosynthesis and reversed
        the bias at evergreen and southern sites, and the daytime intervals held
        the truth less often (figures in DEVELOPERS.md), so the published shape
        stays the default.
    random_error_draws : int
        Monte Carlo realisations of the random error of NEE summed per year; 500,
        our choice (the standard deviation of the sum is then known to about 3 %).
    random_error_rg_tolerance, random_error_tair_tolerance, random_error_vpd_tolerance : float
        Records 24 h apart form a pair for the random-error estimate where Rg, Tair
        and VPD differ by less than these [W m-2], [°C], [hPa]; 35 W m-2 (about the
        75 µmol m-2 s-1 of PPFD of Richardson et al. 2006 (m)), 3 °C (Richardson et al.
        2006 (m)) and 5 hPa (our choice, standing in for their wind-speed criterion).
    agreement_margin : float
        Largest relative difference between daytime and nighttime annual GPP (and
        Reco), ``|day - night| / mean``, before the result warns that the methods
        disagree [1]; 0.15, our choice: across sites Lasslop et al. (2010) report a
        median absolute day-night difference of annual GPP of 47 g C m-2 yr-1
        (abstract), some 5 % of a typical 1000 g C m-2 yr-1, so 15 % flags a clear
        disagreement.
    clock_check : str
        What a clock or site-geometry problem found by :mod:`fluxpart.clock` (measured
        Rg shifted against the sun by a record or more, daylight-saving stamps, a
        latitude of the wrong sign) does: ``"refuse"`` (default) stops the run with
        the problem and the setting to change; ``"warn"`` runs and lists it among
        the result's warnings; ``"off"`` skips the check. Default ``"refuse"``, our
        choice: a clock an hour off moves annual NEE by tens of g C m-2 without any
        other sign (issue 12).
    year_start : str
        First day of the budget year as ``"MM-DD"``; default ``"01-01"`` (calendar
        years). ``"07-01"`` or ``"09-01"`` give budget years that keep a
        southern-hemisphere summer or a growing season together (common practice).
        The ``annual`` table keeps ``year`` (the calendar year in which the budget
        year starts) and gives ``period_start`` / ``period_end``. 29 February is
        refused (not in every year). u* thresholds and the annual E0 stay per
        calendar year of data.
    """

    seed: int = 0
    night_rg_threshold: float = 10.0
    despike_z: float = 4.0
    despike_block_days: float = 13.0
    rg_margin: float = 50.0
    rg_relative_margin: float = 0.2
    ustar_method: str = "moving_point"
    ustar_threshold: float = 0.2
    ustar_temperature_classes: int = 6
    ustar_classes: int = 20
    ustar_plateau_share: float = 0.99
    ustar_correlation_limit: float = 0.4
    ustar_min_resolution: float = 4.0
    ustar_annual: str = "median"
    ustar_plateau_reference: float = 0.25
    ustar_min_threshold: float | None = None
    ustar_bootstrap_draws: int = 100
    ustar_scenarios: tuple[int, ...] = (16, 50, 84)
    gapfill_donors: str = "separate_day_night"
    gapfill_min_donors: int = 3
    gapfill_interpolation_hours: float = 3.0
    gapfill_max_window_days: float = 140.0
    rg_tolerance: float = 50.0
    tair_tolerance: float = 2.5
    vpd_tolerance: float = 5.0
    respiration_driver: str = "auto"
    e0_window_days: float = 15.0
    e0_window_step_days: float = 5.0
    e0_min_points: int = 6
    e0_min_temperature_range: float = 5.0
    e0_bounds: tuple[float, float] = (30.0, 450.0)
    e0_max_relative_error: float = 0.5
    e0_best_windows: int = 3
    e0_fallback: float | None = None
    e0_method: str = "joint"
    rref_window_days: float = 4.0
    rref_min_points: int = 6
    daytime_window_days: float = 4.0
    daytime_window_step_days: float = 2.0
    daytime_min_points: int = 10
    daytime_k_min_points: int = 5
    daytime_beta0_max: float = 250.0
    daytime_e0_window_days: tuple[float, ...] = (4.0, 8.0, 16.0)
    daytime_consistency_z: float = 1.96
    daytime_night_min_points: int = 5
    daytime_weighting: str = "random_error"
    daytime_night_in_fit: bool = False
    daytime_curvature: str | float = 0.0
    random_error_draws: int = 500
    random_error_rg_tolerance: float = 35.0
    random_error_tair_tolerance: float = 3.0
    random_error_vpd_tolerance: float = 5.0
    agreement_margin: float = 0.15
    clock_check: str = "refuse"
    year_start: str = "01-01"

    def __post_init__(self):
        _check(self)

    @classmethod
    def field_names(cls) -> tuple[str, ...]:
        """Return the names of all settings."""
        return tuple(f.name for f in fields(cls))

    @classmethod
    def from_mapping(cls, mapping: dict, where: str = "[processing]") -> Config:
        """Build a Config from a mapping of overrides, rejecting unknown keys.

        Raises
        ------
        ConfigError
            For an unknown key (with the nearest valid key suggested) or a bad value.
        """
        names = cls.field_names()
        for key in mapping:
            if key not in names:
                raise ConfigError(f"{where} {key}: unknown setting{suggest_key(key, names)}")
        floats = {f.name for f in fields(cls) if f.type in ("float", "float | None")}
        values = {}
        for key, value in mapping.items():
            if isinstance(value, list):
                value = tuple(value)
            if key in floats and isinstance(value, int) and not isinstance(value, bool):
                value = float(value)
            values[key] = value
        return cls(**values)

    @classmethod
    def from_toml(cls, path) -> Config:
        """Read the ``[processing]`` table of a site config; defaults where absent."""
        document = read_toml(path, "site config")
        processing = document.get("processing", {})
        if not isinstance(processing, dict):
            raise ConfigError("[processing] must be a table of settings")
        return cls.from_mapping(processing)

    def to_dict(self) -> dict:
        """Return all settings as plain JSON-compatible values."""
        out = asdict(self)
        out["e0_bounds"] = list(self.e0_bounds)
        out["daytime_e0_window_days"] = list(self.daytime_e0_window_days)
        out["ustar_scenarios"] = list(self.ustar_scenarios)
        return out


def suggest_key(key: str, valid) -> str:
    """Return a ``"; did you mean 'x'?"`` hint for the nearest valid key, or a list."""
    close = difflib.get_close_matches(key, list(valid), n=1, cutoff=0.5)
    if close:
        return f"; did you mean {close[0]!r}?"
    return f"; valid settings: {', '.join(sorted(valid))}"


_CHOICES = {"respiration_driver": ("tair", "tsoil", "auto"),
            "e0_method": ("joint", "best_windows"),
            "gapfill_donors": ("separate_day_night", "similar_conditions_only"),
            "daytime_weighting": ("random_error", "none"),
            "ustar_method": ("moving_point", "change_point", "fixed"),
            "ustar_annual": ("median", "maximum"),
            "clock_check": ("refuse", "warn", "off")}
_POSITIVE = ("night_rg_threshold", "rg_tolerance", "tair_tolerance", "vpd_tolerance",
             "e0_window_days", "e0_window_step_days", "e0_min_temperature_range",
             "e0_max_relative_error", "rref_window_days", "despike_z", "despike_block_days",
             "gapfill_max_window_days", "daytime_window_days", "daytime_window_step_days",
             "agreement_margin", "daytime_beta0_max", "ustar_plateau_share",
             "ustar_correlation_limit", "ustar_plateau_reference", "random_error_rg_tolerance",
             "random_error_tair_tolerance", "random_error_vpd_tolerance",
             "daytime_consistency_z")
_NON_NEGATIVE = ("ustar_threshold", "rg_margin", "rg_relative_margin",
                 "gapfill_interpolation_hours", "ustar_min_resolution")
_COUNTS = ("e0_min_points", "e0_best_windows", "rref_min_points", "daytime_min_points",
           "daytime_k_min_points", "ustar_temperature_classes", "ustar_classes",
           "random_error_draws", "gapfill_min_donors",
           "daytime_night_min_points")
_PERCENTILES = (5, 16, 50, 84, 95)


def _is_number(value) -> bool:
    """A finite int or float (TOML's nan and inf are never a valid setting)."""
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value))


def _check(config: Config) -> None:
    if not isinstance(config.seed, int) or isinstance(config.seed, bool) or config.seed < 0:
        raise ConfigError(f"[processing] seed = {config.seed!r}: expected a non-negative integer")
    from .timestamps import _month_day
    _month_day(config.year_start)  # ConfigError naming [processing] year_start
    for name, choices in _CHOICES.items():
        value = getattr(config, name)
        if value not in choices:
            raise ConfigError(f"[processing] {name} = {value!r}: expected one of "
                              f"{', '.join(repr(c) for c in choices)}")
    for name in _POSITIVE + _NON_NEGATIVE:
        value = getattr(config, name)
        if not _is_number(value) or value < 0 or (name in _POSITIVE and value == 0):
            kind = "a positive number" if name in _POSITIVE else "a number >= 0"
            raise ConfigError(f"[processing] {name} = {value!r}: expected {kind}")
    for name in _COUNTS:
        value = getattr(config, name)
        if not isinstance(value, int) or isinstance(value, bool) or value < 1:
            raise ConfigError(f"[processing] {name} = {value!r}: expected a whole number >= 1")
    if config.ustar_plateau_reference > 1:
        raise ConfigError(f"[processing] ustar_plateau_reference = "
                          f"{config.ustar_plateau_reference!r}: expected a share in (0, 1]")
    draws = config.ustar_bootstrap_draws
    if not isinstance(draws, int) or isinstance(draws, bool) or draws < 0:
        raise ConfigError(f"[processing] ustar_bootstrap_draws = {draws!r}: expected a whole "
                          "number >= 0")
    floor = config.ustar_min_threshold
    if floor is not None and (not _is_number(floor) or not 0 <= floor < float("inf")):
        raise ConfigError(f"[processing] ustar_min_threshold = {floor!r}: expected a number "
                          ">= 0 [m s-1], or leave it out for the canopy's floor")
    scenarios = config.ustar_scenarios
    if (isinstance(scenarios, tuple) and all(_is_number(p) for p in scenarios)
            and list(scenarios) != sorted(scenarios)):
        raise ConfigError(f"[processing] ustar_scenarios = {list(scenarios)!r}: percentiles "
                          "out of order; list them in increasing order, e.g. [16, 50, 84]")
    if (not isinstance(scenarios, tuple) or len(set(scenarios)) != len(scenarios)
            or any(not isinstance(p, int) or isinstance(p, bool) or p not in _PERCENTILES
                   for p in scenarios)):
        raise ConfigError(f"[processing] ustar_scenarios = {scenarios!r}: expected a list of "
                          f"distinct whole-number bootstrap percentiles from {list(_PERCENTILES)}")
    low_high = config.e0_bounds
    if (not isinstance(low_high, tuple) or len(low_high) != 2
            or not all(_is_number(v) for v in low_high) or not 0 < low_high[0] < low_high[1]):
        raise ConfigError(f"[processing] e0_bounds = {low_high!r}: expected [low, high] in K "
                          "with 0 < low < high")
    curvature = config.daytime_curvature
    if not (curvature == "fit" or (_is_number(curvature) and 0 <= curvature < 1)):
        raise ConfigError(f"[processing] daytime_curvature = {curvature!r}: expected \"fit\" or "
                          "a number from 0 (the rectangular hyperbola) up to, not including, 1")
    if not isinstance(config.daytime_night_in_fit, bool):
        raise ConfigError(f"[processing] daytime_night_in_fit = {config.daytime_night_in_fit!r}: "
                          "expected true or false")
    widths = config.daytime_e0_window_days
    if (not isinstance(widths, tuple) or not widths
            or not all(_is_number(w) and 0 < w < float("inf") for w in widths)
            or list(widths) != sorted(set(widths))):
        raise ConfigError(f"[processing] daytime_e0_window_days = {widths!r}: expected a list "
                          "of increasing positive widths in days, e.g. [4, 8, 16]")
    if config.e0_fallback is not None and (not _is_number(config.e0_fallback)
                                           or config.e0_fallback <= 0):
        raise ConfigError(f"[processing] e0_fallback = {config.e0_fallback!r}: expected a "
                          "positive number of kelvin, or leave it out")
    if (config.e0_fallback is not None and isinstance(low_high, tuple)
            and not low_high[0] <= config.e0_fallback <= low_high[1]):
        raise ConfigError(f"[processing] e0_fallback = {config.e0_fallback!r}: outside e0_bounds "
                          f"{list(low_high)} K, the range a fitted E0 must lie in")
