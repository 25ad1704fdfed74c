"""Layouts of the layouts27 round: a clock or a place of the stamps stated above the
header in words the reader did not know (other languages, offsets in minutes, GPS time,
the Z of UTC, quoted key and value cells), hours and minutes saved as numbers without
the minutes' trailing zero, a date written only where it changes, and text around the
stamps that the format lacks.

Outside facts, each named beside its check: ISO 8601-1:2019 writes UTC as "Z" and
offsets as ±hh[:mm] (m); GPS time runs ahead of UTC by the leap seconds since 1980, 18 s
since 2017 (IS-GPS-200 (m)), less than a minute; an hour has 60 minutes; the words for
"time zone" (fuseau horaire, zona horaria, fuso orario, tijdzone, strefa czasowa), for
"start", "end" (début, fin, inicio, final, inizio, fine) and for "the following" and "the
preceding" (folgenden, vorangegangenen) are the languages' own (common practice, any
dictionary); strptime's %M reads a minute of one digit (Python documentation of
``datetime.strptime`` (m)); a number saved as text drops trailing zeros (0.30 -> 0.3,
common practice); characters of a strptime format other than directives match
themselves (Python documentation (m)). Everything else is invented known truth: the
records as written.
"""

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import ConfigError, TimestampError
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.stamp_places import (
    column_place,
    format_clock,
    stated_civil,
    stated_offset,
    stated_place,
)

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd"}
NAMES = ["co2_flux", "us", "sw", "t_air", "vpd"]


def _records(count=96 * 4):
    """Invented half-hourly records ending at 00:30 on 1 June (local standard time):
    stamps and the five values of each (a diurnal Rg, so no two half-hours are alike)."""
    ends = pd.date_range("2021-06-01 00:30", periods=count, freq="30min")
    hour = ends.hour + ends.minute / 60
    rg = np.clip(800 * np.sin((hour - 6) / 12 * np.pi), 0, None).round(1)
    noise = np.random.default_rng(27).normal(0.0, 0.4, count)
    fc = (2.0 - rg / 100 + noise).round(3)
    ta = (15 + 5 * np.sin((hour - 9) / 12 * np.pi)).round(2)
    vpd = (5 + ta / 3).round(2)
    us = (0.2 + 0.1 * np.cos(np.arange(count) / 7)).round(3)
    return ends, np.column_stack([fc, us, rg, ta, vpd])


def _write(path, stamps, values, head="stamp", above=()):
    lines = list(above)
    lines.append(",".join([head] + NAMES))
    lines += [",".join(([stamp] if isinstance(stamp, str) else list(stamp))
                       + [f"{v:g}" for v in row])
              for stamp, row in zip(stamps, values, strict=True)]
    path.write_text("\n".join(lines) + "\n")


