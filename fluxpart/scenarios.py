"""Generated known-truth site-years of varied, invented ecosystems (calibration data).

Every site here is **fictional**: weather, fluxes and gaps are simulated, so the true
GPP, Reco and NEE are known and the pipeline's estimates and stated intervals can be
scored against them (``tests/benchmarks/bench_calibration.py``). No number from
this module describes a real ecosystem, and no carbon claim may rest on it.

Seven archetypes (:data:`ARCHETYPES`) span the conditions a product meets: a
temperate deciduous forest, a boreal-maritime evergreen forest, a dry savanna
recorded hourly, a C4 crop, a high-latitude fen, a southern-hemisphere woodland and
a heavily gapped temperate forest in a leap year. :func:`draw` picks one per seed
(cycling through them) and randomises every physiological, climatic and
measurement parameter within a stated range, so that no method constant can be
fitted to one scenario. :func:`generate` simulates it.

The physics is generic and published in form, with our own parameter ranges:

- light response: non-rectangular hyperbola of global radiation (curvature θ in
  0–0.9; θ = 0 is the rectangular hyperbola of Lasslop et al. 2010), its
  light-saturated rate reduced as exp(−k (VPD − 10 hPa)) above 10 hPa (Lasslop et
  al. 2010), scaled by a seasonal canopy capacity (leaf area) and a temperature
  limitation. GPP is positive wherever true Rg is, so twilight records with Rg
  below the night threshold still photosynthesise;
- respiration: Lloyd & Taylor (1994) of air **or** soil temperature, with E0 in
  120–330 K and a reference rate that follows the canopy capacity and, in dry
  climates, soil moisture;
- measurement: Laplace random error whose standard deviation grows linearly with
  |NEE| (form of Richardson et al. 2006), night-time flux loss below a u*
  threshold (fraction measured (u*/u*_t)^p; or, with ``night_loss="gradual"``, a
  loss that fades smoothly and goes on above the threshold, see
  :func:`gradual_share`), night-heavy rejection, instrument
  dropouts and outages of days to three weeks, driver gaps, spikes and
  site-flagged records.

References
----------
Lasslop, G. et al. (2010). Global Change Biology 16, 187–208.
doi:10.1111/j.1365-2486.2009.02041.x

Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8, 315–323. doi:10.2307/2389824

Richardson, A. D. et al. (2006). Agricultural and Forest Meteorology 136, 1–18.
doi:10.1016/j.agrformet.2006.01.007

Thornley, J. H. M. & Johnson, I. R. (1990). Plant and Crop Modelling. Clarendon,
Oxford (the non-rectangular hyperbola).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .budget import flux_to_carbon
from .demo import _ar1, _logistic, _low_pass, _mark
from .errors import ConfigError
from .responses import lloyd_taylor
from .site import Site
from .solar import potential_radiation
from .variables import vpd_from_rh

__all__ = ["ARCHETYPES", "NIGHT_LOSSES", "Scenario", "SiteYear", "draw", "generate",
           "gradual_share", "site_years"]

_BASE_MINUTES = 30
_VPD_REFERENCE = 10.0  # hPa, Lasslop et al. (2010)
_NIGHT_RG = 10.0       # W m-2: below this the tower treats a record as night

#: Shapes of the night flux loss at low u*: ``"step"`` (default; all the loss below the
#: planted threshold) and ``"gradual"`` (:func:`gradual_share`; the threshold is the u*
#: where 99 % of the flux is measured, and some loss goes on up to it).
NIGHT_LOSSES = ("step", "gradual")
#: Largest share of the night flux lost in the calmest records of the gradual shape.
_GRADUAL_DEPTH = 0.9

#: Archetypes: fixed facts (place, canopy type, record interval) and the ranges
#: from which :func:`draw` samples each parameter (uniformly). Climate ranges are
#: of the magnitude of the climates named (common practice); physiology ranges
#: are of the magnitude reported for such canopies (common practice, (m)).
ARCHETYPES: dict[str, dict] = {
    "temperate_deciduous": {
        "latitude": (44.0, 52.0), "longitude": (5.0, 20.0), "utc_offset": 1.0,
        "phenology": "deciduous", "interval": (30, 60), "t_mean": (7.0, 11.0),
        "t_amplitude": (7.0, 10.0), "rh_mean": (70.0, 82.0), "alpha": (0.035, 0.06),
        "beta0": (25.0, 40.0), "rref": (1.6, 3.0), "ustar_threshold": (0.2, 0.35),
        "driver": ("tair", "tsoil"), "long_gaps": (0, 2), "long_gap_days": (2, 10)},
    "evergreen_needleleaf": {
        "latitude": (55.0, 62.0), "longitude": (10.0, 28.0), "utc_offset": 2.0,
        "phenology": "evergreen", "interval": (30,), "t_mean": (2.0, 7.0),
        "t_amplitude": (8.0, 12.0), "rh_mean": (72.0, 85.0), "alpha": (0.025, 0.045),
        "beta0": (15.0, 28.0), "rref": (1.0, 2.0), "ustar_threshold": (0.2, 0.4),
        "driver": ("tair", "tsoil"), "long_gaps": (0, 2), "long_gap_days": (2, 12)},
    "dry_savanna": {
        "latitude": (-16.0, -8.0), "longitude": (125.0, 140.0), "utc_offset": 9.5,
        "phenology": "wet_season", "interval": (60,), "t_mean": (24.0, 28.0),
        "t_amplitude": (2.0, 4.0), "rh_mean": (45.0, 58.0), "alpha": (0.025, 0.045),
        "beta0": (15.0, 30.0), "rref": (0.8, 1.5), "ustar_threshold": (0.12, 0.25),
        "driver": ("tair", "tsoil"), "long_gaps": (0, 2), "long_gap_days": (2, 10)},
    "c4_crop": {
        "latitude": (38.0, 44.0), "longitude": (-98.0, -88.0), "utc_offset": -6.0,
        "phenology": "c4_crop", "interval": (30, 60), "t_mean": (9.0, 13.0),
        "t_amplitude": (11.0, 14.0), "rh_mean": (62.0, 75.0), "alpha": (0.05, 0.085),
        "beta0": (60.0, 120.0), "rref": (1.0, 2.0), "ustar_threshold": (0.1, 0.2),
        "driver": ("tair", "tsoil"), "long_gaps": (0, 2), "long_gap_days": (2, 8)},
    "high_latitude_fen": {
        "latitude": (63.0, 69.0), "longitude": (20.0, 30.0), "utc_offset": 2.0,
        "phenology": "arctic", "interval": (30,), "t_mean": (-3.0, 1.0),
        "t_amplitude": (10.0, 13.0), "rh_mean": (75.0, 88.0), "alpha": (0.025, 0.045),
        "beta0": (10.0, 20.0), "rref": (0.9, 1.6), "ustar_threshold": (0.1, 0.2),
        "driver": ("tair", "tsoil"), "long_gaps": (0, 1), "long_gap_days": (2, 8)},
    "southern_woodland": {
        "latitude": (-40.0, -32.0), "longitude": (140.0, 150.0), "utc_offset": 10.0,
        "phenology": "evergreen", "interval": (30,), "t_mean": (12.0, 16.0),
        "t_amplitude": (5.0, 7.0), "rh_mean": (60.0, 72.0), "alpha": (0.03, 0.05),
        "beta0": (18.0, 32.0), "rref": (1.4, 2.6), "ustar_threshold": (0.2, 0.35),
        "driver": ("tair", "tsoil"), "long_gaps": (0, 2), "long_gap_days": (2, 10)},
    "gappy_leap_year_forest": {
        "latitude": (45.0, 50.0), "longitude": (-75.0, -65.0), "utc_offset": -5.0,
        "phenology": "deciduous", "interval": (30,), "t_mean": (5.0, 9.0),
        "t_amplitude": (10.0, 13.0), "rh_mean": (68.0, 80.0), "alpha": (0.035, 0.06),
        "beta0": (25.0, 40.0), "rref": (1.6, 3.0), "ustar_threshold": (0.2, 0.35),
        "driver": ("tair", "tsoil"), "long_gaps": (2, 3), "long_gap_days": (14, 21),
        "year": 2020},
}


@dataclass(frozen=True)
class Scenario:
    """One drawn known-truth site-year: its archetype and every sampled parameter."""

    seed: int
    archetype: str
    year: int
    interval_minutes: int
    site: Site
    parameters: dict = field(default_factory=dict)


@dataclass(frozen=True)
class SiteYear:
    """A generated tower record with its truth.

    Attributes
    ----------
    scenario : Scenario
        What was drawn.
    frame : pandas.DataFrame
        Canonical tower record (``nee``, ``rg``, ``tair``, ``vpd``, ``ustar``,
        ``tsoil``, ``rh``, ``nee_flag``), start-stamped local standard time.
    site : Site
        The fictional site.
    truth : pandas.DataFrame
        Same index: true ``gpp``, ``reco``, ``nee`` [µmol m-2 s-1].
    annual_truth : pandas.Series
        True annual sums ``gpp``, ``reco``, ``nee`` [g C m-2].
    measured_share : numpy.ndarray or None
        Per record, the share of the true NEE the tower measured before noise (1 by
        day and at high u*) [1]; the u* loss planted.
    """

    scenario: Scenario
    frame: pd.DataFrame
    site: Site
    truth: pd.DataFrame
    annual_truth: pd.Series
    measured_share: np.ndarray | None = None


def _uniform(rng, bounds):
    low, high = bounds
    return float(rng.uniform(low, high))


def draw(seed: int) -> Scenario:
    """Draw the scenario of `seed`: archetype ``seed % 7``, parameters at random.

    Parameters
    ----------
    seed : int
        Non-negative; the same seed gives the same scenario.

    Returns
    -------
    Scenario

    Raises
    ------
    ConfigError
        If `seed` is not a whole number >= 0.
    """
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise ConfigError(f"seed = {seed!r}: expected a whole number >= 0")
    names = list(ARCHETYPES)
    name = names[int(seed) % len(names)]
    spec = ARCHETYPES[name]
    rng = np.random.default_rng([int(seed), 7919])
    year = int(spec.get("year", rng.integers(2013, 2025)))
    interval = int(rng.choice(spec["interval"]))
    latitude = round(_uniform(rng, spec["latitude"]), 2)
    longitude = round(_uniform(rng, spec["longitude"]), 2)
    site = Site(name=f"Generated {name.replace('_', ' ')} #{seed} (fictional)",
                latitude=latitude, longitude=longitude, utc_offset=spec["utc_offset"])
    low_gaps, high_gaps = spec["long_gaps"]
    parameters = {
        "phenology": spec["phenology"],
        "t_mean": _uniform(rng, spec["t_mean"]),
        "t_amplitude": _uniform(rng, spec["t_amplitude"]),
        "rh_mean": _uniform(rng, spec["rh_mean"]),
        "alpha": _uniform(rng, spec["alpha"]),
        "beta0": _uniform(rng, spec["beta0"]),
        "curvature": _uniform(rng, (0.0, 0.9)),
        "k": _uniform(rng, (0.01, 0.05)),
        "rref": _uniform(rng, spec["rref"]),
        "rref_phenology": _uniform(rng, (0.2, 0.8)),
        "e0": _uniform(rng, (120.0, 330.0)),
        "driver": str(rng.choice(spec["driver"])),
        "t_half": _uniform(rng, (2.0, 8.0)) if spec["phenology"] != "c4_crop" else 12.0,
        "season_shift_days": _uniform(rng, (-12.0, 12.0)),
        "ustar_threshold": _uniform(rng, spec["ustar_threshold"]),
        "ustar_exponent": _uniform(rng, (1.0, 2.0)),
        # the threshold sits at 55–100 % of the night median u*: 20–50 % of nights lose flux
        "ustar_night_median": 0.0,
        "error_intercept": _uniform(rng, (0.3, 0.9)),
        "error_slope": _uniform(rng, (0.08, 0.2)),
        "night_rejection": _uniform(rng, (0.4, 0.7)),
        "day_rejection": _uniform(rng, (0.08, 0.2)),
        "long_gaps": int(rng.integers(low_gaps, high_gaps + 1)),
        "long_gap_days": spec["long_gap_days"],
    }
    parameters["ustar_night_median"] = parameters["ustar_threshold"] / _uniform(rng, (0.55, 1.0))
    return Scenario(seed=int(seed), archetype=name, year=year, interval_minutes=interval,
                    site=site, parameters=parameters)


def _season(index, site, shift_days):
    """Seasonal phase [-1, 1]: -1 at the coldest time of the site's year (hemisphere-aware)."""
    day = index.day_of_year.to_numpy() - 1 + (index.hour.to_numpy() / 24.0)
    coldest = 20.0 + shift_days + (182.5 if site.latitude < 0 else 0.0)
    return -np.cos(2.0 * np.pi * (day - coldest) / 365.25)


