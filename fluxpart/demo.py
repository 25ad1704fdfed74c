"""An invented demonstration site with known true fluxes.

**Quillmoor is fictional.** It is a temperate grassland we made up, placed at
49.3° N, 10.2° E in Central European standard time (UTC+1), with a C4 variant
that grows maize in the same place. Its weather, fluxes and gaps are simulated,
so the true GPP and Reco are known and the pipeline's estimates can be compared
with them. No number from this module describes a real ecosystem, and no carbon
claim may rest on it.

:func:`site_year` simulates one or more calendar years; :func:`write_example`
writes them as a tower file in an own, non-canonical layout plus its site config.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from .constants import LLOYD_TAYLOR_E0_KELVIN
from .errors import ConfigError
from .responses import lloyd_taylor
from .site import Site
from .solar import potential_radiation
from .store import file_mode, set_mode
from .variables import to_canonical, vpd_from_rh

__all__ = ["SITE", "compare_with_truth", "site", "site_year", "write_example"]

#: The fictional Quillmoor grassland (C3); see the module docstring.
SITE = Site(name="Quillmoor grassland (fictional)", latitude=49.3, longitude=10.2,
            utc_offset=1.0, canopy="short")

_MAIZE_SITE = Site(name="Quillmoor maize field (fictional)", latitude=49.3, longitude=10.2,
                   utc_offset=1.0, canopy="short")

# Ecophysiology of the two variants: our own choices, set to give annual sums of
# the magnitude reported for temperate grasslands and maize (common practice).
# alpha: canopy light-use efficiency at low light [µmol CO2 J-1]; beta0: light-
# saturated assimilation at full phenology [µmol m-2 s-1]; k: VPD sensitivity
# above 10 hPa [hPa-1]; rref: respiration at 10 °C [µmol m-2 s-1], scaled by
# phenology; t_half: air temperature at which photosynthesis is half-active [°C].
_VARIANTS = {
    "c3": {"site": SITE, "alpha": 0.060, "beta0": 45.0, "k": 0.045, "rref": 2.55,
           "rref_phenology": 0.55, "t_half": 4.0, "t_width": 2.0},
    "c4": {"site": _MAIZE_SITE, "alpha": 0.085, "beta0": 450.0, "k": 0.015, "rref": 2.7,
           "rref_phenology": 0.9, "t_half": 11.0, "t_width": 2.0},
}

_BASE_MINUTES = 30
_VPD_REFERENCE = 10.0        # hPa; Lasslop et al. (2010)


def site(variant: str = "c3") -> Site:
    """Return the fictional Quillmoor site of a variant.

    Parameters
    ----------
    variant : {"c3", "c4"}
        ``"c3"`` the grassland, ``"c4"`` the maize field at the same place.

    Returns
    -------
    fluxpart.site.Site

    Raises
    ------
    ConfigError
        For an unknown variant; the message lists the valid ones.
    """
    return _variant(variant)["site"]


def _variant(variant):
    if variant not in _VARIANTS:
        raise ConfigError(f"variant = {variant!r}: expected one of "
                          f"{', '.join(repr(v) for v in sorted(_VARIANTS))}")
    return _VARIANTS[variant]


def _check_whole(name, value, low, high=None):
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < low or (
            high is not None and value > high):
        bound = f"in [{low}, {high}]" if high is not None else f">= {low}"
        raise ConfigError(f"{name} = {value!r}: expected a whole number {bound}")


def _ar1(rng, n, step_minutes, time_scale_minutes, sd):
    """Stationary AR(1) noise with e-folding time `time_scale_minutes` and s.d. `sd`."""
    phi = np.exp(-step_minutes / time_scale_minutes)
    shocks = rng.standard_normal(n) * sd * np.sqrt(1.0 - phi**2)
    first = rng.standard_normal() * sd
    from scipy.signal import lfilter  # imported on use: scipy.signal is slow to import

    out, _ = lfilter([1.0], [1.0, -phi], shocks, zi=[phi * first])
    return out


def _low_pass(values, step_minutes, time_scale_minutes):
    """First-order lag (exponential smoothing) started at the first value."""
    keep = np.exp(-step_minutes / time_scale_minutes)
    from scipy.signal import lfilter

    out, _ = lfilter([1.0 - keep], [1.0, -keep], values, zi=[keep * values[0]])
    return out


def _logistic(x, centre, width):
    return 1.0 / (1.0 + np.exp(-(x - centre) / width))


def _phenology(day_of_year, variant):
    """Relative canopy capacity [0–1] by day of year (1-based, may be fractional)."""
    d = np.asarray(day_of_year, dtype=float)
    if variant == "c3":
        season = _logistic(d, 100.0, 9.0) * (1.0 - _logistic(d, 295.0, 14.0))
        # two cuts (mowing): capacity falls to 40 % and regrows within a few weeks
        cut = np.ones_like(d)
        for day in (158.0, 222.0):
            since = d - day
            cut = cut * np.where(since >= 0, 1.0 - 0.6 * np.exp(-since / 11.0), 1.0)
        return 0.12 + 0.88 * season * cut
    # maize: sown early May, canopy closes in July, senesces in September, harvest day 275
    grown = _logistic(d, 172.0, 8.0) * (1.0 - _logistic(d, 258.0, 8.0))
    return np.where(d < 275.0, grown, 0.0)


def _weather(rng, index, site_, step_minutes):
    """Simulated meteorology at `step_minutes` spacing on `index`."""
    n = len(index)
    steps_per_day = 24 * 60 // step_minutes
    potential = potential_radiation(index, site_.latitude, site_.longitude, site_.utc_offset,
                                    step_minutes)
    year_start = pd.DatetimeIndex(index.year.astype(str) + "-01-01")
    year_length = np.where(index.is_leap_year, 366.0, 365.0)
    year_fraction = ((index - year_start) / pd.Timedelta(days=1)).to_numpy() / year_length
    season = -np.cos(2.0 * np.pi * (year_fraction - 20.0 / 365.0))   # -1 late January
    hour = ((index - index.normalize()) / pd.Timedelta(hours=1)).to_numpy()
    afternoon = np.cos(2.0 * np.pi * (hour + step_minutes / 120.0 - 15.0) / 24.0)

    # cloudiness: day-to-day persistence plus changes within the day
    days = n // steps_per_day
    daily_cloud = _ar1(rng, days, 1.0, 1.6, 1.0)
    daily_season = season.reshape(days, steps_per_day).mean(axis=1)
    clearness_day = 0.18 + 0.60 * _logistic(1.3 * daily_cloud + 0.25 * daily_season + 0.2,
                                            0.0, 1.0)
    clearness_day = np.repeat(clearness_day, steps_per_day)
    clearness = np.clip(clearness_day + _ar1(rng, n, step_minutes, 120.0, 0.07), 0.04, 0.80)
    rg_true = potential * clearness
    rg = rg_true * (1.0 + 0.02 * rng.standard_normal(n)) + 1.0 * rng.standard_normal(n)

    # air temperature: season + synoptic anomaly + diurnal cycle widening on clear days
    diurnal_amplitude = 1.5 + 9.0 * (clearness_day - 0.18) * (0.7 + 0.3 * (season + 1.0) / 2)
    tair = (9.0 + 9.0 * season + _ar1(rng, n, step_minutes, 3 * 1440.0, 2.8)
            + diurnal_amplitude * afternoon + _ar1(rng, n, step_minutes, 90.0, 0.3))

    # relative humidity: humid winters and cloudy days, dry clear afternoons
    rh = (79.0 - 7.0 * season - 2.4 * diurnal_amplitude * afternoon
          + 25.0 * (0.5 - clearness_day) + _ar1(rng, n, step_minutes, 1440.0, 6.0))
    rh = np.clip(rh, 22.0, 100.0)

    # friction velocity: windier by day, lognormal with hours of persistence
    log_mean = np.log(0.20) + np.log(0.36 / 0.20) * np.clip(rg_true / 400.0, 0.0, 1.0)
    ustar = np.clip(np.exp(log_mean + _ar1(rng, n, step_minutes, 180.0, 0.45)), 0.02, 1.3)

    # soil temperature (5 cm): lagged and damped air temperature, insulated below 0 °C
    lagged = (0.5 * _low_pass(tair, step_minutes, 8 * 60.0)
              + 0.5 * _low_pass(tair, step_minutes, 7 * 1440.0))
    tsoil = np.where(lagged < 0.0, 0.25 * lagged, lagged) + 1.0

    return pd.DataFrame({"rg_true": rg_true, "rg": rg, "tair": tair, "rh": rh,
                         "vpd": vpd_from_rh(rh, tair), "ustar": ustar, "tsoil": tsoil},
                        index=index)


def _fluxes(weather, variant):
    """True GPP and Reco [µmol m-2 s-1] from the simulated weather."""
    parameters = _variant(variant)
    index = weather.index
    day_of_year = index.day_of_year.to_numpy() + 0.5          # one capacity per day
    capacity = _phenology(day_of_year, variant)
    rg = np.clip(weather["rg_true"].to_numpy(), 0.0, None)
    vpd = weather["vpd"].to_numpy()
    beta = parameters["beta0"] * np.exp(-parameters["k"] * np.clip(vpd - _VPD_REFERENCE, 0.0,
                                                                   None))
    alpha = parameters["alpha"]
    light = alpha * beta * rg / (alpha * rg + beta)
    tair = weather["tair"].to_numpy()
    warmth = _logistic(tair, parameters["t_half"], parameters["t_width"])
    gpp = capacity * warmth * light
    rref = parameters["rref"] * (1.0 + parameters["rref_phenology"] * (capacity - 0.5))
    reco = lloyd_taylor(tair, rref, LLOYD_TAYLOR_E0_KELVIN)
    return gpp, reco


def _runs(rng, n, starts_per_record, min_length, max_length):
    """Boolean mask of random runs of `min_length`..`max_length` records."""
    starts = np.flatnonzero(rng.random(n) < starts_per_record)
    lengths = rng.integers(min_length, max_length + 1, size=starts.size)
    return _mark(n, starts, lengths)


def _mark(n, starts, lengths):
    edges = np.zeros(n + 1, dtype=np.int64)
    np.add.at(edges, starts, 1)
    np.add.at(edges, np.minimum(starts + lengths, n), -1)
    return np.cumsum(edges[:-1]) > 0


def _measure(rng, weather, gpp, reco, step_minutes, years, ustar_threshold, gaps, spikes):
    """Apply the tower's imperfections to the true fluxes: the measured frame."""
    n = len(weather)
    steps_per_day = 24 * 60 // step_minutes
    nee_true = reco - gpp
    night = weather["rg_true"].to_numpy() < 10.0
    ustar = weather["ustar"].to_numpy()
    if ustar_threshold is None or ustar_threshold == 0:
        damping = np.ones(n)
    else:
        damping = np.where(night & (ustar < ustar_threshold), ustar / ustar_threshold, 1.0)
    # random error: Laplace, s.d. growing linearly with |NEE| (shape after Richardson et
    # al. 2006; the coefficients 0.5 and 0.15 are our choice); scale b = s.d./sqrt(2)
    sd = 0.5 + 0.15 * np.abs(nee_true)
    nee = nee_true * damping + rng.laplace(0.0, sd / np.sqrt(2.0), n)

    flag = np.zeros(n, dtype=np.int64)
    flagged = rng.choice(n, size=25 * years, replace=False)
    flag[flagged] = 2
    nee[flagged] += rng.normal(0.0, 6.0, flagged.size)       # what the site's QC caught

    if spikes:
        where = rng.choice(n, size=40 * years, replace=False)
        nee[where] += rng.choice([-1.0, 1.0], where.size) * rng.uniform(12.0, 35.0, where.size)

    frame = pd.DataFrame({"nee": nee, "rg": weather["rg"].to_numpy(),
                          "tair": weather["tair"].to_numpy(), "vpd": weather["vpd"].to_numpy(),
                          "ustar": ustar, "tsoil": weather["tsoil"].to_numpy(),
                          "rh": weather["rh"].to_numpy(), "nee_flag": flag},
                         index=weather.index)
    if not gaps:
        return frame

    per_hour = 60 / step_minutes
    # one outage of every instrument per year, 3–6 days, away from the year's ends
    year_starts = np.flatnonzero(~pd.Index(weather.index.year).duplicated())
    year_lengths = np.diff(np.append(year_starts, n))
    offsets = rng.integers(20 * steps_per_day, year_lengths - 40 * steps_per_day)
    lengths = rng.integers(3 * steps_per_day, 6 * steps_per_day + 1, size=years)
    outage = _mark(n, year_starts + offsets, lengths)
    # a few driver gaps of 1–12 h each per instrument and year
    driver_gap = {name: _runs(rng, n, 4 * years / n, int(per_hour), int(12 * per_hour))
                  for name in ("rg", "tair", "rh", "ustar", "tsoil")}
    # NEE: short instrument dropouts, rejection (rain, stability, QC) heavier at night
    dropout = _runs(rng, n, 0.018, 1, int(4 * per_hour))
    rejected = rng.random(n) < np.where(night, 0.50, 0.09)
    missing = {
        "nee": outage | dropout | rejected | driver_gap["ustar"],   # same sonic anemometer
        "rg": outage | driver_gap["rg"],
        "tair": outage | driver_gap["tair"],
        "rh": outage | driver_gap["rh"],
        "vpd": outage | driver_gap["tair"] | driver_gap["rh"],      # derived from both
        "ustar": outage | driver_gap["ustar"],
        "tsoil": outage | driver_gap["tsoil"],
    }
    values = {name: np.where(mask, np.nan, frame[name].to_numpy())
              for name, mask in missing.items()}
    return frame.assign(**values)


