"""Review round 41: interactions of this session's later merges.

Outside facts, each named beside its check: flux processing programs commonly write the
worst quality flag (or none) for a record without a flux value (common practice);
towers keep about 65 % of their measured records (Falge et al. 2001, Agric. For.
Meteorol. 107, 43-69 (m)). Everything else is known-truth recovery on invented data:
the records as written.
"""

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts18 import _tower

from fluxpart.errors import ImplausibleValueError, InputFileError
from fluxpart.io import read_table
from fluxpart.site import Site

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
COLUMNS = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd",
           "nee_flag": "qc"}


def _read(path, **kwargs):
    return read_table(path, columns=COLUMNS, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end", site=SITE, **kwargs)


def test_a_flag_bad_where_nee_is_missing_is_judged_over_the_records_with_nee(tmp_path):
    """A tower whose flux system started late (NEE in the last 8 % of the records) and
    whose flag is 2 wherever NEE is missing (common practice) and 0 or 1 where measured
    (a 65 %-like keep, Falge et al. 2001 (m)): 96.5 % of all flags reject, 30 % of the
    records with NEE. layouts33's > 95 % refusal counted every record and refused it as
    a flag of the other scale; judged over the records with NEE the file reads, keeping
    each measured record whose flag is 0 (known truth)."""
    starts, records = _tower(periods=48 * 40)
    late = np.arange(len(records)) < int(0.95 * len(records))
    records.loc[late, "co2_flux"] = np.nan
    qc = np.where(np.arange(len(records)) % 10 < 3, 1, 0)
    records["qc"] = np.where(late, 2, qc)
    records.to_csv(tmp_path / "a.csv", index=False)
    frame, _ = _read(tmp_path / "a.csv")
    measured = np.isfinite(frame["nee"].to_numpy())
    assert measured.sum() == (~late).sum()
    kept = measured & (frame["nee_flag"].to_numpy() == 0)
    assert kept.sum() == int(((qc == 0) & ~late).sum())
    # the same flag of the other scale among the measured records is still refused
    records["qc"] = np.where(late, 0, np.where(np.arange(len(records)) % 60 == 7, 0, 2))
    records.to_csv(tmp_path / "b.csv", index=False)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(tmp_path / "b.csv")
    assert "records with an NEE value" in str(caught.value)
    assert "a flag of the other scale" in str(caught.value)


def _with_note(tmp_path):
    """An invented end-stamped tower file with an always-empty last column ("note"):
    every record ends with the delimiter, its last field empty."""
    _, records = _tower(periods=48 * 20)
    records["note"] = ""
    plain = tmp_path / "plain.csv"
    records.to_csv(plain, index=False)
    return plain, plain.read_text(encoding="utf-8").splitlines()


def test_a_column_inserted_before_an_empty_last_column_stays_refused(tmp_path):
    """A logger program inserted a column ("t_soil2") after "co2_flux" from mid-file on, in a file
    whose last column is always empty: every later line holds one field more and ends
    with the delimiter, as a delimiter closing each line would. layouts34 read it as a
    closing delimiter, so every column after "co2_flux" was read one to the left (us holding
    the new column, sw holding us; the run then named unit mix-ups). Every earlier record
    ends with the delimiter too, so a closing one would end the later lines with two:
    the file is refused as a column added (known truth: the layout written). A closing
    delimiter after the empty note (",,") is still read as no column, the records as
    written (known truth)."""
    plain, lines = _with_note(tmp_path)
    assert all(line.endswith(",") for line in lines[1:])
    columns = {k: v for k, v in COLUMNS.items() if k != "nee_flag"}
    inserted = tmp_path / "inserted.csv"
    later = []
    for line in lines[501:]:
        fields = line.split(",")
        fields.insert(2, "7.7")
        later.append(",".join(fields))
    inserted.write_text("\n".join(lines[:501] + later) + "\n", encoding="utf-8")
    with pytest.raises(InputFileError, match="a logger program that added a column"):
        read_table(inserted, columns=columns, time_column="stamp",
                   time_format="%Y-%m-%d %H:%M", time_marks="end", site=SITE)
    closed = tmp_path / "closed.csv"
    closed.write_text("\n".join(lines[:501] + [line + "," for line in lines[501:]]) + "\n",
                      encoding="utf-8")
    options = {"columns": columns, "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M",
               "time_marks": "end", "site": SITE}
    expected, _ = read_table(plain, **options)
    table, report = read_table(closed, **options)
    pd.testing.assert_frame_equal(table, expected)
    assert any("read as no column" in w for w in report.notes)


def test_a_wind_speed_mapped_as_ustar_is_not_told_to_declare_cm_per_second():
    """Wind speed at tower height follows a Weibull distribution of shape about 2
    (common practice); a windy site's (scale 5.5 m s-1, median 4.6 m s-1) mapped as
    ustar lies 40 % beyond 5 m s-1. Since u* in cm s-1 was accepted (layouts34) the
    refusal said "the values look like 'cm s-1'", which reads it as a median u* of
    0.046 m s-1, where towers' u* medians are 0.2-0.7 m s-1 (m): now no unit is named
    below a median of 0.1 m s-1, and the mapping is. A u* written in cm s-1 (invented,
    median 0.3 m s-1; 1 cm s-1 = 0.01 m s-1, SI) is still told to declare it."""
    from fluxpart.unit_checks import implausible_message

    rng = np.random.default_rng(3)
    wind = np.round(5.5 * rng.weibull(2.0, 17520), 2)
    message = implausible_message("ustar", wind, wind, None, "ws", ())
    assert message is not None and "cm s-1" not in message and "km h-1" not in message
    assert "check the column mapping" in message
    ustar_cm = np.round(100 * rng.lognormal(np.log(0.3), 0.5, 17520), 1)
    message = implausible_message("ustar", ustar_cm, ustar_cm, None, "us", ())
    assert "set [input.units] ustar = \"cm s-1\"" in message


def test_the_half_rejected_warning_is_judged_over_the_records_with_nee(tmp_path):
    """The reader's "rejects most records" warning (half, our choice after Falge et al.
    2001's 65 % kept (m)) judged over the records with an NEE value as its refusal is
    (round falsealarm51): a tower with 40 % of NEE missing, its flag 2 there (common
    practice) and 42 % of the measured records flagged 2, is not named (65 % of all
    flags reject); the same measured records flagged bad in 83 % are named, as "records
    with an NEE value". Invented data, known truth."""
    starts, records = _tower(periods=48 * 40)
    n = len(records)
    gap = np.arange(n) % 10 < 4
    records.loc[gap, "co2_flux"] = np.nan
    measured_bad = np.arange(n) % 20 >= 15           # 5 of the 12 measured in 20
    records["qc"] = np.where(gap, 2, np.where(measured_bad, 2, 0))
    assert 0.5 < (records["qc"] != 0).mean() < 0.95
    records.to_csv(tmp_path / "a.csv", index=False)
    _, report = _read(tmp_path / "a.csv")
    assert not any("are rejected by" in w for w in report.warnings)
    records["qc"] = np.where(gap, 2, np.where(np.arange(n) % 20 >= 6, 2, 0))   # 10 of 12
    records.to_csv(tmp_path / "b.csv", index=False)
    _, report = _read(tmp_path / "b.csv")
    named = [w for w in report.warnings if "are rejected by" in w]
    assert len(named) == 1 and "records with an NEE value" in named[0]
