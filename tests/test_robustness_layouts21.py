"""Layouts of the layouts21 round: a year in several files whose record interval or
title block differs between files.

Outside facts, each named beside its check: meteorological loggers store 10-minute
means as often as 30-minute ones, and a reprogrammed logger changes its interval from
one file to the next (common practice); a logger's title block (station, program,
serial numbers) grows by a line where the program adds a sensor or a note (common
practice).
"""

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts18 import _tower

from fluxpart.errors import (
    DuplicateTimestampError,
    ImplausibleValueError,
    MissingColumnError,
    SpacingError,
)
from fluxpart.io import read_table

MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}


def _read(paths, **kwargs):
    return read_table(paths, columns=MAPPING, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end", **kwargs)


def _ten_minute(records):
    """Each 30-minute record written as three 10-minute ones (stamps 20, 10, 0 min
    before its end): invented known truth, spacing 10 minutes."""
    repeated = records.loc[records.index.repeat(3)].reset_index(drop=True)
    ends = pd.to_datetime(repeated["stamp"]) + pd.to_timedelta(
        np.tile([-20, -10, 0], len(records)), "min")
    repeated["stamp"] = ends.dt.strftime("%Y-%m-%d %H:%M")
    return repeated


def test_ten_minute_files_beside_thirty_minute_files_are_named(tmp_path):
    """30-minute records in one file, 10-minute records in the next (a logger
    reprogrammed mid-record; common practice): the refusal named no file ("average the
    file to 30 or 60 minutes", of two files), so the user could not tell which to
    average. Now it names the first and last 10-minute record's file and line, and
    asks for those records only."""
    _, records = _tower(periods=48 * 20)
    first, second = records.iloc[:480], _ten_minute(records.iloc[480:])
    first.to_csv(tmp_path / "a.csv", index=False)
    second.to_csv(tmp_path / "b.csv", index=False)
    with pytest.raises(SpacingError) as caught:
        _read([tmp_path / "a.csv", tmp_path / "b.csv"])
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"from line 2 of {str(tmp_path / 'b.csv')!r}" in message
    assert f"to line {len(second) + 1} of {str(tmp_path / 'b.csv')!r}" in message
    assert "average those records" in message
    assert "most common spacing between stamps is 10 minutes" in message


def test_one_ten_minute_file_is_named_with_its_lines(tmp_path):
    """A single file of 10-minute records: named from its first data line (line 2,
    under the header) to its last, and the file as the thing to average."""
    _, records = _tower(periods=48 * 5)
    _ten_minute(records).to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(SpacingError) as caught:
        _read(tmp_path / "a.csv")
    message = str(caught.value)
    assert f"from line 2 of {str(tmp_path / 'a.csv')!r}" in message
    assert f"to line {3 * len(records) + 1} of" in message
    assert "average the file to 30 or 60 minutes" in message


@pytest.mark.parametrize("setting", [0, 1])
def test_title_blocks_of_different_lengths_name_every_length(tmp_path, setting):
    """Month files whose block above the header holds 2, 3 or 4 lines (a line added at
    a program change; common practice): each rows_before_header was refused with the
    number that reads one file ("set rows_before_header = 3"), and that number then
    refused the next file with another. Now every length is named with its files, and
    the fix that reads them all (one block length). A setting that places one file's
    header (2, 3 or 4) reads the others from their own header line since layouts50
    (test_robustness_layouts50)."""
    _, records = _tower(periods=48 * 12)
    paths = []
    for number, lines in enumerate([3, 2, 4, 3]):
        block = "".join(f"station note {i}: logger 7{i}\n" for i in range(lines))
        part = records.iloc[number * 144:(number + 1) * 144]
        path = tmp_path / f"q_{number}.csv"
        path.write_text(block + part.to_csv(index=False))
        paths.append(path)
    with pytest.raises(MissingColumnError) as caught:
        _read(paths, rows_before_header=setting)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"rows_before_header = {setting}:" in message
    assert f"2 line(s) above it in {str(paths[1])!r};" in message
    assert f"3 line(s) above it in {str(paths[0])!r} and {str(paths[3])!r};" in message
    assert f"4 line(s) above it in {str(paths[2])!r};" in message
    assert "same number of lines above its header" in message


def test_title_blocks_of_one_length_read_as_the_plain_files(tmp_path):
    """The same block length in every file reads as the files without it (known truth:
    the records as written)."""
    _, records = _tower(periods=48 * 12)
    plain, blocked = [], []
    for number in range(4):
        part = records.iloc[number * 144:(number + 1) * 144]
        (tmp_path / f"p_{number}.csv").write_text(part.to_csv(index=False))
        (tmp_path / f"b_{number}.csv").write_text("title\nprogram v2\n"
                                                   + part.to_csv(index=False))
        plain.append(tmp_path / f"p_{number}.csv")
        blocked.append(tmp_path / f"b_{number}.csv")
    expected, _ = _read(plain)
    frame, _ = _read(blocked, rows_before_header=2)
    pd.testing.assert_frame_equal(frame, expected)
    assert frame["nee"].to_numpy() == pytest.approx(records["co2_flux"].to_numpy())


def _half_year(periods=48 * 180):
    """Invented half-hourly records of 180 days (known truth: round layouts18's)."""
    _, records = _tower(periods=periods)
    return records


def test_vpd_unit_changed_between_files_names_the_split(tmp_path):
    """VPD written in kPa for 90 days, then in hPa (a logger program changed; 1 kPa =
    10 hPa, SI): the whole record was refused with `vpd = "hPa"` as the fix, which
    refuses the first file. Both parts exceed or fall far below the saturation
    vapour pressure in the other unit (VPD lies between 0 and saturation, a fact of
    the trade), so the refusal now names the file where the unit changed and no
    single-unit fix."""
    records = _half_year()
    half = 48 * 90
    records.loc[:half - 1, "vpd"] = (records.loc[:half - 1, "vpd"] / 10).round(3)
    records.iloc[:half].to_csv(tmp_path / "a.csv", index=False)
    records.iloc[half:].to_csv(tmp_path / "b.csv", index=False)
    with pytest.raises(ImplausibleValueError) as caught:
        _read([tmp_path / "a.csv", tmp_path / "b.csv"], units={"vpd": "kPa"})
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert f"split at {records['stamp'].iloc[half][:10]}" in message
    assert repr(str(tmp_path / "b.csv")) in message
    assert "those before in 'kPa', those after in 'hPa'" in message
    assert 'set [input.units] vpd = "hPa"' not in message


def test_vpd_in_one_wrong_unit_throughout_keeps_its_fix(tmp_path):
    """VPD in hPa all through, declared kPa: no split reads it, so the one-unit fix
    stays (the same message as before)."""
    records = _half_year()
    records.to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "a.csv", units={"vpd": "kPa"})
    assert 'set [input.units] vpd = "hPa"' in str(caught.value)
    assert "two units" not in str(caught.value)