def _weather(rng, index, site, p, step_minutes):
    """Simulated meteorology on `index` (30-min physics)."""
    n = len(index)
    steps_per_day = 1440 // step_minutes
    potential = potential_radiation(index, site.latitude, site.longitude, site.utc_offset,
                                    step_minutes)
    season = _season(index, site, p["season_shift_days"])
    hour = ((index - index.normalize()) / pd.Timedelta(hours=1)).to_numpy()
    afternoon = np.cos(2.0 * np.pi * (hour + step_minutes / 120.0 - 15.0) / 24.0)
    days = n // steps_per_day
    daily_cloud = _ar1(rng, days, 1.0, 1.6, 1.0)
    dry = p["phenology"] == "wet_season"
    # wet season (savanna): the warm half of the year is cloudier and humid
    wetness_day = season.reshape(days, steps_per_day).mean(axis=1) if dry else 0.0
    clearness_day = 0.18 + 0.60 * _logistic(1.3 * daily_cloud - (0.9 * wetness_day if dry
                                                                  else 0.0) + 0.2, 0.0, 1.0)
    clearness_day = np.repeat(clearness_day, steps_per_day)
    clearness = np.clip(clearness_day + _ar1(rng, n, step_minutes, 120.0, 0.07), 0.04, 0.80)
    rg_true = potential * clearness
    rg = rg_true * (1.0 + 0.02 * rng.standard_normal(n)) + 1.0 * rng.standard_normal(n)
    diurnal = (1.5 + 9.0 * (clearness_day - 0.18)) * (0.8 + 0.2 * season)
    tair = (p["t_mean"] + p["t_amplitude"] * season + _ar1(rng, n, step_minutes, 3 * 1440.0, 2.5)
            + diurnal * afternoon + _ar1(rng, n, step_minutes, 90.0, 0.3))
    wet = (25.0 * season) if dry else 0.0
    rh = (p["rh_mean"] - 5.0 * season * (0 if dry else 1) + wet - 2.4 * diurnal * afternoon
          + 25.0 * (0.5 - clearness_day) + _ar1(rng, n, step_minutes, 1440.0, 6.0))
    rh = np.clip(rh, 12.0, 100.0)
    log_mean = np.log(p["ustar_night_median"]) + np.log(2.0) * np.clip(rg_true / 400.0, 0.0, 1.0)
    ustar = np.clip(np.exp(log_mean + _ar1(rng, n, step_minutes, 180.0, 0.5)), 0.02, 1.3)
    lagged = (0.5 * _low_pass(tair, step_minutes, 8 * 60.0)
              + 0.5 * _low_pass(tair, step_minutes, 7 * 1440.0))
    tsoil = np.where(lagged < 0.0, 0.25 * lagged, lagged) + 1.0
    moisture = _low_pass(np.clip(rh - 40.0, 0.0, None) / 50.0, step_minutes, 20 * 1440.0)
    return pd.DataFrame({"rg_true": rg_true, "rg": rg, "tair": tair, "rh": rh,
                         "vpd": vpd_from_rh(rh, tair), "ustar": ustar, "tsoil": tsoil,
                         "moisture": np.clip(moisture, 0.0, 1.0), "season": season},
                        index=index)


