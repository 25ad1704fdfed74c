"""Fresh-eyes review of rounds partbias and mistakes60 (round review97).

Outside facts, each named beside its check: a site's own quality checks reject some
5-40 % of the records (Papale et al. 2006, Biogeosciences 3, 571-583 (m)), so a flag
that rejects most of them is the likelier cause of a fit's want of records; a one-sided
test at 5 % asks 1.645 standard errors and the two-sided 95 % interval 1.96 (the normal
quantiles, scipy.stats.norm); heat conduction damps a soil's daily temperature wave at
depth z by exp(-z / d), d = sqrt(2 kappa / omega) (Campbell & Norman 1998, eq. 8.6 (m)).
Every record is INVENTED (the fictional Quillmoor site of ``fluxpart.demo`` or series
built here).
"""
from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from scipy.stats import norm

from fluxpart import demo, soil_depth
from fluxpart.config import Config
from fluxpart.driver_mixture import SHARE_DRAWS, TESTS, unchanged_note
from fluxpart.errors import InsufficientDataError
from fluxpart.flag_labels import unmapped_flag_column
from fluxpart.pipeline import process


def _run(frame, config):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return process(frame, demo.SITE, config)


def test_a_fit_stopped_by_a_flag_of_the_opposite_meaning_names_the_flag():
    """Known-truth recovery on invented records: the flag keeps 10 % of the records, those
    with a bad record's noise (8 µmol m-2 s-1), as a flag of the opposite meaning does.
    The preflight passes (enough records are left), the E0 fit then finds no window; the
    error named the E0 windows alone (round mistakes60), now the flag that rejects 90 %
    too. The same noisy records without a flag (the rest missing) are refused without it."""
    frame, _ = demo.site_year(0)
    rng = np.random.default_rng(5)
    kept = rng.random(len(frame)) < 0.1
    noisy = frame["nee"] + np.where(kept, rng.normal(0.0, 8.0, len(frame)), 0.0)
    inverted = frame.assign(nee=noisy, nee_flag=np.where(kept, 0.0, 2.0))
    config = Config(ustar_bootstrap_draws=0)
    with pytest.raises(InsufficientDataError) as caught:
        _run(inverted, config)
    message = str(caught.value)
    assert message.startswith("E0 for year 2021: no acceptable Lloyd–Taylor window")
    assert "The site flag (nee_flag) rejects" in message
    assert "likely why the fit found too few good records: check [input] flag_accept" in message
    unflagged = frame.assign(nee=noisy.where(kept)).drop(columns="nee_flag")
    with pytest.raises(InsufficientDataError) as caught:
        _run(unflagged, config)
    assert "nee_flag" not in str(caught.value)


def test_flags_of_the_co2_concentration_are_not_the_fluxs():
    """A gas analyser reports the CO2 concentration (mole fraction, mixing ratio, density)
    beside the flux, each with its own flag (common practice); they were named as the
    flux's quality flag. A word the flux column's own name holds is no other quantity."""
    for name in ("qc_co2_conc", "co2_conc_flag", "co2_mole_fraction_qc", "co2_mixing_ratio_qc",
                 "co2_density_flag", "flag_co2_ppm", "co2_strg_flag", "co2_var_flag",
                 "qc_co2_dry", "flag_co2_sig", "flag_rain", "sonic_flag", "qc_H", "LE_QC"):
        assert unmapped_flag_column("co2_flux", ["co2_flux", name], []) is None, name
        assert unmapped_flag_column("NEE", ["NEE", name], []) is None, name
    for name in ("co2_flux_qc", "qc_flux_co2", "NEE_qc"):
        assert unmapped_flag_column("co2_flux", ["co2_flux", name], []) is not None, name
    own = unmapped_flag_column("NEE_ustar_filtered", ["NEE_ustar_filtered",
                                                      "NEE_ustar_filtered_qc"], [])
    assert own is not None and "nee_flag = 'NEE_ustar_filtered_qc'" in own


def test_critical_values_are_the_normal_quantiles():
    """scipy.stats.norm: 1.645 (one-sided 5 %) and 1.960 (two-sided 95 %)."""
    assert TESTS["one_sided"] == pytest.approx(norm.ppf(0.95), abs=1e-6)
    assert TESTS["two_sided"] == pytest.approx(norm.ppf(0.975), abs=1e-6)


def test_a_mixture_test_that_changed_nothing_is_named():
    """The note for each reason, and none where the verdicts differ: a share 1.82
    standard errors above 0 lies between the one-sided (1.645) and the two-sided (1.96)
    critical values, so the one-sided test changes the run; 1.2 and 2.5 do not."""
    draws = np.random.default_rng(5).standard_normal(SHARE_DRAWS)
    unit = (draws - draws.mean()) / draws.std()

    def judged(z):
        return (0.2, 0.2 + (0.2 / z) * unit)

    assert unchanged_note("two_sided", [], False) == ""
    assert "these settings ask for neither" in unchanged_note("one_sided", [], False)
    assert "this run made none" in unchanged_note("one_sided", [], True)
    assert unchanged_note("one_sided", [judged(1.82)], True) == ""
    assert unchanged_note("one_sided", [judged(1.2), judged(1.82)], True) == ""
    for z in (1.2, 2.5):
        text = unchanged_note("one_sided", [judged(z)], True)
        assert f"{z:.2f} standard errors above 0" in text and "judged alike" in text


