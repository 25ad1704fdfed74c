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
from bundles import make_bundle

from fluxpart.cli import main
from fluxpart.pipeline import process_site_config


@pytest.fixture(scope="module")
def bundle(tmp_path_factory):
    """A pristine bundle: site config, input and result folder `out` beside them."""
    root = tmp_path_factory.mktemp("bundle")
    config = make_bundle(root)
    process_site_config(config).write(root / "out")
    return root


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
