"""Result safety, portable verify, batch and export faults (round faults21).

Contracts (README "Command line", DESIGN §7): a genuine result verifies wherever it is
moved or rerun; a tampered or mixed one is refused naming the file; nothing is ever
half-written; a user error is one ``error:`` line, exit 2. External facts used: JSON text
may be UTF-8, UTF-16 or UTF-32, told from its first four bytes (RFC 4627 section 3;
Python's ``json.detect_encoding``); Windows PowerShell 5.1 writes UTF-16 LE with a
byte-order mark for ``>`` and ``Out-File`` (m); the Windows "ANSI" code page cp1252 has
no Greek capital delta (Unicode's cp1252 mapping table).
"""

import shutil

import pytest

from fluxpart.cli import main


@pytest.fixture
def copy(bundle, tmp_path):
    target = tmp_path / "bundle"
    shutil.copytree(bundle, target)
    return target


def _one_error_line(capsys) -> str:
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


@pytest.mark.parametrize("encoding", ["utf-16", "utf-16-le", "utf-32"])
def test_a_manifest_re_saved_as_utf16_verifies(copy, capsys, encoding):
    """Known truth: the same manifest text in UTF-16 (Notepad's "Unicode", PowerShell 5.1's
    ``>``) or UTF-32 is the same JSON (RFC 4627 section 3): verify said "is not valid
    JSON: 'utf-8' codec can't decode byte 0xff" of a genuine result (exit 2)."""
    path = copy / "out" / "manifest.json"
    text = path.read_text(encoding="utf-8")
    assert any(ord(ch) > 127 for ch in text)       # the en dash of Lloyd–Taylor, at least
    path.write_bytes(text.encode(encoding))
    assert main(["verify", str(copy / "out"), "--quiet"]) == 0
    assert capsys.readouterr().out.startswith("bit-identical")
    # the other readers of the folder read it alike
    assert main(["diff", str(copy / "out"), str(copy / "out")]) == 0


def test_a_manifest_re_saved_in_a_legacy_code_page_is_named_as_such(copy, capsys):
    """cp1252 ("ANSI") writes the en dash U+2013 as the one byte 0x96 and has no Δ
    (Unicode's cp1252 mapping table): an editor's save so rewrites the content. One ``error:`` line saying it is not UTF-8 and was
    re-saved in another encoding, exit 2 (it said only "is not valid JSON: 'utf-8'
    codec ...")."""
    path = copy / "out" / "manifest.json"
    text = path.read_text(encoding="utf-8")
    path.write_bytes(text.encode("cp1252", errors="replace"))
    assert main(["verify", str(copy / "out"), "--quiet"]) == 2
    line = _one_error_line(capsys)
    assert "manifest.json" in line and "not UTF-8" in line and "another encoding" in line