def _capacity(index, weather, site, p, step_minutes):
    """Canopy capacity [0–1] per record by phenology type."""
    day = index.day_of_year.to_numpy().astype(float)
    if site.latitude < 0:
        day = (day + 182.0) % 365.0
    day = day - p["season_shift_days"]
    kind = p["phenology"]
    if kind == "deciduous":
        return 0.04 + 0.96 * _logistic(day, 128.0, 6.0) * (1.0 - _logistic(day, 285.0, 8.0))
    if kind == "evergreen":
        warm = _logistic(_low_pass(weather["tair"].to_numpy(), step_minutes, 10 * 1440.0),
                         3.0, 2.5)
        return 0.25 + 0.75 * warm
    if kind == "wet_season":
        return 0.1 + 0.9 * weather["moisture"].to_numpy()
    if kind == "c4_crop":
        grown = _logistic(day, 185.0, 7.0) * (1.0 - _logistic(day, 250.0, 6.0))
        return np.where((day > 130.0) & (day < 270.0), grown, 0.0)
    if kind == "arctic":
        return 0.02 + 0.98 * _logistic(day, 165.0, 5.0) * (1.0 - _logistic(day, 240.0, 6.0))
    raise ConfigError(f"phenology = {kind!r}: unknown")


def _fluxes(index, weather, site, p, step_minutes):
    """True GPP and Reco [µmol m-2 s-1] at the physics step."""
    capacity = _capacity(index, weather, site, p, step_minutes)
    rg = np.clip(weather["rg_true"].to_numpy(), 0.0, None)
    vpd = weather["vpd"].to_numpy()
    beta = p["beta0"] * np.exp(-p["k"] * np.clip(vpd - _VPD_REFERENCE, 0.0, None))
    a_rg = p["alpha"] * rg
    theta = p["curvature"]
    if theta < 1e-6:
        light = a_rg * beta / (a_rg + beta)
    else:   # smaller root of θP² − (αI + β)P + αIβ = 0
        total = a_rg + beta
        light = (total - np.sqrt(np.maximum(total**2 - 4.0 * theta * a_rg * beta, 0.0))) \
            / (2.0 * theta)
    warmth = _logistic(weather["tair"].to_numpy(), p["t_half"], 2.0)
    gpp = capacity * warmth * light
    moisture = weather["moisture"].to_numpy() if p["phenology"] == "wet_season" else 1.0
    rref = p["rref"] * (1.0 + p["rref_phenology"] * (capacity - 0.5)) * (0.3 + 0.7 * moisture)
    reco = lloyd_taylor(weather[p["driver"]].to_numpy(), rref, p["e0"])
    return gpp, reco