def _read(path, **options):
    settings = {"columns": MAPPING, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
                "time_marks": "end", "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


# ----------------------------------------------------------- a clock stated in words
#: Lines stating UTC that the reader read as nothing before layouts27 (each read every
#: record an hour off at a UTC+1 site without a word)
UTC_LINES = [
    "Fuseau horaire : UTC", "Zona horaria: UTC", "Huso horario: UTC", "Fuso orario: UTC",
    "Tijdzone: UTC", "Strefa czasowa: UTC",            # the languages' word for time zone
    "UTC offset [min]: 0", "UTC offset (minutes): 0",  # an offset in minutes
    "UTC offset: 0 h", "Time offset: +0 h",            # hours with their unit
    "Times given in Zulu time", "Time zone = Z",        # ISO 8601's Z of UTC (m)
    "Clock: GPS", "Logger time: GPS",                   # GPS time, UTC + 18 s (m)
    "Time: UTC+00:00", "Data logger time: UTC", "Standard time: UTC",
    '"Timezone","UTC"',                                 # a sheet's key and value cells
    "Horodatage : UTC", "Zeitangaben in UTC",
    "Time zone: UT", "Time zone: Universal Time",       # UT within a second of UTC (m)
    "Time zone (UTC offset): 0",
]


@pytest.mark.parametrize("line", UTC_LINES)
def test_utc_stated_in_other_words_is_read(line):
    """Each line states stamps in UTC (offset 0: ISO 8601 (m); GPS time within 18 s of
    it (m)); before layouts27 each was read as stating nothing."""
    assert stated_offset(line) == 0.0


@pytest.mark.parametrize(("line", "expected"), [
    ("UTC offset [min]: 60", 1.0),                 # 60 minutes are an hour
    ("UTC offset (minutes): -330", -5.5),
    ("Fuseau horaire : UTC+1", 1.0), ("Zona horaria: Europe/Madrid", 1.0),
    ("Time offset: +1 h", 1.0), ("Logger clock: GPS time", 0.0),
    ("Time zone (UTC offset): +1", 1.0),   # read as UTC (0) before: a false refusal
    # a zone label or name after a key ending in "time" (IANA tz: CET UTC+1, EET and
    # Helsinki's standard time UTC+2 (m))
    ("Logger time: CET", 1.0), ("Local time: EET", 2.0), ("Time: Europe/Helsinki", 2.0),
    ("Time: END", None),
    # nothing stated, as before
    ("Time offset: 0.2", None),                    # a lag, not a clock
    ("Time offset: 2", None),
    ("Export time: 2021-06-01 12:00 UTC", None),   # a date before the clock
    ("Time: interval end", None), ("Processing time: local", None),
    ("Sampling time: 0.1 s", None), ("UTC offset [min]: 900", None),   # beyond UTC+14
])
def test_stated_offsets_in_minutes_hours_and_zone_names(line, expected):
    """Offsets after the keys in hours or minutes (60 min = 1 h); the time-zone
    database's Madrid keeps UTC+1 in winter (zoneinfo (m)); no zone is more than 14 h
    from UTC (IANA tz (m)); values that are no clock state nothing."""
    assert stated_offset(line) == expected


@pytest.mark.parametrize("line", ["Fuseau horaire : UTC", "UTC offset [min]: 0",
                                  "Clock: GPS", '"Timezone","UTC"', "Time zone = Z"])
def test_utc_file_stated_in_other_words_is_refused_naming_both_readings(tmp_path, line):
    """UTC stamps under such a line at a UTC+1 site: refused naming both readings (an
    hour apart) and the fix; with the fix the records read as written (known truth)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    utc = [f"{e - pd.Timedelta(hours=1):%Y-%m-%d %H:%M}" for e in ends]
    _write(path, utc, values, above=["Invented tower", line])
    with pytest.raises(TimestampError) as caught:
        _read(path, rows_before_header=2)
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert "states stamps in UTC" in message and "1 hour(s) apart" in message
    assert 'set time_zone = "UTC"' in message
    frame, _ = _read(path, rows_before_header=2, time_zone="UTC")
    starts = pd.DatetimeIndex(ends - pd.Timedelta(minutes=30), name="time")
    pd.testing.assert_index_equal(frame.index, starts)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_local_standard_file_stated_in_other_words_reads(tmp_path):
    """"Fuseau horaire : UTC+1" over stamps in the site's local standard time (UTC+1):
    the statement agrees, the records read as written (known truth, kept behaviour)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M}" for e in ends], values,
           above=["Fuseau horaire : UTC+1"])
    frame, _ = _read(path, rows_before_header=1)
    pd.testing.assert_index_equal(frame.index,
                                  pd.DatetimeIndex(ends - pd.Timedelta(minutes=30),
                                                   name="time"))


# ------------------------------------------------------------ a place stated in words
@pytest.mark.parametrize(("line", "place"), [
    ("Values are averages over the following 30 minutes", "start"),
    ("Period-beginning timestamps", "start"),
    ("Horodatage : début de période", "start"),
    ("Marca de tiempo: inicio del intervalo", "start"),
    ("Mittelwerte der folgenden 30 Minuten", "start"),
    ("Values are averages over the preceding 30 minutes", "end"),
    ("Period-ending timestamps", "end"),
    ("Horodatage en fin de période", "end"),
    ("Each timestamp marks the period ending at that time", "end"),
    ("Marca temporale: fine del periodo di media", "end"),
    ("Marca de tiempo al final del intervalo", "end"),
    ("Mittelwerte der vorangegangenen 30 Minuten", "end"),
    # the "hour ending" convention and German words after a word for the stamps
    ("Half-hour ending", "end"), ("Values are hour-ending", "end"),
    ("Stamps are interval-ending", "end"), ("Hour beginning", "start"),
    ("Timestamp at mid-interval", "middle"), ("Zeitstempel: Ende", "end"),
    ("Data averaged over the previous half hour", "end"),
    # nothing stated, as before: a date after the key, a period named in passing
    ("Hour ending 2021-06-01 13:00 missing", None),
    ("Fin de la période : 2021-12-31", None),
    ("Calibration period ending 2021-05-01", None),
    ("Data of the previous 30 minutes lost", None),
])
def test_place_stated_in_other_words(line, place):
    """An average over the following minutes is stamped at their start, one over the
    preceding minutes at their end (the definition of the words); début/inicio/inizio
    mean start, fin/final/fine mean end (any dictionary)."""
    assert stated_place(line) == place


