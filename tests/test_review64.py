"""Review round review64: a tar of the input read as the file it holds, and verify given
the unpacked table of a result run from an archive (invented Quillmoor bundle only).

Tar archives are written by Python's ``tarfile`` (the general-purpose reference; POSIX
ustar (m)). Each test fails on the code before the fix it names where it names one.
"""
from __future__ import annotations

import filecmp
import tarfile

from fluxpart.cli import main
from fluxpart.pipeline import process_site_config


def test_a_tar_of_the_input_gives_its_tables_and_verify_names_the_archive(copy, capsys):
    """The run of a tar holding the bundle's input writes the tables of the unpacked
    file byte for byte (Same input, config and seed give byte-identical tables). Verify
    given the unpacked table said the change "lies outside the values read (another
    column, a comment, spaces or the layout)" and nothing of the archive the run read;
    now it names the archive and asks for it (review64)."""
    with tarfile.open(copy / "tower.tar", "w") as archive:
        archive.add(copy / "tower.csv", arcname="tower.csv")
    text = (copy / "site.toml").read_text()
    (copy / "site.toml").write_text(text.replace('path = "tower.csv"', 'path = "tower.tar"'))
    process_site_config(copy / "site.toml").write(copy / "packed")
    tables = sorted(p.name for p in (copy / "out").glob("*.parquet"))
    same, differ, errors = filecmp.cmpfiles(copy / "out", copy / "packed", tables,
                                            shallow=False)
    assert (len(same), differ, errors) == (len(tables), [], []) and len(tables) > 10
    assert main(["verify", str(copy / "packed"), "--input", str(copy / "tower.csv")]) == 1
    out = capsys.readouterr().out
    assert "every value equals the input the result holds" in out
    assert "the run read 'tower.tar' (an archive or compressed file" in out
