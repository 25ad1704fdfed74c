"""Leftovers of session 52 (round leftovers56): a reader note of a file read reordered
quotes the file's own first line; a group line or bracketed units row under blank lines.

Outside facts, each named beside its check: Fortran writes the exponent letter D
(ISO/IEC 1539-1:2018, 13.7.2.3.3 (m)); half-hourly records make 48 a day (common
practice). Everything else is invented known truth: the records as written
(``test_robustness_layouts26._records``, 1-4 June 2021 at an invented site).
"""

import pandas as pd
from test_robustness_layouts26 import _read
from test_robustness_layouts47 import _clean, _lines, _newest_day_first


def test_a_note_of_a_file_read_in_time_order_quotes_its_first_line_in_the_file(tmp_path):
    """Days pasted newest first, a D exponent in the first and the last day: the note
    names the cell of the last day, which stands first in the file (line 2), not the
    first day's, which comes first in time (line 338)."""
    ends, values, expected = _clean(tmp_path)
    lines = _newest_day_first(ends, values)[0]
    first_day, last_day = 7 * 48 + 1, 1                # list places of the two cells
    for place, written in ((first_day, "1.5D0"), (last_day, "2.5D0")):
        cells = lines[place].split(",")
        cells[1] = written
        lines[place] = ",".join(cells)
    (tmp_path / "reverse.csv").write_text("\n".join(lines) + "\n")
    read, report = _read(tmp_path / "reverse.csv")
    expected.iloc[0, 0], expected.iloc[-48, 0] = 1.5, 2.5       # nee, from co2_flux
    pd.testing.assert_frame_equal(read, expected)
    noted = [text for text in report.warnings + report.notes if "exponent letter D" in text]
    assert noted and "(first '2.5D0' on line 2 of its file)" in noted[0], noted


def test_a_group_line_and_a_units_row_under_blank_lines_are_read_past(tmp_path):
    """Two blank lines, then "Fluxes,,Met,,," and the names, then "[-],[umol/m2/s],..."
    (the layout of layouts47, opened by blank lines as some exports do): read as the
    clean file, each line named where it stands; the units row alone under the blank
    lines too."""
    ends, values, expected = _clean(tmp_path)
    lines = _lines(ends.strftime("%Y-%m-%d %H:%M"), values)
    group = ",Fluxes,,Met,,"
    units = "[-],[umol/m2/s],[m/s],[W/m2],[degC],[hPa]"
    (tmp_path / "group.csv").write_text(
        "\n".join(["", " ", group, lines[0], units] + lines[1:]) + "\n")
    read, report = _read(tmp_path / "group.csv")
    pd.testing.assert_frame_equal(read, expected)
    assert any("line 3 holds group titles above the header (line 4 holds every column "
               "named in the settings), under 2 blank line(s)" in n for n in report.notes)
    assert any("line 5 under the header holds units in brackets" in n for n in report.notes)
    (tmp_path / "units.csv").write_text("\n".join(["", lines[0], units] + lines[1:]) + "\n")
    read, report = _read(tmp_path / "units.csv")
    pd.testing.assert_frame_equal(read, expected)
    assert any("line 3 under the header holds units in brackets" in n for n in report.notes)
    assert any("1 blank line(s) above the header (line 2) read past" in n
               for n in report.notes)
