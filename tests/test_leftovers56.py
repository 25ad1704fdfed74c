"""Leftovers of session 52 (round leftovers56): a reader note of a file read reordered
quotes the file's own first line; a group line or bracketed units row under blank lines.

Outside facts, each named beside its check: Fortran writes the exponent letter D
(ISO/IEC 1539-1:2018, 13.7.2.3.3 (m)); half-hourly records make 48 a day (common
practice). Everything else is invented known truth: the records as written
(``test_robustness_layouts26._records``, 1-4 June 2021 at an invented site).
"""

import pandas as pd
from test_robustness_layouts26 import _read
from test_robustness_layouts47 import _clean, _lines


def test_a_note_of_a_file_read_in_time_order_quotes_its_first_line_in_the_file(tmp_path):
    """Days pasted newest first, a D exponent in the first and the last day: the note
    names the cell of the last day, which stands first in the file (line 2), not the
    first day's, which comes first in time (line 338)."""
    ends, values, expected = _clean(tmp_path)
    stamps = ends.strftime("%Y-%m-%d %H:%M")
    days = [slice(48 * d, 48 * (d + 1)) for d in range(len(ends) // 48)]
    lines = _lines(stamps[:0], values[:0])
    for day in days[::-1]:
        lines += _lines(stamps[day], values[day])[1:]
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
