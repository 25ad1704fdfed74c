"""Days on which the NEE column holds another quantity (round mistakes35).

Known-truth recovery on invented data (the fictional Quillmoor example and invented
records). Outside facts: the latent heat flux of a well-watered grassland at a summer
midday is some hundreds of W m-2 (evaporation of 4-6 mm per day takes 110-170 W m-2 as a
daily mean, Allen et al. 1998, FAO-56 (m)); a measured CO2 flux stays within about
±70 µmol m-2 s-1 (the largest uptake measured, of C4 crops (m)); the random error and spikes
of eddy covariance are single records (Hollinger & Richardson 2005 (m)).
"""
import shutil
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

from fluxpart.foreign_days import foreign_days
from fluxpart.io import read_input, read_site_config
from fluxpart.variables import VARIABLES

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
LOW, HIGH = VARIABLES["nee"].minimum, VARIABLES["nee"].maximum


def _record(days=20, minutes=30, seed=0):
    """Invented NEE: uptake by day, release at night, with a Laplace random error."""
    stamps = pd.date_range("2021-06-01", periods=days * 1440 // minutes, freq=f"{minutes}min")
    hour = np.asarray(stamps.hour + stamps.minute / 60.0, dtype=float)
    rg = np.clip(800.0 * np.sin(np.pi * (hour - 5.0) / 15.0), 0.0, None)
    rng = np.random.default_rng(seed)
    nee = 3.0 - 0.02 * rg + rng.laplace(0.0, 0.5, stamps.size)
    return stamps, rg, nee


def test_the_range_holds_every_measured_co2_flux():
    """The range judged is wider than any measured CO2 exchange (about ±70 µmol m-2 s-1,
    (m)) and narrower than a midday heat flux in W m-2 (hundreds, FAO-56 (m))."""
    assert LOW <= -70.0 and HIGH >= 70.0
    assert HIGH < 0.45 * 800.0 - 20.0


def test_latent_heat_on_three_days_is_named_with_its_days():
    """Latent heat in W m-2 (0.45 Rg - 20) written for three days in the NEE column:
    its midday values lie beyond the range and are named as a column of another quantity,
    with the days and the in-range values of those days that would enter as NEE."""
    stamps, rg, nee = _record()
    heat = (stamps >= "2021-06-10") & (stamps < "2021-06-13")
    nee[heat] = 0.45 * rg[heat] - 20.0
    text = foreign_days(nee, stamps, LOW, HIGH, column="co2_flux", unit="µmol m-2 s-1")
    assert text is not None
    assert "2021-06-10, 2021-06-11, 2021-06-12" in text and "'co2_flux'" in text
    beyond = int(np.sum(nee[heat] > HIGH))
    assert f"{beyond} of {int(heat.sum())} values" in text
    assert f"other {int(heat.sum()) - beyond} value(s)" in text


def test_single_spikes_and_one_odd_day_are_left_to_the_range_warning():
    """Spikes are single records (Hollinger & Richardson 2005 (m)): one value of 150
    µmol m-2 s-1 on each of 20 days, or three on each, is not named; nor one day of heat
    flux alone (fewer than two days); the clean record neither, at 30 and 60 minutes."""
    stamps, rg, nee = _record()
    assert foreign_days(nee, stamps, LOW, HIGH, column="c", unit="u") is None
    spiked = nee.copy()
    spiked[np.arange(20) * 48 + 25] = 150.0
    assert foreign_days(spiked, stamps, LOW, HIGH, column="c", unit="u") is None
    spiked[np.arange(20) * 48 + 30] = -150.0
    spiked[np.arange(20) * 48 + 35] = 150.0
    assert foreign_days(spiked, stamps, LOW, HIGH, column="c", unit="u") is None
    one_day = nee.copy()
    day = (stamps >= "2021-06-10") & (stamps < "2021-06-11")
    one_day[day] = 0.45 * rg[day] - 20.0
    assert foreign_days(one_day, stamps, LOW, HIGH, column="c", unit="u") is None
    hourly, _, hourly_nee = _record(minutes=60)
    assert foreign_days(hourly_nee, hourly, LOW, HIGH, column="c", unit="u") is None


def test_latent_heat_for_two_weeks_of_the_example_is_named_by_the_reader(tmp_path):
    """Through the reader: the grassland example (invented site) with latent heat in the
    NEE column from 6 to 19 July. Before, the reader said only that the values beyond
    the range would be rejected by screening, and the run's annual NEE moved by -107.4
    g C m-2 and nighttime Reco by -77.8 (round mistakes35); now the days are named. The
    example as shipped is not."""
    frame = pd.read_csv(EXAMPLES / "quillmoor_grassland.csv", dtype={"stamp_end": str})
    stamps = pd.to_datetime(frame["stamp_end"], format="%Y%m%d%H%M")
    rg = frame["solar_down"].clip(lower=0).to_numpy()
    heat = ((stamps > "2021-07-06 00:00") & (stamps <= "2021-07-20 00:00")).to_numpy()
    heat = heat & (frame["co2_exchange"].to_numpy() != -9999)
    for folder, change in (("shipped", False), ("latent", True)):
        place = tmp_path / folder
        place.mkdir()
        shutil.copy(EXAMPLES / "quillmoor_grassland.toml", place)
        copy = frame.copy()
        if change:
            copy.loc[heat, "co2_exchange"] = np.round(0.45 * rg[heat] - 20.0, 1)
        copy.to_csv(place / "quillmoor_grassland.csv", index=False)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            _, report = read_input(read_site_config(place / "quillmoor_grassland.toml"))
        texts = [text for text in report.warnings if "holds another quantity" in text]
        assert bool(texts) is change
        if change:
            assert "days from 2021-07-06 to 2021-07-19" in texts[0]
            assert texts[0].startswith("nee: column 'co2_exchange'")


def test_a_callers_frame_with_heat_flux_days_is_named_as_the_reader_names_a_file():
    """`process` on a caller's frame: the demo year (invented) with latent heat in W m-2
    as NEE for ten July days is named among the frame's unit warnings; the demo itself,
    at 30 and 60 minutes, is not."""
    from fluxpart import demo
    from fluxpart.unit_checks import frame_messages

    for minutes in (30, 60):
        frame, _ = demo.site_year(0, interval_minutes=minutes)
        assert not [t for t in frame_messages(frame, interval_minutes=minutes)
                    if "holds another quantity" in t]
    frame, _ = demo.site_year(0)
    days = (frame.index >= "2021-07-10") & (frame.index < "2021-07-20")
    days = days & frame["nee"].notna().to_numpy()
    frame.loc[days, "nee"] = 0.45 * frame.loc[days, "rg"].clip(lower=0) - 20.0
    texts = [t for t in frame_messages(frame) if "holds another quantity" in t]
    assert len(texts) == 1
    assert texts[0].startswith("frame (process() takes canonical units): nee: column 'nee'")
    assert "days from 2021-07-10 to 2021-07-19" in texts[0]


def test_an_undeclared_missing_code_on_outage_days_is_no_foreign_quantity():
    """Known-truth recovery on invented data: outages of a whole day written with a
    logger's missing-data code (-6999, not in [input] missing) put every record of those
    days beyond the range, yet they hold no quantity at all: one number repeated exactly
    is a code (the reader's own rule, io._undeclared_code, names it), not days of heat
    flux. The days are not named (before review40: "2 day(s) ... another quantity");
    latent heat on three other days still is, its in-range values counted without the
    coded records."""
    stamps, rg, nee = _record()
    outage = (stamps >= "2021-06-03") & (stamps < "2021-06-05")
    nee[outage] = -6999.0
    assert foreign_days(nee, stamps, LOW, HIGH, column="c", unit="u") is None
    heat = (stamps >= "2021-06-10") & (stamps < "2021-06-13")
    nee[heat] = 0.45 * rg[heat] - 20.0
    text = foreign_days(nee, stamps, LOW, HIGH, column="c", unit="u")
    assert text is not None and "2021-06-10, 2021-06-11, 2021-06-12" in text
    assert "2021-06-03" not in text
    beyond = int(np.sum(nee[heat] > HIGH))
    assert f"other {int(heat.sum()) - beyond} value(s)" in text