@pytest.mark.parametrize("resave", [
    pytest.param(lambda data: data.replace(b"\n", b"\r\n"), id="crlf"),
    pytest.param(lambda data: b"\xef\xbb\xbf" + data, id="utf8-bom"),
    pytest.param(lambda data: data.decode("utf-8").encode("utf-16"), id="utf16"),
    pytest.param(lambda data: data + b"\n", id="final-newline-added"),
    pytest.param(lambda data: data.rstrip(b"\n"), id="final-newline-dropped"),
    pytest.param(lambda data: data.decode().replace("\n", "\r\n").encode("utf-16"),
                 id="utf16-crlf"),
])
def test_an_input_re_saved_with_the_same_text_verifies(copy, capsys, resave):
    """Known truth: the input's text re-saved by an editor or a conversion (line endings,
    a byte-order mark, UTF-16, a final line break) is the recorded file once undone; the
    undone bytes have the recorded SHA-256 (FIPS 180-4), so the rerun is on the recorded
    bytes. verify said "it is not the input file the result was computed from" (exit 1)
    of a genuine result; now bit-identical, the re-saving named in a note, the file left
    as it was."""
    tower = copy / "tower.csv"
    changed = resave(tower.read_bytes())
    tower.write_bytes(changed)
    assert main(["verify", str(copy / "out")]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical")
    assert "note: input file:" in out and "re-saved otherwise" in out
    assert tower.read_bytes() == changed


def test_an_input_with_one_value_changed_is_still_refused(copy, capsys):
    """A changed value is no re-saving: the input differs (exit 1), named, no rerun."""
    tower = copy / "tower.csv"
    lines = tower.read_text(encoding="utf-8").splitlines(keepends=True)
    header = lines[0].rstrip("\n").split(",")
    fields = lines[5].rstrip("\n").split(",")
    column = next(i for i, name in enumerate(header) if i and fields[i] not in ("", "-9999"))
    fields[column] = fields[column] + "1"
    lines[5] = ",".join(fields) + "\n"
    tower.write_bytes("".join(lines).replace("\n", "\r\n").encode("utf-8"))
    assert main(["verify", str(copy / "out")]) == 1
    out = capsys.readouterr().out
    assert "it is not the input file" in out and "re-saved" not in out


@pytest.mark.parametrize("names", [
    pytest.param((".DS_Store", "._manifest.json", "._annual.parquet"), id="mac-finder-fat"),
    pytest.param(("Thumbs.db", "desktop.ini", "THUMBS.DB"), id="windows-explorer"),
])
def test_a_genuine_result_viewed_in_a_file_manager_verifies(copy, capsys, names):
    """Known truth: macOS Finder writes ``.DS_Store``, and a Mac copying onto FAT, exFAT
    or an SMB share an AppleDouble ``._NAME`` per file; Windows Explorer writes
    ``Thumbs.db`` in a viewed folder of pictures and ``desktop.ini`` for folder settings
    (m; common practice). None is read as a table, yet verify said "NOT reproduced"
    (exit 1) of a genuine result so copied or viewed; now bit-identical with a note
    naming each, and `run` replaces the folder (they cost nothing)."""
    out = copy / "out"
    for name in names:
        if not (out / name).exists():
            (out / name).write_bytes(b"\x00\x05\x16\x07")
    assert main(["verify", str(out)]) == 0
    printed = capsys.readouterr().out
    assert printed.startswith("bit-identical")
    for name in {n for n in names if (out / n).exists()}:
        assert f"note: {name} is what a file manager or a copy left" in printed
    # a file a user put there is still a difference, named
    (out / "notes.txt").write_text("checked\n")
    assert main(["verify", str(out), "--quiet"]) == 1
    assert "notes.txt is not listed in the manifest" in capsys.readouterr().out


def test_explorer_thumbnails_in_the_report_folder_do_not_block_a_rerun(copy, capsys):
    """Windows Explorer leaves ``Thumbs.db`` in ``report/`` once its figures are viewed
    (m): `run --out` and `report` into the folder refused it as a user's file to move
    out; now the folder is replaced whole (a user's own file still refuses it)."""
    out = copy / "out"
    assert main(["report", str(out), "--quiet"]) == 0
    (out / "report" / "Thumbs.db").write_bytes(b"\x00")
    assert main(["report", str(out), "--quiet"]) == 0
    assert not (out / "report" / "Thumbs.db").exists()
    (out / "report" / "Thumbs.db").write_bytes(b"\x00")
    assert main(["run", str(copy / "site.toml"), "--out", str(out), "--quiet"]) == 0
    (out / "report").mkdir(exist_ok=True)
    (out / "report" / "mine.txt").write_text("keep\n")
    assert main(["run", str(copy / "site.toml"), "--out", str(out), "--quiet"]) == 2
    assert "mine.txt" in _one_error_line(capsys)


def test_an_input_gzipped_for_the_archive_verifies_with_input(copy, capsys):
    """Known truth: gzip (RFC 1952) gives back the very bytes compressed, so the recorded
    SHA-256 (FIPS 180-4) is checked on the decompressed file. An auditor's archive copy
    ``tower.csv.gz`` given with ``--input`` was "not the input file" (exit 1)."""
    import gzip

    tower = copy / "tower.csv"
    packed = copy / "tower.csv.gz"
    packed.write_bytes(gzip.compress(tower.read_bytes()))
    tower.unlink()
    assert main(["verify", str(copy / "out"), "--input", str(packed)]) == 0
    out = capsys.readouterr().out
    assert out.startswith("bit-identical") and "gzip" in out
    # another file compressed is still not the input
    packed.write_bytes(gzip.compress(b"time,nee\n"))
    assert main(["verify", str(copy / "out"), "--input", str(packed), "--quiet"]) == 1
