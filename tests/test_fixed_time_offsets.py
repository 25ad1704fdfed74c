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