def test_start_stamps_stated_in_french_against_end_are_refused(tmp_path):
    """Start stamps under "Horodatage : début de période" read with time_marks =
    "end": before layouts27 every record sat an interval early without a word; now
    refused naming both readings; with the fix they read as written (known truth)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    starts = ends - pd.Timedelta(minutes=30)
    _write(path, [f"{s:%Y-%m-%d %H:%M}" for s in starts], values,
           above=["Horodatage : début de période"])
    with pytest.raises(TimestampError) as caught:
        _read(path, rows_before_header=1)
    message = str(caught.value)
    assert "interval's start" in message and 'set time_marks = "start"' in message
    frame, _ = _read(path, rows_before_header=1, time_marks="start")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))


# ---------------------------------------------------------------- the stamps themselves
def test_hours_and_minutes_saved_as_numbers_are_refused_naming_both_readings(tmp_path):
    """Times H.MM saved as numbers (0.30 -> 0.3, 1.00 -> 1.0): %H.%M read 0.3 as
    00:03 (strptime reads one digit (m)), and the file was refused for 57-minute steps
    with the wrong fix (average the file). Now the stamp is named with both readings:
    00:30 (H.MM) and 00:18 (0.3 h = 18 min)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    cells = [(f"{e:%Y-%m-%d}", repr(float(f"{e.hour}.{e.minute:02d}"))) for e in ends]
    _write(path, cells, values, head="date,hhmm")
    with pytest.raises(TimestampError) as caught:
        _read(path, time_column=["date", "hhmm"], time_format="%Y-%m-%d %H.%M")
    message = str(caught.value)
    assert len(message.splitlines()) == 1
    assert "'2021-06-01 0.3'" in message and "00:03" in message
    assert "00:30" in message and "00:18" in message
    assert "average" not in message


def test_hours_and_minutes_with_two_digits_read(tmp_path):
    """H.MM written as text with two-digit minutes ("0.30", "13.00") reads as before
    (known truth, kept behaviour)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    cells = [(f"{e:%Y-%m-%d}", f"{e.hour}.{e.minute:02d}") for e in ends]
    _write(path, cells, values, head="date,hhmm")
    frame, _ = _read(path, time_column=["date", "hhmm"], time_format="%Y-%m-%d %H.%M")
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_date_written_only_where_it_changes_is_named(tmp_path):
    """A date written only on each day's first record (a sheet's merged date cells): read
    since layouts48, its dates filled down (this test still expected the refusal of
    layouts27 and failed from layouts48 on; review69), equal to the file with every date
    written; where the first record has no date (the file starts inside a merged cell)
    nothing is filled, and the refusal names the empty column and why."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    cells, previous = [], None
    for e in ends:
        day = f"{e:%d.%m.%Y}"
        cells.append((day if day != previous else "", f"{e:%H:%M}"))
        previous = day
    _write(path, [(f"{e:%d.%m.%Y}", f"{e:%H:%M}") for e in ends], values, head="Datum,Zeit")
    settings = {"time_column": ["Datum", "Zeit"], "time_format": "%d.%m.%Y %H:%M"}
    expected = _read(path, **settings)[0]
    _write(path, cells, values, head="Datum,Zeit")
    read, report = _read(path, **settings)
    pd.testing.assert_frame_equal(read, expected)
    assert any("column 'Datum' writes the date on the first record of each day only" in n
               for n in report.notes), report.notes
    _write(path, [("", cells[0][1])] + cells[1:], values, head="Datum,Zeit")
    with pytest.raises(TimestampError) as caught:
        _read(path, **settings)
    message = str(caught.value)
    assert "column 'Datum' is empty on" in message and "only where it changes" in message


