"""NEE departing from its neighbours at fixed times of day: a daily calibration kept as
data (round mistakes49)."""
import functools
from pathlib import Path

import numpy as np
import pandas as pd

from fluxpart.fixed_time_offsets import STAGE, nee_offset_at_fixed_time, time_of_day_departures

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.csv"


def _example():
    """The grassland example (fictional, invented data) as starts of 30-min records; night
    where Rg is below 10 W m-2 (the run's default night threshold)."""
    frame = pd.read_csv(EXAMPLE, dtype={"stamp_end": str}).replace(-9999, np.nan)
    starts = pd.to_datetime(frame["stamp_end"], format="%Y%m%d%H%M") - pd.Timedelta("30min")
    with np.errstate(invalid="ignore"):
        night = frame["solar_down"].to_numpy(dtype=float) < 10.0
    return frame["co2_exchange"].to_numpy(dtype=float), pd.DatetimeIndex(starts), night


def test_a_daily_calibration_hour_is_named_and_the_clean_record_is_not():
    """An analyser zeroed and spanned daily at 03:00-04:00 with the records kept (their
    removal before the flux is computed is common practice; Aubinet et al. 2012 (m)): a
    flux's random error changes sign from record to record (Papale et al. 2006's despiking
    premise (m)), the span gas adds the same +15 µmol m-2 s-1 each night."""
    nee, starts, night = _example()
    assert nee_offset_at_fixed_time(nee, starts, 30, night) is None
    hour = np.isin(starts.strftime("%H:%M"), ["03:00", "03:30"])
    text = nee_offset_at_fixed_time(np.where(hour, nee + 15.0, nee), starts, 30, night,
                                    {"nee": "co2_exchange"})
    assert text is not None and "'co2_exchange'" in text
    assert "03:00 (+1" in text and "03:30 (+1" in text
    assert "02:30" not in text and "04:00" not in text      # the neighbours not named
    assert STAGE == "input (nee fixed time)"


def test_a_real_event_at_a_fixed_hour_is_named_as_a_possible_cause():
    """An irrigation on a timer at 06:00, May-August, its soil CO2 pulse (+3, +2, +1 µmol
    m-2 s-1 over 1.5 h; rewetting pulses, a fact of the trade (m)) is flux of the ecosystem.
    Its own records lie in windows across sunrise: they were not judged, and the records
    after it, whose medians it lifts, were named with the opposite sign (07:30-08:30,
    round review62). Judged against the course beside sunrise (round leftovers52), the
    pulse itself is named, with its sign, and its neighbours are not. The message must
    not call it only a logger's artefact to remove."""
    nee, starts, night = _example()
    clock, summer = starts.strftime("%H:%M"), np.isin(starts.month, [5, 6, 7, 8])
    pulse = sum(np.where(summer & (clock == time), value, 0.0)
                for time, value in (("06:00", 3.0), ("06:30", 2.0), ("07:00", 1.0)))
    text = nee_offset_at_fixed_time(nee + pulse, starts, 30, night, {"nee": "co2_exchange"})
    assert text is not None and "06:00 (+" in text
    assert not any(f"{time} (-" in text for time in ("07:30", "08:00", "08:30"))
    assert "irrigation" in text and "flux to keep" in text and "good records beside it" in text


def test_an_offset_in_windows_across_sunrise_is_named():
    """A generator's exhaust at 06:00 all year (+2 µmol m-2 s-1; invented) lies in windows
    that hold night and day for most of the year: judged on 9 days only, it was missed
    (round review62). The course beside sunrise follows the sun, the offset the clock:
    with the records' median departure at their place beside sunrise taken out it is
    named, and nothing else. The same offset at 19:00 (beside sunset) likewise."""
    nee, starts, night = _example()
    clock = starts.strftime("%H:%M")
    for time in ("06:00", "19:00"):
        text = nee_offset_at_fixed_time(np.where(clock == time, nee + 2.0, nee), starts, 30,
                                        night)
        assert text is not None and f"{time} (+" in text
        assert text.count(" days)") == 1, text


def test_nee_written_in_steps_is_not_judged():
    """A 60-min flux written on both half-hours departs at whole hours on the day's ramps
    (round mistakes49: the reason preflight skipped the check beside a repeated-records
    finding). A record equal to a neighbour is not judged: the example stepped in its first
    half is quiet (named at 17:30 before), and a calibration in its second half is named
    (missed before)."""
    nee, starts, night = _example()
    hourly = nee.copy()
    hourly[1::2] = hourly[0::2][:hourly[1::2].size]
    assert nee_offset_at_fixed_time(hourly, starts, 30, night) is None
    half = np.where(starts.month <= 6, hourly, nee)
    assert nee_offset_at_fixed_time(half, starts, 30, night) is None   # 17:30 (-1.07) before
    calibrated = np.where((starts.month > 6) & np.isin(starts.strftime("%H:%M"),
                                                       ["03:00", "03:30"]), half + 15.0, half)
    text = nee_offset_at_fixed_time(calibrated, starts, 30, night)
    assert text is not None and ("03:00 (+" in text or "03:30 (+" in text)
    assert text.count(" days)") == ("03:00 (+" in text) + ("03:30 (+" in text)


