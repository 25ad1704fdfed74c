"""Tests of the delayed air temperature damped as heat conduction damps it
(``air_delay_damping = "conduction"``; :func:`fluxpart.partition.temperature_choice.
damped_delayed`).

External facts: the damped-wave solution of the heat equation in a uniform
semi-infinite medium under a periodic surface temperature, ``A exp(−z/D) sin(ωt − z/D)``
with D = √(2κ/ω) (Carslaw & Jaeger 1959, §2.6 (m); Campbell & Norman 1998, ch. 8),
checked here against an independent finite-difference solution of ∂T/∂t = κ ∂²T/∂z²
(explicit scheme, stable for κ Δt / Δz² ≤ 1/2; common practice); a thermal
diffusivity of moist soil ~0.5e-6 m² s-1 (Campbell & Norman 1998, table 8.3 (m)).
Known-truth recovery uses invented weather (the only place invented data is used).
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.config import Config
from fluxpart.errors import ConfigError
from fluxpart.method_settings import damped_delay, respiration_temperature
from fluxpart.partition.temperature_choice import (
    STRONG_EVIDENCE_BIC,
    choose_respiration_temperature,
    conduction_damping,
    damped_delayed,
    delayed,
    records_per_day,
)
from fluxpart.respiration_facts import respiration_comment, respiration_facts

DAY = 86400.0


def _harmonic(values, phase):
    """Amplitude and phase [rad] of the daily harmonic of `values` at `phase`
    (least squares on sin and cos of whole periods)."""
    design = np.column_stack([np.sin(phase), np.cos(phase), np.ones_like(phase)])
    (a, b, _), *_ = np.linalg.lstsq(design, values, rcond=None)
    return float(np.hypot(a, b)), float(np.arctan2(b, a))


def _finite_difference_soil(depths, kappa=0.5e-6, days=12, dz=0.005, dt=20.0):
    """Temperature at `depths` [m] over the last day of `days` of a sinusoidal daily
    surface temperature (amplitude 1 K), from an explicit finite-difference solution of
    the heat equation with an insulated bottom at 1 m; and the surface's."""
    assert kappa * dt / dz ** 2 <= 0.5
    nodes = int(round(1.0 / dz)) + 1
    temperature = np.zeros(nodes)
    steps_per_day = int(round(DAY / dt))
    omega = 2 * np.pi / DAY
    picked = [int(round(z / dz)) for z in depths]
    out = np.empty((steps_per_day, len(depths)))
    ratio = kappa * dt / dz ** 2
    for step in range(days * steps_per_day):
        temperature[0] = np.sin(omega * step * dt)
        inner = temperature[1:-1] + ratio * (temperature[2:] - 2 * temperature[1:-1]
                                             + temperature[:-2])
        temperature[1:-1] = inner
        temperature[-1] = temperature[-2]
        if step >= (days - 1) * steps_per_day:
            out[step - (days - 1) * steps_per_day] = temperature[picked]
    phase = omega * dt * np.arange((days - 1) * steps_per_day, days * steps_per_day)
    return out, phase


@pytest.mark.parametrize("depth", [0.05, 0.10, 0.15])
def test_conduction_damping_matches_the_heat_equation_at_depth(depth):
    """The amplitude a conducting soil keeps at the depth where the daily wave lags by h
    hours is conduction_damping(h), whatever the diffusivity: checked on a numerical
    solution of the heat equation, which knows nothing of the closed form."""
    series, phase = _finite_difference_soil([depth])
    amplitude, angle = _harmonic(series[:, 0], phase)
    lag_hours = (-angle % (2 * np.pi)) * 24.0 / (2 * np.pi)
    assert 0.5 < lag_hours < 7.0
    assert amplitude == pytest.approx(float(conduction_damping(lag_hours)), rel=0.02)
    # and the closed form itself: D = sqrt(2 kappa / omega), lag z / D, amplitude exp(-z/D)
    damping_depth = np.sqrt(2 * 0.5e-6 / (2 * np.pi / DAY))
    assert lag_hours == pytest.approx(depth / damping_depth * 24.0 / (2 * np.pi), rel=0.02)


