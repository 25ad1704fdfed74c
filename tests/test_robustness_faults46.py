"""Result safety found open by round faults46 (invented data only).

Each test fails on the code before the fix it names. The references are SHA-256 (FIPS
180-4, through :mod:`hashlib`) for a table kept under another name, and the exit
statuses and one-line errors the command line documents.
"""
from __future__ import annotations

import shutil

from fluxpart.cli import main
from fluxpart.manifest import read_manifest
from fluxpart.resultdir import check_folder


def test_a_zero_byte_site_config_is_named_empty(tmp_path, capsys):
    """A site config cut to 0 bytes (a failed sync; a batch of such files) was "has no
    [site] table", which sent the user looking for a typo; now "is empty", one line,
    exit 2, no folder."""
    config = tmp_path / "site.toml"
    config.write_bytes(b"")
    assert main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and "is empty (0 bytes" in err
    assert not (tmp_path / "out").exists()


def test_a_table_kept_under_a_backup_name_is_named(copy):
    """A table renamed ``annual.parquet.bak`` (a backup never put back), and a backup copy
    left beside an intact table: the folder still does not match its manifest (it must
    hold exactly the files listed, under their names), and the problems now say which file
    holds the recorded bytes and what to do, where they named a missing table and an
    unlisted file with no link between them."""
    out = copy / "out"
    manifest = read_manifest(out)
    (out / "annual.parquet").rename(out / "annual.parquet.bak")
    shutil.copy2(out / "daily.parquet", out / "daily.parquet~")
    problems = {p.file: p for p in check_folder(out, manifest)}
    assert problems["annual.parquet"].kind == "missing"
    assert "'annual.parquet.bak' holds its recorded bytes" in problems["annual.parquet"].detail
    assert problems["annual.parquet.bak"].detail.endswith(
        "it holds the recorded bytes of annual.parquet, which is missing: rename it so")
    assert problems["daily.parquet~"].kind == "extra"
    assert "same bytes as daily.parquet (a backup copy?)" in problems["daily.parquet~"].detail
    # a file of other bytes under a table's name plus a suffix is only not listed
    (out / "monthly.parquet.old").write_bytes(b"not the table")
    other = {p.file: p for p in check_folder(out, manifest)}["monthly.parquet.old"]
    assert "same bytes" not in other.detail and "recorded bytes" not in other.detail


def test_a_result_of_another_user_names_its_owner_not_chmod(tmp_path):
    """A result folder owned by a colleague, not writable by this user: run into it was
    refused with "make it writable (chmod -R u+w)", which only the owner may do (chmod(2):
    EPERM). The refusal now names the owner. Checked on the owner lookup (as root no mode
    refuses a write, so the refusal itself is seen in probe_faults' f46_other_users_result)."""
    import os

    import pytest

    from fluxpart.resultdir import _other_owner

    assert _other_owner(tmp_path) is None
    if os.geteuid() != 0:
        pytest.skip("needs root to give a folder to another user")
    theirs = tmp_path / "theirs"
    theirs.mkdir()
    os.chown(theirs, 65534, 65534)
    assert _other_owner(theirs) in ("user 'nobody'", "user number 65534")