def site_year(seed=0, *, year=2021, years=1, interval_minutes=30, variant="c3",
              ustar_threshold=0.18, gaps=True, spikes=True):
    """Simulate the fictional Quillmoor site: a tower record and its true fluxes.

    Parameters
    ----------
    seed : int, optional
        Seed of :func:`numpy.random.default_rng`; the same seed gives identical frames.
    year : int, optional
        First calendar year, in [1900, 2200].
    years : int, optional
        Number of consecutive calendar years (leap years have 366 days).
    interval_minutes : {30, 60}, optional
        Averaging interval [min]. The physics always runs at 30 min; hourly records
        are the means of the half-hours, then measured.
    variant : {"c3", "c4"}, optional
        ``"c3"``: the grassland (cut twice a year); ``"c4"``: maize, a shorter
        season (sown in May, harvested early October) with little light saturation.
    ustar_threshold : float or None, optional
        Night records with u* below this [m s-1] under-measure the flux, scaled by
        ``u*/threshold`` (loss to storage and advection). ``None`` or 0: no loss.
    gaps : bool, optional
        Plant missing records (see Notes). ``False``: everything is measured.
    spikes : bool, optional
        Add 40 large outliers (12–35 µmol m-2 s-1) per year to measured NEE.

    Returns
    -------
    frame : pandas.DataFrame
        Canonical tower record on a start-stamped, regular ``DatetimeIndex`` named
        ``"time"`` (local standard time, UTC+1): ``nee`` [µmol m-2 s-1], ``rg``
        [W m-2], ``tair`` [°C], ``vpd`` [hPa], ``ustar`` [m s-1], ``tsoil`` [°C],
        ``rh`` [%], ``nee_flag`` [1] (2 = rejected by the site's own checks).
    truth : pandas.DataFrame
        Same index: ``gpp``, ``reco``, ``nee`` (true fluxes [µmol m-2 s-1], GPP and
        Reco positive, nee = reco − gpp) and ``nee_measurable`` (bool: NEE was
        planted as measured; spikes and flagged records count as measured).

    Raises
    ------
    ConfigError
        For an invalid argument; the message names it.

    Notes
    -----
    Weather: seasonal and diurnal cycles with AR(1) persistence; cloudiness as a
    day-to-day AR(1) clearness index times the potential radiation of
    :func:`fluxpart.solar.potential_radiation`; soil temperature a lagged, damped
    air temperature; VPD from temperature and humidity by
    :func:`fluxpart.variables.vpd_from_rh`.

    Fluxes: GPP = capacity × f(Tair) × αβRg/(αRg + β) with
    β = β0 exp(−k (VPD − 10 hPa)) above 10 hPa (the light response of Lasslop et
    al. 2010), capacity a seasonal phenology curve. Reco is Lloyd–Taylor in **air
    temperature** (E0 = 308.56 K, Tref = 10 °C) with Rref following the phenology
    from day to day, so within a day it depends on air temperature alone.

    Measurement: NEE gets heteroscedastic Laplace noise (s.d. 0.5 + 0.15 |NEE|),
    night-time loss at low u*, spikes, 25 flagged records per year and gaps:
    one 3–6 day outage of all instruments per year, a few 1–12 h gaps of each
    driver, short NEE dropouts and night-heavy rejection; about 35–40 % of NEE
    is missing (30–50 % guaranteed by the tests).

    Expected annual truth sums [g C m-2 yr-1] (checked by the tests; 25 seeds
    gave grassland GPP 1370–1540, Reco 1100–1280, NEE −360 to −110 and maize GPP
    1300–1530, Reco 940–1110, NEE −530 to −270): grassland GPP 1200–1700, Reco
    1000–1500, NEE −400 to −100; maize GPP 1200–1800, Reco 900–1400, NEE −550 to
    −200 (harvest export not included). These are of the magnitude reported for
    temperate grasslands and maize (common practice); the weather makes them vary
    from seed to seed and year to year.

    References
    ----------
    Lasslop, G. et al. (2010). Separation of net ecosystem exchange into
    assimilation and respiration using a light response curve approach.
    Global Change Biology 16:187–208. doi:10.1111/j.1365-2486.2009.02041.x

    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.

    Richardson, A. D. et al. (2006). A multi-site analysis of random error in
    tower-based measurements of carbon and energy fluxes. Agricultural and Forest
    Meteorology 136:1–18. doi:10.1016/j.agrformet.2006.01.007

    Examples
    --------
    >>> frame, truth = site_year(seed=1)
    >>> len(frame)
    17520
    """
    _check_whole("seed", seed, 0)
    _check_whole("year", year, 1900, 2200)
    _check_whole("years", years, 1, 2200 - year + 1)
    if interval_minutes not in (30, 60) or isinstance(interval_minutes, bool):
        raise ConfigError(f"interval_minutes = {interval_minutes!r}: expected 30 or 60")
    parameters = _variant(variant)
    if ustar_threshold is not None and (
            isinstance(ustar_threshold, bool)
            or not isinstance(ustar_threshold, (int, float, np.integer, np.floating))
            or not np.isfinite(ustar_threshold) or ustar_threshold < 0):
        raise ConfigError(f"ustar_threshold = {ustar_threshold!r}: expected a number of "
                          "m s-1 >= 0, or None")
    weather_rng, measure_rng = (np.random.default_rng(child)
                                for child in np.random.SeedSequence(seed).spawn(2))
    index = pd.date_range(f"{year}-01-01", f"{year + years}-01-01",
                          freq=f"{_BASE_MINUTES}min", inclusive="left", name="time")
    weather = _weather(weather_rng, index, parameters["site"], _BASE_MINUTES)
    gpp, reco = _fluxes(weather, variant)
    if interval_minutes != _BASE_MINUTES:
        factor = interval_minutes // _BASE_MINUTES
        coarse = pd.date_range(index[0], periods=len(index) // factor,
                               freq=f"{interval_minutes}min", name="time")
        weather = pd.DataFrame({name: weather[name].to_numpy().reshape(-1, factor).mean(axis=1)
                                for name in weather.columns}, index=coarse)
        gpp = gpp.reshape(-1, factor).mean(axis=1)
        reco = reco.reshape(-1, factor).mean(axis=1)
    frame = _measure(measure_rng, weather, gpp, reco, interval_minutes, years,
                     ustar_threshold, gaps, spikes)
    truth = pd.DataFrame({"gpp": gpp, "reco": reco, "nee": reco - gpp,
                          "nee_measurable": frame["nee"].notna().to_numpy()},
                         index=frame.index)
    return frame, truth


