"""A logger's missing-data code left in a caller's frame (round mistakes37).

Known-truth recovery on invented data (the fictional Quillmoor grassland of
``fluxpart.demo.site_year`` and invented records). Outside facts: night is where measured
global radiation is below about 10 W m-2, and where Rg is missing the sun decides
(Reichstein et al. 2005, Global Change Biology 11, 1424-1439 (m)); a midday sun at
49° N gives hundreds of W m-2 of potential radiation (solar geometry, Michalsky 1988 (m));
-9999 is the missing-value code of flux-tower loggers and data files (common practice).
"""
import warnings

import numpy as np
import pandas as pd
import pytest

import fluxpart
from fluxpart import solar
from fluxpart.screening_stage import night_rg
from fluxpart.unit_checks import frame_code_messages, frame_messages


def test_night_rg_reads_values_beyond_the_range_as_missing():
    """-9999 and 9999 are no sky (Rg's plausible range, -50 to 1500 W m-2); a pyranometer's
    night offset of a few W m-2 below 0 and a bright noon stay readings (WMO Guide (m))."""
    rg = np.array([-9999.0, -3.0, 0.0, 850.0, 9999.0, np.nan])
    out = night_rg(rg)
    assert np.isnan(out[[0, 4, 5]]).all()
    assert np.array_equal(out[1:4], rg[1:4])
    clean = np.array([-3.0, 0.0, 850.0])
    assert night_rg(clean) is clean          # nothing to change: the same array


def test_a_code_at_noon_is_day_by_the_sun():
    """At noon on 21 June at 49.3° N the sun is high (Michalsky 1988 (m)): a record whose
    Rg holds -9999 is day, as a record with Rg missing is (Reichstein et al. 2005 (m))."""
    index = pd.date_range("2021-06-21 11:00", periods=4, freq="30min")
    potential = solar.potential_radiation(index, 49.3, 10.2, 1.0, 30)
    assert (potential > 500.0).all()
    rg = np.array([700.0, -9999.0, np.nan, 720.0])
    assert not solar.night_mask(night_rg(rg), potential).any()
    # read as it is, the code is "below 10 W m-2": night at noon (the defect fixed)
    assert solar.night_mask(rg, potential)[1]


def test_frame_code_messages_name_the_code_and_count():
    """A value beyond the range repeated exactly is a code; scattered faults are not."""
    rng = np.random.default_rng(0)
    rg = np.clip(rng.normal(300.0, 200.0, 2000), 0.0, None)
    rg[::50] = -9999.0                                     # 40 codes
    ustar = rng.uniform(0.05, 0.8, 2000)
    ustar[[3, 700]] = [-9999.0, -9999.0]                    # twice only: not named
    tair = rng.normal(12.0, 6.0, 2000)
    tair[[5, 9, 11]] = [75.0, 81.0, 99.0]                   # beyond, but not one value
    lines = frame_code_messages({"rg": rg, "ustar": ustar, "tair": tair})
    assert len(lines) == 1
    assert "'rg'" in lines[0] and "-9999 occurs 40 times" in lines[0]
    assert "numpy.nan" in lines[0]


@pytest.fixture(scope="module")
def demo_runs(demo_default_run):
    """The clean demo year (the session's default run of seed 0) and the same frame with
    -9999 in 5 % of Rg, processed alike."""
    frame, _, clean = demo_default_run
    coded = frame.copy()
    rows = np.random.default_rng(1).random(len(coded)) < 0.05
    coded.loc[rows, "rg"] = -9999.0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", fluxpart.FluxpartWarning)
        coded_run = fluxpart.process(coded, fluxpart.demo.SITE)
    return frame, clean, coded_run


def test_rg_codes_in_a_frame_leave_the_partitioning_as_without_them(demo_runs):
    """Known-truth recovery on invented data: -9999 in 5 % of Rg moved nighttime Reco of
    the demo grassland from 1179 to 686 g C m-2 (its day records taken for night); read
    as missing, the budgets stay within 1 % of the clean run's, and the code is named."""
    _, clean, coded = demo_runs
    for column in ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime"):
        a, b = clean.annual[column].iloc[0], coded.annual[column].iloc[0]
        assert abs(b - a) <= 0.01 * abs(a) + 1.0, (column, a, b)
    named = [w for w in coded.warnings if "column 'rg': the value -9999" in w]
    assert len(named) == 1


def test_the_clean_demo_frame_is_not_warned(demo_runs):
    """Zero false alarms: the demo record holds no value beyond a range."""
    frame, clean, _ = demo_runs
    assert not any("missing-data code" in w for w in clean.warnings)
    assert not any("missing-data code" in w for w in frame_messages(frame))