def test_conduction_damping_values():
    """exp(−2π h / 24): none without lag, exp(−π/2) at a quarter day."""
    assert conduction_damping(0.0) == 1.0
    assert conduction_damping(6.0) == pytest.approx(np.exp(-np.pi / 2), rel=1e-12)
    assert conduction_damping(6.0) == pytest.approx(0.2079, abs=1e-4)
    assert conduction_damping(3.0) > conduction_damping(6.0)


@pytest.mark.parametrize("lag_records", [4, 8, 12])
def test_damped_delayed_keeps_the_level_and_damps_and_delays_the_daily_wave(lag_records):
    """A daily sinusoid over a slow trend: the daily amplitude comes out times
    conduction_damping(lag), its phase delayed by the lag, and the level (the trend)
    delayed but not damped."""
    index = pd.date_range("2022-05-01", periods=30 * 48, freq="30min")
    hours = np.arange(index.size) / 2.0
    phase = 2 * np.pi * hours / 24.0
    trend = 10.0 + 0.2 * hours / 24.0
    values = trend + 6.0 * np.sin(phase)
    out = damped_delayed(values, lag_records, 48)
    middle = slice(5 * 48, 25 * 48)
    amplitude, angle = _harmonic((out - delayed(trend, lag_records))[middle], phase[middle])
    lag_hours = lag_records / 2.0
    assert amplitude == pytest.approx(6.0 * float(conduction_damping(lag_hours)), rel=1e-3)
    assert (-angle % (2 * np.pi)) * 24 / (2 * np.pi) == pytest.approx(lag_hours, abs=0.01)
    assert np.mean(out[middle]) == pytest.approx(np.mean(delayed(values, lag_records)[middle]),
                                                 abs=1e-2)


def test_no_delay_and_gaps():
    """No delay: the series itself, bit for bit. A value whose day is mostly missing is
    kept undamped; a missing value stays missing; NaN padding as delayed's."""
    values = 15.0 + 5.0 * np.sin(2 * np.pi * np.arange(10 * 24) / 24.0)
    assert np.array_equal(damped_delayed(values, 0, 24), values)
    gappy = values.copy()
    gappy[48:72] = np.nan
    gappy[80:110] = np.nan
    out = damped_delayed(gappy, 3, 24, pad="nan")
    assert np.isnan(out[:3]).all()
    assert np.isnan(out[51:75]).all()
    # record 75 (in a window with fewer than half a day measured) kept as measured
    assert out[75 + 3] == gappy[75]


def test_records_per_day():
    assert records_per_day(pd.date_range("2022-01-01", periods=10, freq="30min")) == 48
    assert records_per_day(pd.date_range("2022-01-01", periods=10, freq="60min")) == 24


def _night_nee(rng, index, driver, is_night):
    kelvin = driver + 273.15
    reco = 2.5 * np.exp(200.0 * (1 / (283.15 - 227.13) - 1 / (kelvin - 227.13)))
    nee = reco + rng.normal(0.0, 0.3, index.size)
    return np.where(is_night, nee, np.nan)


def _fen_weather(seed, days=90):
    """Invented half-hourly air temperature and, from it, the temperature at 10 cm of a
    conducting soil (damped and lagged by the closed form of the daily wave; κ 0.5e-6
    m2 s-1: lag 3.3 h, amplitude 0.42)."""
    rng = np.random.default_rng(seed)
    index = pd.date_range("2022-04-01", periods=days * 48, freq="30min")
    hour = index.hour.to_numpy() + index.minute.to_numpy() / 60.0
    synoptic = pd.Series(rng.normal(0.0, 1.0, index.size)).rolling(
        144, min_periods=1).mean().to_numpy() * 20.0
    season = 5.0 + 0.1 * np.arange(index.size) / 48.0
    tair = season + synoptic + 6.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
    lag = 7   # half-hours, ~3.3 h
    slow = pd.Series(season + synoptic).shift(lag).bfill().to_numpy()
    soil = slow + 6.0 * conduction_damping(lag / 2.0) * np.sin(
        2 * np.pi * (hour - 9.0 - lag / 2) / 24.0)
    is_night = (hour < 6.0) | (hour >= 19.0)
    return rng, index, tair, soil, is_night


