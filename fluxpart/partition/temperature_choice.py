"""Choice of the temperature that drives Lloyd–Taylor respiration, from the night data.

Ecosystem respiration is mostly soil respiration, and Lloyd & Taylor (1994)
fitted their equation to soil respiration against soil temperature; where the
canopy and litter dominate, air temperature can be the better driver. Which
one a site needs is an empirical question the night NEE answers: at night NEE
is Reco, so the temperature whose Lloyd–Taylor fit explains the measured,
u*-filtered night NEE better is the better driver (Reichstein et al. 2005,
section 2.3, compared drivers by the fit of night data (m)).

Criterion: the whole nighttime method (E0 in short windows, Rref in 4-day
windows) is fitted once with each temperature; both fits have the same
number of parameters, so the Bayesian information criterion under Laplace
errors reduces to ΔBIC = 2n ln(SAD_tsoil / SAD_tair) over the n night records
both cover, SAD the sum of absolute residuals (Schwarz 1978;
:func:`fluxpart.uncertainty.laplace_delta_bic`; since 0.17.0, sums of squares
before, which the few spikes left after screening could decide). Soil temperature
is chosen when it leaves the smaller sum of absolute residuals by positive
evidence (ΔBIC < −:data:`MIN_EVIDENCE_BIC`); a tie, a failed soil-temperature fit
or too few shared records keep air temperature, the temperature every tower
measures. Since 0.23.0 n is the effective number of independent records of the
favoured fit's residuals, n (1 − ρ)/(1 + ρ) with ρ their lag-1 autocorrelation
(:func:`fluxpart.uncertainty.effective_records`): neighbouring night records share
weather and flux error, and counted as independent they made a small difference in
fit look like positive evidence (an other-physics site-year with respiration on air
temperature, ρ 0.27 over 1,492 night records: ΔBIC −3.2 chose soil temperature and
annual nighttime Reco came out −13.5 %; −1.9 over 862 effective records keeps air
temperature, −6.3 %).

Before the comparison, a candidate whose fitted E0 lies within one standard
error of an end of the accepted range (``e0_bounds``) is set aside when the other
candidate's is not: an E0 pressed against the range says the temperature does
not describe the night flux (a damped soil temperature drives E0 up to the upper
end, a temperature unrelated to the flux pulls it down to the lower end), unless
its sum of absolute residuals is lower by strong evidence (ΔBIC beyond
:data:`STRONG_EVIDENCE_BIC`), in which case the nearness to the bound is read as
an imprecise E0 and the comparison decides.

**Air temperature with a delay** (since 0.11.0), only where the input has no soil
temperature: respiration follows the temperature of the soil and litter, whose
daily wave lags the air's by hours (the phase lag of a daily temperature wave
grows by one radian, ~3.8 h, per damping depth, ~0.1 m in moist soil; textbook
soil physics, e.g. Campbell & Norman 1998 (m)), so the night flux plotted
against air temperature loops (diel hysteresis; Phillips et al. 2011 (m)). Fitted
on air temperature, the evening's respiration, still driven by the warm
afternoon, reads as a higher respiration at a given temperature, and the curve
extrapolated into the morning and the day overestimates Reco. The nighttime method
is fitted with air temperature delayed by each of :data:`AIR_DELAYS_HOURS`; the
delay with the smallest sum of absolute night residuals replaces the undelayed air
temperature when its BIC, with one parameter more (2n ln(SAD_delay / SAD_0) +
ln n), is lower by more than :data:`STRONG_EVIDENCE_BIC`: the delay is picked from
several, so positive evidence alone is not enough. n is again the effective number of
records of the delayed fit's residuals (since 0.23.0).

**A delay damped as conduction damps it** (``air_delay_damping = "conduction"``, off by
default): heat conduction into a uniform soil delays the daily temperature wave AND damps
it. Under a surface temperature ``A sin(ωt)`` the temperature at depth z is
``A exp(−z/D) sin(ωt − z/D)``, D = √(2κ/ω) the damping depth (the damped-wave solution of
the heat equation; Campbell & Norman 1998, ch. 8; Carslaw & Jaeger 1959, §2.6 (m)): a
phase lag of φ = z/D radians comes with the amplitude factor exp(−φ), so a lag of h hours
of the daily cycle keeps exp(−2π h / 24 h) of the daily range (0.21 at 6 h), while the
plain delayed air temperature carries all of it into the day records. With the setting,
each delayed candidate is :func:`damped_delayed`: the air temperature's slow part (its
centred 24-h running mean) plus its daily anomaly times :func:`conduction_damping`, the
sum delayed by the lag; the candidates are fitted and judged (the same BIC) on that series
as it is then used everywhere. The undelayed candidate stays the air temperature itself.
The daily factor is applied to the whole anomaly, whose faster parts a soil damps more
(the damping depth falls as 1/√frequency), and the slow part is delayed as the daily wave
is, which a soil delays more: an approximation for the daily course, which dominates the
anomaly of air temperature.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..daily_anomaly import daily_anomaly
from ..errors import InsufficientDataError
from ..uncertainty import bic_weight, effective_records, laplace_delta_bic
from .nighttime import partition_nighttime, without_no_e0_advice

_DEFAULT_E0_BOUNDS = (30.0, 450.0)   # partition_nighttime's default e0_bounds [K]

MIN_SHARED_RECORDS = 10
"""Fewest night records both fits must cover for a comparison (as in
:func:`fluxpart.uncertainty.driver_weight`)."""

MIN_EVIDENCE_BIC = 2.0
"""Soil temperature replaces the conventional air temperature (Reichstein et al. 2005)
only when its BIC is lower by more than this: a difference of 2 is where "positive"
evidence starts on the scale of Kass & Raftery (1995), J. Am. Stat. Assoc. 90:773–795;
below it the two temperatures explain the night data equally well."""

STRONG_EVIDENCE_BIC = 6.0
"""A candidate whose E0 lies near an end of ``e0_bounds`` is still chosen when its BIC is
lower by more than this: "strong" evidence on the scale of Kass & Raftery (1995) (m). An
E0 within one standard error of a bound is then an imprecise estimate (few night records
per window, e.g. hourly records at high latitude), not a temperature that fails to
describe the flux (measured: a generated 63° N hourly site-year with respiration planted
on soil temperature at E0 317 K gave soil E0 397 ± 61 K and ΔBIC −6.5; air temperature,
chosen by the bound rule alone, overestimated annual Reco by 14.5 %)."""


AIR_DELAYS_HOURS = (1, 2, 3, 4, 5, 6)
"""Delays of air temperature [h] tried where the input has no soil temperature: up to
the phase lag of the daily wave at about 1.5 damping depths (~15 cm), the depths whose
temperature soil respiration follows (our reading of textbook soil physics (m))."""


def delayed(values, records: int, pad: str = "first"):
    """`values` delayed by `records` steps: ``out[i] = values[i - records]``.

    The first `records` values take the first value (``pad="first"``, for a
    series evaluated at every record) or NaN (``pad="nan"``, for a measured
    series entering a fit).
    """
    values = np.asarray(values, dtype=float)
    if records <= 0:
        return values.copy()
    head = np.full(min(records, len(values)), values[0] if pad == "first" and len(values)
                   else np.nan)
    return np.concatenate([head, values[:len(values) - len(head)]])


def conduction_damping(lag_hours, period_hours: float = 24.0):
    """Amplitude factor of a temperature wave that heat conduction delays by `lag_hours`.

    Parameters
    ----------
    lag_hours : float or array_like
        Phase lag of the wave [h].
    period_hours : float, optional
        Period of the wave [h]; 24 h, the daily cycle.

    Returns
    -------
    float or numpy.ndarray
        ``exp(−2π lag / period)`` [1]: 1 without lag, exp(−π/2) ≈ 0.21 at a quarter period.

    Notes
    -----
    Under a surface temperature ``T0 + A sin(ωt)`` the heat equation in a uniform
    semi-infinite soil gives ``T0 + A exp(−z/D) sin(ωt − z/D)`` at depth z, with damping
    depth ``D = √(2κ/ω)`` (κ the thermal diffusivity): lag φ = z/D [rad] and amplitude
    factor exp(−z/D) = exp(−φ), whatever κ is.

    References
    ----------
    Campbell, G. S. & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
    2nd ed. Springer, ch. 8 (soil heat flux and temperature).
    Carslaw, H. S. & Jaeger, J. C. (1959). Conduction of Heat in Solids, 2nd ed. Oxford,
    section 2.6 (periodic surface temperature) (m).
    """
    return np.exp(-2.0 * np.pi * np.asarray(lag_hours, dtype=float) / period_hours)


def damped_delayed(values, records: int, per_day: int, pad: str = "first"):
    """`values` with their daily course damped as conduction damps it, then delayed.

    Parameters
    ----------
    values : array_like
        Temperature of evenly spaced records [°C] (NaN where missing).
    records : int
        The delay [records].
    per_day : int
        Records per day (48 for half-hourly records).
    pad : str, optional
        As for :func:`delayed`.

    Returns
    -------
    numpy.ndarray
        ``delayed(slow + f (values − slow), records)`` [°C], slow the centred 24-h
        running mean (:func:`fluxpart.daily_anomaly.daily_anomaly`) and f
        :func:`conduction_damping` of the delay. A value whose running mean is
        undefined (fewer than half a day of its window measured) is kept undamped;
        no delay returns `values` unchanged.

    References
    ----------
    Campbell, G. S. & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
    2nd ed. Springer, ch. 8.
    """
    values = np.asarray(values, dtype=float)
    if records <= 0:
        return values.copy()
    anomaly = daily_anomaly(values, per_day)
    factor = conduction_damping(records * 24.0 / per_day)
    damped = np.where(np.isfinite(anomaly), values - (1.0 - factor) * anomaly, values)
    return delayed(damped, records, pad)


def records_per_day(index) -> int:
    """Records per day of an evenly spaced `index` (48 where it has fewer than 2)."""
    if len(index) < 2:
        return 48
    return max(int(round(24.0 / ((index[1] - index[0]) / np.timedelta64(1, "h")))), 1)


@dataclass(frozen=True)
class TemperatureChoice:
    """Outcome of :func:`choose_respiration_temperature`.

    Attributes
    ----------
    driver : str
        ``"tair"`` or ``"tsoil"``.
    reason : str
        One sentence on why (for the run's notes).
    sad : dict
        Sum of absolute night residuals per candidate [µmol m-2 s-1] on the
        shared records; NaN for a candidate whose fit failed.
    records : int
        Shared night records n.
    delta_bic : float
        2n ln(SAD_tsoil / SAD_tair); negative favours soil temperature; NaN
        when not compared.
    tsoil_weight : float
        Posterior weight of soil temperature under equal priors,
        1 / (1 + exp(ΔBIC / 2)); NaN when not compared.
    fits : dict
        The nighttime fit of each candidate that was fitted
        (:class:`~fluxpart.partition.nighttime.NighttimeResult` on the measured
        temperature), for reuse by :func:`~fluxpart.partition.nighttime.apply_fit`;
        not part of :meth:`to_dict`. With a delay, ``"tair"`` is the fit on the
        delayed air temperature and ``"tair_undelayed"`` the one on air temperature.
    delay_records : int
        Records by which the chosen temperature is delayed (0: none; only air
        temperature, only without soil temperature).
    delay_hours : float
        The same delay [h].
    delay_delta_bic : float
        BIC of the best delay minus BIC without delay (one parameter more); NaN
        when no delay was tried.
    delay_weight : float
        Posterior weight of the delay against none under equal priors; NaN when
        no delay was tried.
    effective_records : float
        The independent records the ΔBIC that decided was scaled to
        (:func:`fluxpart.uncertainty.effective_records`); NaN when not compared.
    delay_damped : bool
        The delayed candidates were damped as conduction damps the daily wave
        (``air_delay_damping = "conduction"``; :func:`damped_delayed`).
    """

    driver: str
    reason: str
    sad: dict
    records: int
    delta_bic: float
    tsoil_weight: float
    fits: dict = field(default_factory=dict, repr=False, compare=False)
    delay_records: int = 0
    delay_hours: float = 0.0
    delay_delta_bic: float = np.nan
    delay_weight: float = np.nan
    effective_records: float = np.nan
    delay_damped: bool = False

    @property
    def delay_daily_amplitude(self) -> float:
        """Share of the air temperature's daily range the chosen temperature keeps [1]:
        :func:`conduction_damping` of the delay where damped, else 1."""
        return float(conduction_damping(self.delay_hours)) if self.delay_damped else 1.0

    def to_dict(self) -> dict:
        """Plain values for the provenance record (the damping's keys only where damped,
        so a run without it records what the releases before it did)."""
        damping = ({"delay_damping": "conduction",
                    "delay_daily_amplitude": self.delay_daily_amplitude}
                   if self.delay_damped else {})
        return {"setting": "auto", "chosen": self.driver, "reason": self.reason,
                "criterion": ("BIC of the nighttime Lloyd–Taylor fit to measured night NEE "
                              "under Laplace errors"),
                "sad": {name: _plain(value) for name, value in self.sad.items()},
                "records": int(self.records), "delta_bic_tsoil_minus_tair":
                    _plain(self.delta_bic), "tsoil_weight": _plain(self.tsoil_weight),
                "delay_hours": float(self.delay_hours),
                "delay_delta_bic": _plain(self.delay_delta_bic),
                "delay_weight": _plain(self.delay_weight),
                "records_effective": _plain(self.effective_records), **damping}


def _plain(value: float):
    return None if not np.isfinite(value) else float(value)


def choose_respiration_temperature(index, nee_measured, tair, tsoil, is_night, *,
                                   damped_delay: bool = False,
                                   **nighttime_settings) -> TemperatureChoice:
    """Pick air or soil temperature as the respiration driver by the night fit.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts, local standard time.
    nee_measured : array_like
        Measured NEE after screening and the u* filter [µmol m-2 s-1]; NaN
        where not measured or rejected.
    tair : array_like
        Measured air temperature [°C].
    tsoil : array_like or None
        Measured soil temperature [°C]; None when the input has none (a series
        without a single finite value is taken as none).
    is_night : array_like of bool
        Night records.
    damped_delay : bool, optional
        Without soil temperature, damp each delayed air temperature's daily course as
        conduction damps it (:func:`damped_delayed`; ``air_delay_damping =
        "conduction"``); False: the air temperature delayed as measured.
    **nighttime_settings
        Keyword settings of :func:`fluxpart.partition.nighttime.partition_nighttime`
        (window lengths, minimum counts, E0 bounds and fall-back).

    Returns
    -------
    TemperatureChoice
        The driver, the criterion values and a one-sentence reason.

    Raises
    ------
    InsufficientDataError
        When even the air-temperature fit fails (the run cannot partition).

    Notes
    -----
    Each candidate's Reco is evaluated on its *measured* temperature, so only
    records with both temperatures measured are compared. Night residuals are
    autocorrelated: since 0.23.0 ΔBIC, and so both the choice (soil temperature
    needs ΔBIC < −:data:`MIN_EVIDENCE_BIC`) and the weight, counts the effective
    number of independent records of the favoured fit's residuals
    (:func:`fluxpart.uncertainty.effective_records`), not every record.

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
    respiration. Functional Ecology 8:315–323.
    Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.
    Schwarz, G. (1978). Estimating the dimension of a model. Annals of
    Statistics 6:461–464.
    Kass, R. E. & Raftery, A. E. (1995). Bayes factors. Journal of the American
    Statistical Association 90:773–795 (ΔBIC > 2: positive evidence) (m).
    """
    nee = np.asarray(nee_measured, dtype=float)
    night = np.asarray(is_night, dtype=bool)
    if tsoil is None or not np.isfinite(np.asarray(tsoil, dtype=float)).any():
        # a soil column without a single value (a probe lost all along) is no soil record:
        # air temperature, tested for a delay as where the column is absent
        return _air_delay(index, nee, tair, night, nighttime_settings, damped_delay)
    fits = {"tair": _night_fit(index, nee, tair, night, "tair", nighttime_settings)}
    try:
        fits["tsoil"] = _night_fit(index, nee, tsoil, night, "tsoil", nighttime_settings)
    except InsufficientDataError as error:
        # the run goes on with air temperature: the error's advice (set e0_fallback) is
        # for a run that cannot fit at all, and would mislead here (review36)
        failure = without_no_e0_advice(str(error)).removesuffix(".")
        return TemperatureChoice("tair", f"the soil-temperature fit failed ({failure})",
                                 {"tair": np.nan, "tsoil": np.nan}, 0, np.nan, np.nan, fits)
    reco = {name: fit.reco for name, fit in fits.items()}
    bounds = nighttime_settings.get("e0_bounds", _DEFAULT_E0_BOUNDS)
    pressed = {name: _e0_at_bound(fit.e0_annual, bounds) for name, fit in fits.items()}
    shared = night & np.isfinite(nee) & np.isfinite(reco["tair"]) & np.isfinite(reco["tsoil"])
    count = int(shared.sum())
    sad = {name: float(np.sum(np.abs(nee[shared] - values[shared])))
           for name, values in reco.items()}
    if count < MIN_SHARED_RECORDS or min(sad.values()) <= 0:
        return TemperatureChoice("tair", f"only {count} night records have both temperatures",
                                 sad, count, np.nan, np.nan, fits)
    # autocorrelated night residuals: the evidence of the effective records (Notes)
    favoured = min(("tair", "tsoil"), key=lambda name: sad[name])
    effective = effective_records(nee - reco[favoured], shared)
    delta_bic = laplace_delta_bic(sad["tsoil"], sad["tair"], effective)
    weight = bic_weight(delta_bic)     # = driver_weight of the same records, not recomputed
    strongly_favoured = ("tsoil" if delta_bic < -STRONG_EVIDENCE_BIC
                         else "tair" if delta_bic > STRONG_EVIDENCE_BIC else None)
    if bool(pressed["tair"]) != bool(pressed["tsoil"]) and not pressed.get(strongly_favoured):
        driver, set_aside = ("tair", "tsoil") if pressed["tsoil"] else ("tsoil", "tair")
        words = {"tair": "air", "tsoil": "soil"}
        reason = (f"the {words[set_aside]}-temperature fit puts E0 at {pressed[set_aside]} K, "
                  f"within one standard error of an end of the accepted range {list(bounds)} K: "
                  f"{words[driver]} temperature used (ΔBIC soil - air = {delta_bic:.1f} over "
                  f"{_records_text(count, effective)})")
        return TemperatureChoice(driver, reason, sad, count, delta_bic, weight, fits,
                                 effective_records=effective)
    driver = "tsoil" if delta_bic < -MIN_EVIDENCE_BIC else "tair"
    if driver == "tair" and delta_bic < 0:
        reason = (f"soil and air temperature explain the measured night NEE equally well "
                  f"(ΔBIC soil - air = {delta_bic:.1f} over {_records_text(count, effective)}, within "
                  f"{MIN_EVIDENCE_BIC:g}): air temperature kept")
    else:
        name = {"tair": "air", "tsoil": "soil"}[driver]
        reason = (f"{name} temperature explains the measured night NEE better "
                  f"(ΔBIC soil - air = {delta_bic:.1f} over {_records_text(count, effective)})")
        if pressed[driver]:
            reason += (f", strongly (beyond {STRONG_EVIDENCE_BIC:g}), although its E0 of "
                       f"{pressed[driver]} K is within one standard error of an end of the "
                       f"accepted range {list(bounds)} K")
    return TemperatureChoice(driver, reason, sad, count, delta_bic, weight, fits,
                             effective_records=effective)


def _air_delay(index, nee, tair, night, settings, damped=False) -> TemperatureChoice:
    """Air temperature, delayed (and damped, with `damped`) where the night data favour it
    (module docstring)."""
    tair = np.asarray(tair, dtype=float)
    try:
        fits = {"tair_undelayed": _night_fit(index, nee, tair, night, "tair", settings)}
    except InsufficientDataError:
        # the run's own nighttime fit reports why; nothing to compare here
        return _plain_air({"tair": np.nan, "tsoil": np.nan}, 0, {})
    step_hours = (index[1] - index[0]) / np.timedelta64(1, "h") if len(index) > 1 else 0.5
    delays = sorted({int(round(hours / step_hours)) for hours in AIR_DELAYS_HOURS} - {0})
    per_day = records_per_day(index)
    reco = {0: fits["tair_undelayed"].reco}
    for records in delays:
        candidate = (damped_delayed(tair, records, per_day, pad="nan") if damped
                     else delayed(tair, records, pad="nan"))
        try:
            fit = _night_fit(index, nee, candidate, night, "tair", settings)
        except InsufficientDataError:
            continue
        fits[records] = fit
        reco[records] = fit.reco
    shared = night & np.isfinite(nee)
    for values in reco.values():
        shared &= np.isfinite(values)
    count = int(shared.sum())
    sad = {records: float(np.sum(np.abs(nee[shared] - values[shared])))
           for records, values in reco.items()}
    undelayed = fits.pop("tair_undelayed")
    none = {"tair": sad.get(0, np.nan), "tsoil": np.nan}
    if count < MIN_SHARED_RECORDS or len(sad) < 2 or min(sad.values()) <= 0:
        return _plain_air(none, count, {"tair": undelayed})
    best = min((records for records in sad if records), key=lambda r: (sad[r], r))
    effective = effective_records(nee - reco[best], shared)
    delta_bic = laplace_delta_bic(sad[best], sad[0], effective, extra_parameters=1)
    weight = bic_weight(delta_bic)
    hours = best * step_hours
    damping = (f", its daily course damped to {conduction_damping(hours):.2f} as heat "
               "conduction damps it," if damped else "")
    if delta_bic < -STRONG_EVIDENCE_BIC:
        reason = (f"the input has no soil temperature; air temperature delayed by {hours:g} h"
                  f"{damping or ''} explains the measured night NEE better (ΔBIC delayed - "
                  f"undelayed = {delta_bic:.1f} over {_records_text(count, effective)}, one "
                  "parameter more), as soil respiration lags the air")
        return TemperatureChoice("tair", reason, {**none, "tair_delayed": sad[best]}, count,
                                 np.nan, np.nan, {"tair": fits[best],
                                                  "tair_undelayed": undelayed},
                                 delay_records=best, delay_hours=hours,
                                 delay_delta_bic=delta_bic, delay_weight=weight,
                                 effective_records=effective, delay_damped=damped)
    reason = (f"the input has no soil temperature; air temperature kept undelayed (best "
              f"delay {hours:g} h{damping.rstrip(',')}: ΔBIC {delta_bic:.1f} over "
              f"{_records_text(count, effective)}, not beyond {-STRONG_EVIDENCE_BIC:g})")
    return TemperatureChoice("tair", reason, {**none, "tair_delayed": sad[best]}, count,
                             np.nan, np.nan, {"tair": undelayed}, delay_hours=0.0,
                             delay_delta_bic=delta_bic, delay_weight=weight,
                             effective_records=effective, delay_damped=damped)


def _records_text(count: int, effective: float) -> str:
    """The records a ΔBIC was taken over, and their worth in independent records."""
    if not np.isfinite(effective):
        return f"{count} records"
    return f"{count} records, worth {effective:.0f} independent ones"


def _plain_air(sad, count, fits) -> TemperatureChoice:
    """Undelayed air temperature, no delay compared (too few records or fits)."""
    return TemperatureChoice("tair", "the input has no soil temperature", sad, count, np.nan,
                             np.nan, fits)


def _night_fit(index, nee, temperature, night, name, settings):
    """Nighttime-method fit on the measured temperature."""
    temperature = np.asarray(temperature, dtype=float)
    return partition_nighttime(index, nee, nee, temperature, temperature, night,
                               respiration_driver=name, **settings)


def _e0_at_bound(e0_annual, bounds):
    """``"E0 ± se"`` text of the first year whose E0 is within one s.e. of a bound, else ""."""
    for _, row in e0_annual.iterrows():
        e0, se = float(row["e0"]), float(row.get("e0_se", np.nan))
        se = se if np.isfinite(se) else 0.0
        if np.isfinite(e0) and (e0 - se <= bounds[0] or e0 + se >= bounds[1]):
            return f"{e0:.0f} ± {se:.0f}"
    return ""


#: Critical value of the daytime evidence statistic [1]: the two-sided 5 % point of the
#: standard normal distribution, which the day-blocked statistic of
#: :func:`daytime_evidence` follows under equal fits (hundreds of days).
DAYTIME_EVIDENCE_Z = 1.96
#: Fewest days with measured daytime NEE for :func:`daytime_evidence` to be computed.
DAYTIME_EVIDENCE_MIN_DAYS = 10


def daytime_evidence(nee_measured, is_day, modelled_central, modelled_other, day_keys):
    """Which temperature the daytime method's fit to measured daytime NEE favours.

    The choice of the respiration temperature is made on night records, where NEE is
    Reco; the daytime records, where air and soil temperature differ most and where the
    choice moves Reco most, are a second, independent line of evidence: the daytime
    method (light response plus Lloyd–Taylor respiration) is fitted with each
    temperature, and its modelled NEE compared with the measured daytime NEE.

    Parameters
    ----------
    nee_measured : array_like
        Measured NEE after screening and the u* filter [µmol m-2 s-1], NaN elsewhere.
    is_day : array_like of bool
        True for the daytime records to compare.
    modelled_central, modelled_other : array_like
        NEE modelled by the daytime method with the temperature in use and with the
        other one (``reco - gpp``) [µmol m-2 s-1].
    day_keys : array_like
        Calendar day of each record (the blocks of the test).

    Returns
    -------
    float
        The statistic t = mean(D) / (sd(D) / √m) over the m days with compared records,
        D a day's sum of |residual of the other| − |residual of the central| [µmol m-2
        s-1]: positive where the central temperature fits the day better, below
        −:data:`DAYTIME_EVIDENCE_Z` where the other fits it better at the 5 % level. NaN
        with fewer than :data:`DAYTIME_EVIDENCE_MIN_DAYS` days or no spread.

    Notes
    -----
    This is the test of equal predictive accuracy of Diebold & Mariano (1995) with
    absolute loss, its variance taken over whole days: residuals of neighbouring
    records share the day's weather and canopy state, so a record-by-record count (as in
    a BIC over records) would overstate the evidence many times.

    References
    ----------
    Diebold, F. X. & Mariano, R. S. (1995). Comparing predictive accuracy. Journal of
    Business & Economic Statistics 13, 253–263.
    """
    nee = np.asarray(nee_measured, dtype=float)
    central = np.asarray(modelled_central, dtype=float)
    other = np.asarray(modelled_other, dtype=float)
    use = (np.asarray(is_day, dtype=bool) & np.isfinite(nee) & np.isfinite(central)
           & np.isfinite(other))
    keys = np.asarray(day_keys)[use]
    loss = np.abs(nee[use] - other[use]) - np.abs(nee[use] - central[use])
    days, block = np.unique(keys, return_inverse=True)
    if days.size < DAYTIME_EVIDENCE_MIN_DAYS:
        return float("nan")
    daily = np.bincount(block, weights=loss, minlength=days.size)
    spread = float(np.std(daily, ddof=1))
    if not spread > 0:
        return float("nan")
    return float(np.mean(daily) / (spread / np.sqrt(days.size)))


def conflict_note(central: str, other: str, statistic: float) -> str:
    """The warning of a temperature choice the daytime records contradict.

    Parameters
    ----------
    central, other : str
        The temperature in use and the other candidate.
    statistic : float
        :func:`daytime_evidence` [1]: negative where the daytime records favour
        `other` (the night records then favour `central`), positive where they favour
        `central` (the night records then lean to `other`, which a temperature fixed by
        ``respiration_driver`` or kept by the choice's evidence rules can leave in use).

    Returns
    -------
    str
        Names which temperature each line of evidence favours, and the statistic, and
        that the daytime line is no reason to change ``respiration_driver``.

    Notes
    -----
    On known-truth site-years (``tests/benchmarks/bench_driver_conflict.py``,
    leftovers53: 68 generated, 13 trial site files) the note fired in 15 of 81 runs; the
    temperature the daytime records favoured was the planted driver in 4 of the 14 with
    one planted driver (the one in use at a dry savanna; two savannas and a tropical
    forest whose soil drives respiration and whose night records chose the air), and a
    run with it set by hand had the smaller error of annual Reco in 3 of 15 (its error 3
    to 17 times as large in the forests, the fen and the crops): the uptake's heat limit (trials 24 and 25), which the light
    response lacks, read as a driver. The note therefore explains the widened interval
    and names the daytime fit's premise instead of reading as advice to set the other
    temperature.
    """
    night, day = (central, other) if statistic < 0 else (other, central)
    return (f"respiration temperature: the night records favour {night}, but the daytime "
            f"method fits the measured daytime NEE better with {day} (day-by-day statistic "
            f"{statistic:+.2f}, beyond ±{DAYTIME_EVIDENCE_Z}; {central} in use): neither is "
            "shown to drive respiration through the whole day, so the temperature-driver part "
            "of the Reco and GPP uncertainty weighs both equally "
            "(reco_uncertainty_temperature_driver). The daytime fit is weak evidence on the "
            "driver: its light response has no term for a heat or cold limit of the uptake, "
            "which a temperature of smaller daily swing can stand in for; on known-truth "
            "site-years it named a driver that was not planted in most such conflicts, so "
            "it alone is no reason to set respiration_driver")


def forced_driver_note(setting: str, choice: TemperatureChoice | None) -> str | None:
    """A warning where a set respiration temperature is the one the night data reject.

    Parameters
    ----------
    setting : str
        ``[processing] respiration_driver`` as set: ``"tair"`` or ``"tsoil"`` (``"auto"``
        is never named).
    choice : TemperatureChoice or None
        :func:`choose_respiration_temperature` on the same u*-filtered night NEE (what
        ``"auto"`` would have chosen); None where it could not be made.

    Returns
    -------
    str or None
        The warning text; None where the choice agrees with the setting, or its evidence
        for the other temperature is not strong (ΔBIC within :data:`STRONG_EVIDENCE_BIC`),
        or it did not compare the two.

    Notes
    -----
    A set temperature is used as set; the run changes no number. But Reco and GPP rest
    on it, and a soil probe lagging the respiring layer (or an air temperature over a
    respiration the soil drives) moves both: on the example site ``respiration_driver =
    "tsoil"`` put nighttime Reco and GPP 244 g C m-2 and daytime GPP 199 g C m-2 below
    the air temperature's, without a word (round mistakes23), while the night NEE
    favoured air temperature by ΔBIC far beyond 6. Named only beyond
    :data:`STRONG_EVIDENCE_BIC`, "strong" evidence on the scale of Kass & Raftery
    (1995), so two temperatures that explain the night data about equally leave the
    user's choice unremarked.

    References
    ----------
    Kass, R. E. & Raftery, A. E. (1995). Bayes factors. Journal of the American
    Statistical Association 90:773–795 (m).
    Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics
    6:461–464.
    """
    if setting not in ("tair", "tsoil") or choice is None:
        return None
    delta = choice.delta_bic
    if not np.isfinite(delta) or choice.driver == setting:
        return None
    favoured = "tsoil" if delta < -STRONG_EVIDENCE_BIC else "tair" if delta > STRONG_EVIDENCE_BIC else None
    if favoured is None or favoured == setting:
        return None
    words = {"tair": "air", "tsoil": "soil"}
    return (f"respiration temperature: [processing] respiration_driver = {setting!r} is used as "
            f"set, but the measured night NEE is explained far better by {words[favoured]} "
            f"temperature (ΔBIC soil - air = {delta:.1f} over night "
            f"{_records_text(choice.records, choice.effective_records)}, "
            f"strong evidence beyond {STRONG_EVIDENCE_BIC:g}): Reco and GPP rest on a "
            "temperature the night data reject; respiration_driver = \"auto\" would use "
            f"{words[favoured]} temperature")
