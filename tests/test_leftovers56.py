"""Leftovers of sessions 53-55 (round leftovers56).

Outside facts, each named beside its check: RFC 9557 (2024), the numeric zone in brackets
("[+01:00]") and the suffix tags ("[u-ca=...]") of the Internet Extended Date/Time Format
(m); the IANA time zone database holds no two names differing only in case (its theory
file (m)), and Central European Summer Time is UTC+2 in June (Europe/Berlin, read from
the database through Python's zoneinfo). Everything else is invented known truth.
"""

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts26 import _read
from test_robustness_layouts49 import _clean, _lines

from fluxpart.errors import TimestampError


def _suffixed(ends, offset, suffix):
    """End stamps (UTC+1 standard time) on Europe/Berlin's civil clock (UTC+2 in June)."""
    return [f"{e + pd.Timedelta('1h'):%Y-%m-%dT%H:%M}{offset}{suffix}" for e in ends]


@pytest.mark.parametrize("suffix", ["[europe/berlin]", "[EUROPE/BERLIN]", "[+02:00]",
                                    "[+0200]"])
def test_a_zone_in_another_case_or_as_an_offset_in_brackets_reads_as_the_clean_file(
        tmp_path, suffix):
    """Refused before, as an unknown zone or as not matching "ISO8601"."""
    ends, values, expected = _clean(tmp_path)
    path = tmp_path / "zoned.csv"
    path.write_text("\n".join(_lines(_suffixed(ends, "+02:00", suffix), values)) + "\n")
    read, report = _read(path, time_format="ISO8601")
    pd.testing.assert_frame_equal(read, expected)
    note = [n for n in report.notes if "RFC 9557" in n]
    assert note and ("Europe/Berlin" in note[0] or "[+02:00]" in note[0]), report.notes


@pytest.mark.parametrize(("offset", "suffix", "cause"), [
    ("+02:00", "[+01:00]", r"offset \+02:00 is not that of its zone \[\+01:00\].*384 such"),
    ("+01:00", "[europe/berlin]", r"offset \+01:00 is not that of its zone "
                                  r"\[europe/berlin, the IANA zone Europe/Berlin\]"),
    ("+02:00", "[u-ca=iso8601]", r"its suffix \[u-ca=iso8601\] is not one time zone"),
    ("+02:00", "[Europe/Berlin][u-ca=iso8601]",
     r"its suffix \[Europe/Berlin\]\[u-ca=iso8601\] is not one time zone"),
    ("+02:00", "[Europe/Berlinn]", r"its zone \[Europe/Berlinn\] is no time zone"),
])
def test_a_suffix_not_read_or_not_agreeing_is_refused_naming_it(tmp_path, offset, suffix,
                                                                cause):
    """Twins: an offset its bracketed zone does not keep, and suffixes that are no zone."""
    ends, values, _ = _clean(tmp_path)
    path = tmp_path / "zoned.csv"
    path.write_text("\n".join(_lines(_suffixed(ends, offset, suffix), values)) + "\n")
    with pytest.raises(TimestampError, match=r"line 2 .*" + cause):
        _read(path, time_format="ISO8601")


def _storage_record(tmp_path):
    """Invented half-hourly records with a storage column "stor" in µmol m-2 s-1, written
    as clean.csv: (stamps, values, header, column mapping, the frame read)."""
    from test_robustness_layouts26 import MAPPING, NAMES, _records
    ends, values = _records()
    written = np.column_stack([values, (0.3 * np.sin(np.arange(len(ends)) / 9)).round(3)])
    stamps, head = [f"{e:%Y-%m-%d %H:%M}" for e in ends], ("stamp", *NAMES, "stor")
    columns = MAPPING | {"storage": "stor"}
    (tmp_path / "clean.csv").write_text("\n".join(_lines(stamps, written, head)) + "\n")
    expected, report = _read(tmp_path / "clean.csv", columns=columns)
    assert not [w for w in report.warnings if w.startswith("storage")], report.warnings
    return stamps, written, head, columns, expected