def gradual_share(ustar, u99, depth=_GRADUAL_DEPTH):
    """Share of the night flux measured under a loss that fades smoothly with u* [1].

    ``1 - depth * exp(-(u* / s)**2)``, with the scale ``s`` set so that 99 % of the
    flux is measured at `u99`: ``s = u99 / sqrt(ln(100 depth))``. With ``depth = 0.9``
    95 % is measured at 0.80 `u99`, 74 % at half of it, 10 % in calm air.

    Parameters
    ----------
    ustar : array_like
        Friction velocity [m s-1].
    u99 : float
        u* at which 99 % of the flux is measured [m s-1], > 0.
    depth : float, optional
        Share lost as u* goes to 0 [1], in (0.01, 1].

    Returns
    -------
    numpy.ndarray
        Measured share [1], rising monotonically from ``1 - depth`` to 1.

    Notes
    -----
    Physical argument: the night flux the tower misses (storage below the sensor,
    advection by drainage flows) does not stop at one u*; it fades as mixing grows,
    so the plateau that threshold detectors look for is approached gradually (the
    moving point test of Papale et al. 2006 takes the threshold where the class
    means reach 99 % of the plateau above them; Gu et al. 2005 describe the
    transition as a zone, not a point). The Gaussian fade is an invented smooth
    member of that family, chosen for its parameter `u99`.

    References
    ----------
    Gu, L. et al. (2005). Agricultural and Forest Meteorology 128, 179–197 (m).

    Papale, D. et al. (2006). Biogeosciences 3, 571–583. doi:10.5194/bg-3-571-2006
    """
    scale = float(u99) / np.sqrt(np.log(100.0 * float(depth)))
    return 1.0 - depth * np.exp(-(np.asarray(ustar, dtype=float) / scale) ** 2)


