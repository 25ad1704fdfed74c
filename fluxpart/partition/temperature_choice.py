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
number of parameters, so the Bayesian information criterion reduces to
ΔBIC = n ln(SSR_tsoil / SSR_tair) over the n night records both cover
(Schwarz 1978). Soil temperature is chosen when it leaves the smaller sum of
squared residuals (ΔBIC < 0); a tie, a failed soil-temperature fit or too few
shared records keep air temperature, the temperature every tower measures.

Before the comparison, a candidate whose fitted E0 lies within one standard
error of an end of the accepted range (``e0_bounds``) is set aside when the other
candidate's is not: an E0 pressed against the range says the temperature does
not describe the night flux (a damped soil temperature drives E0 up to the upper
end, a temperature unrelated to the flux pulls it down to the lower end), unless
its sum of squares is lower by strong evidence (ΔBIC beyond
:data:`STRONG_EVIDENCE_BIC`), in which case the nearness to the bound is read as
an imprecise E0 and the comparison decides.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import InsufficientDataError
from ..uncertainty import driver_weight
from .nighttime import partition_nighttime

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


@dataclass(frozen=True)
class TemperatureChoice:
    """Outcome of :func:`choose_respiration_temperature`.

    Attributes
    ----------
    driver : str
        ``"tair"`` or ``"tsoil"``.
    reason : str
        One sentence on why (for the run's notes).
    ssr : dict
        Sum of squared night residuals per candidate [(µmol m-2 s-1)²] on the
        shared records; NaN for a candidate whose fit failed.
    records : int
        Shared night records n.
    delta_bic : float
        n ln(SSR_tsoil / SSR_tair); negative favours soil temperature; NaN
        when not compared.
    tsoil_weight : float
        Posterior weight of soil temperature under equal priors,
        1 / (1 + exp(ΔBIC / 2)); NaN when not compared.
    fits : dict
        The nighttime fit of each candidate that was fitted
        (:class:`~fluxpart.partition.nighttime.NighttimeResult` on the measured
        temperature), for reuse by :func:`~fluxpart.partition.nighttime.apply_fit`;
        not part of :meth:`to_dict`.
    """

    driver: str
    reason: str
    ssr: dict
    records: int
    delta_bic: float
    tsoil_weight: float
    fits: dict = field(default_factory=dict, repr=False, compare=False)

    def to_dict(self) -> dict:
        """Plain values for the provenance record."""
        return {"setting": "auto", "chosen": self.driver, "reason": self.reason,
                "criterion": "BIC of the nighttime Lloyd–Taylor fit to measured night NEE",
                "ssr": {name: _plain(value) for name, value in self.ssr.items()},
                "records": int(self.records), "delta_bic_tsoil_minus_tair":
                    _plain(self.delta_bic), "tsoil_weight": _plain(self.tsoil_weight)}


def _plain(value: float):
    return None if not np.isfinite(value) else float(value)


def choose_respiration_temperature(index, nee_measured, tair, tsoil, is_night,
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
        Measured soil temperature [°C]; None when the input has none.
    is_night : array_like of bool
        Night records.
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
    autocorrelated, so the weight overstates the evidence (see
    :func:`fluxpart.uncertainty.driver_weight`); the choice itself only depends
    on which sum of squares is smaller.

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
    if tsoil is None:
        return TemperatureChoice("tair", "the input has no soil temperature",
                                 {"tair": np.nan, "tsoil": np.nan}, 0, np.nan, np.nan)
    fits = {"tair": _night_fit(index, nee, tair, night, "tair", nighttime_settings)}
    try:
        fits["tsoil"] = _night_fit(index, nee, tsoil, night, "tsoil", nighttime_settings)
    except InsufficientDataError as error:
        return TemperatureChoice("tair", f"the soil-temperature fit failed ({error})",
                                 {"tair": np.nan, "tsoil": np.nan}, 0, np.nan, np.nan, fits)
    reco = {name: fit.reco for name, fit in fits.items()}
    bounds = nighttime_settings.get("e0_bounds", _DEFAULT_E0_BOUNDS)
    pressed = {name: _e0_at_bound(fit.e0_annual, bounds) for name, fit in fits.items()}
    shared = night & np.isfinite(nee) & np.isfinite(reco["tair"]) & np.isfinite(reco["tsoil"])
    count = int(shared.sum())
    ssr = {name: float(np.sum(np.square(nee[shared] - values[shared])))
           for name, values in reco.items()}
    if count < MIN_SHARED_RECORDS or min(ssr.values()) <= 0:
        return TemperatureChoice("tair", f"only {count} night records have both temperatures",
                                 ssr, count, np.nan, np.nan, fits)
    delta_bic = count * float(np.log(ssr["tsoil"] / ssr["tair"]))
    weight = driver_weight(nee, shared, reco["tair"], reco["tsoil"])
    strongly_favoured = ("tsoil" if delta_bic < -STRONG_EVIDENCE_BIC
                         else "tair" if delta_bic > STRONG_EVIDENCE_BIC else None)
    if bool(pressed["tair"]) != bool(pressed["tsoil"]) and not pressed.get(strongly_favoured):
        driver, set_aside = ("tair", "tsoil") if pressed["tsoil"] else ("tsoil", "tair")
        words = {"tair": "air", "tsoil": "soil"}
        reason = (f"the {words[set_aside]}-temperature fit puts E0 at {pressed[set_aside]} K, "
                  f"within one standard error of the accepted range {list(bounds)} K: "
                  f"{words[driver]} temperature used (ΔBIC soil - air = {delta_bic:.1f} over "
                  f"{count} records)")
        return TemperatureChoice(driver, reason, ssr, count, delta_bic, weight, fits)
    driver = "tsoil" if delta_bic < -MIN_EVIDENCE_BIC else "tair"
    if driver == "tair" and delta_bic < 0:
        reason = (f"soil and air temperature explain the measured night NEE equally well "
                  f"(ΔBIC soil - air = {delta_bic:.1f} over {count} records, within "
                  f"{MIN_EVIDENCE_BIC:g}): air temperature kept")
    else:
        name = {"tair": "air", "tsoil": "soil"}[driver]
        reason = (f"{name} temperature explains the measured night NEE better "
                  f"(ΔBIC soil - air = {delta_bic:.1f} over {count} records)")
        if pressed[driver]:
            reason += (f", strongly (beyond {STRONG_EVIDENCE_BIC:g}), although its E0 of "
                       f"{pressed[driver]} K is within one standard error of the accepted "
                       f"range {list(bounds)} K")
    return TemperatureChoice(driver, reason, ssr, count, delta_bic, weight, fits)


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