@pytest.mark.parametrize("seed", [1, 2])
def test_damped_choice_finds_the_conducted_soil_temperature(seed):
    """Known truth: night respiration planted on the temperature a conducting soil has
    at ~10 cm. Without a soil column, the damped candidates explain the night NEE
    better than the plain delayed air (smaller sum of absolute residuals), a delay is
    chosen by strong evidence, and the record names the damping."""
    rng, index, tair, soil, is_night = _fen_weather(seed)
    nee = _night_nee(rng, index, soil, is_night)
    damped = choose_respiration_temperature(index, nee, tair, None, is_night,
                                            damped_delay=True)
    plain = choose_respiration_temperature(index, nee, tair, None, is_night)
    assert damped.delay_records in (6, 7, 8)
    assert damped.delay_delta_bic < -STRONG_EVIDENCE_BIC
    assert damped.sad["tair_delayed"] < plain.sad["tair_delayed"]
    record = damped.to_dict()
    assert record["delay_damping"] == "conduction"
    assert record["delay_daily_amplitude"] == pytest.approx(
        float(conduction_damping(damped.delay_hours)))
    assert "damped to" in damped.reason
    assert "delay_damping" not in plain.to_dict() and "damped" not in plain.reason


def test_the_run_uses_the_damped_series_where_set():
    """respiration_temperature follows the setting; the default keeps the plain delay."""
    index = pd.date_range("2022-06-01", periods=10 * 48, freq="30min")
    tair = 12.0 + 5.0 * np.sin(2 * np.pi * np.arange(index.size) / 48.0)
    table = pd.DataFrame({"tair": tair, "tair_filled": tair}, index=index)
    assert not damped_delay(Config())
    on = Config(air_delay_damping="conduction")
    assert damped_delay(on)
    plain = respiration_temperature(table, "tair", 8, True, damped=damped_delay(Config()))
    assert np.array_equal(plain, delayed(tair, 8))
    damped = respiration_temperature(table, "tair", 8, True, damped=damped_delay(on))
    assert np.array_equal(damped, damped_delayed(tair, 8, 48))
    assert np.ptp(damped[96:-96]) == pytest.approx(10.0 * float(conduction_damping(4.0)),
                                                   rel=0.01)


def test_setting_is_checked_and_written_only_away_from_default():
    assert "air_delay_damping" not in Config().to_dict()
    assert Config(air_delay_damping="conduction").to_dict()["air_delay_damping"] == \
        "conduction"
    with pytest.raises(ConfigError, match="air_delay_damping"):
        Config(air_delay_damping="yes")


def test_exported_facts_name_the_damping():
    provenance = {"respiration_driver": {"chosen": "tair", "reason": "r", "delay_hours": 6.0,
                                         "delay_damping": "conduction",
                                         "delay_daily_amplitude": 0.2079}}
    facts = respiration_facts(provenance)
    assert facts["respiration_temperature_daily_amplitude"] == 0.2079
    assert "damped to 0.21" in respiration_comment(facts)
    del provenance["respiration_driver"]["delay_daily_amplitude"]
    assert "respiration_temperature_daily_amplitude" not in respiration_facts(provenance)


