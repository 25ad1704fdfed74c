"""Readings the reader's fuzz campaign of round readfuzz54 found wrong or named wrongly.

Outside facts, each named beside its check: RFC 4180, section 2, lets a double-quoted field
hold line breaks (m), so a stray quote runs on to the next quote, any number of lines later;
a record of a delimited file holds as many fields as its header has names (RFC 4180,
section 2 (m)). Everything else is invented known truth: the records as written.
"""
from pathlib import Path

import pandas as pd
import pytest
from test_robustness_layouts19 import MAPPING, _read, _tower

from fluxpart.errors import FluxpartError
from fluxpart.io import read_config
from fluxpart.quoted_lines import line_swallowing_records
from fluxpart.shifted_fields import shifted_records


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


_EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland"


def _first_days(records=960):
    """The grassland example's header and first 20 days of records, as lines."""
    return _EXAMPLE.with_suffix(".csv").read_text().splitlines()[:records + 1]


@pytest.mark.parametrize("at, shift", [(300, 1), (707, -1), (133, -1)])
def test_a_record_whose_values_sit_one_column_off_is_refused_naming_its_line(tmp_path, at,
                                                                             shift):
    """A record that lost its first value and gained an empty last field (or the reverse)
    keeps the header's field count (RFC 4180 (m)) and was read in silence with each value
    under its neighbour's name where every one stayed inside its variable's plausible
    range (rh 0.63 %, a flag of 86.3). Refused now, naming the line; no record of the clean
    lines is named."""
    lines = _first_days()
    cells = lines[at].split(",")
    cells = ([cells[0], *cells[2:], ""] if shift > 0 else [cells[0], "", *cells[1:-1]])
    raw = pd.DataFrame([row.split(",") for row in lines[1:]], columns=lines[0].split(","))
    assert shifted_records(raw, ["stamp_end"], ".", [-9999])[0].size == 0
    # a word among the missing codes (a spreadsheet's "#VALUE!") is no number to compare
    assert shifted_records(raw, ["stamp_end"], ".", [-9999, "#VALUE!"])[0].size == 0
    shifted = raw.copy()
    shifted.iloc[at - 1] = cells
    rows, found = shifted_records(shifted, ["stamp_end"], ".", [-9999])
    assert list(rows) == [at - 1] and found == shift
    lines[at] = ",".join(cells)
    (tmp_path / "quillmoor_grassland.csv").write_text("\n".join(lines) + "\n")
    config = tmp_path / "site.toml"
    config.write_text(_EXAMPLE.with_suffix(".toml").read_text())
    with pytest.raises(FluxpartError, match=rf"line {at + 1} holds values that each fit the "
                                            f"column to the {'right' if shift > 0 else 'left'}"):
        read_config(config)
