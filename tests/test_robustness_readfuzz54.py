"""Readings the reader's fuzz campaign of round readfuzz54 found wrong or named wrongly.

Outside facts, each named beside its check: RFC 4180, section 2, lets a double-quoted field
hold line breaks (m), so a stray quote runs on to the next quote, any number of lines later;
a record of a delimited file holds as many fields as its header has names (RFC 4180,
section 2 (m)). Everything else is invented known truth: the records as written.
"""
import pandas as pd
import pytest
from test_robustness_layouts19 import MAPPING, _read, _tower

from fluxpart.errors import FluxpartError
from fluxpart.quoted_lines import line_swallowing_records


def _noted(records):
    """The records with a last, empty note column, as comma lines."""
    lines = records.to_csv(index=False).splitlines()
    return [lines[0] + ",note"] + [line + "," for line in lines[1:]]


@pytest.mark.parametrize("closing", ['gust"', '"gust'])
def test_a_double_quote_opened_and_closed_99_lines_later_is_refused_naming_it(tmp_path,
                                                                                closing):
    """A stray ``"`` in a note cell closed (or opened again) 99 lines later read the 98
    records between as one note, lost as a gap without a word; refused now, naming the
    line that opens the quote. A note holding a line break (RFC 4180) whose lines are no
    records is still read as the file without it."""
    _, records = _tower()
    lines = _noted(records)
    clean = tmp_path / "clean.csv"
    clean.write_text("\n".join(lines) + "\n")
    lines[100] += '"wind'
    lines[199] += closing
    (tmp_path / "q.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(FluxpartError, match=r"line 101 \(.*\) opens a quote \(\"\) that a "
                                            "later line closes, so the records between"):
        _read(tmp_path / "q.csv", columns=MAPPING)
    # the swallowed lines hold the header's 7 fields: records, not text of the note
    assert line_swallowing_records(lines[:100] + ['1,"a', 'b,c,d,e,f,g,h"'], ",", 1, 7) == 100
    assert line_swallowing_records(lines[:100] + ['1,"a', 'b, c"'], ",", 1, 7) == -1
    lines = _noted(records)
    lines[100] += '"rain,\nheavy"'
    (tmp_path / "note.csv").write_text("\n".join(lines) + "\n")
    pd.testing.assert_frame_equal(_read(tmp_path / "note.csv")[0], _read(clean)[0])


def test_a_value_outside_the_plausible_range_is_named_by_its_line(tmp_path):
    """A missing code that lost a digit ("-9999" written "-999") or a record whose fields
    shifted by one puts a value outside the variable's plausible range; the warning said
    only how many, so the record could not be found. It names the first such line now."""
    _, records = _tower()
    lines = records.to_csv(index=False).splitlines()
    cells = lines[50].split(",")
    cells[1] = "-999"            # co2_flux: beyond [-100, 100] umol m-2 s-1 (fact of the trade)
    lines[50] = ",".join(cells)
    (tmp_path / "d.csv").write_text("\n".join(lines) + "\n")
    warnings = _read(tmp_path / "d.csv")[1].warnings
    assert sum("nee: 1 value(s) outside the plausible range" in w
               and "(the first on line 51 of" in w for w in warnings) == 1
