"""Result safety, portable verify and batch faults (round faults28).

Contracts (README "Command line", DESIGN §7): a user error is one ``error:`` line, exit
2, nothing half-written or left behind; a result folder holds its earlier content or a
complete new result, never a mix and never nothing; a batch site that fails is named in
one line. External facts used, each named beside its check: a glob lists a directory's
entries, so it also returns a dangling symbolic link (Python ``glob`` docs: "broken
symlinks are included in the results" (m)); a path resolution follows at most 40
symbolic links before ELOOP (path_resolution(7) (m)); one file is one
(st_dev, st_ino) pair whatever path reaches it (stat(2) (m)); ``rename(2)`` of a folder
is atomic but two renames are not (m); ``open(2)`` names the path it could not open
(Python keeps it as ``OSError.filename``) (m). Invented Quillmoor bundles only, for
known-truth recovery.
"""

import os
from pathlib import Path

import pytest
from bundles import make_bundle

from fluxpart import resultdir
from fluxpart.batch import run_site
from fluxpart.cli import main
from fluxpart.errors import ConfigError
from fluxpart.io import read_site_config


def _glob_bundle(base: Path) -> Path:
    """A site whose ``[input] path`` is ``months/**/*.csv``: two month files of the
    30-day Quillmoor bundle (known truth: 720 + 720 records)."""
    config = make_bundle(base, name="site.toml")
    lines = (base / "tower.csv").read_text().splitlines(keepends=True)
    (base / "months" / "a").mkdir(parents=True)
    (base / "months" / "a" / "m01.csv").write_text("".join(lines[:721]))
    (base / "months" / "m02.csv").write_text("".join(lines[:1] + lines[721:]))
    text = config.read_text().replace('path = "tower.csv"', 'path = "months/**/*.csv"')
    config.write_text(text)
    return config


# --------------------------------------------------------------------------- input globs


@pytest.mark.parametrize("kind", ["dangling", "loop", "fifo"])
def test_a_glob_match_that_is_no_readable_file_is_named_not_dropped(tmp_path, capsys, kind):
    """A glob over month files where one entry is a link to a network share that is not
    mounted (dangling), a loop of links, or a named pipe: the entry was dropped without a
    word and the budget computed from the other months (measured: the manifest listed 2
    of 3 files, exit 0). Python's glob returns such entries (a dangling link is "included
    in the results", glob docs (m)); ``stat`` of a loop fails with ELOOP and of a dangling
    link with ENOENT (path_resolution(7) (m)). Now one line naming the entry, exit 2,
    nothing written."""
    config = _glob_bundle(tmp_path)
    entry = tmp_path / "months" / "m03.csv"
    if kind == "dangling":
        entry.symlink_to("/nonexistent-share/quillmoor/m03.csv")
        said = "a symbolic link to '/nonexistent-share/quillmoor/m03.csv', which does not exist"
    elif kind == "loop":
        entry.symlink_to("m03.csv")
        said = "a loop of symbolic links"
    else:
        os.mkfifo(entry)
        said = "a named pipe"
    with pytest.raises(ConfigError, match="m03.csv") as caught:
        read_site_config(config)
    assert said in str(caught.value)
    out = tmp_path / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: [input] path") and said in err[0]
    assert not out.exists()


def test_a_folder_link_inside_a_recursive_glob_reads_each_file_once(tmp_path):
    """``**`` with a link back to a parent folder (``a/up -> ..``): glob follows it until the kernel's limit of 40 links
    (path_resolution(7) (m)), so the one file ``a/m01.csv`` was listed 41 times (read 41
    times, its records dropped as duplicates, the manifest listing it 41 times). One file is
    one (st_dev, st_ino) pair (stat(2) (m)): known truth, the two files once each, in the
    sorted order of their shortest paths, and the 1440 records of the bundle."""
    config = _glob_bundle(tmp_path)
    (tmp_path / "months" / "a" / "up").symlink_to("..")
    site = read_site_config(config)
    assert [p.relative_to(tmp_path).as_posix() for p in site.input_paths] == [
        "months/a/m01.csv", "months/m02.csv"]
    frame, _ = site.read()
    assert len(frame) == 24 * 2 * 30