# Column layout of the example tower file: our own names, units and rounding.
_FILE_TIME_COLUMN = "stamp_end"
_FILE_TIME_FORMAT = "%Y%m%d%H%M"
_FILE_MISSING = -9999
_FILE_COLUMNS = {   # canonical name: (file column, file unit or None, decimals)
    "nee": ("co2_exchange", None, 3),
    "rg": ("solar_down", None, 1),
    "tair": ("air_temp_c", None, 2),
    "vpd": ("vpd_kpa", "kPa", 4),
    "ustar": ("friction_velocity", None, 3),
    "tsoil": ("soil_temp_5cm", None, 2),
    "rh": ("rel_humidity", None, 1),
    "nee_flag": ("qc_co2", None, 0),
}
_FILE_STEMS = {"c3": "quillmoor_grassland", "c4": "quillmoor_maize"}


def _format_column(values, decimals):
    text = np.char.mod(f"%.{decimals}f", np.nan_to_num(values, nan=0.0))
    text = np.where(text == f"-{0:.{decimals}f}", f"{0:.{decimals}f}", text)   # no "-0.0"
    return np.where(np.isnan(values), str(_FILE_MISSING), text)


def as_recorded(frame: pd.DataFrame) -> pd.DataFrame:
    """`frame` (of :func:`site_year`) with each value as the example file records it.

    Each column is written with the example file's decimals (NEE to 0.001 µmol m-2 s-1,
    VPD to 0.0001 kPa, ...; see :func:`write_example`) and read back, so ``fluxpart
    demo`` processes the numbers the example file holds and gets its results. It also
    makes the demo's input the same on every CPU: the simulation's ``exp`` and ``sin``
    take SIMD paths that differ between CPUs in the last bits (~1e-12 µmol m-2 s-1),
    which rounding to the recorded decimals removes.
    """
    out = frame.copy()
    for name, (_, unit, decimals) in _FILE_COLUMNS.items():
        if name not in out.columns or name == "nee_flag":
            continue
        values = out[name].to_numpy(dtype=float)
        written = values / 10.0 if unit == "kPa" else values
        text = _format_column(written, decimals)
        read = np.where(text == str(_FILE_MISSING), np.nan, text.astype(float))
        out[name] = to_canonical(read, name, unit) if unit else read
    return out


