"""Review of the layouts54 round (a logger program change read as the file's parts).

Outside fact, named beside its checks: a logger writes its records in the order of its
clock, appending to its file (common practice of logger data systems), so a later part of
one file holds later records than the parts above it, as the records of one file do
(:func:`fluxpart.stamp_sequence.check_order` refuses stamps going back within a file).
Everything else is invented known truth: the records of ``test_robustness_layouts26``
written as a logger's table blocks (``test_robustness_layouts54``).
"""
import pandas as pd
import pytest
from test_robustness_layouts26 import _read  # invented records
from test_robustness_layouts54 import REORDERED, _block, _frame, _later, _settings, _write

from fluxpart.errors import InputFileError, NonMonotonicTimestampError

TITLE = "Logger,quill_v4,Signature,51233"


def _shifted(part, by):
    part = part.copy()
    part["stamp"] = [f"{t:%Y-%m-%d %H:%M}" for t in pd.to_datetime(part["stamp"]) + by]
    return part


@pytest.mark.parametrize("case", ["clock_reset", "parts_in_reverse"])
def test_a_later_part_dated_before_the_part_above_is_refused(tmp_path, case):
    """A clock set back 30 days at the program change (or the parts of two periods in
    reverse order): joined as files, sorted, the later part was read a month early
    without a word (a file read wrong); now one error naming the header written again
    and the first record under it, as stamps going back in one file are."""
    frame, cut = _frame(), 96 * 3
    if case == "clock_reset":
        lines = _block(frame.iloc[:cut]) + _block(
            _shifted(_later(frame.iloc[cut:], REORDERED), pd.Timedelta("-30D")), TITLE)
    else:
        lines = _block(frame.iloc[cut:]) + _block(_later(frame.iloc[:cut], REORDERED), TITLE)
    path = _write(tmp_path / "one.csv", lines)
    header = lines.index(",".join(REORDERED)) + 1
    with pytest.raises(NonMonotonicTimestampError,
                       match=rf"written again on line {header} .*\(line {header + 2}\)"
                       ) as caught:
        _read(path, **_settings())
    assert len(str(caught.value).splitlines()) == 1


def test_a_later_part_repeating_records_above_it_is_still_read(tmp_path):
    """The new program's part opening with ten records the part above holds, copied
    exactly: read once each, as overlapping files are (kept behaviour)."""
    frame, cut = _frame(), 96 * 3
    one = _write(tmp_path / "one.csv", _block(frame.iloc[:cut])
                 + _block(_later(frame.iloc[cut - 10:], REORDERED), TITLE))
    clean = _write(tmp_path / "clean.csv", _block(frame))
    pd.testing.assert_frame_equal(_read(one, **_settings())[0],
                                  _read(clean, **_settings())[0])


def test_a_short_first_part_is_named_by_the_block_that_ends_it(tmp_path):
    """The first part holding 47 records: the error named line 2 (the file's own
    header) as "a header line with other names"; now the line of the block written
    again."""
    frame = _frame()
    lines = _block(frame.iloc[:47]) + _block(_later(frame.iloc[47:], REORDERED), TITLE)
    path = _write(tmp_path / "one.csv", lines)
    header = lines.index(",".join(REORDERED)) + 1
    with pytest.raises(InputFileError, match=rf"line {header} is a header line .*the part "
                       r"above it holds 47 record\(s\) \(lines 1-50\)"):
        _read(path, **_settings())


@pytest.mark.parametrize("block", ["names", "title_and_names", "names_and_units"])
def test_a_names_line_without_the_whole_block_is_refused(tmp_path, block):
    """A line of the names with air and soil temperature exchanged among the records of
    a file whose block has a title and a units line (a status line, a header pasted in),
    the records under it unchanged: read as a program change, air temperature was read
    from the soil column for five days without a word (a file read wrong); a logger writes
    its whole block again, so now one error naming the line."""
    frame = _frame()
    frame["t_soil"] = (pd.to_numeric(frame["t_air"]) * 0.5 + 6).map(lambda v: f"{v:g}")
    lines = _block(frame)
    names = "stamp,co2_flux,us,sw,t_soil,vpd,t_air"
    inserted = {"names": [names], "title_and_names": ["Logger,quill_v3,Signature,40871", names],
                "names_and_units": [names, "TS,umol m-2 s-1,m s-1,W m-2,degC,hPa,degC"]}[block]
    lines[300:300] = inserted
    path = _write(tmp_path / "one.csv", lines)
    columns = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd",
               "tsoil": "t_soil"}
    at = lines.index(names) + 1
    with pytest.raises(InputFileError, match=rf"line {at} is a header line .*whole header "
                       "block again"):
        _read(path, **_settings(), columns=columns)