def _measured_share(night, ustar, p, night_loss):
    """Per record, the share of the true night flux the tower measures [1]."""
    threshold = p["ustar_threshold"]
    if night_loss == "gradual":
        return np.where(night, gradual_share(ustar, threshold), 1.0)
    return np.where(night & (ustar < threshold), (ustar / threshold) ** p["ustar_exponent"],
                    1.0)


def _measure(rng, weather, gpp, reco, step_minutes, p, night_loss="step"):
    """The tower's view of the true fluxes: loss, noise, spikes, flags and gaps."""
    n = len(weather)
    per_hour = 60 // step_minutes
    per_day = 24 * per_hour
    nee_true = reco - gpp
    night = weather["rg_true"].to_numpy() < _NIGHT_RG
    ustar = weather["ustar"].to_numpy()
    measured_share = _measured_share(night, ustar, p, night_loss)
    sd = p["error_intercept"] + p["error_slope"] * np.abs(nee_true)
    nee = nee_true * measured_share + rng.laplace(0.0, sd / np.sqrt(2.0), n)
    flag = np.zeros(n, dtype=np.int64)
    flagged = rng.choice(n, size=25, replace=False)
    flag[flagged] = 2
    nee[flagged] += rng.normal(0.0, 6.0, flagged.size)
    spikes = rng.choice(n, size=30, replace=False)
    nee[spikes] += rng.choice([-1.0, 1.0], spikes.size) * rng.uniform(12.0, 35.0, spikes.size)
    frame = pd.DataFrame({"nee": nee, "rg": weather["rg"].to_numpy(),
                          "tair": weather["tair"].to_numpy(), "vpd": weather["vpd"].to_numpy(),
                          "ustar": ustar, "tsoil": weather["tsoil"].to_numpy(),
                          "rh": weather["rh"].to_numpy(), "nee_flag": flag},
                         index=weather.index)
    low_days, high_days = p["long_gap_days"]
    starts = rng.integers(10 * per_day, n - 25 * per_day, size=p["long_gaps"])
    lengths = rng.integers(low_days * per_day, high_days * per_day + 1, size=starts.size)
    outage = _mark(n, starts, lengths)
    short_starts = np.flatnonzero(rng.random(n) < 2.0 / per_day / 7.0)   # ~2 per week
    short = _mark(n, short_starts, rng.integers(1, 6 * per_hour + 1, short_starts.size))
    rejected = rng.random(n) < np.where(night, p["night_rejection"], p["day_rejection"])
    driver_gap = {name: _mark(n, s := np.flatnonzero(rng.random(n) < 4.0 / n),
                              rng.integers(per_hour, 12 * per_hour + 1, s.size))
                  for name in ("rg", "tair", "rh", "ustar", "tsoil")}
    missing = {"nee": outage | short | rejected | driver_gap["ustar"],
               "rg": outage | driver_gap["rg"], "tair": outage | driver_gap["tair"],
               "rh": outage | driver_gap["rh"],
               "vpd": outage | driver_gap["tair"] | driver_gap["rh"],
               "ustar": outage | driver_gap["ustar"], "tsoil": outage | driver_gap["tsoil"]}
    return frame.assign(**{name: np.where(mask, np.nan, frame[name].to_numpy())
                           for name, mask in missing.items()}), measured_share


