"""Interactions of the session-43 merges found in review round review35.

Outside facts, each named beside its check: Python documentation, ``os.stat_result``:
``st_ino`` is "platform dependent, but if non-zero, uniquely identifies the file for a
given value of st_dev" (m) (file systems without inode numbers, such as some network
shares and FUSE or FAT mounts, report 0 for every file). Invented Quillmoor bundles only,
for known-truth recovery.
"""

import os
import pathlib
from pathlib import Path

from bundles import make_bundle

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
