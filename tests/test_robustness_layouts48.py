"""Layouts of the layouts48 round: logger and spreadsheet files read or refused right.

A date written on each day's first record only (a sheet's merged date cells saved as CSV)
was refused naming a stamp without its date; it is now read with the dates filled down
and a note, and a day whose date is left out altogether stays refused. A missing code the
config spells with a typographic minus (U+2212), as the file writes it, was not matched
against the cells (read with U+2212 as "-") and the run stopped on thousands of "-9999"
values. A name mapped without the unit the file writes after a slash stays refused, now
naming the suffix (as the bracketed form, layouts40). A date cell and a time cell saved
unformatted (a day number, a day fraction) are read under "days since 1899-12-30" as
their sum, with a note (refused before as "no number" of the format). A zip of daily
files, one header, is read as one table with a note (refused before: "unpack it").

Outside facts, each named beside its check: a spreadsheet saves a merged cell's value in
its first cell only (ECMA-376 part 1, ``mergeCell`` (m)); U+2212 is the minus sign
(Unicode, Mathematical Operators chart (m)); spreadsheet day numbers count from
1899-12-30 (ECMA-376 part 1, 18.17.4 (m)); half-hourly records make 48 a day (common
practice). Everything else is invented known truth: the records as written, read as the
clean file is.
"""

import pandas as pd
import pytest
from test_robustness_layouts26 import NAMES, _read, _records  # invented records, 1-8 June 2021

from fluxpart.errors import InputFileError, MissingColumnError, TimestampError


def _clean(tmp_path):
    ends, values = _records()
    path = tmp_path / "clean.csv"
    path.write_text("\n".join([",".join(["stamp"] + NAMES)] + [
        ",".join([f"{e:%Y-%m-%d %H:%M}"] + [f"{v:g}" for v in row])
        for e, row in zip(ends, values, strict=True)]) + "\n")
    return ends, values, _read(path)[0]


def _merged_dates(path, ends, values, left_out=None):
    """The records with the date on each day's first record only (`left_out`: a day
    given no date at all)."""
    starts = ends - pd.Timedelta("30min")
    first = ~starts.normalize().duplicated()
    rows = [",".join(["day", "clock"] + NAMES)]
    for s, f, row in zip(starts, first, values, strict=True):
        day = f"{s:%Y-%m-%d}" if f and f"{s:%Y-%m-%d}" != left_out else ""
        rows.append(",".join([day, f"{s:%H:%M}"] + [f"{v:g}" for v in row]))
    path.write_text("\n".join(rows) + "\n")


def test_a_date_on_each_days_first_record_only_is_filled_down(tmp_path):
    """8 days, the date on 8 records, the clock on all 384: read as the clean file, with
    a note naming the column and the 376 cells filled (48 a day less the first)."""
    ends, values, expected = _clean(tmp_path)
    path = tmp_path / "merged.csv"
    _merged_dates(path, ends, values)
    read, report = _read(path, time_column=["day", "clock"], time_marks="start")
    pd.testing.assert_frame_equal(read, expected)
    assert any("'day'" in n and "filled down on 376 record(s)" in n for n in report.notes), \
        report.notes
    assert not report.warnings


def test_a_day_without_any_date_stays_refused_naming_a_stamp_without_its_date(tmp_path):
    """2 June written without its date: filled down it would repeat 1 June's clock, so
    nothing is filled and the refusal names a stamp lacking its date, as before."""
    ends, values, _ = _clean(tmp_path)
    path = tmp_path / "merged.csv"
    _merged_dates(path, ends, values, left_out="2021-06-02")
    with pytest.raises(TimestampError, match=r"has stamp ' 00:30'"):
        _read(path, time_column=["day", "clock"], time_marks="start")


def test_a_missing_code_spelled_with_a_typographic_minus_matches_its_cells(tmp_path):
    """Every minus written U+2212, some cells "−9999", the config's code "−9999" as the
    file spells it: those cells are missing, the others read as with "-"."""
    ends, values, expected = _clean(tmp_path)
    rows = [",".join(["stamp"] + NAMES)]
    for k, (e, row) in enumerate(zip(ends, values, strict=True)):
        cells = ["-9999" if k % 5 == 0 and j == 0 else f"{v:g}" for j, v in enumerate(row)]
        rows.append(",".join([f"{e:%Y-%m-%d %H:%M}"] + cells).replace("-", "\u2212")
                    .replace("\u2212", "-", 2))    # the date's own hyphens stay
    path = tmp_path / "minus.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    read, _ = _read(path, missing=["\u22129999"])
    want = expected.copy()
    want.iloc[::5, want.columns.get_loc("nee")] = float("nan")
    pd.testing.assert_frame_equal(read, want)


