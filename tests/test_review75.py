"""Wordings left open by the session's rounds, named by round review75 (invented data only).

The references are SHA-256 of no bytes (FIPS 180-4, through :mod:`hashlib`), the shell's
tilde expansion (POSIX Shell Command Language 2.6.1: ``~`` is HOME, unspecified where
HOME is unset (m)) and :func:`shlex.quote` for a path given back to a shell.
"""
from __future__ import annotations

import hashlib
import shlex

from fluxpart.cli import main


def test_an_input_cut_to_nothing_is_said_to_be_empty(copy, capsys):
    """An input cut to 0 bytes after the run (a sync cut short): verify named only the
    empty file's SHA-256 (e3b0c442...), which a reader cannot tell from another file's;
    now "is now empty (0 bytes ...)", in the full report and in ``--quiet``'s verdict."""
    from fluxpart.verify import EMPTY_SHA256

    assert EMPTY_SHA256 == hashlib.sha256(b"").hexdigest()
    (copy / "tower.csv").write_bytes(b"")
    assert main(["verify", str(copy / "out")]) == 1
    detail = capsys.readouterr().out.splitlines()[1]
    assert "tower.csv is now empty (0 bytes, SHA-256 e3b0c442" in detail
    assert main(["verify", str(copy / "out"), "--quiet"]) == 1
    head = capsys.readouterr().out.splitlines()[0]
    assert head.endswith("(input file tower.csv is now empty (0 bytes; recorded SHA-256 "
                         f"{head.split('recorded SHA-256 ')[1][:12]}...))")
    assert "e3b0c442" not in head


def test_the_report_remedy_suggests_a_folder_that_exists(tmp_path, monkeypatch):
    """A report folder that cannot be written suggested ``--out ~/report`` whatever the
    home: with HOME unset or a home that does not exist (a service account's
    /nonexistent) that folder cannot be made. The suggestion is now ``~/report`` only
    where the home is a writable folder, else ``report`` in the working folder."""
    from fluxpart.report import _suggested_out

    home = tmp_path / "home"
    home.mkdir()
    work = tmp_path / "work dir"
    work.mkdir()
    monkeypatch.chdir(work)
    monkeypatch.setenv("HOME", str(home))
    assert _suggested_out() == "~/report"
    monkeypatch.delenv("HOME")
    assert _suggested_out() == shlex.quote(str(work / "report"))
    monkeypatch.setenv("HOME", str(tmp_path / "nonexistent"))
    assert _suggested_out() == shlex.quote(str(work / "report"))


def test_a_network_site_keeps_the_note_of_its_edited_site_config(tmp_path):
    """A network's site lines showed a site's verdict and result: line only, so the note
    that its site config was edited since the run (the verdict used the manifest's copy)
    was never printed for a batch's site; it is kept below the site, with or without
    ``--quiet``, and a note of another kind is not."""
    from fluxpart.verify import CONFIG_EDITED, VerifyReport
    from fluxpart.verify_network import NetworkReport

    edited = (f"site config: the file at '{tmp_path}/alder.toml' {CONFIG_EDITED}; changed "
              "since the run: [processing] seed 0 -> 1; used the copy of its text recorded "
              "in the manifest (SHA-256 checked)")
    site = VerifyReport(directory=tmp_path / "alder", source="run",
                        notes=(edited, "input: read through a link"))
    assert site.kept_notes == [edited]
    network = NetworkReport(directory=tmp_path, sites=(("alder", site),), failed=())
    for quiet in (False, True):
        notes = [line for line in network.lines(quiet=quiet) if "note:" in line]
        assert notes == [f"    note: {edited}"]
