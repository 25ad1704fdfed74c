"""A deep soil probe mapped as tsoil (``fluxpart.soil_depth``, round mistakes60).

The soil temperatures are built from the textbook solution of heat conduction for a
sinusoidal surface temperature: at depth z the daily and annual waves keep
exp(-z / d) of their surface amplitude and lag by z / d radians, d = sqrt(2 kappa /
omega) (Campbell & Norman 1998, ch. 8, eq. 8.6 (m); Hillel 1998, ch. 12 (m)), with
kappa = 0.6e-6 m2 s-1 for a moist mineral soil (Campbell & Norman 1998, table 8.2 (m)):
d is 0.13 m for the daily wave and sqrt(365) times that for the annual one. INVENTED
series (a fictional mid-latitude site).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from fluxpart import soil_depth
from fluxpart.preflight import _column_faults

KAPPA = 0.6e-6                                          # m2 s-1 (m)
DAY_S, YEAR_S = 86400.0, 365.0 * 86400.0
D_DAY = np.sqrt(2 * KAPPA / (2 * np.pi / DAY_S))        # about 0.13 m
D_YEAR = np.sqrt(2 * KAPPA / (2 * np.pi / YEAR_S))      # about 2.4 m


def _site(depth_m: float, surface_share: float = 1.0, mean: float = 11.0, seed: int = 0):
    """(stamps, tair, tsoil): half-hourly air with a 12 K daily range in summer and a
    soil at `depth_m` whose surface swings `surface_share` of the air's daily wave."""
    stamps = pd.date_range("2022-01-01", periods=365 * 48, freq="30min")
    t = (stamps - stamps[0]).total_seconds().to_numpy()
    rng = np.random.default_rng(seed)
    annual = 9.0 * np.sin(2 * np.pi * t / YEAR_S - 1.9)
    day_amp = 4.0 + 2.0 * np.sin(2 * np.pi * t / YEAR_S - 1.6)          # 2-6 K
    daily = day_amp * np.sin(2 * np.pi * t / DAY_S - 2.0)
    tair = mean + annual + daily + rng.normal(0.0, 0.2, t.size)
    z = depth_m
    soil = (mean + 1.0 + 9.0 * np.exp(-z / D_YEAR)
            * np.sin(2 * np.pi * t / YEAR_S - 1.9 - z / D_YEAR)
            + surface_share * day_amp * np.exp(-z / D_DAY)
            * np.sin(2 * np.pi * t / DAY_S - 2.0 - z / D_DAY))
    return stamps, tair, np.round(soil + rng.normal(0.0, 0.01, t.size), 2)


def test_a_probe_at_50_cm_is_named_with_its_depth():
    stamps, tair, tsoil = _site(0.5)
    text = soil_depth.deep_soil_probe(tair, tsoil, stamps, {"tsoil": "TS_5cm", "tair": "TA"})
    assert text is not None
    assert "'TS_5cm'" in text and "no daily cycle" in text
    depth_cm = float(text.split("a probe some ")[1].split(" cm")[0])
    assert 30 <= depth_cm <= 80          # exp(-0.5 / 0.13) = 0.02 of the air's range


def test_shallow_probes_are_not_named():
    for depth in (0.02, 0.05, 0.10):
        stamps, tair, tsoil = _site(depth)
        assert soil_depth.deep_soil_probe(tair, tsoil, stamps) is None, depth
    # 10 cm under a forest's shade and litter: the surface swings 0.2 of the air's
    stamps, tair, tsoil = _site(0.10, surface_share=0.2)
    ratio = soil_depth.daily_range_ratio(tair, tsoil, stamps)[0]
    assert ratio > soil_depth.DEEP_RATIO
    assert soil_depth.deep_soil_probe(tair, tsoil, stamps) is None


def test_cold_or_short_records_are_not_judged():
    stamps, tair, tsoil = _site(0.5, mean=-6.0)          # a soil below 5 degC all year
    assert soil_depth.daily_range_ratio(tair, tsoil, stamps) is None
    stamps, tair, tsoil = _site(0.5)
    short = slice(0, 20 * 48)                            # 20 days only
    assert soil_depth.deep_soil_probe(tair[short], tsoil[short], stamps[short]) is None
    # an air that never swings 5 K a day (a cloudy coast): nothing to damp
    flat = 11.0 + 0.3 * np.sin(np.arange(tair.size) * 2 * np.pi / 48)
    assert soil_depth.daily_range_ratio(flat, tsoil, stamps) is None


def test_preflight_names_the_deep_probe():
    stamps, tair, tsoil = _site(0.5)
    frame = pd.DataFrame({"tair": tair, "tsoil": tsoil}, index=stamps)
    findings = _column_faults(frame, np.zeros(len(frame)), 30.0, {"tsoil": "soil_5cm"})
    stages = [f.stage for f in findings]
    assert soil_depth.STAGE in stages
    finding = findings[stages.index(soil_depth.STAGE)]
    assert not finding.fatal and "'soil_5cm'" in finding.message
    stamps, tair, tsoil = _site(0.05)
    frame = pd.DataFrame({"tair": tair, "tsoil": tsoil}, index=stamps)
    findings = _column_faults(frame, np.zeros(len(frame)), 30.0)
    assert soil_depth.STAGE not in [f.stage for f in findings]
