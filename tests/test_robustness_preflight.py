"""Stuck sensors: a variable repeating one value for days enters the pipeline as measured.

Fact of the trade: a working sensor's last digit moves within hours (turbulence,
clouds, the diurnal cycle); a dead, frozen or disconnected one repeats a value (0 for
a pyranometer). Before this check a pyranometer reading 0 for two summer months of
the invented demo site passed `check` clean and moved annual NEE by -81 g C m-2.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart import demo
from fluxpart.cli import main
from fluxpart.errors import InsufficientDataError
from fluxpart.io import _potential
from fluxpart.preflight import (
    _repeated_drivers,
    _repeated_nee,
    _repeated_nee_any_lag,
    _repeated_records,
    _stuck,
)


@pytest.fixture(scope="module")
def year():
    frame, _ = demo.site_year(0)
    site = demo.SITE
    return frame, site, _potential(frame.index, site, 30)


def test_correct_demo_year_has_no_stuck_sensor(year):
    frame, _, potential = year
    assert _stuck(frame, potential, 30) == []


def test_dead_pyranometer_found_with_its_period(year):
    frame, _, potential = year
    broken = frame.copy()
    days = (broken.index >= "2021-06-01") & (broken.index < "2021-06-11")
    broken.loc[days, "rg"] = 0.0
    findings = _stuck(broken, potential, 30)
    assert len(findings) == 1 and not findings[0].fatal
    assert findings[0].stage == "input (rg)"
    assert "exactly 0 for" in findings[0].message and "2021-06-" in findings[0].message


@pytest.mark.parametrize("hours, found", [(20, False), (60, True)])
def test_stuck_air_temperature_needs_two_days(year, hours, found):
    frame, _, potential = year
    broken = frame.copy()
    start = pd.Timestamp("2021-08-03")
    stuck = (broken.index >= start) & (broken.index < start + pd.Timedelta(hours=hours))
    broken.loc[stuck, "tair"] = 17.25
    assert bool(_stuck(broken, potential, 30)) is found


@pytest.mark.parametrize("value, found", [(0.0, False), (-0.1, False), (-0.2, False),
                                          (0.1, False), (4.5, True), (-3.0, True)])
def test_soil_in_the_zero_curtain_is_not_stuck(year, value, found):
    """Soil under snow held at the freezing point of its water for weeks (the zero curtain,
    a few tenths of a K below 0 (m)) repeats -0.1 or -0.2 at a logger's 0.1 K resolution as
    naturally as 0; it was called a stuck sensor, with the advice to delete it (review,
    round ten). A soil repeating a value away from 0 for days is still named."""
    frame, _, potential = year
    held = frame.copy()
    winter = (held.index >= "2021-01-05") & (held.index < "2021-02-20")
    held.loc[winter, "tsoil"] = value
    findings = [f for f in _stuck(held, potential, 30) if f.stage == "input (tsoil)"]
    assert bool(findings) is found


@pytest.mark.parametrize("value", [0.0, -0.1])
def test_lost_soil_probe_written_as_zero_in_summer_is_stuck(year, value):
    """A logger writing 0 for a lost soil probe through 20 July days was excepted as the
    zero curtain (review round fifteen; with respiration_driver = "tsoil" it moved the
    example site's GPP by -262 g C m-2 without a word). Conduction brings a soil to its
    freezing point gradually: at depth z its daily cycle A0 exp(-z / d), d about 0.1 m
    (Campbell & Norman 1998, ch. 8 (m)), changes by a few K an hour at most, so a soil at
    summer warmth one record and at 0 the next is no zero curtain."""
    frame, _, potential = year
    lost = frame.copy()
    summer = (lost.index >= "2021-07-05") & (lost.index < "2021-07-25")
    before = lost["tsoil"][lost.index < "2021-07-05"].iloc[-1]
    assert before > 5.0                       # the soil's warmth beside the run
    lost.loc[summer, "tsoil"] = value
    findings = [f for f in _stuck(lost, potential, 30) if f.stage == "input (tsoil)"]
    assert len(findings) == 1 and "2021-07-05" in findings[0].message


def test_zero_curtain_entered_gradually_stays_excepted(year):
    """A soil cooling to 0 over days, then held there (a true zero curtain), is not named
    even in a warm month: the criterion is the jump beside the run, not the season."""
    frame, _, potential = year
    held = frame.copy()
    days = (held.index >= "2021-03-01") & (held.index < "2021-03-21")
    approach = (held.index >= "2021-02-25") & (held.index < "2021-03-01")
    leave = (held.index >= "2021-03-21") & (held.index < "2021-03-25")
    after = held["tsoil"][held.index >= "2021-03-25"].iloc[0]
    held.loc[approach, "tsoil"] = np.linspace(2.0, 0.05, int(approach.sum()))
    held.loc[days, "tsoil"] = 0.0
    held.loc[leave, "tsoil"] = np.linspace(0.05, after, int(leave.sum()))
    assert [f for f in _stuck(held, potential, 30) if f.stage == "input (tsoil)"] == []


def test_a_quiet_soil_drifting_through_a_step_of_resolution_is_not_stuck(year):
    """A soil under snow loses its daily cycle (Campbell & Norman 1998, ch. 8-9 (m)) and
    drifts by hundredths of a K a day: a logger at 0.1 K writes one value for days as it
    crosses one step (falsealarm53: an invented tundra soil at -1.4 °C for 2.3 days). A
    probe that stops in it while the soil drifts on resumes with a jump and is named."""
    frame, _, potential = year
    quiet = frame.assign(tsoil=frame["tsoil"].round(1))       # a logger at 0.1 K
    winter = quiet.index < "2021-02-14"
    drift = np.linspace(-0.6, -1.9, int(winter.sum()))        # 0.03 K a day
    quiet.loc[winter, "tsoil"] = np.round(drift, 1)
    assert [f for f in _stuck(quiet, potential, 30) if f.stage == "input (tsoil)"] == []
    stopped = quiet.copy()
    held = (stopped.index >= "2021-01-10") & (stopped.index < "2021-01-25")
    stopped.loc[held, "tsoil"] = stopped.loc[held, "tsoil"].iloc[0]
    findings = [f for f in _stuck(stopped, potential, 30) if f.stage == "input (tsoil)"]
    assert len(findings) == 1 and "exactly -0.9 for 15.5 days" in findings[0].message


def test_polar_night_zero_rg_is_not_stuck(year):
    """Rg = 0 for weeks where the sun never rises (potential radiation 0) is correct."""
    frame, _, potential = year
    dark = frame.copy()
    dark["rg"] = np.where(np.asarray(potential) > 0, dark["rg"], 0.0)
    night_only = np.asarray(potential) <= 0
    assert _stuck(dark.assign(rg=np.where(night_only, 0.0, np.nan)), potential, 30) == []


def test_check_lists_stuck_sensor(tmp_path, capsys):
    config = demo.write_example(tmp_path)
    data = config.with_suffix(".csv")
    lines = data.read_text().splitlines()
    column = lines[0].split(",").index("solar_down")
    for row in range(1 + 48 * 160, 1 + 48 * 170):         # ten days in June
        cells = lines[row].split(",")
        cells[column] = "0.0"
        lines[row] = ",".join(cells)
    data.write_text("\n".join(lines) + "\n")
    assert main(["check", str(config)]) == 1
    assert "input (rg): rg stays at exactly 0" in capsys.readouterr().out


def test_pyranometer_offset_named_as_cause_of_night_failure(year):
    """With the sun below the horizon a pyranometer reads about 0 W m-2 (a thermal offset
    of a few W m-2; fact of the trade). An offset of +15 W m-2 leaves no record below the
    10 W m-2 night threshold: the night mask is named, before the nighttime stages'
    'no night records', as the cause (fatal only because those stages fail)."""
    from fluxpart import Config
    from fluxpart.preflight import _dark_rg

    frame, _, potential = year
    assert _dark_rg(frame, potential, Config()) == []
    findings = _dark_rg(frame.assign(rg=frame["rg"] + 15.0), potential, Config())
    assert len(findings) == 1 and findings[0].stage == "night mask"
    assert "night_rg_threshold = 10" in findings[0].message


def test_run_error_starts_with_the_night_mask(tmp_path, capsys):
    config = demo.write_example(tmp_path)
    data = config.with_suffix(".csv")
    lines = data.read_text().splitlines()
    column = lines[0].split(",").index("solar_down")
    for row in range(1, len(lines)):
        cells = lines[row].split(",")
        if cells[column] != "-9999":
            cells[column] = f"{float(cells[column]) + 15:.1f}"
        lines[row] = ",".join(cells)
    data.write_text("\n".join(lines) + "\n")
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: night mask: Rg is at or above")


def test_constant_ustar_stops_the_run(year):
    """A u* column stuck at one value (fact of the trade: turbulence never holds u* still)
    is "detected" as its own threshold and filters nothing: every calm night would enter
    the budget as measured, with a u* uncertainty of 0. Before 0.12.0 the run only warned
    (a review measured NEE -279 against -242 g C m-2 with the real u*, outside the stated
    interval); now it stops naming the column and the consequence."""
    from fluxpart.pipeline import process

    frame, site, _ = year
    stuck = frame.assign(ustar=np.where(frame["ustar"].notna(), 0.3, np.nan))
    with pytest.raises(InsufficientDataError, match=r"ustar is constant .*filters no calm "
                       r"night.*map the measured friction velocity as ustar"):
        process(stuck, site)


@pytest.mark.parametrize("days, found", [(20, False), (31, True)])
def test_month_without_nee_is_named_as_a_quality_c_gap(year, days, found):
    """A month of NEE missing (a dead analyser, a lost file): the middle of a gap longer
    than the 28-day full window of quality A lies more than 14 days from any measured NEE
    (Reichstein, gap-filling flow chart (m)), so it is filled from other weeks; `check`
    exited 0 and `run` warned of nothing, so the year read as complete. A 20-day gap is
    filled within quality A windows and is not named."""
    from fluxpart.pipeline import check_record

    frame, site, _ = year
    gap = (frame.index >= "2021-07-01") & (frame.index < pd.Timestamp("2021-07-01")
                                           + pd.Timedelta(days=days))
    _, findings = check_record(frame.assign(nee=frame["nee"].where(~gap)), site)
    named = [f for f in findings if f.stage == "gap filling"]
    assert bool(named) is found
    if found:
        assert not named[0].fatal and "31.2 days (2021-06-30" in named[0].message


def test_a_week_of_records_read_out_twice_is_named_with_both_periods(year):
    """A week of every variable pasted over the next week (a logger memory read out twice,
    rows pasted twice) passed `check` clean and entered as measured (review, round five).
    Named, not fatal, with the copy's period and the lag. Fact of the trade as above: the
    last digits of a measured flux and temperature never repeat over a day of records;
    the correct demo year and a copy shifted by less than a day are not named."""
    frame, _, _ = year
    assert _repeated_records(frame, 30) == []
    pasted = frame.copy()
    source = (pasted.index >= "2021-06-03") & (pasted.index < "2021-06-10")
    target = (pasted.index >= "2021-06-10") & (pasted.index < "2021-06-17")
    pasted.loc[target] = frame.loc[source].to_numpy()
    findings = _repeated_records(pasted, 30)
    assert len(findings) == 1 and not findings[0].fatal
    assert findings[0].stage == "input (repeated records)"
    message = findings[0].message
    assert "2021-06-10" in message and "the records 7 days earlier (from 2021-06-03" in message
    measured = int(frame.loc[source, "nee"].notna().sum())
    assert message.startswith(f"{measured} records ")
    shifted = frame.copy()
    shifted.loc[target] = frame.shift(47).loc[target].to_numpy()      # 23.5 h earlier
    assert _repeated_records(shifted, 30) == []


def test_nee_pasted_over_other_days_is_named_even_without_its_drivers(year):
    """A month of the NEE column pasted over the next month while the drivers were not
    (review round twelve: annual NEE -241.4 -> -280.4 g C m-2 on the example site without
    a word), and one day of every column pasted over the next, whose measured NEE (32 of
    48 records) was too few for the all-variable check, passed silently. Fact of the
    trade as above: measured fluxes do not repeat, digit for digit, the values a whole
    number of days earlier. The correct demo year, at the example file's 0.001 and at a
    coarse 0.1 µmol m-2 s-1 resolution, and NEE stuck at one value are not named here."""
    frame, _, _ = year
    for decimals in (None, 3, 1):
        clean = frame.copy()
        if decimals is not None:
            clean["nee"] = clean["nee"].round(decimals)
        assert _repeated_nee(clean, 30) == []
    pasted = frame.copy()
    june = (pasted.index >= "2021-06-01") & (pasted.index < "2021-07-01")
    july = (pasted.index >= "2021-07-01") & (pasted.index < "2021-07-31")
    pasted.loc[july, "nee"] = frame.loc[june, "nee"].to_numpy()
    assert _repeated_records(pasted, 30) == []                     # drivers differ
    (finding,) = _repeated_nee(pasted, 30)
    assert not finding.fatal and finding.stage == "input (repeated NEE)"
    assert "the NEE 30 day(s) earlier (from 2021-06-01" in finding.message
    assert "while the drivers do not" in finding.message
    day = frame.copy()
    source = (day.index >= "2021-06-10") & (day.index < "2021-06-11")
    target = (day.index >= "2021-06-11") & (day.index < "2021-06-12")
    day.loc[target] = frame.loc[source].to_numpy()
    assert int(frame.loc[source, "nee"].notna().sum()) < 48
    (finding,) = _repeated_nee(day, 30)
    assert "1 day(s) earlier (from 2021-06-10" in finding.message and "so do rg" in finding.message
    stuck = frame.copy()
    stuck.loc[july, "nee"] = 1.5
    assert _repeated_nee(stuck, 30) == []


@pytest.mark.parametrize("lag", [30 * 48 - 1, 30 * 48 + 1, 150 * 48 - 1, 10 * 48 + 13])
def test_nee_pasted_a_record_off_whole_days_is_named(year, lag):
    """The NEE column pasted over later rows at a lag that is not a whole number of days
    (a spreadsheet paste one row off, or at an offset of days and hours) passed silently:
    on the example site the first half-year's NEE pasted over the second one record off
    moved annual NEE by -262.3, nighttime GPP by -386.6 and Reco by -648.9 g C m-2 (round
    mistakes25), since the repeated-NEE check compared whole days only. Fact of the trade:
    a measured flux's random error, tens of percent from record to record (Richardson et
    al. 2006 (m)), never lets its written digits repeat over half a day of records at any
    lag. Named with the copy's period and lag; the correct demo year, at 0.001, 0.1 and
    whole µmol m-2 s-1, NEE stuck at one value and a block pasted a whole number of days
    away (the whole-day check's own) are not named here."""
    frame, site, _ = year
    for decimals in (None, 1, 0):
        clean = frame.copy()
        if decimals is not None:
            clean["nee"] = clean["nee"].round(decimals)
        assert _repeated_nee_any_lag(clean, 30) == []
    start = int(np.searchsorted(frame.index, pd.Timestamp("2021-07-01")))
    length = min(30 * 48, lag)               # a copy of rows outside the pasted block
    nee = frame["nee"].to_numpy().copy()
    nee[start:start + length] = frame["nee"].to_numpy()[start - lag:start - lag + length]
    pasted = frame.assign(nee=nee)
    assert _repeated_nee(pasted, 30) == []                 # not a whole number of days
    (finding,) = _repeated_nee_any_lag(pasted, 30)
    assert not finding.fatal and finding.stage == "input (repeated NEE)"
    assert f"the NEE {lag} records ({lag / 48:.2f} days) earlier" in finding.message
    present = start + np.flatnonzero(np.isfinite(nee[start:start + length]))
    assert finding.message.startswith(f"{present.size} measured NEE values "
                                      f"{frame.index[present[0]]:%Y-%m-%d %H:%M} .. "
                                      f"{frame.index[present[-1]]:%Y-%m-%d %H:%M} ")
    assert f"(from {frame.index[present[0] - lag]:%Y-%m-%d %H:%M})" in finding.message
    assert "while the drivers do not" in finding.message
    from fluxpart.pipeline import check_record
    _, findings = check_record(pasted, site)                # through the preflight
    assert [f.stage for f in findings].count("input (repeated NEE)") == 1
    whole_days = frame.assign(nee=np.concatenate([nee[:start], frame["nee"].to_numpy()[
        start - 30 * 48:start - 30 * 48 + length], nee[start + length:]]))
    assert _repeated_nee(whole_days, 30) and _repeated_nee_any_lag(whole_days, 30)
    stuck = frame.copy()
    stuck.iloc[start:start + length, stuck.columns.get_loc("nee")] = 1.5
    assert _repeated_nee_any_lag(stuck, 30) == []


@pytest.mark.parametrize("name", ["ustar", "rg"])
@pytest.mark.parametrize("lag", [182 * 48, 150 * 48 - 1])
def test_a_driver_pasted_over_other_records_is_named(year, name, lag):
    """u* or Rg of the first half-year pasted over the second (a column copied in a
    spreadsheet) passed with no word on its cause: on the example site u* one record off
    the whole days moved NEE by -31.7 and Reco by -89.5 g C m-2 (named only as a seasonal
    u* threshold), Rg whole days off nighttime GPP by -419.8 and daytime GPP by -400.3
    (named only as Rg above the potential radiation; round mistakes25). Facts of the trade:
    a 30-minute u* carries a sampling error of ten percent or more (Lenschow et al. 1994
    (m)), and by day clouds and the sun's path change Rg's digits from one day to the next,
    so neither repeats over half a day of records. The correct demo year, at 0.01 m s-1 and
    whole W m-2, and a u* stuck at one value are not named."""
    frame, _, _ = year
    assert _repeated_drivers(frame, 30) == []
    coarse = frame.assign(ustar=frame["ustar"].round(2), rg=frame["rg"].round(0))
    assert _repeated_drivers(coarse, 30) == []
    start = len(frame) // 2
    length = min(len(frame) - start, lag)       # a copy of rows outside the pasted block
    values = frame[name].to_numpy().copy()
    values[start:start + length] = frame[name].to_numpy()[start - lag:start - lag + length]
    pasted = frame.assign(**{name: values})
    (finding,) = _repeated_drivers(pasted, 30, {name: "column_x"})
    assert not finding.fatal and finding.stage == f"input ({'repeated ' + name})"
    assert f"those {lag} records ({lag / 48:.2f} days) earlier" in finding.message
    present = start + np.flatnonzero(np.isfinite(values[start:start + length]))
    assert finding.message.startswith(f"{present.size} values of {name} (column 'column_x') "
                                      f"{frame.index[present[0]]:%Y-%m-%d %H:%M} .. "
                                      f"{frame.index[present[-1]]:%Y-%m-%d %H:%M} ")
    from fluxpart.pipeline import check_record
    _, findings = check_record(pasted, demo.SITE)
    assert [f.stage for f in findings].count(f"input (repeated {name})") == 1
    stuck = frame.copy()
    stuck.iloc[start:, stuck.columns.get_loc("ustar")] = 0.25
    assert _repeated_drivers(stuck, 30) == []


def test_a_soil_drifting_several_steps_a_day_then_held_by_snow_is_not_stuck(year):
    """A soil cooling by 0.3 K a day with no daily cycle (deep, or under an early snow pack:
    conduction damps each period by exp(-z / d), Campbell & Norman 1998, ch. 8 (m)) that
    then holds one reading of a 0.1 K logger for days is not named: it meets the run by one
    step and leaves it by one (falsealarm57, an invented larch site's October soil at 0.9
    for 3.7 days). A probe stopped in that drifting soil resumes off by the drift over
    the run and is named; so is one whose days beside show a daily cycle."""
    frame, _, potential = year
    soil = frame.assign(tsoil=frame["tsoil"].round(1))
    before = (soil.index >= "2021-10-01") & (soil.index < "2021-10-05")
    held = (soil.index >= "2021-10-05") & (soil.index < "2021-10-09")
    after = (soil.index >= "2021-10-09") & (soil.index < "2021-10-12")
    soil.loc[before, "tsoil"] = np.round(np.linspace(-0.3, 0.85, int(before.sum())), 1)
    soil.loc[held, "tsoil"] = 0.9
    soil.loc[after, "tsoil"] = np.round(0.85 + 0.04 * np.sin(np.arange(int(after.sum()))), 1)
    soil.loc[soil.index >= "2021-10-12", "tsoil"] = np.nan
    assert [f for f in _stuck(soil, potential, 30) if f.stage == "input (tsoil)"] == []
    stopped = soil.copy()
    stopped.loc[after, "tsoil"] = np.round(np.linspace(2.1, 3.0, int(after.sum())), 1)
    findings = [f for f in _stuck(stopped, potential, 30) if f.stage == "input (tsoil)"]
    assert len(findings) == 1 and "exactly 0.9 for 4.0 days" in findings[0].message
    cycling = soil.copy()
    hours = np.arange(int(after.sum())) / 2
    cycling.loc[after, "tsoil"] = np.round(0.9 + 0.6 * np.sin(2 * np.pi * hours / 24), 1)
    findings = [f for f in _stuck(cycling, potential, 30) if f.stage == "input (tsoil)"]
    assert len(findings) == 1 and "exactly 0.9 for 4.0 days" in findings[0].message

def test_repeated_nee_with_infinite_values_is_named_as_without(year):
    """Round speed60 counts a lag's equal pairs before it takes the pairs both measured:
    NaN equals nothing but inf equals inf (IEEE 754 comparison, a fact of floating point),
    so infinite values repeated at a lag pass the count without being measured. A month
    pasted over the next is named the same with infinite values among the records, and
    infinite values repeated at a lag are no run."""
    frame, _, _ = year
    pasted = frame.copy()
    june = (pasted.index >= "2021-06-01") & (pasted.index < "2021-07-01")
    july = (pasted.index >= "2021-07-01") & (pasted.index < "2021-07-31")
    pasted.loc[july, "nee"] = frame.loc[june, "nee"].to_numpy()
    (plain,) = _repeated_nee(pasted, 30)
    infinite = pasted.copy()
    infinite.iloc[:480, infinite.columns.get_loc("nee")] = np.inf     # ten days of inf,
    infinite.iloc[480:960, infinite.columns.get_loc("nee")] = np.inf  # ten more a lag on
    (found,) = _repeated_nee(infinite, 30)
    assert found.message == plain.message
    only = frame.copy()
    only.iloc[:960, only.columns.get_loc("nee")] = np.inf
    assert _repeated_nee(only, 30) == []


def test_a_probe_stopped_across_a_cold_spell_of_a_drifting_soil_is_named(year):
    """A deep soil (no daily cycle) cooling 0.3 K a day, then one 0.1 K reading for 20 days,
    then warming 0.3 K a day back to it: the soil turned within the run, which conduction
    allows only slowly (a parabola near a turn, Campbell & Norman 1998, ch. 8 (m): one step
    held 20 days allows 0.01 K a day beside), so a probe stopped through a cold spell is
    named (round review84; the drift exception of round falsealarm57 hid it). A soil
    turning smoothly within one reading is not: a parabola 0.03 K d-2 around a minimum."""
    frame, _, potential = year
    soil = frame.assign(tsoil=np.nan)
    days = (soil.index - pd.Timestamp("2021-10-01")) / pd.Timedelta(days=1)
    days = np.asarray(days, dtype=float)
    before = (days >= 0) & (days < 3)
    held = (days >= 3) & (days < 23)
    after = (days >= 23) & (days < 26)
    soil.loc[before, "tsoil"] = np.round(5.95 - 0.3 * days[before], 1)
    soil.loc[held, "tsoil"] = 5.0
    soil.loc[after, "tsoil"] = np.round(5.05 + 0.3 * (days[after] - 23), 1)
    findings = [f for f in _stuck(soil, potential, 30) if f.stage == "input (tsoil)"]
    assert len(findings) == 1 and "exactly 5 for 20.0 days" in findings[0].message
    one_sided = soil.copy()                 # stopped drifting: the falsealarm57 exception
    one_sided.loc[after, "tsoil"] = 5.1
    one_sided.iloc[np.flatnonzero(after)[::2], one_sided.columns.get_loc("tsoil")] = 5.0
    assert [f for f in _stuck(one_sided, potential, 30) if f.stage == "input (tsoil)"] == []
    smooth = frame.assign(tsoil=np.nan)
    window = (days >= 0) & (days < 8)
    smooth.loc[window, "tsoil"] = np.round(3.0 + 0.03 * (days[window] - 4) ** 2, 1)
    assert [f for f in _stuck(smooth, potential, 30) if f.stage == "input (tsoil)"] == []


def test_a_soil_held_under_snow_that_leaves_as_a_ramp_when_the_snow_goes_is_not_stuck(year):
    """A soil drifting 0.1 K a day under snow with no daily cycle, held at one reading of a
    0.1 K logger for 4 days, that leaves it by 0.7 K an hour and rises on by 0.7, 0.6,
    0.5 K an hour as the snow goes (the surface's warming conducted down over hours,
    Campbell & Norman 1998, ch. 8 (m); falsealarm58, an invented moss site's soil at 1.0
    for 4.2 days) is not named. A probe resuming after the stop with the stop's change in
    one step larger than the soil's changes after it is named; so is a ramp out of a run
    whose day before shows a daily cycle."""
    frame, _, potential = year
    soil = frame.assign(tsoil=frame["tsoil"].round(1))
    before = (soil.index >= "2021-10-01") & (soil.index < "2021-10-05")
    held = (soil.index >= "2021-10-05") & (soil.index < "2021-10-09")
    after = (soil.index >= "2021-10-09") & (soil.index < "2021-10-12")
    soil.loc[before, "tsoil"] = np.round(np.linspace(0.6, 0.95, int(before.sum())), 1)
    soil.loc[held, "tsoil"] = 1.0
    ramp = 1.0 + np.cumsum(np.r_[0.7, 0.7, 0.6, 0.5, np.full(int(after.sum()) - 4, 0.05)])
    soil.loc[after, "tsoil"] = np.round(ramp, 1)
    soil.loc[soil.index >= "2021-10-12", "tsoil"] = np.nan
    assert [f for f in _stuck(soil, potential, 30) if f.stage == "input (tsoil)"] == []
    resumed = soil.copy()
    resumed.loc[after, "tsoil"] = np.round(ramp + 1.5, 1)  # first step 2.2 K, then <= 0.7
    findings = [f for f in _stuck(resumed, potential, 30) if f.stage == "input (tsoil)"]
    assert len(findings) == 1 and "exactly 1 for 4.0 days" in findings[0].message
    cycling = soil.copy()
    hours = np.arange(int(before.sum())) / 2
    cycling.loc[before, "tsoil"] = np.round(1.0 + 0.6 * np.sin(2 * np.pi * hours / 24), 1)
    findings = [f for f in _stuck(cycling, potential, 30) if f.stage == "input (tsoil)"]
    assert len(findings) == 1 and "exactly 1 for 4.0 days" in findings[0].message
