"""Layouts of the layouts24 round: a clock stated by a zone abbreviation or a zone name
(above the header, under the time column's name or in it), German zone labels on the
stamps, and compact stamps that drop a leading zero.

Outside facts, each named beside its check: the offsets of zone abbreviations and zone
names (IANA time zone database, read through the standard library's ``zoneinfo``;
EET = UTC+2, EST = UTC-5 (m)); MEZ/MESZ are the German names of CET/CEST (German time
law, Einheiten- und Zeitgesetz § 4 (m)); ISO 8601 basic format writes every field with
its leading zeros (m). Everything else is invented known truth: the records as written.
"""

from datetime import datetime, timedelta, timezone
from zoneinfo import ZoneInfo

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import FluxpartError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.stamp_places import stated_offset, stated_place, zone_offset

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}


def _records(days=20):
    """Invented half-hourly records; interval ends in local standard time (UTC+1)."""
    ends = pd.date_range("2021-06-01 00:30", periods=48 * days, freq="30min")
    rng = np.random.default_rng(24)
    hour = (ends.hour + ends.minute / 60).to_numpy()
    sun = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    values = pd.DataFrame({
        "co2_flux": np.round(3 - 12 * sun + rng.normal(0, 1, len(ends)), 3),
        "us": np.round(0.3 + 0.1 * rng.random(len(ends)), 3),
        "sw": np.round(800 * sun, 1),
        "t_air": np.round(15 + 8 * sun, 2),
        "vpd": np.round(5 + 10 * sun, 2),
    })
    return ends, values


def _write(path, stamps, values, top=(), units=None, name="stamp"):
    lines = list(top) + [",".join([name, *values.columns])]
    if units is not None:
        lines.append(units)
    cells = values.astype(str).to_numpy()
    lines += [",".join([stamp, *row]) for stamp, row in zip(stamps, cells, strict=True)]
    path.write_text("\n".join(lines) + "\n")
    return path


def _read(path, time_format="%Y-%m-%d %H:%M", **kwargs):
    kwargs.setdefault("time_column", "stamp")
    return read_table(path, columns=MAPPING, time_format=time_format,
                      time_marks="end", units={"vpd": "hPa"}, site=SITE, **kwargs)


@pytest.mark.parametrize(("text", "expected"), [
    ("Time zone: EET", 2.0),                  # EET = UTC+2 (IANA tz "europe" file (m))
    ("Zeitzone: MEZ", 1.0),                   # MEZ = CET = UTC+1 (German time law (m))
    ("Site clock: EST", -5.0),                # EST = UTC-5 (IANA tz "northamerica" (m))
    ("# timezone: Europe/London", 0.0),       # GMT in winter (zoneinfo)
    ("timezone = America/Chicago", -6.0),     # CST in winter (zoneinfo)
    ("Time zone: Australia/Adelaide", 9.5),   # ACST, standard time in July (zoneinfo)
    ("Europe/Helsinki", 2.0),                 # a line of the zone name alone (zoneinfo)
    ("EET", 2.0),
    ("Logger clock synchronised by GPS", None),   # no clock stated
    ("clock synchronised to UTC", None),           # named only in passing, as before
    ("UTM zone: 32", None),                        # not a time zone
    ("MET station QL-7", None),                    # meteorological, not the MET label
    ("Time zone: local", None),
    # zones written out in words (IANA standard times; Windows zone identifiers as the
    # Unicode CLDR maps them: "W. Europe Standard Time" is Berlin's (m))
    ("All times in Coordinated Universal Time", 0.0),
    ("Time zone: Eastern European Time", 2.0),
    ("TimeZone=W. Europe Standard Time", 1.0),
    ("Time zone: Eastern Standard Time", -5.0),
    ("Time zone: Australian Eastern Standard Time", 10.0),   # not US Eastern
    ("Zeitzone: Mitteleuropäische Zeit", 1.0),
    ("Times: local standard time", None),
    # other keys of a clock, read since layouts24
    ("Time reference: UTC", 0.0), ("Timebase: UTC", 0.0), ("Time standard = GMT", 0.0),
    ("Time base: 10", None),                      # a sampling rate, not an offset
    ("Study of Pacific Standard Time effects", None),   # a zone named in passing
    # POSIX signs in the database's Etc zones: Etc/GMT-1 is UTC+1 (IANA tz "etcetera"
    # file (m)); read before as UTC-1
    ("Time zone: Etc/GMT-1", 1.0), ("Etc/GMT+5", -5.0), ("TZ=Etc/UTC", 0.0),
    # a clock after other keys or right after a word for the stamps (ISO 8601 offsets (m))
    ("Offset from UTC: +02:00", 2.0), ("UTC offset (h): 2", 2.0),
    ("Local time = UTC + 2 h", 2.0), ("Timestamps (UTC)", 0.0),
    ("Timestamps are UTC", 0.0), ("All data in UTC", 0.0), ("Date/time: UTC", 0.0),
    ("Exported 2021-06-01 12:00 UTC", None),            # a date before the clock
    ("Timestamps synchronised to UTC via GPS", None),   # the clock named in passing
])
def test_stated_offset_reads_zone_abbreviations_and_names(text, expected):
    assert stated_offset(text) == expected