# --------------------------------------------------------------------------- the swap


def test_an_interrupt_between_the_two_renames_leaves_the_earlier_result_in_place(
        tmp_path, monkeypatch, capsys):
    """On a file system without RENAME_EXCHANGE (NFS, SMB, sshfs (m)) the new result goes
    in by two renames, each atomic but not the pair (rename(2) (m)). Ctrl-C (or SIGTERM,
    SIGHUP: the handlers raise between two statements) after the first rename removed the
    new result and left no folder at ``--out``, the earlier result hidden in
    ``.out.retired-*`` while the line said "an output folder holds its earlier content"
    (known truth here: the earlier manifest's bytes). Now the earlier result is put back
    at once: the folder holds it, nothing is left beside it, and it verifies."""
    config = make_bundle(tmp_path / "fen", name="fen.toml")
    out = tmp_path / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 0
    before = (out / "manifest.json").read_bytes()
    config.write_text(config.read_text().replace("random_error_draws = 20",
                                                 "random_error_draws = 21"))
    monkeypatch.setattr(resultdir, "_exchange", lambda first, second: False)
    real_rename = Path.rename

    def rename_then_interrupted(self, target):
        moved = real_rename(self, target)
        if ".retired-" in Path(target).name:
            raise KeyboardInterrupt            # Ctrl-C right after the first rename
        return moved

    monkeypatch.setattr(Path, "rename", rename_then_interrupted)
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 130
    assert "error: interrupted (Ctrl-C)" in capsys.readouterr().err
    monkeypatch.setattr(Path, "rename", real_rename)
    assert (out / "manifest.json").read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fen", "out"]
    assert main(["verify", str(out)]) == 0


# --------------------------------------------------------------------------- batch


def test_a_site_config_removed_while_the_batch_runs_fails_its_site_in_one_line(tmp_path):
    """A batch lists its sites' configs as it starts; a worker reads a config when it
    takes the site up. A config removed, renamed or replaced by a sync tool in between
    failed the site as an internal error: ``FileNotFoundError`` and a 15-line traceback
    (measured: 4 sites, the fourth config removed 0.8 s and 1.2 s in). ``open(2)`` names
    the path it could not open (``OSError.filename`` (m)): now the site fails as an input
    error naming the config and the fix, no traceback, and its earlier result folder is
    left as it was (known truth: its manifest's bytes)."""
    config = make_bundle(tmp_path / "delta", name="delta.toml")
    folder = tmp_path / "res" / "delta"
    first = run_site("delta", config, folder)
    assert first.status == "written"
    before = (folder / "manifest.json").read_bytes()
    config.unlink()                                      # the tidy-up during the batch
    for force in (False, True):
        outcome = run_site("delta", config, folder, force=force)
        assert outcome.status == "failed" and outcome.kind == "input"
        assert outcome.error == "InputFileError" and outcome.traceback == ""
        assert str(config) in outcome.message and "No such file or directory" in outcome.message
        assert "run the batch again" in outcome.message
        assert (folder / "manifest.json").read_bytes() == before


def test_a_missing_input_file_is_still_named_as_the_input(tmp_path):
    """The conversion concerns the config only: a removed input file keeps the reader's
    own line (``[input] path: input file ... does not exist``)."""
    config = make_bundle(tmp_path / "echo", name="echo.toml")
    (tmp_path / "echo" / "tower.csv").unlink()
    outcome = run_site("echo", config, tmp_path / "res" / "echo", force=True)
    assert outcome.status == "failed" and outcome.kind == "input"
    assert "input file" in outcome.message and "does not exist" in outcome.message


