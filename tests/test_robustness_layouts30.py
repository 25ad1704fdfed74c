"""Layouts of the layouts30 round: a column beside the stamps naming their clock, and
decimal commas left unquoted in a comma-delimited file.

Outside facts, each named beside its check: the time-zone database's abbreviations and
zones (CET = UTC+1, CEST = UTC+2; Europe/Berlin keeps CET in winter and CEST in summer),
checked through the standard library's zoneinfo (IANA tz database (m)); RFC 4180, section
2, rule 6: a field holding the delimiter is enclosed in double quotes (m), checked through
the standard library's csv module. Everything else is invented known truth: the records
as written.
"""

import csv
from datetime import datetime, timezone
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import InputFileError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
NAMES = ["co2_flux", "us", "sw", "t_air", "vpd"]


def _records(count=96 * 4):
    """Invented half-hourly records ending at 00:30 on 1 June (local standard time)."""
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = np.clip(800 * np.sin((hour - 6) / 12 * np.pi), 0, None).round(1)
    noise = np.random.default_rng(30).normal(0.0, 0.4, count)
    fc = (2.0 - rg / 100 + noise).round(3)
    ta = (15 + 5 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    vpd = (5 + ta / 3).round(2)
    us = (0.2 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    return ends, np.column_stack([fc, us, rg, ta, vpd])


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


def _zone_file(path, label):
    ends, values = _records()
    lines = ["stamp,zone," + ",".join(NAMES)]
    lines += [f"{e:%Y-%m-%d %H:%M},{label(e)}," + ",".join(f"{v:g}" for v in row)
              for e, row in zip(ends, values, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _standard_offset(name):
    """A zone's standard offset [h] through zoneinfo (IANA tz database (m))."""
    zone = ZoneInfo(name)
    return min(datetime(2021, m, 15, 12, tzinfo=timezone.utc).astimezone(zone)
               .utcoffset().total_seconds() / 3600 for m in (1, 7))


# ------------------------------------------------ a column naming the stamps' clock
def test_a_zone_column_of_utc_against_local_standard_time_is_refused_naming_both(tmp_path):
    """Before: read as local standard time (UTC+1) with the column ignored, every record
    an hour from its place. Known truth: the column says UTC, the site is at UTC+1."""
    path = _zone_file(tmp_path / "z.csv", lambda e: "UTC")
    with pytest.raises(TimestampError) as caught:
        _read(path)
    message = str(caught.value)
    assert "column 'zone'" in message and "'UTC'" in message
    assert "1 hour(s) apart" in message and 'time_zone = "UTC"' in message
    # the reading the column asks for: 00:30 UTC is 01:30 at UTC+1, an hour later
    frame, _ = _read(path, time_zone="UTC")
    plain, _ = _read(_zone_file(tmp_path / "p.csv", lambda e: "UTC+01:00"))
    assert (frame.index - plain.index == pd.Timedelta(hours=1)).all()


def test_a_zone_column_agreeing_with_the_site_reads_as_before(tmp_path):
    """CET is UTC+1 (IANA tz database (m)), the site's standard offset: nothing changes."""
    assert _standard_offset("Europe/Berlin") == SITE.utc_offset       # CET, UTC+1 (m)
    cet, _ = _read(_zone_file(tmp_path / "c.csv", lambda e: "CET"))
    note, _ = _read(_zone_file(tmp_path / "n.csv", lambda e: "ok"))   # not a clock
    pd.testing.assert_frame_equal(cet, note)
    assert cet.index[0] == pd.Timestamp("2021-06-01 00:00")


@pytest.mark.parametrize(("label", "options", "said"), [
    (lambda e: "CEST" if e.day >= 3 else "CET", {}, "daylight saving"),
    (lambda e: "Europe/Berlin", {}, 'time_zone = "Europe/Berlin"'),
    (lambda e: "UTC+02", {}, "[site] utc_offset = 2"),
    (lambda e: "GMT", {"time_zone": "Europe/Berlin"}, "UTC+1 and UTC+2"),
])
def test_a_zone_column_against_the_settings_is_refused(tmp_path, label, options, said):
    """CEST = UTC+2 and Europe/Berlin keeps daylight saving (IANA tz database (m)):
    both readings move records by an hour, so the file is refused naming both."""
    berlin = ZoneInfo("Europe/Berlin")
    assert datetime(2021, 7, 1, tzinfo=timezone.utc).astimezone(berlin).tzname() == "CEST"
    with pytest.raises(TimestampError) as caught:
        _read(_zone_file(tmp_path / "z.csv", label), **options)
    assert said in str(caught.value) and "column 'zone'" in str(caught.value)


def test_a_zone_column_that_the_settings_read_is_accepted(tmp_path):
    """The settings that the refusals name read the file."""
    frame, _ = _read(_zone_file(tmp_path / "b.csv", lambda e: "Europe/Berlin"),
                     time_zone="Europe/Berlin")
    # June stamps in CEST (UTC+2) are 23:30 of 31 May in UTC+1 for the first record's end
    assert frame.index[0] == pd.Timestamp("2021-05-31 23:00")


# ------------------------------------------------ decimal commas, unquoted, in a CSV
def test_unquoted_decimal_commas_in_a_comma_file_are_named(tmp_path):
    """Before: "line 14 has 11 fields where the header has 10", the header (6 names)
    miscounted and the cause unnamed. RFC 4180 rule 6 (m): a field holding the delimiter
    must be quoted; csv splits the unquoted value in two, the quoted one not."""
    assert next(csv.reader(['a,2,63'])) == ["a", "2", "63"]
    assert next(csv.reader(['a,"2,63"'])) == ["a", "2,63"]
    ends, values = _records()
    lines = ["stamp," + ",".join(NAMES)]
    lines += [f"{e:%Y-%m-%d %H:%M}," + ",".join(f"{v:g}".replace(".", ",") for v in row)
              for e, row in zip(ends, values, strict=True)]
    path = tmp_path / "u.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(InputFileError) as caught:
        _read(path, decimal=",")
    message = str(caught.value)
    assert "line 2 " in message and "where the header has 6" in message
    assert "must be quoted" in message
    # the same values quoted, as a CSV writer quotes them, read as written
    quoted = tmp_path / "q.csv"
    quoted.write_text("\n".join([lines[0]] + [
        f"{e:%Y-%m-%d %H:%M}," + ",".join('"' + f"{v:g}".replace(".", ",") + '"' for v in row)
        for e, row in zip(ends, values, strict=True)]) + "\n", encoding="utf-8")
    frame, _ = _read(quoted, decimal=",")
    assert np.allclose(frame["nee"].dropna().to_numpy(), values[:, 0])


def test_a_field_count_names_the_header_as_written(tmp_path):
    """A line with more fields than the first record's, the header shorter still: the
    header's own count (6) is named, not the parser's count of the first record."""
    ends, values = _records(20)
    lines = ["stamp," + ",".join(NAMES)]
    lines += [f"{e:%Y-%m-%d %H:%M}," + ",".join(f"{v:g}" for v in row) + ",1"
              for e, row in zip(ends, values, strict=True)]
    lines[5] += ",2"
    path = tmp_path / "w.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    with pytest.raises(InputFileError) as caught:
        _read(path)
    assert "where the header has 6" in str(caught.value)


def _offset_file(path, name, value):
    ends, values = _records()
    lines = [f"stamp,{name}," + ",".join(NAMES)]
    lines += [f"{e:%Y-%m-%d %H:%M},{value}," + ",".join(f"{v:g}" for v in row)
              for e, row in zip(ends, values, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


@pytest.mark.parametrize(("name", "value", "refused"), [
    ("utc_offset", "0", "in UTC"),            # hours (ISO 8601 offsets are hours (m))
    ("TZ offset [min]", "0", "in UTC"),
    ("UTC offset", "120", "in UTC+2"),        # 120 minutes = 2 h
    ("utc_offset", "1", None),                # the site's own offset: read as before
    ("tz_offset_min", "60", None),
    ("sensor_offset", "0", None),             # not a clock's offset
])
def test_a_utc_offset_column_is_judged_like_a_zone(tmp_path, name, value, refused):
    """A column named for the UTC offset holding one number states the stamps' clock:
    against [site] utc_offset = 1 both readings are named; where it agrees, or the
    column is no clock's offset, the file reads as without it."""
    path = _offset_file(tmp_path / "o.csv", name, value)
    if refused:
        with pytest.raises(TimestampError) as caught:
            _read(path)
        assert refused in str(caught.value) and "hour(s) apart" in str(caught.value)
    else:
        frame, _ = _read(path)
        assert frame.index[0] == pd.Timestamp("2021-06-01 00:00")


def test_an_abbreviation_under_another_name_is_not_read_as_a_clock(tmp_path):
    """"EST" (UTC-5, IANA tz database (m)) under a column named "station" is a code, not
    the stamps' clock: read as before; under "TZ" it states UTC-5 and is refused."""
    ends, values = _records()
    for name, refused in (("station", False), ("TZ", True)):
        lines = [f"stamp,{name}," + ",".join(NAMES)]
        lines += [f"{e:%Y-%m-%d %H:%M},EST," + ",".join(f"{v:g}" for v in row)
                  for e, row in zip(ends, values, strict=True)]
        path = tmp_path / f"{name}.csv"
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
        if refused:
            with pytest.raises(TimestampError, match=r"in UTC-5 .*6 hour\(s\) apart"):
                _read(path)
        else:
            assert _read(path)[0].index[0] == pd.Timestamp("2021-06-01 00:00")