def test_zone_offset_is_the_standard_offset_of_a_zone_name():
    """The offset the standard library's zoneinfo gives in the month without daylight
    saving (January north, July south): the outside source of each expected value."""
    for name, month in (("Europe/Dublin", 1), ("America/St_Johns", 1),
                        ("Australia/Sydney", 7), ("Asia/Kathmandu", 1)):
        moment = datetime(2021, month, 15, 12, tzinfo=timezone.utc)
        expected = moment.astimezone(ZoneInfo(name)).utcoffset() / timedelta(hours=1)
        assert zone_offset(name) == expected
    assert zone_offset("Zeit (MEZ)") == 1.0
    assert zone_offset("logger_stamp") is None and zone_offset("time_met") is None
    assert zone_offset("Time zone: est") is None          # lower case: a word, not a label


def test_zone_abbreviation_above_the_header_is_refused_naming_both(tmp_path):
    """Known truth: a logger kept on EET (UTC+2) at a UTC+1 site says so above its header.
    Read before as local standard time without a word (every record an hour late)."""
    ends, values = _records()
    stamps = (ends + pd.Timedelta(hours=1)).strftime("%Y-%m-%d %H:%M")
    path = _write(tmp_path / "eet.csv", stamps, values, top=["Logger QL-7", "Time zone: EET"])
    with pytest.raises(TimestampError) as caught:
        _read(path, rows_before_header=2)
    message = str(caught.value)
    assert "'Time zone: EET'" in message and "UTC+2" in message and "UTC+1" in message
    assert "[site] utc_offset = 2" in message and "1 hour(s) apart" in message
    # the site's own zone, or time_zone set, is read as before
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    path = _write(tmp_path / "cet.csv", stamps, values, top=["Logger QL-7", "Time zone: CET"])
    frame, _ = _read(path, rows_before_header=2)
    assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)


@pytest.mark.parametrize("line", ["All times in Coordinated Universal Time",
                                  "Time reference: UTC"])
def test_spelled_zone_or_reference_line_is_refused(tmp_path, line):
    """Known truth: a logger on UTC at a UTC+1 site whose title block says so in words.
    Read before as local standard time without a word (every record an hour early)."""
    ends, values = _records()
    stamps = (ends - pd.Timedelta(hours=1)).strftime("%Y-%m-%d %H:%M")
    path = _write(tmp_path / "utc.csv", stamps, values, top=["QL-7 flux table", line])
    with pytest.raises(TimestampError, match='states stamps in UTC,.*set time_zone = "UTC"'):
        _read(path, rows_before_header=2)
    frame, _ = _read(path, rows_before_header=2, time_zone="UTC")
    assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)