def test_a_name_mapped_without_the_unit_after_a_slash_is_named_with_the_suffix(tmp_path):
    """ "co2_flux/umol m-2 s-1" for the mapped "co2_flux": the refusal names the column and
    its suffix (it listed the file's columns only)."""
    ends, values, _ = _clean(tmp_path)
    path = tmp_path / "slash.csv"
    names = ["co2_flux/umol m-2 s-1"] + NAMES[1:]
    path.write_text("\n".join([",".join(["stamp"] + names)] + [
        ",".join([f"{e:%Y-%m-%d %H:%M}"] + [f"{v:g}" for v in row])
        for e, row in zip(ends, values, strict=True)]) + "\n")
    with pytest.raises(MissingColumnError,
                       match=r"did you mean 'co2_flux/umol m-2 s-1'\? .* suffix '/umol m-2 s-1'"):
        _read(path)


def test_a_serial_date_and_a_day_fraction_in_two_columns_are_read_as_one_count(tmp_path):
    """A date cell and a time cell saved unformatted: "44348" and "0.020833" (1 June
    2021, 00:30). Under "days since 1899-12-30" they are read as the count 44348.020833
    (days since 1899-12-30: Excel's and LibreOffice's 1900 date system, ECMA-376 part 1,
    18.17.4 (m)), with a note; under a date format the refusal names both fields and
    the setting."""
    ends, values, expected = _clean(tmp_path)
    days = (ends - pd.Timestamp("1899-12-30")) / pd.Timedelta("1D")
    whole = (days + 1e-9).astype(int)
    path = tmp_path / "serial.csv"
    path.write_text("\n".join([",".join(["day", "clock"] + NAMES)] + [
        ",".join([str(w), f"{d - w:.6f}"] + [f"{v:g}" for v in row])
        for w, d, row in zip(whole, days, values, strict=True)]) + "\n")
    read, report = _read(path, time_column=["day", "clock"],
                         time_format="days since 1899-12-30")
    pd.testing.assert_frame_equal(read, expected)
    assert any("read as their sum" in n for n in report.notes), report.notes
    with pytest.raises(TimestampError, match=r"'44348' .* the time field '0.020833' a "
                       r"fraction of the day: set \[input\] time_format = \"days since"):
        _read(path, time_column=["day", "clock"])


def _zip_of_days(path, ends, values, header_of=lambda day: ["stamp"] + NAMES):
    """The records as one CSV a day ("mast_YYYYMMDD.csv"), each under `header_of(day)`,
    packed into one zip (members in reverse name order: the names order them)."""
    import io
    import zipfile

    day = (ends - pd.Timedelta("30min")).normalize()
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        for d in sorted(set(day), reverse=True):
            names = header_of(d)
            rows = [",".join(names)]
            for e, row in zip(ends[day == d], values[day == d], strict=True):
                cells = dict(zip(NAMES, (f"{v:g}" for v in row), strict=True))
                rows.append(",".join([f"{e:%Y-%m-%d %H:%M}"] + [cells[n] for n in names[1:]]))
            archive.writestr(f"mast_{d:%Y%m%d}.csv", "\n".join(rows) + "\n")
    path.write_bytes(buffer.getvalue())


def test_a_zip_of_daily_files_with_one_header_is_read_as_one_table(tmp_path):
    """8 daily files in one zip (PKWARE APPNOTE (m): members are named files; the writer
    orders them): read as the clean file, with a note naming the 8 tables; a zip whose
    file of 3 June writes its columns in another order stays refused, naming that file."""
    ends, values, expected = _clean(tmp_path)
    path = tmp_path / "days.zip"
    _zip_of_days(path, ends, values)
    read, report = _read(path)
    pd.testing.assert_frame_equal(read, expected)
    assert any("a zip archive of 8 tables with the same first line" in n
               for n in report.notes), report.notes
    assert not report.warnings
    _zip_of_days(path, ends, values, lambda day: ["stamp"] + (
        NAMES[::-1] if f"{day:%d}" == "03" else NAMES))
    with pytest.raises(InputFileError, match=r"'mast_20210603.csv' opens with 'stamp,vpd,"
                       r".*' where 'mast_20210601.csv' opens with 'stamp,co2_flux,"):
        _read(path)
