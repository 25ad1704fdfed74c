"""Faults found by round review91 (invented data only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import secrets
import tempfile

from fluxpart.resultdir import clean_leftovers, interrupted_writes, make_staging


def test_a_hidden_folder_named_by_a_user_is_not_a_leftover(tmp_path):
    """A writer names its retired copy ``.NAME.retired-`` and eight hex digits
    (``secrets.token_hex(4)``, Python documentation) and its staging folder
    ``.NAME.staging-`` and the eight characters of ``tempfile.mkdtemp`` (lower-case
    letters, digits and underscores, Python's tempfile source (m)), in every release
    since the folder is swapped whole. Matched as any dot-free token, a user's own
    hidden folder beside the result (``.r.retired-2020``: an earlier result put aside
    by hand) was removed by a run into ``r``, or, with ``r`` missing, moved in as ``r``."""
    own_staging = make_staging(tmp_path / "r")
    own_retired = tmp_path / f".r.retired-{secrets.token_hex(4)}"
    own_retired.mkdir()
    users = [tmp_path / ".r.retired-2020", tmp_path / ".r.staging-old",
             tmp_path / ".r.retired-Earlier_c"]
    for folder in users:
        folder.mkdir()
        (folder / "manifest.json").write_text("{}\n")
    assert sorted(interrupted_writes(tmp_path / "r")) == sorted(
        [own_staging.name, own_retired.name])
    clean_leftovers(tmp_path / "r")
    assert not (tmp_path / "r").exists()                  # no user's folder moved in
    assert not own_staging.exists() and not own_retired.exists()
    assert all((folder / "manifest.json").is_file() for folder in users)


def test_leftovers_of_a_dotted_result_name_are_found_and_no_others(tmp_path):
    """A result folder whose own name holds dots (``site.2023``): its staging and retired
    folders are found (the dots taken literally), those of ``site`` and ``site.2023.b``
    beside it are not, nor a name with a line break after the token."""
    folder = tmp_path / "site.2023"
    mine = [make_staging(folder), tmp_path / f".site.2023.retired-{secrets.token_hex(4)}"]
    mine[1].mkdir()
    others = [make_staging(tmp_path / "site"), make_staging(tmp_path / "site.2023.b"),
              tmp_path / ".siteX2023.retired-0a1b2c3d",
              tmp_path / f".site.2023.retired-{secrets.token_hex(4)}\n"]
    for path in others:
        path.mkdir(exist_ok=True)
    assert sorted(interrupted_writes(folder)) == sorted(p.name for p in mine)
    # the characters tempfile draws from (its _RandomNameSequence), as matched here
    assert set(tempfile._RandomNameSequence.characters) <= set(
        "abcdefghijklmnopqrstuvwxyz0123456789_")
