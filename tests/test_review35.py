"""Interactions of the session-43 merges found in review round review35.

Outside facts, each named beside its check: Python documentation, ``os.stat_result``:
``st_ino`` is "platform dependent, but if non-zero, uniquely identifies the file for a
given value of st_dev" (m) (file systems without inode numbers, such as some network
shares and FUSE or FAT mounts, report 0 for every file); a UTC offset belongs to the clock,
not to the record: one zone writes at most two (standard and summer time; ISO 8601-1:2019
and the IANA time-zone database (m)); Python's ``strptime`` matches a format's other
characters literally (Python documentation, ``time.strftime`` (m)). Invented Quillmoor
bundles and invented half-hourly records only, for known-truth recovery.
"""

import os
import pathlib
from pathlib import Path

import pandas as pd
import pytest
from bundles import make_bundle
from test_robustness_layouts28 import _cells, _read, _records, _write

from fluxpart.errors import TimestampError
from fluxpart.io import read_site_config


def _glob_bundle(base: Path) -> Path:
    """A site whose ``[input] path`` is ``months/*.csv``: two month files of the 30-day
    Quillmoor bundle (known truth: 720 + 720 records)."""
    config = make_bundle(base, name="site.toml")
    lines = (base / "tower.csv").read_text().splitlines(keepends=True)
    (base / "months").mkdir()
    (base / "months" / "m01.csv").write_text("".join(lines[:721]))
    (base / "months" / "m02.csv").write_text("".join(lines[:1] + lines[721:]))
    text = config.read_text().replace('path = "tower.csv"', 'path = "months/*.csv"')
    config.write_text(text)
    return config


def test_files_without_inode_numbers_are_not_taken_for_one_file(tmp_path, monkeypatch):
    """A file system that reports st_ino 0 for every file (Python's os.stat_result: only a
    non-zero st_ino identifies a file (m)): round faults28's one-file-under-several-paths
    check took all month files for one and read the first month only (720 of 1440
    records, without a word). Known truth: both files, 1440 records."""
    config = _glob_bundle(tmp_path)
    real_stat = pathlib.Path.stat

    def no_inode(self, *args, **kwargs):
        facts = real_stat(self, *args, **kwargs)
        if not str(self).endswith(".csv"):
            return facts
        return os.stat_result((facts.st_mode, 0, facts.st_dev, facts.st_nlink, facts.st_uid,
                               facts.st_gid, facts.st_size, int(facts.st_atime),
                               int(facts.st_mtime), int(facts.st_ctime)))

    monkeypatch.setattr(pathlib.Path, "stat", no_inode)
    assert Path(tmp_path / "months" / "m01.csv").stat().st_ino == 0   # the file system faked
    site = read_site_config(config)
    assert [p.name for p in site.input_paths] == ["m01.csv", "m02.csv"]
    frame, _ = site.read()
    assert len(frame) == 24 * 2 * 30


def test_a_date_and_time_joined_by_a_hyphen_is_not_told_to_add_an_offset(tmp_path):
    """"20210601-0030": the four digits after the hyphen are the time and change from
    record to record, which no UTC offset does (at most two per zone (m)); the reader
    told the user "the stamp ends in a UTC offset: add %z", which reads 00:30 as an
    offset of midnight. Now the hyphen is named and the format given reads the records
    (known truth: the 96 invented stamps, interval ends moved to starts)."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    _write(path, [f"{e:%Y%m%d-%H%M}" for e in ends], _cells(values))
    with pytest.raises(TimestampError) as caught:
        _read(path, time_format="%Y%m%d %H%M")
    message = str(caught.value)
    assert "%z" not in message and "UTC offset" not in message
    assert 'time_format = "%Y%m%d-%H%M" reads every stamp' in message
    frame, _ = _read(path, time_format="%Y%m%d-%H%M")
    assert len(frame) == 96
    assert frame.index[0] == ends[0] - pd.Timedelta(minutes=30)


@pytest.mark.parametrize("offsets", [("-0500",), ("+0100", "+0200")])
def test_a_clocks_offsets_after_the_stamps_are_still_named(tmp_path, offsets):
    """Kept: one offset, or a zone's standard and summer offsets (two values (m)), after
    each stamp are named as UTC offsets with %z."""
    ends, values = _records(96)
    path = tmp_path / "mast.csv"
    stamps = [f"{e:%Y-%m-%d %H:%M} {offsets[i * len(offsets) // len(ends)]}"
              for i, e in enumerate(ends)]
    _write(path, stamps, _cells(values))
    with pytest.raises(TimestampError, match="ends in a UTC offset: add %z"):
        _read(path)
