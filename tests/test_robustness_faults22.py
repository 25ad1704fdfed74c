"""Faults in the CSV export and the batch paths (round faults22).

Contracts (README "Command line", DESIGN §7): a genuine result verifies wherever it is
moved; nothing is ever half-written; a user error is one ``error:`` line, exit 2, no
traceback. External facts used: a file name is at most 255 bytes on ext4, XFS, APFS and
NTFS (``NAME_MAX``; common practice); ``rename(2)`` onto a directory that is not empty
fails with ``ENOTEMPTY`` or ``EEXIST`` and the top folder of a mounted file system
cannot be removed or renamed onto (``EBUSY``) (Linux man-pages rename(2), rmdir(2) (m)).
"""

import os
import shutil

import pytest
from bundles import make_bundle

from fluxpart import export_csv, resultdir
from fluxpart.cli import main
from fluxpart.errors import InputFileError
from fluxpart.pipeline import process_site_config


@pytest.fixture(scope="module")
def bundle(tmp_path_factory):
    """A bundle with a declared event: site config, input and result folder `out`."""
    root = tmp_path_factory.mktemp("bundle")
    config = make_bundle(root, extra='events = ["2021-01-15"]\n')
    process_site_config(config).write(root / "out")
    return root


@pytest.fixture(scope="module")
def reference(bundle, tmp_path_factory):
    """The CSV export of the bundle's result written the ordinary way."""
    target = tmp_path_factory.mktemp("reference") / "csv"
    export_csv.write_csv(bundle / "out", target)
    return {p.name: p.read_bytes() for p in target.iterdir()}


def _one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


def _leftovers(folder):
    return [p.name for p in folder.iterdir() if p.name.endswith(".tmp")]


def test_a_csv_folder_named_near_the_name_limit_is_written(bundle, reference, tmp_path,
                                                           capsys):
    """A 250-byte folder name is legal (NAME_MAX 255 bytes, common practice), but its
    staging folder '.NAME.xxxxxxxx.tmp' is 14 bytes longer: the export was refused with
    "cannot write in ... (File name too long); choose a writable place", of a writable
    place. The staging folder now takes a short name; the folder is written whole."""
    name = "x" * 248 + "é"                           # 248 + 2 = 250 bytes in UTF-8
    assert len(os.fsencode(name)) == 250
    target = tmp_path / name
    assert main(["export", str(bundle / "out"), "--csv", str(target)]) == 0
    assert {p.name: p.read_bytes() for p in target.iterdir()} == reference
    assert _leftovers(tmp_path) == []


def test_a_killed_export_of_a_long_name_is_swept(bundle, tmp_path):
    """The short staging name of a long target is swept by the next export like the
    ordinary one (a killed export's folder must not stay for ever)."""
    name = "y" * 250
    stem = export_csv._staging_stem(name, tmp_path)
    assert stem != name and len(stem) + 14 <= 255
    stale = tmp_path / f".{stem}.abcdefgh.tmp"
    stale.mkdir()
    os.utime(stale, (1_000_000_000, 1_000_000_000))      # written long before
    export_csv.write_csv(bundle / "out", tmp_path / name)
    assert not stale.exists() and _leftovers(tmp_path) == []


def test_a_mount_point_as_csv_target_is_named(bundle, tmp_path, monkeypatch, capsys):
    """The empty top folder of a USB stick or a mounted share cannot be removed or renamed
    onto (EBUSY, rmdir(2) (m)): the export wrote every file beside it, then failed with
    "writing failed (Device or resource busy) ... free space". The mount point is now
    named before anything is written, with a folder inside it to give instead."""
    target = tmp_path / "stick"
    target.mkdir()
    real = os.path.ismount
    monkeypatch.setattr(export_csv.os.path, "ismount",
                        lambda p: os.path.abspath(p) == str(target) or real(p))
    assert main(["export", str(bundle / "out"), "--csv", str(target)]) == 2
    line = _one_error_line(capsys)
    assert "mounted drive" in line and "stick/fluxpart-csv" in line and "free space" not in line
    assert list(target.iterdir()) == [] and _leftovers(tmp_path) == []


def test_a_symbolic_link_as_csv_target_is_named_as_a_link(bundle, tmp_path, capsys):
    """A link to an empty folder was refused as "exists and is not a folder" (it is a
    link to one): renaming the export onto it would replace the link, so it stays
    refused, now said as it is."""
    (tmp_path / "elsewhere").mkdir()
    (tmp_path / "link").symlink_to(tmp_path / "elsewhere")
    assert main(["export", str(bundle / "out"), "--csv", str(tmp_path / "link")]) == 2
    assert "symbolic link" in _one_error_line(capsys)
    assert (tmp_path / "link").is_symlink() and list((tmp_path / "elsewhere").iterdir()) == []


def test_an_export_overtaken_by_another_says_so(bundle, reference, tmp_path, monkeypatch,
                                                capsys):
    """Two exports into one new folder: the one renamed second fails (rename(2) onto a
    folder that is not empty: ENOTEMPTY (m)). It said "writing failed (Directory not
    empty); nothing was written: free space"; now it names the other writer. The
    folder is the first export's, whole."""
    target = tmp_path / "csv"
    real = os.rename

    def overtaken(source, destination):
        shutil.copytree(source, destination)            # the other export, first
        return real(source, destination)

    monkeypatch.setattr(export_csv.os, "rename", overtaken)
    assert main(["export", str(bundle / "out"), "--csv", str(target)]) == 2
    line = _one_error_line(capsys)
    assert "another process" in line and "free space" not in line
    assert {p.name: p.read_bytes() for p in target.iterdir()} == reference
    assert _leftovers(tmp_path) == []


def test_a_folder_replaced_at_every_read_is_refused_not_returned_mixed(bundle, monkeypatch):
    """A result folder swapped for another while its tables are read is read again; the
    third try returned its tables even when the folder had changed again meanwhile,
    so the tables could come from two results. Known truth: an identity that changes
    at every look must end in the refusal 'kept changing while being read'."""
    counter = iter(range(10**6))
    monkeypatch.setattr(resultdir, "_identity", lambda directory: (0, next(counter)))
    with pytest.raises(InputFileError, match="kept changing"):
        resultdir.read_folder(bundle / "out")