@pytest.mark.parametrize(("where", "kwargs"), [
    ("units", {"rows_after_header": 1}),
    ("name", {"time_column": "time_EET"}),
    ("line", {"rows_before_header": 1}),
])
def test_zone_in_units_cell_column_name_or_line_is_refused(tmp_path, where, kwargs):
    """Known truth: EET stamps (UTC+2) at a UTC+1 site, the zone written under the time
    column's name, in it, or as a zone name on a line of its own."""
    ends, values = _records()
    stamps = (ends + pd.Timedelta(hours=1)).strftime("%Y-%m-%d %H:%M")
    units = ",".join(["EET"] + [""] * values.shape[1]) if where == "units" else None
    top = ["Europe/Athens"] if where == "line" else ()
    name = "time_EET" if where == "name" else "stamp"
    path = _write(tmp_path / "f.csv", stamps, values, top=top, units=units, name=name)
    with pytest.raises(FluxpartError, match=r"UTC\+2.*UTC\+1"):
        _read(path, **kwargs)


def test_german_zone_labels_read_as_the_english_ones(tmp_path):
    """Known truth: civil time of Berlin labelled MEZ/MESZ (the German names of CET/CEST)
    reads as the same stamps labelled CET/CEST; refused before with the hint to add %z."""
    ends, values = _records(days=30)
    ends = ends + pd.Timedelta(days=85)                      # across the March change
    civil = ends.tz_localize("Etc/GMT-1").tz_convert("Europe/Berlin")
    german = [t.strftime("%Y-%m-%d %H:%M ") + ("MESZ" if t.dst() else "MEZ") for t in civil]
    english = [t.strftime("%Y-%m-%d %H:%M ") + ("CEST" if t.dst() else "CET") for t in civil]
    a = _write(tmp_path / "de.csv", german, values)
    b = _write(tmp_path / "en.csv", english, values)
    frame_de, _ = _read(a, time_format="%Y-%m-%d %H:%M %Z")
    frame_en, _ = _read(b, time_format="%Y-%m-%d %H:%M %Z")
    pd.testing.assert_frame_equal(frame_de, frame_en)
    assert frame_de.index[0] == ends[0] - pd.Timedelta(minutes=30)    # standard time


@pytest.mark.parametrize("unpad", ["date", "hour"])
def test_compact_stamps_without_leading_zeros_are_refused(tmp_path, unpad):
    """Known truth: a compact stamp whose month and day (or hour) lack their leading
    zero; '2021111' is 1 November or 11 January (ISO 8601 basic format pads every field
    (m)). Refused before with "stamp occurs 2 times ... keep one of them" (a wrong fix) or
    a bare parse failure; now named as unpadded fields."""
    ends, values = _records(days=15)
    if unpad == "date":
        stamps = [f"{t.year}{t.month}{t.day}{t.hour:02d}{t.minute:02d}" for t in ends]
    else:
        stamps = [f"{t:%Y%m%d}{t.hour}{t.minute:02d}" for t in ends]
    path = _write(tmp_path / "c.csv", stamps, values)
    with pytest.raises(TimestampError, match="without its leading zero"):
        _read(path, time_format="%Y%m%d%H%M")
    padded = _write(tmp_path / "p.csv", ends.strftime("%Y%m%d%H%M"), values)
    frame, _ = _read(padded, time_format="%Y%m%d%H%M")
    assert len(frame) == len(ends)


def test_microsoft_nan_and_infinity_cells_read_as_missing(tmp_path):
    """Known truth: cells written "-1.#IND", "1.#QNAN" and "1.#INF00" (NaN and infinity as
    the Microsoft C runtime's printf wrote them (m)) hold no value; refused before with
    "add it to [input] missing". Now read as missing (NaN) and counted (infinity)."""
    ends, values = _records()
    values = values.astype(str)
    values.loc[[10, 20], "t_air"] = "-1.#IND"
    values.loc[[30], "sw"] = "1.#QNAN"
    values.loc[[40], "vpd"] = "1.#INF00"
    path = _write(tmp_path / "m.csv", ends.strftime("%Y-%m-%d %H:%M"), values)
    frame, report = _read(path)
    assert frame["tair"].isna().sum() == 2 and np.isnan(frame["tair"].iloc[10])
    assert np.isnan(frame["rg"].iloc[30]) and np.isnan(frame["vpd"].iloc[40])
    assert report.nonfinite_cells["vpd"] == 1
    assert frame["tair"].notna().sum() == len(ends) - 2