def test_nee_in_mg_co2_for_the_last_months_of_one_file_is_refused(tmp_path):
    """NEE in µmol m-2 s-1 for 90 days, then in mg CO2 m-2 s-1 in the same file (1
    µmol CO2 = 0.044 mg, molar mass of CO2 44.01 g mol-1 (m)): the whole record
    passes, the months were only warned about, and the run went on with three months
    22.7 times too small. The later part alone, three months, is refused as a
    one-file record of its length would be: now refused, naming the month where the
    unit changed."""
    records = _half_year()
    half = 48 * 90
    records.loc[half:, "co2_flux"] = (records.loc[half:, "co2_flux"] * 0.044).round(4)
    records.to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "a.csv")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    change = pd.Timestamp(records["stamp"].iloc[half])
    found = pd.Timestamp(message.split("split at about ")[1][:16])
    assert abs(found - change) <= pd.Timedelta(days=31)
    assert "those before in 'µmol m-2 s-1', those after in 'mg CO2 m-2 s-1'" in message


def test_nee_in_one_unit_throughout_reads(tmp_path):
    """The same records in µmol throughout read as written (known truth): the split
    search refuses nothing that was right."""
    records = _half_year()
    records.to_csv(tmp_path / "a.csv", index=False)
    frame, report = _read(tmp_path / "a.csv")
    assert frame["nee"].to_numpy() == pytest.approx(records["co2_flux"].to_numpy())
    assert not any("two units" in warning for warning in report.warnings)


@pytest.mark.parametrize("capital_first", [False, True])
def test_a_header_in_capitals_from_one_file_on_is_named(tmp_path, capital_first):
    """Month files whose header is written in capitals from one file on (an export
    changed; SQL names are case-insensitive, ISO/IEC 9075 (m), so a database export may
    write them so): the refusal offered the capital spelling ("did you mean
    'STAMP'?"), which then refuses the files written in small letters. Now it names a
    file holding the column as written and the fix (one header for every file)."""
    _, records = _tower(periods=48 * 12)
    paths = []
    for number in range(4):
        text = records.iloc[number * 144:(number + 1) * 144].to_csv(index=False)
        header, rest = text.split("\n", 1)
        if (number < 2) == capital_first:
            header = header.upper()
        path = tmp_path / f"q_{number}.csv"
        path.write_text(header + "\n" + rest)
        paths.append(path)
    with pytest.raises(MissingColumnError) as caught:
        _read(paths)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    lacking, having = (paths[0], paths[2]) if capital_first else (paths[2], paths[0])
    assert f"no such column in {str(lacking)!r}" in message
    assert f"but {str(having)!r} has the column as written" in message
    assert "give this file the others' header line" in message


