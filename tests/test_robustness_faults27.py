"""Result safety, portable verify and batch faults (round faults27).

Contracts (README "Command line", DESIGN §7): a user error is one ``error:`` line, exit
2, nothing half-written or left behind; an export writes its file or folder whole or not
at all. External facts used, each named beside its check: ``flock`` locks of two open
file descriptions of one file exclude each other, also within one process (flock(2)
(m)); a file's modification time is set by the clock of the machine that stores it, so
on a network file system it can lie ahead of or behind the writer's own clock
(stat(2), NFS "close-to-open" semantics (m); common practice: make's "clock skew
detected"). Invented Quillmoor bundles only, for known-truth recovery.
"""

import os
import time
from pathlib import Path

import pytest
from bundles import make_bundle

from fluxpart import resultdir
from fluxpart.cli import main
from fluxpart.errors import OutputError
from fluxpart.resultdir import folder_lock

pytest.importorskip("h5netcdf")


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    """A 30-day result folder of the invented Quillmoor bundle."""
    base = tmp_path_factory.mktemp("faults27")
    config = make_bundle(base / "fen", name="fen.toml")
    assert main(["run", str(config), "--out", str(base / "out"), "--quiet"]) == 0
    return base / "out"


def _an_hour_ago(path: Path) -> None:
    """The modification time a file server whose clock runs an hour behind gives a file
    made now (or a writer that made its temporary file before this export began)."""
    then = time.time() - 3600
    os.utime(path, (then, then))


# --------------------------------------------------------------------------- NetCDF


def test_a_running_exports_temporary_file_is_not_swept_by_a_second_export(
        result, tmp_path, monkeypatch):
    """Two ``export --netcdf`` of one file at once (two shells, a script looping over
    sites into one name): the second swept the first's temporary file, made before the
    second began and not yet written to (in-memory serialisation), as a killed export's
    leftover, and the first ended "writing failed (No such file or directory) ...: free
    space, or choose another place" (measured: 7 of 31 start offsets 0.30-0.90 s apart;
    after the fix 31 of 31 both written, 12 of them after the note that the other one
    writes). Now the export holds the file's lock from before it makes its temporary
    file until the file is in place, and sweeps only under it: known truth, the other
    writer's file (here the test's, holding the lock) stays and nothing is written."""
    monkeypatch.setattr(resultdir, "DEFAULT_LOCK_TIMEOUT", 0.3)
    target = tmp_path / "site.nc"
    live = tmp_path / ".site.nc.abcd1234.tmp"
    with folder_lock(target):
        live.write_bytes(b"being written")
        _an_hour_ago(live)
        with pytest.raises(OutputError, match="waiting for another fluxpart process"):
            from fluxpart.export import write_netcdf

            write_netcdf(result, target)
        assert live.read_bytes() == b"being written"
        assert not target.exists()
        assert sorted(p.name for p in tmp_path.iterdir()) == [".site.nc.abcd1234.tmp",
                                                             ".site.nc.lock"]
    live.unlink()                          # the other writer renames it into place
    from fluxpart.export import write_netcdf

    write_netcdf(result, target)
    assert target.read_bytes()[:4] == b"\x89HDF"   # netCDF-4 is HDF5 (HDF5 file format (m))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["site.nc"]


def test_a_leftover_with_a_modification_time_in_the_future_is_swept(result, tmp_path):
    """A killed export's temporary file on a file system whose clock runs ahead (or
    after the machine's clock was set back) has a modification time later than the next
    export's start, and was kept for good as a file "being written now" (measured: a
    leftover dated 2031 still there after the next export). Under the lock every other
    temporary file of the target is a leftover, whatever its time: removed."""
    target = tmp_path / "site.nc"
    leftover = tmp_path / ".site.nc.zz99zz99.tmp"
    leftover.write_bytes(b"half")
    future = time.time() + 5 * 365 * 86400
    os.utime(leftover, (future, future))
    assert main(["export", str(result), "--netcdf", str(target)]) == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["site.nc"]


def test_a_folder_that_cannot_be_written_is_named_as_before(result, tmp_path):
    """The lock file goes beside the target: the export still names a path through a
    file ("cannot write in") before any lock is taken, and leaves nothing."""
    blocker = tmp_path / "plain"
    blocker.write_text("x")
    with pytest.raises(OutputError, match="cannot write in"):
        from fluxpart.export import write_netcdf

        write_netcdf(result, blocker / "site.nc")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plain"]


# --------------------------------------------------------------------------- CSV


def test_a_running_csv_exports_staging_folder_is_not_swept(result, tmp_path, monkeypatch):
    """``export --csv`` judged the staging folders beside its target by their
    modification time too: one of an export running now on a file server whose clock
    runs behind was swept (its files then failed to write). Now only under the
    target's lock: the other writer's staging folder stays, nothing is written."""
    from fluxpart.export_csv import write_csv

    monkeypatch.setattr(resultdir, "DEFAULT_LOCK_TIMEOUT", 0.3)
    target = tmp_path / "tables"
    live = tmp_path / ".tables.abcd1234.tmp"
    with folder_lock(target):
        live.mkdir()
        (live / "daily.csv").write_text("date\n")
        _an_hour_ago(live)
        with pytest.raises(OutputError, match="waiting for another fluxpart process"):
            write_csv(result, target)
        assert (live / "daily.csv").read_text() == "date\n"
        assert not target.exists()
    _remove_tree(live)
    write_csv(result, target)
    assert (target / "csv-metadata.json").is_file()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["tables"]


def test_a_csv_leftover_dated_in_the_future_is_swept(result, tmp_path):
    """A killed CSV export's staging folder dated ahead of the clock: kept for good
    before, now removed by the next export of the same folder."""
    leftover = tmp_path / ".tables.zz99zz99.tmp"
    leftover.mkdir()
    (leftover / "annual.csv").write_text("year\n")
    future = time.time() + 5 * 365 * 86400
    os.utime(leftover, (future, future))
    assert main(["export", str(result), "--csv", str(tmp_path / "tables")]) == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["tables"]


def _remove_tree(folder: Path) -> None:
    for entry in folder.iterdir():
        entry.unlink()
    folder.rmdir()


# --------------------------------------------------------------------------- batch


def test_a_batch_starting_leaves_the_network_tables_another_batch_writes(tmp_path):
    """Two batches into one output folder (a scheduled batch and a hand-started one):
    the one starting swept every ``.network_annual.xxxxxxxx`` older than its own start,
    so the staging folder of a batch writing its network tables at that moment went,
    and that batch failed. Now the sweep is made only under the network tables' lock,
    taken without waiting: while another batch holds it (here the test) nothing is
    swept; once free, a leftover goes whatever its time (one dated ahead of the clock,
    a file server's, was kept for good before)."""
    from fluxpart import batch

    out = tmp_path / "net"
    out.mkdir()
    live = out / ".network_annual.abcd1234"
    (live / "site=fen").mkdir(parents=True)
    _an_hour_ago(live)
    with folder_lock(out / batch.NETWORK_SEAL):
        assert batch._sweep_leftovers(out) == []
        assert (live / "site=fen").is_dir()
    future = time.time() + 5 * 365 * 86400
    os.utime(live, (future, future))
    assert batch._sweep_leftovers(out) == [live.name]
    assert sorted(p.name for p in out.iterdir()) == []