def test_lower_case_t_and_z_in_iso_stamps(tmp_path):
    """RFC 3339, section 5.6 (m): "T" and "Z" may be lower case. Known truth: UTC stamps
    written "2021-05-31t23:30:00z" read as the same stamps in upper case."""
    ends, values = _records()
    utc = ends - pd.Timedelta(hours=1)
    lower = _write(tmp_path / "l.csv", utc.strftime("%Y-%m-%dt%H:%M:%Sz"), values)
    upper = _write(tmp_path / "u.csv", utc.strftime("%Y-%m-%dT%H:%M:%SZ"), values)
    frame_lower, _ = _read(lower, time_format="ISO8601")
    frame_upper, _ = _read(upper, time_format="ISO8601")
    pd.testing.assert_frame_equal(frame_lower, frame_upper)
    assert frame_lower.index[0] == ends[0] - pd.Timedelta(minutes=30)


def test_overlap_differing_only_by_rounding_is_named(tmp_path):
    """Known truth: the overlap of two files whose second copy was written with two
    decimals (a number written to d decimals is within half a unit of its d-th decimal,
    common practice). Refused before as a plain disagreement; still refused (the values
    cannot say which copy is the logger's), now naming the rounding. A copy that differs
    by more than rounding keeps the plain message."""
    ends, values = _records()
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    rounded = values.copy()
    rounded["co2_flux"] = rounded["co2_flux"].round(2)
    rounded["us"] = rounded["us"].round(2)
    _write(tmp_path / "a.csv", stamps[:500], values.iloc[:500])
    _write(tmp_path / "b.csv", stamps[400:], rounded.iloc[400:])
    paths = [tmp_path / "a.csv", tmp_path / "b.csv"]
    with pytest.raises(FluxpartError) as caught:
        _read(paths)
    message = str(caught.value)
    assert "rounded to fewer decimals" in message
    assert message.index("b.csv' is that of") < message.index("a.csv' rounded")
    other = values.copy()
    other["co2_flux"] = other["co2_flux"] + 0.5
    _write(tmp_path / "b.csv", stamps[400:], other.iloc[400:])
    with pytest.raises(FluxpartError) as caught:
        _read(paths)
    assert "rounded" not in str(caught.value)


@pytest.mark.parametrize(("text", "cell", "expected"), [
    # how logger headers state the stamp's place in words (common practice)
    ("Time label: interval start", False, "start"),
    ("Timestamp at start of each 30-min average", False, "start"),
    ("timestamps: beginning-of-period", False, "start"),
    ("timestamps end-of-interval", False, "end"),
    # German, as networks of German-speaking countries write it (common practice)
    ("Zeitstempel: Beginn des Mittelungsintervalls", False, "start"),
    ("Zeitstempel = Intervallanfang", False, "start"),
    ("Ende des Messintervalls", False, "end"),
    ("interval begin", True, "start"),
    ("Intervallanfang", True, "start"),
    ("yyyymmddhhmm (start)", True, "start"),
    ("end", True, "end"),
    ("Smp", True, None),
    ("Averaging period 30 min; timestamps denote period start", False, "start"),
    # no statement of the place: a date of the record, a clause about other things
    ("Period start: 2021-01-01", False, None),
    ("Timestamp format: yyyy-mm-dd; data end 2021-12-31", False, None),
    ("time", True, None),
    ("start of interval .. end of interval", False, None),
])
def test_stated_place_words(text, cell, expected):
    assert stated_place(text, cell=cell) == expected


def test_start_stamps_stated_in_a_title_line_are_refused(tmp_path):
    """Known truth: interval starts written by a logger whose title block says "Time
    label: interval start", read with time_marks = "end" (every record 30 minutes
    early): read before without a word from the reader, now refused naming both."""
    ends, values = _records()
    starts = ends - pd.Timedelta(minutes=30)
    path = _write(tmp_path / "s.csv", starts.strftime("%Y-%m-%d %H:%M"), values,
                  top=["QL-7 flux table", "Time label: interval start"])
    with pytest.raises(TimestampError, match='set time_marks = "start"'):
        _read(path, rows_before_header=2)
    frame, _ = read_table(path, columns=MAPPING, time_column="stamp",
                          time_format="%Y-%m-%d %H:%M", time_marks="start",
                          units={"vpd": "hPa"}, site=SITE, rows_before_header=2)
    assert frame.index[0] == starts[0]


