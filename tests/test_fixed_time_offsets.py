"""NEE departing from its neighbours at fixed times of day: a daily calibration kept as
data (round mistakes49)."""
from pathlib import Path

import numpy as np
import pandas as pd

from fluxpart.fixed_time_offsets import STAGE, nee_offset_at_fixed_time

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