def _conducted(tair, depth, kappa=0.5e-6, step_seconds=1800.0):
    """Temperature at `depth` [m] of a uniform half-space under the surface series `tair`
    (gaps interpolated, the series taken as periodic): each frequency ω of its spectrum
    times exp(−(1 + i) z / D(ω)), D = √(2κ/ω), the heat equation's exact response
    (Carslaw & Jaeger 1959, §2.6 (m)); all frequencies, not the daily one alone."""
    filled = pd.Series(tair).interpolate(limit_direction="both").to_numpy()
    omega = 2 * np.pi * np.fft.rfftfreq(filled.size, d=step_seconds)
    ratio = np.zeros_like(omega)
    ratio[1:] = depth / np.sqrt(2 * kappa / omega[1:])
    return np.fft.irfft(np.fft.rfft(filled) * np.exp(-(1 + 1j) * ratio), n=filled.size)


def test_a_run_without_soil_temperature_on_respiration_of_a_conducted_soil():
    """Invented known truth through the whole pipeline: the demo's respiration moved onto
    the temperature at 10 cm of a conducting soil under its air (lag ~3.3 h, daily
    amplitude ~0.42; Lloyd & Taylor 1994 eq. 11, E0 200 K, for the change of driver), the
    soil column removed. With the damping a delay is chosen and recorded with its
    amplitude, and annual nighttime and daytime Reco come closer to the truth than
    without (measured: +92.1 / +42.8 → +28.6 / −4.1 g C m-2 of 1083.6; on the demo's seed 2
    neither run chooses a delay, ΔBIC +11, and the two are the same)."""
    import fluxpart
    from fluxpart import demo
    from fluxpart.units import flux_to_carbon

    def eq11(celsius):
        return np.exp(200.0 * (1 / (283.15 - 227.13) - 1 / (np.asarray(celsius) + 273.15
                                                            - 227.13)))

    frame, truth = demo.site_year(seed=1)
    tair = frame["tair"].to_numpy()
    air = pd.Series(tair).interpolate(limit_direction="both").to_numpy()
    reco = truth["reco"].to_numpy()
    planted = reco * eq11(_conducted(tair, 0.10)) / eq11(air)
    frame = frame.drop(columns="tsoil").assign(nee=frame["nee"] - reco + planted)
    true_reco = float(np.sum(flux_to_carbon(planted, 30)))
    errors, records = {}, {}
    for damping in ("off", "conduction"):
        config = Config(air_delay_damping=damping, ustar_bootstrap_draws=0,
                        random_error_draws=50)
        with pytest.warns(fluxpart.FluxpartWarning):
            result = fluxpart.process(frame, demo.site(), config)
        annual = result.annual.iloc[0]
        errors[damping] = {flux: abs(float(annual[flux]) - true_reco)
                           for flux in ("reco_nighttime", "reco_daytime")}
        records[damping] = result.provenance["respiration_driver"]
    damped = records["conduction"]
    assert damped["delay_hours"] > 0 and damped["delay_delta_bic"] < -STRONG_EVIDENCE_BIC
    assert damped["delay_daily_amplitude"] == pytest.approx(
        float(conduction_damping(damped["delay_hours"])))
    assert "delay_damping" not in records["off"]
    for flux in ("reco_nighttime", "reco_daytime"):
        assert errors["conduction"][flux] < 0.5 * errors["off"][flux], flux


def test_diff_names_a_damped_delay():
    """Two results alike but for the damping of their delayed temperature: ``diff`` names
    the amplitude under "model"; two undamped records name nothing there."""
    from fluxpart.diff import _recorded_items

    plain = {"provenance": {"respiration_driver": {"chosen": "tair", "delay_hours": 6.0}}}
    damped = {"provenance": {"respiration_driver": {
        "chosen": "tair", "delay_hours": 6.0, "delay_damping": "conduction",
        "delay_daily_amplitude": float(conduction_damping(6.0))}}}
    assert not any(section == "model" for section, *_ in _recorded_items(plain, plain))
    model = {name: (x, y) for section, name, x, y in _recorded_items(plain, damped)
             if section == "model"}
    assert list(model) == ["respiration_driver delay_daily_amplitude"]