@pytest.mark.parametrize(("text", "expected"), [
    # a line above the header stating the stamps' place as "period start" with nothing
    # dating it (common practice of logger and export headers): read since round review30
    ("Period start", "start"),
    ("# Time: interval end", "end"),
    ("Time convention: averaging period start", "start"),
    ("Period start time", "start"),
    # a key with a value, or a date after the words, dates the record instead; a line
    # naming two places states none
    ("Period start: 2021-01-01", None),
    ("Period start:", None),
    ("Period start 2021-01-01 00:00", None),
    ("Reporting period start = 1 Jan 2021", None),
    ("Period start and end in UTC", None),
    ("Period start/end", None),
    # a spreadsheet's empty cells after the statement, a closing full stop (round review31)
    ('"Period start",,,,', "start"),
    ("Timestamps: period end.", "end"),
    ("Data stamped at period end", "end"),
    ("Times are interval start", "start"),
    ("Convention: period end", "end"),
    # a sentence or a name that uses the words in passing states no place of the stamps
    # (round review31: a note line refused files whose time_marks were right)
    ("Tower notes: NEE before the campaign period start was removed", None),
    ("Data from the study period start onwards were gap-filled", None),
    ("Values near the interval end may be affected by calibration", None),
    ("Calibration period end", None),
    ("Measurement period start date", None),
    ("Reporting period start", None),
    ("Gaps are at the period end of each file", None),
])
def test_a_period_start_line_without_a_date_states_the_place(text, expected):
    assert stated_place(text) == expected


def test_start_stamps_under_a_period_start_line_are_refused_as_ends(tmp_path):
    """Known truth (invented records): interval starts under a title line "Period start"
    read with time_marks = "end" were read every record 30 minutes early without a word
    from the reader (the clock check then stopped `run` naming time_marks, not the
    file's line). Now one line names the file's line and both readings; the same file
    read with time_marks = "start" keeps the planted starts."""
    ends, values = _records()
    starts = ends - pd.Timedelta(minutes=30)
    path = _write(tmp_path / "p.csv", starts.strftime("%Y-%m-%d %H:%M"), values,
                  top=["Period start"])
    with pytest.raises(TimestampError, match=r"line 1 of .*'Period start'.*set time_marks = "
                                             r'"start"'):
        _read(path, rows_before_header=1)
    frame, _ = read_table(path, columns=MAPPING, time_column="stamp",
                          time_format="%Y-%m-%d %H:%M", time_marks="start",
                          units={"vpd": "hPa"}, site=SITE, rows_before_header=1)
    assert frame.index[0] == starts[0]
    # a dated title over the same stamps still reads as before (the clock check judges)
    dated = _write(tmp_path / "d.csv", starts.strftime("%Y-%m-%d %H:%M"), values,
                   top=[f"Period start: {starts[0]:%Y-%m-%d}"])
    frame, _ = _read(dated, rows_before_header=1)
    assert frame.index[0] == starts[0] - pd.Timedelta(minutes=30)


def test_end_stamps_under_a_note_that_mentions_a_period_start_are_read_as_set(tmp_path):
    """Known truth (invented records): interval ends, read with time_marks = "end", under
    a free-text note line above the header that uses "period start" in passing. Since
    round review30 every such line was read as a statement of the stamps' place and the
    file was refused ("set time_marks = \"start\""), also the grassland example with
    such a note; the note states nothing about the stamps, so the file reads as its
    settings say (interval starts 30 min before the written ends)."""
    ends, values = _records()
    for note in ("Tower notes: NEE before the campaign period start was removed",
                 "Calibration period end,,,,"):
        path = _write(tmp_path / "n.csv", ends.strftime("%Y-%m-%d %H:%M"), values,
                      top=[note])
        frame, _ = _read(path, rows_before_header=1)
        assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)
    # the same stamps under a line that is nothing but the statement are still refused
    path = _write(tmp_path / "s.csv", ends.strftime("%Y-%m-%d %H:%M"), values,
                  top=["Period start,,,,"])
    with pytest.raises(TimestampError, match='set time_marks = "start"'):
        _read(path, rows_before_header=1)