def test_a_calibration_is_named_beside_repeated_records():
    """preflight skipped the check wherever records repeating earlier ones were named (a
    logger memory read out twice), as if they were NEE written in steps (round
    leftovers52): the grassland example (fictional) with a daily calibration and three
    days of records pasted a week later names both."""
    import warnings

    from fluxpart.io import read_input, read_site_config
    from fluxpart.pipeline import check_record

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        site_config = read_site_config(EXAMPLE.with_suffix(".toml"))
        frame, report = read_input(site_config)
    hour = np.isin(frame.index.strftime("%H:%M"), ["03:00", "03:30"])
    frame["nee"] = np.where(hour, frame["nee"] + 15.0, frame["nee"])
    block = frame.loc["2021-06-01":"2021-06-03"]
    later = frame.index.get_indexer(block.index + pd.Timedelta(days=7))
    frame.iloc[later] = block.to_numpy()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        _, findings = check_record(frame, site_config.site, columns=report.columns)
    stages = {finding.stage for finding in findings}
    assert "input (repeated records)" in stages and STAGE in stages


@functools.lru_cache(maxsize=1)
def _sharp_turn_year():
    """A clean year of NEE at an invented evergreen site (45° N) whose diurnal course turns
    sharply: uptake rises with light until the canopy saturates and stays flat until the
    light falls again, Blackman's limiting form min(alpha Q, Pmax) (Blackman 1905; alpha
    0.05 mol mol-1, Pmax 30 µmol m-2 s-1, plausible for a productive canopy (m)); Q = 2.0
    µmol J-1 of global radiation (common practice (m)) under the top-of-atmosphere course
    (`fluxpart.solar.potential_radiation`) times a daily clearness of 0.7-1; respiration by
    Lloyd & Taylor (1994), E0 = 309 K, T0 = 227.13 K, 2 µmol m-2 s-1 at 10 °C, on an air
    temperature with a seasonal and a diurnal course. Measured: a random error scaling with
    the flux, 0.5 + 0.12 |NEE| (Richardson et al. 2006's scaling (m)), Laplace-distributed
    (ibid. (m)), 60 % of the night's records and 20 % of the day's lost (u* filtering and
    dropouts). Returns (true NEE, measured NEE, starts, night)."""
    from fluxpart.solar import potential_radiation

    rng = np.random.default_rng(20261205)
    starts = pd.date_range("2025-01-01", "2026-01-01", freq="30min", inclusive="left")
    day = starts.day_of_year.to_numpy() - 1
    hour = (starts.hour + starts.minute / 60).to_numpy()
    rg = potential_radiation(starts, 45.0, 10.0, 1.0, 30) * rng.uniform(0.7, 1.0, 365)[day]
    tair = 10 - 12 * np.cos(2 * np.pi * (day - 15) / 365) + 5 * np.sin(2 * np.pi * (hour - 9) / 24)
    reco = 2.0 * np.exp(309.0 * (1 / (283.15 - 227.13) - 1 / (tair + 273.15 - 227.13)))
    nee = reco - np.minimum(0.05 * 2.0 * rg, 30.0)
    noise = (0.5 + 0.12 * np.abs(nee)) * rng.laplace(size=nee.size) / np.sqrt(2)
    night = rg < 10.0
    lost = rng.uniform(size=nee.size) < np.where(night, 0.6, 0.2)
    return nee, np.where(lost, np.nan, nee + noise), starts, night


def test_a_clean_course_with_a_sharp_turn_is_not_named():
    """The turn from the light ramp to the saturated plateau bends the course the same way
    on every day, at a clock time that follows sunrise and sunset through the year. Judged
    by the clock it was named as a calibration (the true NEE: 07:00-08:00, -1.2 to -2.4
    µmol m-2 s-1 on 67-84 % of 365 days, round fixedtime51; a forest's afternoon turn in a
    trial likewise); judged against the day records at the same place after sunrise or
    before sunset it is not, with or without the measurement's error and gaps."""
    nee, measured, starts, night = _sharp_turn_year()
    assert nee_offset_at_fixed_time(nee, starts, 30, night) is None
    assert nee_offset_at_fixed_time(measured, starts, 30, night) is None
    table = time_of_day_departures(nee, starts, 30, night)
    assert table.loc[["07:00", "07:30", "08:00"], "median"].abs().max() < 0.5


def test_a_fixed_hour_offset_beside_the_sharp_turn_is_named():
    """The same year with an offset at fixed clock times (+3 µmol m-2 s-1, invented): a
    night calibration at 03:30-04:00, and one at 10:00 among the day records, whose place
    after sunrise moves by hours through the year while the offset stays at its clock time.
    Each is named, and nothing else."""
    _, measured, starts, night = _sharp_turn_year()
    clock = starts.strftime("%H:%M")
    for times in (["03:30", "04:00"], ["10:00"]):
        planted = np.where(np.isin(clock, times), measured + 3.0, measured)
        text = nee_offset_at_fixed_time(planted, starts, 30, night)
        assert text is not None and any(f"{time} (+" in text for time in times), times
        assert text.count(" days)") <= len(times), text