@pytest.mark.parametrize(("cell", "wanted"), [
    ("'{}", "'%Y-%m-%d %H:%M"),               # a spreadsheet's mark of a text cell
    ("{} Uhr", "%Y-%m-%d %H:%M Uhr"),         # German "o'clock" after the time
    ("{}".replace(" ", "T"), None),            # ISO 8601's T between date and time
])
def test_text_around_the_stamps_names_the_format_that_reads_them(tmp_path, cell, wanted):
    """Every stamp with the same text the format lacks: the line names a format with
    it (characters other than directives match themselves (m)), checked to read every
    stamp; the named format then reads the records as written (known truth)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    if wanted is None:
        stamps = [f"{e:%Y-%m-%dT%H:%M}" for e in ends]
        wanted = "%Y-%m-%dT%H:%M"
    else:
        stamps = [cell.format(f"{e:%Y-%m-%d %H:%M}") for e in ends]
    _write(path, stamps, values)
    with pytest.raises(TimestampError) as caught:
        _read(path)
    assert f'time_format = "{wanted}" reads every stamp' in str(caught.value)
    frame, _ = _read(path, time_format=wanted)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_a_clock_after_the_stamps_is_not_offered_as_text(tmp_path):
    """" UTC" after every stamp is a clock, not text: read as literal text it would put
    UTC stamps in local standard time, so no such format is offered."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M} UTC" for e in ends], values)
    with pytest.raises(TimestampError) as caught:
        _read(path)
    assert "reads every stamp" not in str(caught.value)


# --------------------------------------------- a place or a clock in other settings' text
@pytest.mark.parametrize(("column", "place"), [
    ("horodatage_début", "start"), ("fecha_hora_inicio", "start"),
    ("ora_inizio", "start"), ("horodatage_fin", "end"), ("fecha_hora_final", "end"),
    ("stamp_end", "end"), ("Zeit", None),
])
def test_time_column_named_for_its_place_in_other_languages(column, place):
    """début/inicio/inizio mean start, fin/final mean end (any dictionary); a column's
    accents are read without them (Unicode NFKD decomposition (m))."""
    assert column_place(column) == place


def test_start_stamps_in_a_column_named_in_spanish_against_end_are_refused(tmp_path):
    """Start stamps in a column "fecha_hora_inicio" read with time_marks = "end":
    before layouts27 every record sat an interval early without a word."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    starts = ends - pd.Timedelta(minutes=30)
    _write(path, [f"{s:%Y-%m-%d %H:%M}" for s in starts], values, head="fecha_hora_inicio")
    with pytest.raises(ConfigError) as caught:
        _read(path, time_column="fecha_hora_inicio")
    assert 'set time_marks = "start"' in str(caught.value)
    frame, _ = _read(path, time_column="fecha_hora_inicio", time_marks="start")
    pd.testing.assert_index_equal(frame.index, pd.DatetimeIndex(starts, name="time"))


@pytest.mark.parametrize(("time_format", "expected"), [
    ("%Y-%m-%d %H:%M UTC", ("UTC", 0.0)), ("%Y-%m-%d %H:%M GMT", ("GMT", 0.0)),
    ("%Y-%m-%dT%H:%M+00:00", ("+00:00", 0.0)), ("%d.%m.%Y %H:%M MEZ", ("MEZ", 1.0)),
    ("%d.%m.%Y %H:%M OEZ", ("OEZ", 2.0)),
    ("%Y-%m-%d %H:%M", None), ("%Y-%m-%dT%H:%M:%SZ", None), ("%Y-%m-%d %H:%M %Z", None),
])
def test_clock_written_as_text_in_the_format(time_format, expected):
    """UTC and GMT are offset 0, +00:00 is ISO 8601's UTC (m); MEZ is UTC+1, OEZ UTC+2
    (Einheiten- und Zeitgesetz § 4 (m)); a format that reads the label (%Z) or ends in
    the Z of UTC states no text clock."""
    assert format_clock(time_format) == expected


@pytest.mark.parametrize(("time_format", "suffix"), [
    ("%Y-%m-%d %H:%M UTC", " UTC"), ("%Y-%m-%dT%H:%M+00:00", "+00:00")])
def test_utc_stamps_read_with_the_clock_as_text_are_refused(tmp_path, time_format, suffix):
    """UTC stamps "2021-06-01 00:30 UTC" read with the format "%Y-%m-%d %H:%M UTC": the
    text matched and was dropped, and every record sat an hour off at a UTC+1 site
    without a word; now refused naming both readings, and time_zone = "UTC" reads them
    (known truth)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    stamps = [f"{e - pd.Timedelta(hours=1):%Y-%m-%d %H:%M}" for e in ends]
    if "%dT" in time_format:
        stamps = [s.replace(" ", "T") for s in stamps]
    _write(path, [s + suffix for s in stamps], values)
    with pytest.raises(ConfigError) as caught:
        _read(path, time_format=time_format)
    message = str(caught.value)
    assert "states stamps in UTC" in message and 'set time_zone = "UTC"' in message
    frame, _ = _read(path, time_format=time_format, time_zone="UTC")
    pd.testing.assert_index_equal(frame.index,
                                  pd.DatetimeIndex(ends - pd.Timedelta(minutes=30),
                                                   name="time"))


