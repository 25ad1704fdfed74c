"""Result safety and input faults found by round faults29 (invented Quillmoor towers only).

Each test fails on the code before the fix it names.
"""
from __future__ import annotations

import glob
import os
from pathlib import Path

from bundles import make_bundle

from fluxpart.io import _walk_without_loops, read_site_config


def _glob_bundle(base: Path) -> Path:
    """A site whose ``[input] path`` is ``months/**/*.csv``: two month files of the
    30-day Quillmoor bundle (known truth: 720 + 720 records)."""
    config = make_bundle(base, name="site.toml")
    lines = (base / "tower.csv").read_text().splitlines(keepends=True)
    (base / "months" / "a" / "b").mkdir(parents=True)
    (base / "months" / "a" / "b" / "m01.csv").write_text("".join(lines[:721]))
    (base / "months" / "m02.csv").write_text("".join(lines[:1] + lines[721:]))
    text = config.read_text().replace('path = "tower.csv"', 'path = "months/**/*.csv"')
    config.write_text(text)
    return config


def test_two_looping_folder_links_in_a_recursive_glob_finish_and_read_each_file_once(
        tmp_path):
    """Known-truth recovery on invented data. Two links back to enclosing folders
    (``a/up -> ..`` and ``a/b/up2 -> ../..``) made Python's ``glob`` branch at every level
    up to the kernel's limit of 40 links (path_resolution(7) (m)): about 2**40 paths, the
    `run` never finished (faults28, left alone; before this fix this test hangs). The loop-safe walk leaves the looping
    links out: the two files once each, under their own paths, and the 1440 records."""
    config = _glob_bundle(tmp_path)
    (tmp_path / "months" / "a" / "up").symlink_to("..")
    (tmp_path / "months" / "a" / "b" / "up2").symlink_to("../..")
    site = read_site_config(config)
    assert [p.relative_to(tmp_path).as_posix() for p in site.input_paths] == [
        "months/a/b/m01.csv", "months/m02.csv"]
    frame, _ = site.read()
    assert len(frame) == 24 * 2 * 30


def test_the_loop_free_walk_matches_the_same_files_as_glob(tmp_path):
    """Python's ``glob`` (a general-purpose library) is the reference on a tree without
    loops: hidden names, a folder link that is no loop (``latest -> 2021/06``), brackets
    in a folder's name (escaped), ``**`` first, last and twice, and a pattern ending in a
    separator (folders only). The walk must give the same set of files, and say no loop."""
    base = tmp_path / "d"
    for folder in ("2021/06", "2021/07", ".hid", "x[1]"):
        (base / folder).mkdir(parents=True)
    for name in ("2021/06/a.csv", "2021/07/b.csv", ".hid/c.csv", "2021/.e.csv",
                 "x[1]/f.csv", "g.csv", "2021/06/h.txt"):
        (base / name).write_text("1\n")
    (base / "latest").symlink_to("2021/06")
    root = str(base)
    patterns = [f"{root}/**/*.csv", f"{root}/**", f"{root}/20*/**/*.csv",
                f"{root}/**/06/*", f"{root}/x[[]1]/**/*.csv", f"{root}/**/.*.csv",
                f"{root}/**/**/*.csv", f"{root}/**/"]
    for pattern in patterns:
        expected = {p for p in glob.glob(pattern, recursive=True) if os.path.isfile(p)}
        found, looped = _walk_without_loops(pattern)
        assert not looped, pattern
        assert {p for p in found if os.path.isfile(p)} == expected, pattern


def test_an_interrupt_between_the_netcdf_file_and_the_csv_folder_is_told_as_it_is(
        bundle, tmp_path, capsys, monkeypatch):
    """Ctrl-C (SIGINT, exit 128 + 2 = 130, the shell's convention (m)) after `export` wrote
    the NetCDF file and before the CSV folder: measured 1.1 s into `export --netcdf --csv`,
    the 'wrote e.nc' line was followed by "the NetCDF file is the earlier one (or
    absent)", contradicting the file just written. Known truth: the NetCDF file is there
    (new), the CSV folder is not, and the line says neither is half-written without
    claiming the NetCDF file is the earlier one."""
    from fluxpart import export_csv
    from fluxpart.cli import main

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(export_csv, "command_csv", interrupted)
    netcdf, folder = tmp_path / "e.nc", tmp_path / "csv"
    code = main(["export", str(bundle / "out"), "--netcdf", str(netcdf), "--csv", str(folder)])
    said = capsys.readouterr()
    assert code == 130
    assert netcdf.is_file() and not folder.exists()
    assert f"wrote {netcdf}" in said.out
    line = said.err.strip()
    assert line.startswith("error: interrupted (Ctrl-C)") and len(line.splitlines()) == 1
    assert "earlier one (or absent)" not in line
    assert "complete and new where a 'wrote' line above names them" in line


def test_check_shows_a_line_break_in_an_inputs_name_escaped_on_its_own_line(
        copy, capsys):
    """A file name may hold any byte but '/' and NUL (POSIX, "filename" (m)): an input
    named ``tow<LF>er.csv`` split `check`'s ``source`` line in two, the second half
    looking like a line of its own (faults28, left alone). Python's ``str.isprintable``
    and ``unicode_escape`` (a general-purpose library) give the reference spelling
    ``tow\\ner.csv``; the line after ``source`` is the ``interval`` line."""
    from fluxpart.cli import main

    (copy / "tower.csv").rename(copy / "tow\ner.csv")
    config = copy / "site.toml"
    config.write_text(config.read_text().replace('path = "tower.csv"',
                                                 'path = "tow\\ner.csv"'))
    # exit 1: the 30-day bundle's problems are listed (a partial year), as for tower.csv
    assert main(["check", str(config)]) == 1
    lines = capsys.readouterr().out.splitlines()
    at = next(i for i, line in enumerate(lines) if line.startswith("source "))
    assert lines[at].endswith("/tow\\ner.csv")
    assert lines[at + 1].startswith("interval ")