def generate(scenario: Scenario | int, night_loss: str = "step") -> SiteYear:
    """Simulate a drawn scenario (or the scenario of a seed).

    Parameters
    ----------
    scenario : Scenario or int
        From :func:`draw`, or a seed passed to it.
    night_loss : {"step", "gradual"}, optional
        Shape of the night u* loss: ``"step"`` (default) loses flux below the
        planted threshold only, as ``(u*/u*_t)^p``; ``"gradual"`` loses it as
        :func:`gradual_share` with 99 % measured at the planted threshold, so
        some loss is left above any threshold a detector reads below it. The
        random numbers are the same: the two differ in the loss only.

    Returns
    -------
    SiteYear
        Frame, site, per-record truth and annual true sums [g C m-2].

    Notes
    -----
    The physics runs at 30 minutes; hourly records are the means of two
    half-hours, then measured. The truth is the unmeasured flux of the record.
    """
    if night_loss not in NIGHT_LOSSES:
        raise ConfigError(f"night_loss = {night_loss!r}: expected one of {NIGHT_LOSSES}")
    if not isinstance(scenario, Scenario):
        scenario = draw(scenario)
    p = scenario.parameters
    weather_rng, measure_rng = (np.random.default_rng(child) for child in
                                np.random.SeedSequence([scenario.seed, 104729]).spawn(2))
    index = pd.date_range(f"{scenario.year}-01-01", f"{scenario.year + 1}-01-01",
                          freq=f"{_BASE_MINUTES}min", inclusive="left", name="time")
    weather = _weather(weather_rng, index, scenario.site, p, _BASE_MINUTES)
    gpp, reco = _fluxes(index, weather, scenario.site, p, _BASE_MINUTES)
    weather, gpp, reco = _coarsen(weather, gpp, reco, scenario.interval_minutes)
    frame, share = _measure(measure_rng, weather, gpp, reco, scenario.interval_minutes, p,
                            night_loss)
    return _with_truth(scenario, frame, gpp, reco, share)


