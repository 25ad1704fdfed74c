"""Layouts of the layouts31 round.

Outside facts, each named beside its check: a pyranometer reads about 0 W m-2 with the sun
down (WMO Guide to Instruments and Methods of Observation, vol. I, ch. 7 (m)), and the
sun is down where the top-of-atmosphere radiation is 0 (checked through the standard
library's math: the solar elevation at local solar midnight is -(90 - |latitude -
declination|) degrees, common practice); a measured continuous quantity at a fixed
resolution holds a value about as often as its neighbours (the NEE zero-code rule of
unit_checks, common practice). Everything else is invented known truth: the records as
written.
"""

import math

import numpy as np
import pandas as pd
import pytest

from fluxpart.code_values import ordinary_code_message
from fluxpart.errors import ConfigError
from fluxpart.io import read_config, read_table
from fluxpart.site import Site
from fluxpart.solar import potential_radiation

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd",
           "tsoil": "t_soil"}
NAMES = ["co2_flux", "us", "sw", "t_air", "vpd", "t_soil"]


def _records(count=48 * 30):
    """Invented half-hourly records ending at 00:30 on 1 May (local standard time); Rg
    0.7 of the potential radiation, so exactly 0 whenever the sun is down (a logger that
    clamps negative readings)."""
    ends = pd.date_range("2021-05-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = (0.7 * potential_radiation(ends - pd.Timedelta(minutes=30), SITE.latitude,
                                    SITE.longitude, SITE.utc_offset, interval_minutes=30)
          ).round(1)
    noise = np.random.default_rng(31).normal(0.0, 0.4, count)
    fc = (2.0 - rg / 100 + noise).round(3)
    ta = (15 + 5 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    vpd = (5 + ta / 3).round(2)
    us = (0.25 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    ts = (12 + np.sin((hour - 12) / 12 * np.pi)).round(2)
    return ends, np.column_stack([fc, us, rg, ta, vpd, ts])


def _write(path, ends, values):
    lines = ["stamp," + ",".join(NAMES)]
    lines += [f"{e:%Y-%m-%d %H:%M}," + ",".join(f"{v:g}" for v in row)
              for e, row in zip(ends, values, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


# ------------------------------------------------ a missing code that is a reading
def test_night_zeros_of_rg_under_a_code_of_zero_are_refused_naming_both(tmp_path):
    """Before: missing = [-9999, 0] blanked every night's Rg without a word (on the
    example site with Rg clamped at 0: daytime GPP +23.6 g C m-2). Known truth: the 0s
    are measured night readings."""
    # the sun is down at local solar midnight: elevation -(90 - |lat - decl|) < 0 (m)
    declination = 23.44 * math.sin(math.radians(360 / 365 * (121 - 81)))   # 1 May (m)
    assert -(90 - abs(SITE.latitude - declination)) < 0
    ends, values = _records()
    assert (values[:, 2] == 0).mean() > 0.3                 # many nights of exact 0
    path = _write(tmp_path / "r.csv", ends, values)
    with pytest.raises(ConfigError) as caught:
        _read(path, missing=[-9999, 0])
    message = str(caught.value)
    assert "column 'sw' (rg)" in message and "with the sun down" in message
    assert "[input.missing_by_variable]" in message and "rg = [0]" in message
    # the reading "0 is a code of NEE only": Rg kept whole, as without the code
    kept, _ = _read(path, missing=[-9999], missing_by_variable={"nee": [0]})
    plain, _ = _read(path)
    assert np.array_equal(kept["rg"].to_numpy(), plain["rg"].to_numpy())
    # the reading "0 is no value in Rg too": the night readings blanked, as asked
    blanked, _ = _read(path, missing=[-9999, 0], missing_by_variable={"rg": [0]})
    assert int(blanked["rg"].isna().sum()) == int((values[:, 2] == 0).sum())


def test_a_code_of_zero_in_nee_only_blanks_nee_only(tmp_path):
    """A flux written 0 for missing (a spike at 0 against its neighbours) with the code
    listed for NEE alone: NEE's zeros blanked, no other column touched."""
    ends, values = _records()
    values[::7, 0] = 0.0
    path = _write(tmp_path / "n.csv", ends, values)
    frame, _ = _read(path, missing=[-9999], missing_by_variable={"nee": [0]})
    assert int(frame["nee"].isna().sum()) == len(values[::7])
    assert not frame["rg"].isna().any()


def test_a_freezing_soil_under_a_code_of_zero_is_refused(tmp_path):
    """A soil held at the freezing point (the zero curtain): 0.0 as often as -0.1 and
    0.1, a measured value; a code of 0 would blank a tenth of the column."""
    ends, values = _records()
    values[:, 5] = np.round(np.random.default_rng(5).normal(0.0, 0.3, len(ends)), 1)
    path = _write(tmp_path / "s.csv", ends, values)
    with pytest.raises(ConfigError, match=r"column 't_soil' \(tsoil\).*as a measured value is"):
        _read(path, missing=[-9999, 0], missing_by_variable={"rg": [0]})


def test_a_code_far_more_frequent_than_its_neighbours_stays_a_code(tmp_path):
    """A logger writing 0 for a lost soil temperature: 0 ten times more frequent than the
    values one step beside it is a code, blanked as before without a word."""
    ends, values = _records()
    values[::10, 5] = 0.0                       # the rest lies near 12 °C: a spike at 0
    path = _write(tmp_path / "c.csv", ends, values)
    frame, _ = _read(path, missing=[-9999, 0], missing_by_variable={"rg": [0]})
    assert int(frame["tsoil"].isna().sum()) == len(values[::10])


def test_ordinary_code_rules_on_their_own():
    """Rg zeros by day (outages fall by day and night alike) are a code; a code of
    -9999 is never judged; a value on the edge of the column's range is not among its
    values."""
    rng = np.random.default_rng(0)
    rg = rng.uniform(0, 800, 960).round(1)
    night = np.arange(960) % 2 == 0
    outages = rng.random(960) < 0.2
    rg[outages] = 0.0                                  # half of them by day
    assert ordinary_code_message("rg", "sw", 0.0, rg, night) is None
    assert ordinary_code_message("rg", "sw", -9999.0, np.full(960, -9999.0), night) is None
    vpd = np.concatenate([np.zeros(200), rng.uniform(0.1, 20, 760).round(1)])
    assert ordinary_code_message("vpd", "vpd", 0.0, vpd) is None       # its minimum
    tair = rng.normal(0, 0.3, 960).round(1)
    assert "an ordinary value of column 't_air'" in ordinary_code_message("tair", "t_air", 0.0,
                                                                           tair)


def test_missing_by_variable_in_the_site_config(tmp_path):
    """[input.missing_by_variable] is read from the site config; an unknown variable is
    refused naming the table."""
    ends, values = _records(96)
    _write(tmp_path / "t.csv", ends, values)
    config = tmp_path / "site.toml"
    text = ('[site]\nname = "invented"\nlatitude = 49.3\nlongitude = 10.2\nutc_offset = 1.0\n'
            '[input]\npath = "t.csv"\ntime_column = "stamp"\ntime_format = "%Y-%m-%d %H:%M"\n'
            'time_marks = "end"\n[input.columns]\nnee = "co2_flux"\nustar = "us"\nrg = "sw"\n'
            'tair = "t_air"\nvpd = "vpd"\n[input.units]\nvpd = "hPa"\n'
            '[input.missing_by_variable]\n')
    config.write_text(text + "nee = [0]\n", encoding="utf-8")
    frame, _ = read_config(config)
    assert not frame["rg"].isna().any()
    config.write_text(text + "solar = [0]\n", encoding="utf-8")
    with pytest.raises(ConfigError, match=r"\[input.missing_by_variable\] solar"):
        read_config(config)


# ------------------------------------------------ messages that named a wrong cause or fix
def _plain_lines(count=96):
    ends, values = _records(count)
    return ["stamp," + ",".join(NAMES)] + [
        f"{e:%Y-%m-%d %H:%M}," + ",".join(f"{v:g}" for v in row)
        for e, row in zip(ends, values, strict=True)]


def test_a_number_with_a_comment_after_it_is_named(tmp_path):
    """Before: "if '11.74 # sensor cleaned' marks missing data, add it to [input]
    missing", which blanks that one value and names the next. "#" opens a comment to the
    end of the line in CSV dialects that allow comments (common practice)."""
    lines = _plain_lines()
    for i in (10, 40):
        lines[i] += " # sensor cleaned"
    path = tmp_path / "c.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(Exception) as caught:
        _read(path)
    message = str(caught.value)
    assert "followed by a comment ('# sensor cleaned' in every such cell)" in message
    assert "add it to [input] missing" not in message
    assert "kept or dropped" in message


def test_minutes_and_seconds_of_a_spreadsheet_are_named(tmp_path):
    """Before: "whole numbers written with a decimal fraction ... write them as integers".
    Known truth: '30:00.0' is the minute, second and tenth of 00:30:00.0 (date and hour
    lost, as a sheet saves a cell formatted mm:ss.0)."""
    ends, _ = _records(96)
    lines = _plain_lines()
    lines[1:] = [f"{e:%M:%S}.0," + line.split(",", 1)[1] for e, line in zip(ends, lines[1:],
                                                                           strict=True)]
    assert lines[1].startswith("30:00.0,")
    path = tmp_path / "m.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(Exception, match=r"minutes, seconds and tenths \('30:00.0'\).*date and "
                                        r"hour are lost"):
        _read(path)


def test_a_header_in_another_delimiter_than_its_data_is_read(tmp_path):
    """Before: "set [input] delimiter = ';'", under which no data line splits; layouts31
    named both separators; since layouts51 each of the 7 names stands over one of the
    7 fields of records holding no ';', so it is read, noted. Known truth: a header of 7
    names split by ';' over data lines of 7 fields split by ','."""
    lines = _plain_lines()
    (tmp_path / "plain.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    lines[0] = lines[0].replace(",", ";")
    path = tmp_path / "h.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    frame, report = _read(path)
    pd.testing.assert_frame_equal(frame, _read(tmp_path / "plain.csv")[0])
    assert any("written with semicolons where the records use commas" in n
               for n in report.notes)


def test_a_record_run_together_with_a_header_is_named(tmp_path):
    """Before: "line 49 is a header line with other names or another order". Known truth:
    two files joined end to end, the first without a line break at its end."""
    lines = _plain_lines()
    text = "\n".join(lines[:49]) + "\n".join([lines[0]] + lines[49:]) + "\n"
    path = tmp_path / "j.csv"
    path.write_text(text, encoding="utf-8")
    assert len(text.splitlines()) == len(lines)         # one line fewer than the two files
    with pytest.raises(Exception, match=r"line 49 holds a record run together with a header "
                                        r"line \(its field '[-0-9.]+stamp'\)"):
        _read(path)


def test_a_zip_holding_a_compressed_file_names_it(tmp_path):
    """Before: "is a zip archive (an .xlsx or .ods workbook is one)". The members are
    read through the standard library's zipfile (PKWARE APPNOTE (m))."""
    import gzip
    import zipfile

    path = tmp_path / "t.zip"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("tower.csv.gz", gzip.compress(b"stamp,co2_flux\n", mtime=0))
        archive.writestr("notes.txt", "station 4")   # one file alone is read (layouts36)
    assert zipfile.ZipFile(path).namelist() == ["tower.csv.gz", "notes.txt"]
    with pytest.raises(Exception) as caught:
        _read(path)
    message = str(caught.value)
    assert "holding 2 file(s) ('tower.csv.gz', 'notes.txt')" in message
    assert "workbook" not in message
    # a workbook's parts ([Content_Types].xml, ECMA-376 (m)) keep the workbook's words
    # (since layouts42 the workbook's kind, without "unpack it")
    book = tmp_path / "b.xlsx"
    with zipfile.ZipFile(book, "w") as archive:
        archive.writestr("[Content_Types].xml", "<Types/>")
    with pytest.raises(Exception, match=r"an Office Open XML workbook \(\.xlsx\)"):
        _read(book)


def test_a_site_code_before_each_name_is_suggested(tmp_path):
    """Before: the file's columns listed, none suggested ('co2_flux' and
    'QMG_logger1_co2_flux', a site code and a logger name before each name, are too far
    apart for difflib's ratio, 2*8/28 = 0.571 below 0.6)."""
    import difflib

    assert difflib.SequenceMatcher(None, "co2_flux", "QMG_logger1_co2_flux").ratio() == 16 / 28
    lines = _plain_lines()
    lines[0] = "stamp," + ",".join("QMG_logger1_" + n for n in NAMES)
    path = tmp_path / "p.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(Exception, match=r"did you mean 'QMG_logger1_co2_flux'\? the file's "
                                        r"name carries the prefix 'QMG_logger1_'"):
        _read(path)


@pytest.mark.parametrize("mark", ["\u2028", "\x85"])
def test_lines_ended_by_unicode_separators_are_named(tmp_path, mark):
    """Before: "has a header but no records". U+2028 LINE SEPARATOR and U+0085 NEXT LINE
    are line ends to Unicode (str.splitlines takes them, Unicode Standard 5.8 (m)) but
    not to a CSV parser."""
    assert len(f"a{mark}b".splitlines()) == 2
    path = tmp_path / "u.csv"
    path.write_bytes((mark.join(_plain_lines()) + mark).encode("utf-8"))
    with pytest.raises(Exception, match=f"lines end in U\\+{ord(mark):04X}"):
        _read(path)


def test_day_and_month_in_two_orders_are_named(tmp_path):
    """Before: "the stamps jump back by 207 days: a logger clock reset". Known truth:
    day-first stamps, those of days 1-12 written month-first (a spreadsheet's reading);
    the standard library's strptime reads '05/12/2021' as 5 December under %d/%m/%Y."""
    from datetime import datetime

    assert datetime.strptime("05/12/2021", "%d/%m/%Y").month == 12
    ends, values = _records(48 * 20)
    lines = ["stamp," + ",".join(NAMES)]
    for e, row in zip(ends, values, strict=True):
        first = f"{e.month:02d}/{e.day:02d}" if e.day <= 12 else f"{e.day:02d}/{e.month:02d}"
        lines.append(f"{first}/{e.year} {e:%H:%M}," + ",".join(f"{v:g}" for v in row))
    path = tmp_path / "d.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(Exception, match="day and month are written in two orders"):
        _read(path, time_format="%d/%m/%Y %H:%M")


def test_the_zero_code_hint_of_nee_names_the_code_of_one_column(tmp_path):
    """The reader's hint for NEE written 0 where missing ("add 0 to [input] missing") led
    to the code that blanks Rg at night; it names [input.missing_by_variable] too, and the
    setting it names reads the file with Rg whole."""
    ends, values = _records(48 * 60)
    values[::7, 0] = 0.0                      # a flux is not exactly 0 that often (m)
    path = _write(tmp_path / "z.csv", ends, values)
    with pytest.raises(Exception) as caught:
        _read(path)
    assert "nee = [0] to [input.missing_by_variable]" in str(caught.value)
    frame, _ = _read(path, missing_by_variable={"nee": [0]})
    assert int(frame["nee"].isna().sum()) == len(values[::7])
    assert not frame["rg"].isna().any()


def test_tabs_turned_into_blanks_on_some_lines_are_named(tmp_path):
    """Before: "a record cut short may hold a value cut mid-number". Known truth: a tab
    file whose every fifth record had its tabs replaced by four blanks (an editor's
    setting); the standard library's str.expandtabs turns a tab into blanks so (m)."""
    assert "a\tb".expandtabs(4) == "a   b"
    lines = ["\t".join(line.split(",")) for line in _plain_lines()]
    lines = [line if (i % 5 or i == 0) else line.replace("\t", "    ")
             for i, line in enumerate(lines)]
    path = tmp_path / "t.txt"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(Exception, match=r"line 6 .*separates fields by runs of blanks where "
                                        r"the other lines hold tabs"):
        _read(path, delimiter="\t")


def test_a_header_on_every_page_is_named_as_pages(tmp_path):
    """Before: "line 53 repeats the header line (a logger program restarted, or files
    joined end to end?)", one restart named for a header printed on every page. Known
    truth: a page line and the header after every 50 records."""
    lines = _plain_lines(48 * 4)
    out = [lines[0]]
    for i, line in enumerate(lines[1:]):
        if i and i % 50 == 0:
            out += [f"Page {i // 50 + 1}", lines[0]]
        out.append(line)
    path = tmp_path / "p.csv"
    path.write_text("\n".join(out) + "\n", encoding="utf-8")
    assert out.count(lines[0]) == 4
    with pytest.raises(Exception, match=r"the header line repeats 3 times, every 52 lines or "
                                        r"so from line 53 on \(pages of a printout"):
        _read(path)


def test_a_clock_drifting_seconds_a_day_is_named_as_drift(tmp_path):
    """Before: "seconds that vary from record to record ... a logger that stamps the moment
    it writes each record?". Known truth: end stamps 3 s later each day (a quartz clock
    running fast), written to the second; 30 days make 90 s."""
    ends, values = _records()
    drifted = ends + pd.to_timedelta(np.arange(len(ends)) * 3.0 / 48, unit="s")
    lines = ["stamp," + ",".join(NAMES)] + [
        f"{e.round('1s'):%Y-%m-%d %H:%M:%S}," + ",".join(f"{v:g}" for v in row)
        for e, row in zip(drifted, values, strict=True)]
    path = tmp_path / "d.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(Exception, match=r"move steadily off the clock grid, by \+3\.0 s a day "
                                        r"\(from \+0 s to \+90 s\)"):
        _read(path, time_format="%Y-%m-%d %H:%M:%S")
    # a logger stamping the moment it writes (0-60 s late at random) is no drift
    rng = np.random.default_rng(7)
    late = ends + pd.to_timedelta(rng.uniform(0, 59, len(ends)).round(), unit="s")
    lines[1:] = [f"{e:%Y-%m-%d %H:%M:%S}," + line.split(",", 1)[1]
                 for e, line in zip(late, lines[1:], strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(Exception, match="the moment it writes each record"):
        _read(path, time_format="%Y-%m-%d %H:%M:%S")