def test_a_site_config_glob_matching_a_dangling_link_is_named(tmp_path, capsys):
    """``[batch] sites = ["*/*.toml"]`` where one tower's config is a link into a share
    that is not mounted: the glob returns the dangling link (Python glob docs (m)) and the
    file test dropped it, so the batch said "1 site(s)" and the network tables summed one
    tower fewer without a word. Now one line naming the entry, exit 2, nothing made (known
    truth: no ``res`` folder)."""
    make_bundle(tmp_path / "alpha", name="alpha.toml")
    (tmp_path / "eps").mkdir()
    (tmp_path / "eps" / "eps.toml").symlink_to("/nonexistent-share/quillmoor/eps.toml")
    network = tmp_path / "net.toml"
    network.write_text('[batch]\nsites = ["*/*.toml"]\nout = "res"\n')
    assert main(["batch", str(network), "--workers", "1"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: [batch] sites[0]")
    assert "eps.toml" in err[0] and "which does not exist" in err[0]
    assert not (tmp_path / "res").exists()


# --------------------------------------------------------------------------- verify


def test_a_result_of_a_newer_releases_format_is_not_judged(tmp_path, capsys):
    """An auditor with an older install verifies a result a later release wrote in a
    newer manifest format (here resealed as fluxpart 0.31.0, ``fluxpart-result/3``, as
    such a release would write it). verify said "NOT reproduced" (exit 1) and
    report/load "does not match its manifest ... (rerun to rewrite the folder)": a
    verdict from code that cannot read the format, and advice to replace the newer
    result with an older release's. A reader refuses a format version newer than its own
    (Semantic Versioning 2.0.0 items 7-8 (m); common practice). Now verify names the
    release and both formats, "not judged", exit 2; the folder is untouched."""
    import json

    from fluxpart.manifest import MANIFEST_FORMAT, manifest_bytes, manifest_seal

    config = make_bundle(tmp_path / "fen", name="fen.toml")
    out = tmp_path / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 0
    manifest = json.loads((out / "manifest.json").read_text())
    stem, _, number = MANIFEST_FORMAT.rpartition("/")
    newer = f"{stem}/{int(number) + 1}"
    manifest["format"], manifest["code"]["version"] = newer, "0.31.0"
    manifest["seal"] = manifest_seal(manifest)
    (out / "manifest.json").write_bytes(manifest_bytes(manifest))
    before = sorted((p.name, p.read_bytes()) for p in out.iterdir())
    capsys.readouterr()
    assert main(["verify", str(out)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: verify:")
    assert "fluxpart 0.31.0" in err[0] and repr(newer) in err[0] and "not judged" in err[0]
    assert "rerun to rewrite" not in err[0]
    assert sorted((p.name, p.read_bytes()) for p in out.iterdir()) == before
    with pytest.raises(Exception, match="newer than the"):
        from fluxpart import load

        load(out)


def test_sites_whose_outcome_was_lost_with_the_scheduler_enter_the_network_tables(
        tmp_path, monkeypatch):
    """A Dask scheduler stopped and restarted mid-batch (measured on a local scheduler
    and worker, 4 sites, killed 2.5 s in): each site failed with SchedulerLostError
    though the worker had written them (all 4 verify bit-identical), and the network
    tables were rewritten with none: ``read_network`` gave 0 rows without a word. A
    client that loses its scheduler cancels every future it holds, whatever the workers
    did (Dask.distributed "Futures" docs (m)). Now a lost site whose folder holds the
    current result of its config is counted up to date and enters the tables (known
    truth: the sites' own annual budgets); a stale one stays failed."""
    from concurrent.futures import CancelledError

    from fluxpart import batch

    for key in ("alpha", "beta"):
        make_bundle(tmp_path / key, name=f"{key}.toml")
    network = tmp_path / "net.toml"
    network.write_text('[batch]\nsites = ["*/*.toml"]\nout = "res"\n')

    class _Client:
        def close(self):
            pass

    def tasks_then_scheduler_lost(client, sites, out, force, progress, limit):
        lost = []
        for key, config in sites:
            batch.run_site(key, config, out / key, force=force)      # the worker wrote it
            common = {"key": key, "config": str(config), "directory": str(out / key)}
            lost.append(batch._failure(common, batch.scheduler_lost_error(
                "tcp://127.0.0.1:8799", CancelledError("scheduler-connection-lost"))))
        (tmp_path / "beta" / "beta.toml").write_text(          # beta's config edited since
            (tmp_path / "beta" / "beta.toml").read_text() + "\n# edited\n")
        return lost

    monkeypatch.setattr(batch, "_client", lambda scheduler, workers, sites=None: (_Client(), None))
    monkeypatch.setattr(batch, "check_scheduler", lambda scheduler: None)   # no scheduler runs
    monkeypatch.setattr(batch, "_run_tasks", tasks_then_scheduler_lost)
    report = batch.run_batch(network, scheduler="tcp://127.0.0.1:8799")
    statuses = {o.key: (o.status, o.error) for o in report.outcomes}
    assert statuses == {"alpha": ("skipped", ""), "beta": ("failed", "SchedulerLostError")}
    with pytest.warns(batch.FluxpartWarning, match=r"leave out 1 site\(s\).*'beta'"):
        table = batch.read_network(tmp_path / "res")
    assert sorted(set(table["site"].astype(str))) == ["alpha"]
    own = batch._annual_from(tmp_path / "res" / "alpha")[0]
    assert table["nee"].to_numpy().tolist() == own["nee"].to_numpy().tolist()


# --------------------------------------------------------------------------- other users


def _unsearchable(monkeypatch, locked: Path):
    """Python 3.11's ``Path.exists``, ``is_file`` and ``iterdir`` raise PermissionError
    (EACCES) for a path inside a folder this user may not search or list, instead of
    answering False (pathlib docs: only "file not found"-like errors are ignored (m);
    POSIX ``stat``/``opendir`` EACCES (m)). Root ignores modes, so the tests here stand
    for a second user by raising what the kernel raises for one."""
    import errno

    def denied(path):
        return PermissionError(errno.EACCES, os.strerror(errno.EACCES), str(path))

    real_stat, real_iterdir = Path.stat, Path.iterdir

    def stat(self, *, follow_symlinks=True):
        if str(self).startswith(str(locked) + os.sep):
            raise denied(self)
        return real_stat(self, follow_symlinks=follow_symlinks)

    def iterdir(self):
        if str(self) == str(locked) or str(self).startswith(str(locked) + os.sep):
            raise denied(self)
        return real_iterdir(self)

    monkeypatch.setattr(Path, "stat", stat)
    monkeypatch.setattr(Path, "iterdir", iterdir)


def test_run_into_another_users_private_result_folder_is_one_line(tmp_path, monkeypatch,
                                                                  capsys):
    """Two users share a tree of results; one wrote ``out/`` under umask 077 (mode 0700,
    measured with a second user made by dropping root's capabilities), the other reruns
    into it: ``run`` ended in a 20-line PermissionError traceback, exit 1, from listing
    the folder. Now one line naming the folder and the fix, exit 2, the folder as it was
    (known truth: its manifest's bytes)."""
    config = make_bundle(tmp_path / "fen", name="fen.toml")
    out = tmp_path / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 0
    before = (out / "manifest.json").read_bytes()
    capsys.readouterr()
    with monkeypatch.context() as patched:
        _unsearchable(patched, out)
        assert main(["run", str(config), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith(f"error: --out {str(out)!r} cannot be read by")
    assert "Permission denied" in err[0] and "chmod" in err[0]
    assert (out / "manifest.json").read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fen", "out"]


@pytest.mark.parametrize("command", ["report", "export-netcdf", "run-below"])
def test_an_output_below_another_users_private_folder_is_one_line(tmp_path, monkeypatch,
                                                                  capsys, command):
    """``report --out``, ``export --netcdf`` and ``run --out`` to a place inside another
    user's private folder: ``Path.exists``/``is_file`` raised PermissionError deep in the
    checks, a traceback, exit 1 (measured for report, both exports, run and batch). Now
    one line naming the path and the fix, exit 2, nothing written."""
    pytest.importorskip("h5netcdf")
    config = make_bundle(tmp_path / "fen", name="fen.toml")
    result = tmp_path / "result"
    assert main(["run", str(config), "--out", str(result), "--quiet"]) == 0
    locked = tmp_path / "theirs"
    locked.mkdir()
    target = locked / "sub"
    argv = {"report": ["report", str(result), "--out", str(target)],
            "export-netcdf": ["export", str(result), "--netcdf", str(target) + ".nc"],
            "run-below": ["run", str(config), "--out", str(target), "--quiet"]}[command]
    capsys.readouterr()
    with monkeypatch.context() as patched:
        _unsearchable(patched, locked)
        assert main(argv) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: '") and "Permission denied" in err[0]
    assert str(locked) in err[0] and "chmod" in err[0]
    assert list(locked.iterdir()) == []