def _write_atomic(path: Path, text: str) -> None:
    handle = tempfile.NamedTemporaryFile("w", encoding="utf-8", newline="", dir=path.parent,
                                         prefix=f".{path.name}.", suffix=".tmp", delete=False)
    try:
        with handle:
            handle.write(text)
        set_mode(handle.name, file_mode())       # temporary files are created private
        os.replace(handle.name, path)
    except BaseException:
        Path(handle.name).unlink(missing_ok=True)
        raise


def write_example(directory, *, seed=0, variant="c3", interval_minutes=30) -> Path:
    """Write a Quillmoor year as a tower file plus its site config.

    Parameters
    ----------
    directory : str or pathlib.Path
        Where to write; created if absent.
    seed : int, optional
        Seed of :func:`site_year`.
    variant : {"c3", "c4"}, optional
        Grassland or maize, as in :func:`site_year`.
    interval_minutes : {30, 60}, optional
        Averaging interval [min].

    Returns
    -------
    pathlib.Path
        The site config (TOML); the CSV sits beside it with the same stem.

    Raises
    ------
    ConfigError
        For an invalid argument.

    Notes
    -----
    The CSV is in a file layout of its own, not the canonical one: stamps mark
    the interval **end** as ``%Y%m%d%H%M``, VPD is in kPa, missing values are
    -9999, and the columns have their own names (see the TOML's
    ``[input.columns]``). Values are rounded (NEE to 0.001 µmol m-2 s-1, VPD to
    0.0001 kPa). Both files are written to a temporary name, then renamed.
    """
    _variant(variant)
    frame, _ = site_year(seed, interval_minutes=interval_minutes, variant=variant)
    directory = Path(directory)
    directory.mkdir(parents=True, exist_ok=True)
    stem = _FILE_STEMS[variant] + ("" if interval_minutes == 30 else f"_{interval_minutes}min")
    csv_path = directory / f"{stem}.csv"
    toml_path = directory / f"{stem}.toml"

    ends = frame.index + pd.Timedelta(minutes=interval_minutes)
    columns = {_FILE_TIME_COLUMN: np.asarray(ends.strftime(_FILE_TIME_FORMAT), dtype=str)}
    for name, (column, unit, decimals) in _FILE_COLUMNS.items():
        values = frame[name].to_numpy(dtype=float)
        if unit == "kPa":
            values = values / 10.0
        columns[column] = _format_column(values, decimals)
    header = ",".join(columns)
    table = np.column_stack(list(columns.values()))
    lines = [header] + [",".join(row) for row in table.tolist()]
    _write_atomic(csv_path, "\n".join(lines) + "\n")

    the_site = site(variant)
    column_lines = "\n".join(f'{name} = "{column}"'
                             for name, (column, _, _) in _FILE_COLUMNS.items())
    unit_lines = "\n".join(f'{name} = "{unit}"'
                           for name, (_, unit, _) in _FILE_COLUMNS.items() if unit)
    toml = f"""# Quillmoor is a FICTIONAL site: simulated data from fluxpart.demo (seed {seed}).
# No number from it describes a real ecosystem or supports any carbon claim.

[site]
name = "{the_site.name}"
latitude = {the_site.latitude}
longitude = {the_site.longitude}
utc_offset = {the_site.utc_offset}
canopy = "{the_site.canopy}"          # grass and maize: the short-canopy u* floor

[input]
path = "{csv_path.name}"
time_column = "{_FILE_TIME_COLUMN}"
time_format = "{_FILE_TIME_FORMAT}"
time_marks = "end"
missing = [{_FILE_MISSING}]

[input.columns]
{column_lines}

[input.units]
{unit_lines}

[processing]
seed = 0
"""
    _write_atomic(toml_path, toml)
    return toml_path