def test_the_run_warns_a_mixture_test_no_setting_asks_for():
    """Invented Quillmoor site-year: with driver_day_prior = "night" and the daytime
    method on its own temperature, the one-sided test is asked by nothing, and every
    table equals the default run's; before, nothing said so."""
    frame, _ = demo.site_year(0)
    base = _run(frame, Config(ustar_bootstrap_draws=0, driver_day_prior="night"))
    result = _run(frame, Config(ustar_bootstrap_draws=0, driver_day_prior="night",
                                mixture_test="one_sided"))
    notes = [w for w in result.warnings if "mixture_test" in w]
    assert len(notes) == 1 and "these settings ask for neither" in notes[0], notes
    assert not any("mixture_test" in w for w in base.warnings)
    assert result.annual.equals(base.annual)


def _conducted(surface, seconds, layers):
    """Each Fourier component damped and delayed by exp(-(1 + i) sum z_k / d_k),
    d_k = sqrt(2 kappa_k / omega) (Campbell & Norman 1998, eq. 8.6 (m))."""
    spectrum = np.fft.rfft(surface - surface.mean())
    omega = 2 * np.pi * np.fft.rfftfreq(len(surface), d=seconds)
    damping = sum(depth * np.sqrt(omega / (2 * kappa))
                  for depth, kappa in layers)
    return surface.mean() + np.fft.irfft(spectrum * np.exp(-(1 + 1j) * damping), len(surface))


def test_damped_soils_that_are_real_are_not_named_and_daily_means_are_named_as_such():
    """Invented half-hourly year of a tropical closed-canopy site: the forest floor
    swinging 0.2 of the air's daily wave and the probe at 5 cm of mineral soil under 5
    cm of litter (kappa 0.12e-6 and 0.6e-6 m2 s-1, Campbell & Norman 1998, ch. 8 (m)), the
    most damped topsoil of tests/benchmarks/probe_soil_depth97.py: ratio about 0.07, not
    named. The same soil written as daily means was said to be "a probe some 138 cm deep";
    now it is named as one value a day."""
    stamps = pd.date_range("2022-01-01", periods=365 * 48, freq="30min")
    days = (stamps - stamps[0]).total_seconds().to_numpy() / 86400.0
    rng = np.random.default_rng(2)
    weather = np.interp(days, np.arange(367), np.cumsum(rng.normal(0, 0.5, 367)) * 0.3)
    wave = np.interp(days, np.arange(367) + 0.5, rng.uniform(2.5, 6.0, 367)) \
        * np.sin(2 * np.pi * (days % 1.0 - 0.375))
    tair = np.round(25.0 + weather + wave, 2)
    tsoil = np.round(_conducted(24.0 + weather + 0.2 * wave, 1800.0,
                                [(0.05, 0.12e-6), (0.05, 0.6e-6)]), 2)
    ratio = soil_depth.daily_range_ratio(tair, tsoil, stamps)[0]
    assert 0.05 < ratio < 0.1, ratio
    assert soil_depth.deep_soil_probe(tair, tsoil, stamps) is None
    daily = pd.Series(tsoil, index=stamps).groupby(stamps.normalize()).transform("mean")
    text = soil_depth.deep_soil_probe(tair, daily.to_numpy(), stamps, {"tsoil": "TS_day"})
    assert text is not None and "'TS_day'" in text and "daily means" in text
    assert "deep" not in text


def test_a_deep_probe_that_follows_the_weather_is_named():
    """Invented half-hourly year with day-to-day weather (an AR(1) of the daily mean, 2 K
    a day) and a probe at 50 cm of moist mineral soil (kappa 0.6e-6 m2 s-1, Campbell &
    Norman 1998, table 8.2 (m)): the daily wave keeps exp(-0.5 / 0.128) = 0.02 of the
    surface's, but the weather of several days, damped far less (the damping depth grows
    with the root of the period, eq. 8.6 (m)), added a drift to each day's range and hid
    the probe (ratio above 0.03); with each day's drift taken out it is named."""
    stamps = pd.date_range("2022-01-01", periods=365 * 48, freq="30min")
    days = (stamps - stamps[0]).total_seconds().to_numpy() / 86400.0
    rng = np.random.default_rng(0)
    weather = np.zeros(367)
    for k in range(1, 367):
        weather[k] = 0.75 * weather[k - 1] + rng.normal(0.0, 2.0)
    slow = 9.0 + 11.0 * np.sin(2 * np.pi * (days - 110) / 365) + np.interp(
        days, np.arange(367), weather)
    wave = np.interp(days, np.arange(367) + 0.5, rng.uniform(1.0, 8.0, 367)) \
        * np.sin(2 * np.pi * (days % 1.0 - 0.375))
    tair = np.round(slow + wave, 2)
    tsoil = np.round(_conducted(slow + wave, 1800.0, [(0.5, 0.6e-6)]), 2)
    ratio, judged = soil_depth.daily_range_ratio(tair, tsoil, stamps)[:2]
    assert judged >= 100 and ratio < 0.026, ratio
    text = soil_depth.deep_soil_probe(tair, tsoil, stamps)
    assert text is not None and "drift with the weather taken out" in text
    shallow = np.round(_conducted(slow + wave, 1800.0, [(0.05, 0.6e-6)]), 2)
    assert soil_depth.deep_soil_probe(tair, shallow, stamps) is None
