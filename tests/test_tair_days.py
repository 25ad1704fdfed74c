"""Air temperature whole days away from the humidity columns (round mistakes28)."""
import numpy as np
import pandas as pd

from fluxpart import demo
from fluxpart.preflight import _column_faults
from fluxpart.tair_days import tair_day_shift


def _magnus_hpa(t):
    """Saturation vapour pressure over water [hPa], the WMO's Magnus form
    6.112 exp(17.62 t / (243.12 + t)) (WMO-No. 8, 2018, annex 4.B (m)), written out
    here so that the check does not rest on the package's own formula."""
    return 6.112 * np.exp(17.62 * t / (243.12 + t))


def _weather(days=200, seed=5, step=30):
    """Invented weather: a diurnal course in step with the sun, day-to-day fronts (an
    AR(1) of daily means) and passing clouds within the day; VPD written by the probe
    from its own temperature and RH (VPD = e_s(T) (1 - RH/100), Campbell & Norman 1998,
    ch. 3 (m))."""
    rng = np.random.default_rng(seed)
    per_day = 1440 // step
    n = days * per_day
    hour = (np.arange(n) % per_day) * step / 60.0
    daily = np.zeros(days)
    for d in range(1, days):
        daily[d] = 0.8 * daily[d - 1] + rng.normal(0.0, 2.0)
    tair = (12.0 + np.repeat(daily, per_day) + 5.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
            + np.cumsum(rng.normal(0.0, 0.15, n)) * 0.2)
    rh = np.clip(70.0 - 15.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
                 + rng.normal(0.0, 4.0, n), 20.0, 99.0)
    vpd = _magnus_hpa(tair) * (1.0 - rh / 100.0)
    index = pd.date_range("2021-03-01", periods=n, freq=f"{step}min")
    return tair, rh, vpd, index


def test_aligned_columns_are_quiet_and_a_day_away_is_named():
    """Known-truth recovery on invented weather: aligned columns quiet (also a separate
    thermometer with its own 0.2 K noise); tair a day late or two days early named with
    its direction; the humidity probe's VPD written from the outside Magnus formula."""
    tair, rh, vpd, _ = _weather()
    assert tair_day_shift(tair, rh, vpd, 30) is None
    separate = tair + np.random.default_rng(9).normal(0.0, 0.2, tair.size)
    assert tair_day_shift(separate, rh, vpd, 30) is None
    late = np.full(tair.size, np.nan)
    late[48:] = tair[:-48]
    text = tair_day_shift(late, rh, vpd, 30, {"tair": "t_air", "vpd": "vpd", "rh": "rh"})
    assert text is not None and "'t_air'" in text and "1 day(s) later" in text
    early = np.full(tair.size, np.nan)
    early[:-96] = tair[96:]
    text = tair_day_shift(early, rh, vpd, 30)
    assert text is not None and "2 day(s) earlier" in text
    # a temperature unrelated to the humidity probe (another site's) says nothing
    other, _, _, _ = _weather(seed=6)
    assert tair_day_shift(other, rh, vpd, 30) is None


def test_the_demo_is_quiet_and_its_tair_a_day_late_is_named():
    """Known-truth recovery on the invented Quillmoor site (30 and 60 min): as simulated
    quiet; tair a day late (which moved the example's nighttime GPP by -64.3, Reco by
    -61.4 and daytime GPP by -57.9 g C m-2, named only as the methods' preferring
    different respiration temperatures) a preflight warning, not fatal."""
    for minutes in (30, 60):
        frame = demo.site_year(0, interval_minutes=minutes)[0]
        cols = {name: frame[name].to_numpy(dtype=float) for name in ("tair", "rh", "vpd")}
        clean = pd.DataFrame(cols, index=frame.index)
        assert not [f for f in _column_faults(clean, None, minutes)
                    if f.stage == "input (tair days)"]
        per_day = 1440 // minutes
        late = np.full(frame.shape[0], np.nan)
        late[per_day:] = cols["tair"][:-per_day]
        shifted = clean.assign(tair=late)
        findings = [f for f in _column_faults(shifted, None, minutes, {"tair": "air_temp_c"})
                    if f.stage == "input (tair days)"]
        assert len(findings) == 1 and not findings[0].fatal
        assert "'air_temp_c'" in findings[0].message