def compare_with_truth(annual: pd.DataFrame, truth: pd.DataFrame,
                       interval_minutes: int | None = None) -> pd.DataFrame:
    """Annual sums of a result beside the demo's true sums.

    Parameters
    ----------
    annual : pandas.DataFrame
        ``Result.annual`` [g C m-2 per year], indexed by year.
    truth : pandas.DataFrame
        The truth returned by :func:`site_year` (columns ``gpp``, ``reco``, ``nee``
        [µmol m-2 s-1]).
    interval_minutes : int, optional
        Record length [min]; inferred from the truth's index when omitted.

    Returns
    -------
    pandas.DataFrame
        One row per year and estimate (``nee``, ``gpp_nighttime``, ...): ``estimate``,
        ``truth`` and ``error`` (estimate - truth) [g C m-2], ``relative_error`` [1] and
        ``truth_in_95`` (the stated 95 % interval ``X_ci95_low`` to ``X_ci95_high`` holds
        the truth; None where `annual` has no interval): a calibrated interval misses in
        about one estimate of twenty, and the demo's printed table shows which (review33).

    References
    ----------
    The stated interval is the sum +/- 1.96 sigma, 1.96 the 97.5th percentile of the
    standard normal distribution (common practice).
    """
    from .budget import flux_to_carbon

    if interval_minutes is None:
        interval_minutes = int((truth.index[1] - truth.index[0]) / pd.Timedelta(minutes=1))
    carbon = pd.DataFrame(flux_to_carbon(truth[["gpp", "reco", "nee"]].to_numpy(),
                                         interval_minutes),
                          index=truth.index, columns=["gpp", "reco", "nee"])
    true = carbon.groupby(truth.index.year).sum()
    rows = []
    for year in annual.index:
        for column in ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
            if column not in annual.columns:
                continue
            reference = true.loc[year, column.split("_")[0]]
            estimate = annual.loc[year, column]
            low, high = (annual.loc[year, f"{column}_ci95_{end}"]
                         if f"{column}_ci95_{end}" in annual.columns else np.nan
                         for end in ("low", "high"))
            inside = bool(low <= reference <= high) if np.isfinite([low, high]).all() else None
            rows.append({"year": year, "estimate_of": column, "estimate": estimate,
                         "truth": reference, "error": estimate - reference,
                         "relative_error": (estimate - reference) / abs(reference),
                         "truth_in_95": inside})
    return pd.DataFrame(rows).set_index(["year", "estimate_of"])