def _coarsen(weather, gpp, reco, step_minutes):
    """The 30-minute physics as records of `step_minutes`: means of the half-hours."""
    if step_minutes == _BASE_MINUTES:
        return weather, gpp, reco
    factor = step_minutes // _BASE_MINUTES
    coarse = pd.date_range(weather.index[0], periods=len(weather) // factor,
                           freq=f"{step_minutes}min", name="time")
    weather = pd.DataFrame({c: weather[c].to_numpy().reshape(-1, factor).mean(axis=1)
                            for c in weather.columns}, index=coarse)
    return (weather, gpp.reshape(-1, factor).mean(axis=1),
            reco.reshape(-1, factor).mean(axis=1))


def _with_truth(scenario, frame, gpp, reco, share=None) -> SiteYear:
    """The site-year of `frame` with its per-record and annual truth [g C m-2]."""
    truth = pd.DataFrame({"gpp": gpp, "reco": reco, "nee": reco - gpp}, index=frame.index)
    annual = pd.Series({name: float(flux_to_carbon(truth[name].to_numpy(),
                                                   scenario.interval_minutes).sum())
                        for name in ("gpp", "reco", "nee")})
    return SiteYear(scenario=scenario, frame=frame, site=scenario.site, truth=truth,
                    annual_truth=annual, measured_share=share)


def site_years(seeds):
    """Yield :func:`generate` for each seed of `seeds` (one site-year at a time)."""
    for seed in seeds:
        yield generate(seed)