@pytest.mark.parametrize(("unit", "per_canonical"), [
    ("mmol m-2 s-1", 1e-3),                         # SI prefixes
    ("µg CO2 m-2 s-1", 12.011 + 2 * 15.999),        # IUPAC/CIAAW atomic weights (m)
])
def test_storage_in_the_units_nee_is_read_in_reads_as_the_clean_file(tmp_path, unit,
                                                                     per_canonical):
    """Flux and storage written in one unit (common practice (m)) and declared so: read
    as the file in µmol m-2 s-1 to 1e-12; the storage unit was refused as unknown, while
    the warning of a storage unit apart from the flux's advised that very setting."""
    from fluxpart.storage_labels import storage_unit_apart
    stamps, written, head, columns, expected = _storage_record(tmp_path)
    written[:, [0, -1]] *= per_canonical
    (tmp_path / "unit.csv").write_text("\n".join(_lines(stamps, written, head)) + "\n")
    read, report = _read(tmp_path / "unit.csv", columns=columns,
                         units={"vpd": "hPa", "nee": unit, "storage": unit})
    np.testing.assert_allclose(read["nee"], expected["nee"], rtol=1e-11, atol=1e-12)
    assert not [w for w in report.warnings if w.startswith("storage")], report.warnings
    assert f"set [input.units] storage = '{unit}'" in storage_unit_apart(unit, None)


def test_an_interval_that_does_not_divide_a_day_is_refused_naming_it(tmp_path):
    """7 minutes: 1440 / 7 = 205.7 records a day (arithmetic), so a daily check's days
    drift in time of day; a direct call is refused naming the interval (it ran before),
    and the reader refuses such a file naming its 7-minute spacing, as before."""
    from test_robustness_layouts26 import NAMES

    from fluxpart.column_faults import nee_day_shift, nee_lag
    from fluxpart.errors import SpacingError
    values = np.linspace(0.0, 1.0, 1000)
    for check in (nee_lag, nee_day_shift):
        with pytest.raises(ValueError, match="interval_minutes = 7 does not divide a day"):
            check(values, values, values, 7.0)
    assert nee_lag(values, values, values, 30.0) is None     # a divisor still judged
    ends = pd.date_range("2021-06-01 00:07", periods=300, freq="7min")
    path = tmp_path / "seven.csv"
    path.write_text("\n".join(_lines([f"{e:%Y-%m-%d %H:%M}" for e in ends],
                                     np.ones((300, len(NAMES))))) + "\n")
    with pytest.raises(SpacingError, match="most common spacing between stamps is 7 minutes"):
        _read(path)


def test_nee_one_record_off_is_named_as_records_not_whole_days():
    """Invented passing clouds (test_column_faults.light_record, known truth: NEE one
    record late or early). Photosynthesis follows light within minutes (Lambers, Chapin &
    Pons 2008, ch. 2 (m)), so the clouds line up at the record's shift; whole days apart
    only the diurnal shape is shared. `nee_day_shift` named "27 day(s) earlier" for NEE
    one record late; now the record's shift, and a day late still whole days."""
    from test_column_faults import STEP, light_record

    from fluxpart.column_faults import nee_day_shift
    nee, rg, potential = light_record(0, 1.0)
    for records, named in ((1, "1 record(s) (30 min) later"), (-1, "1 record(s) (30 min) earlier"),
                           (48, "1 day(s) later"), (-48, "1 day(s) earlier")):
        text = nee_day_shift(np.roll(nee, records), rg, potential, STEP)
        assert text is not None and named in text, (records, text)
        assert ("not by whole days" in text) is (abs(records) == 1)


def test_the_preflight_files_a_record_shift_found_beside_the_days_with_the_records(
        monkeypatch):
    """Where the record-level checks are silent (as at w04) and `nee_day_shift` names a
    record's shift, the finding's stage is the record shifts' "input (nee)"; a day late
    stays "input (nee days)". The record-level checks are silenced here to reach it."""
    from test_column_faults import STEP, light_record

    from fluxpart import preflight
    for name in ("nee_hour_shift", "nee_lag", "nee_shift_from_month"):
        monkeypatch.setattr(preflight, name, lambda *args, **kwargs: None)
    nee, rg, potential = light_record(0, 1.0)
    index = pd.date_range("2021-03-01", periods=nee.size, freq=f"{STEP}min")
    for records, stage in ((1, "input (nee)"), (48, "input (nee days)")):
        found = preflight._column_faults(
            pd.DataFrame({"nee": np.roll(nee, records), "rg": rg}, index=index), potential, STEP)
        assert [f.stage for f in found] == [stage], found