@pytest.mark.parametrize("minutes", [1, -2])
def test_stamps_on_a_moved_clock_grid_name_the_stretch(tmp_path, minutes):
    """A logger clock set by hand, or drifting by whole minutes between two
    synchronisations (common practice: loggers are synchronised at each download),
    writes its stamps at minute 1 and 31 from one record on until the next download.
    The refusal named the one odd step (31 minutes) alone; now it names the stretch of
    records on the moved grid, its length and the shift."""
    _, records = _tower(periods=48 * 10)
    ends = pd.to_datetime(records["stamp"])
    moved = (ends >= ends.iloc[96]) & (ends < ends.iloc[384])
    ends[moved] += pd.Timedelta(minutes=minutes)
    records["stamp"] = ends.dt.strftime("%Y-%m-%d %H:%M")
    records.to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(SpacingError) as caught:
        _read(tmp_path / "a.csv")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    later = "later" if minutes > 0 else "earlier"
    assert (f"the stamps from line 98 of {str(tmp_path / 'a.csv')!r} to line 385 of "
            f"{str(tmp_path / 'a.csv')!r} (288 records) lie {abs(minutes)} minute(s) "
            f"{later}") in message


def test_a_few_records_off_the_grid_are_no_moved_clock(tmp_path):
    """Three records at minute 7 (a stray stamp, not a clock moved for a day): the
    refusal stays the odd step alone."""
    _, records = _tower(periods=48 * 10)
    ends = pd.to_datetime(records["stamp"])
    ends.iloc[100:103] += pd.Timedelta(minutes=7)
    records["stamp"] = ends.dt.strftime("%Y-%m-%d %H:%M")
    records.to_csv(tmp_path / "a.csv", index=False)
    with pytest.raises(SpacingError) as caught:
        _read(tmp_path / "a.csv")
    assert "37 minutes apart" in str(caught.value)
    assert "clock grid than those before" not in str(caught.value)


@pytest.mark.parametrize("minutes", [30, 60])
def test_overlapping_downloads_on_shifted_stamps_name_the_shift(tmp_path, minutes):
    """Two downloads of one logger overlapping by five days, the second stamped at the
    start of each interval where the first stamps its end (a program change; the two
    conventions are common practice), or an hour apart (one in UTC+1 standard time,
    the other in summer time, UTC+2): every overlapping stamp disagrees, and the
    refusal blamed two loggers' files sharing columns or the overlap. The overlap agrees
    row by row with the second file's stamps moved (invented known truth); that shift
    is named now."""
    _, records = _tower(periods=48 * 20)
    first, second = records.iloc[:48 * 12].copy(), records.iloc[48 * 7:].copy()
    moved = pd.to_datetime(second["stamp"]) - pd.Timedelta(minutes=minutes)
    second["stamp"] = moved.dt.strftime("%Y-%m-%d %H:%M")
    first.to_csv(tmp_path / "dl1.csv", index=False)
    second.to_csv(tmp_path / "dl2.csv", index=False)
    with pytest.raises(DuplicateTimestampError) as caught:
        _read([tmp_path / "dl1.csv", tmp_path / "dl2.csv"])
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert (f"once the stamps of {str(tmp_path / 'dl2.csv')!r} are read {minutes} minutes "
            "later") in message


def test_overlapping_downloads_that_truly_differ_keep_their_fix(tmp_path):
    """An overlap whose air temperature was rewritten 0.1 K warmer agrees under no
    shift: the fix stays to remove one copy of the overlap."""
    _, records = _tower(periods=48 * 20)
    first, second = records.iloc[:48 * 12].copy(), records.iloc[48 * 7:].copy()
    second["t_air"] = (second["t_air"] + 0.1).round(2)
    first.to_csv(tmp_path / "dl1.csv", index=False)
    second.to_csv(tmp_path / "dl2.csv", index=False)
    with pytest.raises(DuplicateTimestampError) as caught:
        _read([tmp_path / "dl1.csv", tmp_path / "dl2.csv"])
    assert "remove one copy of the overlap" in str(caught.value)
    assert "are read" not in str(caught.value)
