"""A site flag whose flag_accept keeps every value it holds is named (round mistakes61).

INVENTED DATA: a FICTIONAL tower's two days of half-hours. The check is a fact of the
file and the setting (common practice of flux networks' quality flags: a flag of a few
classes, 0 best and 1 or 2 rejected (m)); the counts are checked against pandas'
``value_counts`` of the written file (a general-purpose library).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from fluxpart.flag_reach import keeps_every_value
from fluxpart.io import read_table

MAPPING = {"nee": "co2_flux", "rg": "sw_down", "tair": "t_air", "vpd": "vpd_air",
           "ustar": "u_fric", "nee_flag": "qc"}


def _file(tmp_path, qc):
    rng = np.random.default_rng(3)
    starts = pd.date_range("2021-06-01 00:00", periods=96, freq="30min")
    hour = starts.hour + starts.minute / 60
    light = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)
    records = pd.DataFrame({
        "stamp": starts.strftime("%Y-%m-%d %H:%M"),
        "co2_flux": np.round(3 - 15 * light + rng.normal(0, 1.5, 96), 3),
        "sw_down": np.round(800 * light, 1),
        "t_air": np.round(12 + 8 * light, 2),
        "vpd_air": np.round(3 + 10 * light, 2),
        "u_fric": np.round(0.3 + 0.1 * light, 3),
        "qc": qc})
    path = tmp_path / "tower.csv"
    records.to_csv(path, index=False)
    return path


def _warnings(path, accept):
    _, report = read_table(path, columns=MAPPING, time_column="stamp",
                           time_format="%Y-%m-%d %H:%M", flag_accept=accept)
    return [w for w in report.warnings if "keeps every value" in str(w)]


def test_a_flag_accept_that_keeps_every_value_held_is_named_with_the_counts(tmp_path):
    qc = np.where(np.arange(96) % 10 == 0, 2, 0)
    path = _file(tmp_path, qc)
    counts = pd.read_csv(path)["qc"].value_counts()
    found = _warnings(path, [0, 2])
    assert len(found) == 1
    assert f"0 in {counts[0]} record(s), 2 in {counts[2]} record(s)" in found[0]
    assert "flag_accept = [0, 2]" in found[0]
    # a 0/1 flag read with a 0/1/2 scheme's [0, 1] is named too
    path = _file(tmp_path, np.where(qc == 2, 1, 0))
    assert len(_warnings(path, [0, 1])) == 1


def test_a_flag_that_rejects_records_or_holds_one_value_is_not_named(tmp_path):
    qc = np.where(np.arange(96) % 10 == 0, 2, 0)
    assert _warnings(_file(tmp_path, qc), [0]) == []
    # a 0/1/2 scheme's [0, 1] on a flag that holds a 2: the 2s are rejected
    assert _warnings(_file(tmp_path, np.arange(96) % 3), [0, 1]) == []
    # every record good: nothing the flag could have rejected
    assert _warnings(_file(tmp_path, np.zeros(96, dtype=int)), [0]) == []


def test_only_records_with_nee_are_judged():
    nee = np.array([1.0, np.nan, 2.0, np.nan])
    flags = [np.array([0.0, 2.0, 0.0, 2.0])]
    # the 2s lie where NEE is missing: over the records with NEE the flag holds 0 alone
    assert keeps_every_value(flags, ["qc"], nee, np.array([0, 0, 0, 0.0]), [0, 2]) is None
    # a record with NEE rejected: the flag rejects something
    flags = [np.array([0.0, 2.0, 1.0, 2.0])]
    assert keeps_every_value(flags, ["qc"], nee, np.array([0, 1, 1, 1.0]), [0, 2]) is None
    text = keeps_every_value(flags, ["qc"], nee, np.array([0, 0, 0, 0.0]), [0, 1, 2])
    assert "'qc' holds 0 in 1 record(s), 1 in 1 record(s)" in text
