"""A budget year opened inside the growing season (round mistakes41,
`fluxpart.year_start_season`).

Budget years usually start in the dormant season, 1 January north of the tropics and
1 July south of them (common practice (m)); the records say where a site's growing
season lies. Checked on the grassland example's NEE (invented site, 49.3° N, uptake
April-October) and on an invented evergreen record.
"""
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.year_start_season import split_growing_season

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.csv"


@pytest.fixture(scope="module")
def grassland():
    table = pd.read_csv(EXAMPLE, dtype={"stamp_end": str})
    nee = table["co2_exchange"].where(table["co2_exchange"] != -9999).to_numpy(dtype=float)
    stamps = pd.to_datetime(table["stamp_end"], format="%Y%m%d%H%M") - pd.Timedelta("30min")
    return nee, pd.DatetimeIndex(stamps)


@pytest.mark.parametrize("start, named", [("07-01", True), ("06-15", True), ("10-01", False),
                                          ("04-01", False), ("09-01", False)])
def test_a_start_in_the_northern_summer_is_named(grassland, start, named):
    text = split_growing_season(start, *grassland, 49.3)
    assert (text is not None) is named
    if named:
        assert f'year_start = "{start}"' in text and "49.3° N" in text
        assert "used as set" in text


def test_the_default_start_is_never_judged(grassland):
    assert split_growing_season("01-01", *grassland, 49.3) is None
    # given explicitly at a northern site: the dormant season, not named
    assert split_growing_season("01-01", *grassland, 49.3, default="") is None


def test_uptake_all_year_round_has_no_season_to_split():
    """Invented evergreen record: a daily course of uptake the same in every month
    (each two months a sixth of the year's uptake), so no start is named."""
    stamps = pd.date_range("2021-01-01", periods=365 * 48, freq="30min")
    hour = np.asarray(stamps.hour + stamps.minute / 60.0)
    nee = 3.0 - 12.0 * np.clip(np.sin((hour - 6.0) / 12.0 * np.pi), 0.0, None)
    assert split_growing_season("07-01", nee, stamps, 5.0) is None


def test_too_few_months_say_nothing(grassland):
    nee, stamps = grassland
    summer = (stamps.month >= 4) & (stamps.month <= 10)
    assert split_growing_season("07-01", nee[summer], stamps[summer], 49.3) is None


@pytest.mark.parametrize("start, meant", [("01-07", "07-01"), ("01-02", "02-01"),
                                          ("01-12", "12-01"), ("01-01", None),
                                          ("07-01", None), ("01-15", None), ("12-01", None)])
def test_a_start_written_day_first_is_named(start, meant):
    """Round mistakes54: a start read month first as a January day from the 2nd to the
    12th is the first of another month written day first (ISO 8601 writes month before
    day (m); budget years start on a month's first day, common practice (m))."""
    from fluxpart.year_start_season import day_first_year_start
    text = day_first_year_start(start)
    if meant is None:
        assert text is None
    else:
        assert f'year_start = "{start}"' in text and f'write year_start = "{meant}"' in text