def test_format_ending_in_mez_reads_local_standard_time(tmp_path):
    """"%d.%m.%Y %H:%M MEZ" over stamps labelled MEZ (Central European Time, UTC+1,
    the site's local standard time (m)): before layouts27 the last letter was taken for
    the Z of UTC and every record moved an hour later without a word; now read as
    written (known truth)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e:%d.%m.%Y %H:%M} MEZ" for e in ends], values)
    frame, _ = _read(path, time_format="%d.%m.%Y %H:%M MEZ")
    pd.testing.assert_index_equal(frame.index,
                                  pd.DatetimeIndex(ends - pd.Timedelta(minutes=30),
                                                   name="time"))
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])


def test_format_ending_in_the_z_of_utc_reads_as_before(tmp_path):
    """"%Y-%m-%dT%H:%MZ" over UTC stamps: the Z of UTC (ISO 8601 (m)), converted to the
    site's UTC+1 as before (known truth, kept behaviour)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e - pd.Timedelta(hours=1):%Y-%m-%dT%H:%M}Z" for e in ends], values)
    frame, _ = _read(path, time_format="%Y-%m-%dT%H:%MZ")
    pd.testing.assert_index_equal(frame.index,
                                  pd.DatetimeIndex(ends - pd.Timedelta(minutes=30),
                                                   name="time"))


# ------------------------------------------------------------ civil time stated in words
@pytest.mark.parametrize(("line", "civil"), [
    ("Daylight saving time: on", True), ("Sommerzeit: ja", True), ("DST=1", True),
    ("Local time with daylight saving", True),
    ("Time: local time (CET/CEST)", True),      # CET UTC+1, CEST UTC+2 (tz database (m))
    ("DST: off", False), ("Daylight saving: no", False), ("No daylight saving", False),
    ("Time zone: UTC+1 (no daylight saving)", False),
    ("Station QM, MET/EET", False),             # MET is not read (meteorological)
])
def test_civil_time_stated_in_words(line, civil):
    """Daylight saving stated as kept ("on", "ja") or a zone's standard and summer
    labels side by side, one hour apart (IANA tz (m)); a negative answer states none."""
    assert stated_civil(line) is civil


def test_civil_time_stated_above_the_header_without_time_zone_is_refused(tmp_path):
    """Stamps of Berlin's civil time (UTC+2 from 28 March 2021, tz database (m)) under
    "Daylight saving time: on", read without time_zone: before layouts27 every summer
    record sat an hour late without a word from the reader (the clock check of `run`
    needs clean Rg); now refused, and time_zone = "Europe/Berlin" reads them as written
    (known truth)."""
    ends = pd.date_range("2021-03-27 00:30", periods=96 * 3, freq="30min")
    _, values = _records(len(ends))
    civil = (ends.tz_localize("Etc/GMT-1").tz_convert("Europe/Berlin").tz_localize(None))
    path = tmp_path / "mast.csv"
    _write(path, [f"{c:%Y-%m-%d %H:%M}" for c in civil], values,
           above=["Daylight saving time: on"])
    with pytest.raises(TimestampError) as caught:
        _read(path, rows_before_header=1)
    message = str(caught.value)
    assert "civil time with daylight saving" in message and "an hour apart" in message
    frame, _ = _read(path, rows_before_header=1, time_zone="Europe/Berlin")
    pd.testing.assert_index_equal(frame.index,
                                  pd.DatetimeIndex(ends - pd.Timedelta(minutes=30),
                                                   name="time"))


def test_zone_key_with_utc_offset_in_brackets_reads_its_offset(tmp_path):
    """"Time zone (UTC offset): +1" over stamps in the site's local standard time
    (UTC+1): before layouts27 the bracket's "UTC" was read as the clock, and a right file
    was refused as UTC; now the offset after the colon is read, and the records read as
    written (ISO 8601 offset +1 (m); known truth)."""
    ends, values = _records()
    path = tmp_path / "mast.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M}" for e in ends], values,
           above=["Time zone (UTC offset): +1"])
    frame, _ = _read(path, rows_before_header=1)
    assert np.allclose(frame["rg"].to_numpy(), values[:, 2])
