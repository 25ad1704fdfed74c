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
    m-2 s-1 over 1.5 h; rewetting pulses, a fact of the trade (m)) is flux of the ecosystem:
    its own records lie in windows across sunrise and are not judged, but it lifts the
    medians of the records after it, which then depart with the opposite sign. The
    message must not call them only a logger's artefact to remove (round review62)."""
    nee, starts, night = _example()
    clock, summer = starts.strftime("%H:%M"), np.isin(starts.month, [5, 6, 7, 8])
    pulse = sum(np.where(summer & (clock == time), value, 0.0)
                for time, value in (("06:00", 3.0), ("06:30", 2.0), ("07:00", 1.0)))
    text = nee_offset_at_fixed_time(nee + pulse, starts, 30, night, {"nee": "co2_exchange"})
    assert text is not None and "06:00" not in text and "07:30 (-" in text
    assert "irrigation" in text and "flux to keep" in text and "good records beside it" in text
