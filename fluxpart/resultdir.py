"""A result folder replaced as a whole or not at all, and read only when it is intact.

Writing (:func:`write_folder`):

1. take an advisory lock on ``.OUT.lock`` beside the folder ``OUT`` (the
   :mod:`filelock` library; a second writer waits for it, saying so on stderr,
   and gives up with an :class:`~fluxpart.errors.OutputError` after
   ``lock_timeout`` seconds);
2. clean what an interrupted earlier run left beside the folder (see below);
3. write every table, the run log and, last, ``manifest.json`` into a fresh
   staging folder ``.OUT.staging-*`` beside ``OUT``, each file flushed to disk;
4. swap the staging folder in: on Linux one ``renameat2(RENAME_EXCHANGE)``
   system call exchanges the two folders atomically; elsewhere the old folder
   is renamed to ``.OUT.retired-*`` and the new one renamed to ``OUT``;
5. remove the old folder, then the lock file (see :func:`folder_lock`).

A crash (kill -9, power cut, full disk) at any moment therefore leaves ``OUT``
holding either the old complete result or the new complete one. The only
exception is the instant between the two renames of the fallback of step 4,
when ``OUT`` is absent and the old result sits in ``.OUT.retired-*``: the next
writer, and :func:`read_folder` when it finds ``OUT`` missing, move it back.
Leftover staging and retired folders are removed by the next writer.

Reading (:func:`read_folder`, used by ``fluxpart.load``, ``report`` and
``verify``): the manifest's seal must match its content, every table must have
its recorded SHA-256, rows and columns, and the folder must hold nothing else
than the manifest, its tables and the two unhashed entries it names (the run log
and the ``report/`` folder). Otherwise the folder is refused, naming the file; a
file that cannot be read at all (no permission) is an error naming it. A listed file
may be a symbolic link to a plain file (git-annex, DVC): its bytes are checked. What a
report stopped outright left (``.report.staging-*``) is named but refuses nothing: the
report is not hashed either.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import errno
import getpass
import json
import os
import re
import secrets
import shutil
import socket
import sys
from contextlib import contextmanager, nullcontext
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

from .errors import InputFileError, OutputError
from .fingerprint import code_fingerprint, platform_record
from .manifest import (
    MANIFEST_FILE,
    MANIFEST_FORMAT,
    REPORT_FOLDER,
    RUN_LOG,
    build_manifest,
    library_versions,
    lost_manifest_remedy,
    manifest_bytes,
    manifest_text,
    name_in_other_case,
    newer_format_reason,
    read_manifest,
    result_files_without_manifest,
    seal_intact,
    shown_name,
    undecodable_message,
    undecodable_paths,
)
from .renamed_tables import copy_of_table, copy_tool_temporary, renamed_table
from .store import (
    atomic_write_bytes,
    file_sha256,
    folder_mode,
    full_disk_remedy,
    made_folder,
    read_table,
    remove_folder,
    require_owner_access,
    set_mode,
    special_kind,
    table_shape,
    unreadable,
    write_table,
)

__all__ = ["DEFAULT_LOCK_TIMEOUT", "FolderProblem", "HeldLock", "check_folder",
           "clean_leftovers", "dangling_link_above", "folder_identity", "folder_lock", "interrupted_writes",
           "flock_holder", "lock_file", "lock_holder", "make_staging", "read_folder",
           "recover_missing",
           "replace_refusal", "staged", "swapped_in", "write_folder"]

#: Seconds a writer waits for another writer of the same folder before giving up.
DEFAULT_LOCK_TIMEOUT = 600.0
_STAGING = "staging-"
_RETIRED = "retired-"
#: Seconds a reader (verify, report, export, diff) waits for the lock of a folder it puts
#: back from its retired copy (:func:`recover_missing`).
_REPAIR_WAIT = 30.0

#: The token after ``.NAME.staging-`` and ``.NAME.retired-``, as every release since the
#: folder is swapped whole draws it: the eight characters of :func:`tempfile.mkdtemp`
#: (lower-case letters, digits, underscore; Python's tempfile source (m)) or of
#: ``secrets.token_hex(4)`` (eight hex digits, Python documentation).
_TOKEN = "[a-z0-9_]{8}"

#: Times a writer that locked a deleted lock file locks again before it gives up checking.
_RELOCK_TRIES = 5


# --------------------------------------------------------------------------- names and lock

def _absolute(directory) -> Path:
    path = Path(os.path.abspath(os.fspath(directory)))
    return path.resolve() if path.is_symlink() else path


def _sibling(directory: Path, kind: str, token: str = "") -> Path:
    return directory.parent / f".{directory.name}.{kind}{token}"


def lock_file(directory) -> Path:
    """The lock file of a result folder: ``.NAME.lock`` beside it."""
    directory = _absolute(directory)
    return directory.parent / f".{directory.name}.lock"


def _leftovers(directory: Path, kind: str) -> list[Path]:
    """The folders beside `directory` named as its writer names its staging or retired
    folders (`kind`): ``.NAME.KIND`` and the token the writer draws, whole
    (:data:`_TOKEN`). Matched by prefix alone, the staging and retired folders of a
    sibling whose name extends this one's (``r`` and ``r.staging-1``, ``r.retired-2020``:
    ``.r.staging-1.staging-*``) were removed by a run into ``r`` under that sibling's live
    writer, or, with ``r`` missing, the sibling's retired result moved in as ``r`` (round
    faults48); matched as any dot-free token, a user's own hidden folder
    ``.r.retired-2020`` was (round review91). With `kind` empty, every folder whose name
    starts with ``.NAME.`` (:func:`_earlier_staging` filters them)."""
    prefix = f".{directory.name}.{kind}"
    named = (re.compile(re.escape(prefix) + _TOKEN).fullmatch if kind
             else lambda name: name.startswith(prefix))
    try:
        return sorted(p for p in directory.parent.iterdir()
                      if named(p.name) and p.is_dir() and not p.is_symlink())
    except OSError:
        return []


@dataclass(frozen=True)
class HeldLock:
    """A result folder's lock as :func:`folder_lock` holds it.

    Attributes
    ----------
    path : pathlib.Path
        The lock file as named when it was taken.
    locked : os.stat_result or None
        The locked file's identity (device, inode); None where it could not be told
        (an older filelock, a file system without ``flock``).
    """

    path: Path
    locked: os.stat_result | None

    def guards(self, directory) -> bool:
        """True while the lock file of `directory` is the file this lock holds.

        False once the folder's parent was renamed or moved (the lock file went with it)
        and the path given leads to another place: a run into it would not wait for the
        holder (round faults40). Where the identity is unknown, True while a file of the
        lock's name is there.
        """
        path = lock_file(_absolute(directory))
        if self.locked is None:
            return path.is_file()
        return _names_locked_file(path, self.locked)


@contextmanager
def folder_lock(directory, timeout: float = DEFAULT_LOCK_TIMEOUT, notify=None, *,
                remove: bool = False):
    """Hold the advisory lock of a result folder.

    Parameters
    ----------
    directory : path-like
        The result folder (need not exist; its parent must be writable).
    timeout : float, optional
        Seconds to wait for another holder; 0 refuses at once.
    notify : callable, optional
        Called with one line of text when the lock is busy and we wait
        (default: printed to stderr).
    remove : bool, optional
        Delete the lock file when the block ends, with or without an error
        (default False).

    Yields
    ------
    HeldLock
        The lock held; :meth:`HeldLock.guards` tells whether it still guards the path
        given (a writer that computes under it passes it to :func:`write_folder`).

    Raises
    ------
    OutputError
        If the lock cannot be taken in time or the lock file cannot be created.

    Notes
    -----
    Deleting a lock file races with a writer already waiting on it: that writer
    then locks the deleted file while a third one creates and locks a new file
    under the same name, and both write. So a lock is counted as held only when
    the name still leads to the very file locked (compared by device and inode,
    through filelock's ``on_acquired`` descriptor, filelock >= 3.30); otherwise
    it is released and taken again. The file is deleted only while the lock is
    held and only where that comparison was possible; elsewhere (an older
    filelock, a file system without ``flock`` where filelock falls back to a
    marker file it deletes itself) it stays, empty and harmless.
    """
    from filelock import FileLock

    path = lock_file(directory)
    locked: list = []           # the locked file's os.stat_result, from filelock's descriptor
    try:
        lock = FileLock(str(path), on_acquired=lambda fd: locked.append(os.fstat(fd)))
    except TypeError:           # filelock < 3.30: no on_acquired; the lock file then stays
        lock = FileLock(str(path))
    try:
        try:
            _acquire(lock, directory, path, timeout, notify)
        except OSError as error:
            if error.errno != errno.ENOSYS:
                raise
            # no flock here: filelock's marker-file fall-back, which needs no callback
            # (and deletes its marker itself)
            lock, locked = FileLock(str(path)), []
            _acquire(lock, directory, path, timeout, notify)
        for _ in range(_RELOCK_TRIES):
            if not locked or _names_locked_file(path, locked[-1]):
                break
            lock.release()      # we locked a file deleted by the previous holder: again
            _acquire(lock, directory, path, timeout, notify)
        else:
            # the name never led to the file locked (a file system without stable inode
            # numbers?): hold the lock as filelock gives it, and never delete the file
            locked.clear()
    except OSError as error:
        if path.is_dir() and not path.is_symlink():
            # a folder of that name (made by hand, or by a copy tool): "choose a writable
            # output folder" sent the user after a permission that was never missing
            raise OutputError(f"the lock file {str(path)!r} beside the output folder is a "
                              "folder, which fluxpart never makes; remove it (or rename it) "
                              "and run again") from None
        if path.is_symlink():
            # a link where the lock file goes (a tree copied with `cp -s`, a link planted in
            # a shared folder): never followed (filelock opens with O_NOFOLLOW (m)), and
            # "choose a writable output folder" sent the user after a permission
            raise OutputError(f"the lock file {str(path)!r} beside the output folder is a "
                              f"symbolic link (to {os.readlink(path)!r}), which fluxpart "
                              "never makes and never follows; remove the link (its target "
                              "is untouched) and run again") from None
        remedy = (full_disk_remedy(path.parent) if error.errno == errno.ENOSPC
                  else _NO_LOCKS_REMEDY if error.errno == errno.ENOLCK
                  else "choose a writable output folder")
        verb = "lock" if error.errno == errno.ENOLCK else "create"
        raise OutputError(f"cannot {verb} the lock file {str(path)!r} beside the output folder: "
                          f"{error.strerror or error}; {remedy}") from None
    try:
        yield HeldLock(path, locked[-1] if locked else None)
    finally:
        # also after an error or an interrupt (Ctrl-C, SIGTERM): the block's work is whole
        # or undone by then, and the file is deleted while the lock is still held
        if remove and locked and _names_locked_file(path, locked[-1]):
            with _suppress_os_error():
                path.unlink()
        lock.release()


#: What to do where the file system gives no locks (ENOLCK, "No locks available": an NFS
#: mount whose lock service is not running or that was mounted ``nolock``, flock(2) and
#: nfs(5) (m)); "choose a writable output folder" sent the user after a permission that
#: was never missing (faults38)
_NO_LOCKS_REMEDY = ("the file system there gives no file locks (an NFS mount without its "
                    "lock service, or mounted with nolock); start its lock service, mount it "
                    "with local_lock=flock, or write the result to a local disk and copy it")


def _acquire(lock, directory, path: Path, timeout: float, notify) -> None:
    from filelock import Timeout

    try:
        lock.acquire(timeout=0)
        return
    except Timeout:
        pass
    if timeout <= 0:
        raise OutputError(f"{str(_absolute(directory))!r} is being written by another "
                          f"fluxpart process (lock file {str(path)!r}); wait for it to "
                          "finish or choose another output folder") from None
    say = notify if notify is not None else (
        lambda text: print(text, file=sys.stderr, flush=True))
    say(f"note: another fluxpart process{_holder_words(path)} is writing "
        f"{str(_absolute(directory))!r}; waiting up to {timeout:g} s for it (lock file "
        f"{str(path)!r})")
    try:
        lock.acquire(timeout=timeout)
    except Timeout:
        holder = _holder_words(path)
        remedy = ("end it or let it finish" if holder
                  else "if no such process runs, delete the lock file")
        raise OutputError(f"gave up after {timeout:g} s waiting for another fluxpart "
                          f"process{holder} writing {str(_absolute(directory))!r} (lock file "
                          f"{str(path)!r}); {remedy}") from None


def lock_holder(path: Path) -> tuple[int, bool] | None:
    """The process holding the ``flock`` of the file `path` and whether it is stopped.

    Read from Linux's ``/proc/locks`` (:func:`flock_holder`) and ``/proc/PID/stat``
    (state ``T`` or ``t``: stopped by a signal, as by Ctrl-Z, or traced); proc(5). The
    process named must have the file open (``/proc/PID/fd``): the device and inode
    numbers of ``/proc/locks`` can name another file (a btrfs subvolume's inode numbers
    repeat under one device number), and the holder may end, its process id reused,
    between the reads.

    Parameters
    ----------
    path : path-like
        The lock file.

    Returns
    -------
    tuple of (int, bool) or None
        (process id, stopped); None where there is no ``/proc`` (another system), no
        such line, the file is gone, or the process cannot be seen to hold it open
        (ended, or another user's).

    References
    ----------
    proc(5), Linux man-pages: ``/proc/locks`` and ``/proc/PID/stat``.
    """
    try:
        info = os.stat(path)
        lines = Path("/proc/locks").read_text().splitlines()
        place = f"{os.major(info.st_dev):02x}:{os.minor(info.st_dev):02x}:{info.st_ino}"
    except (OSError, AttributeError, UnicodeDecodeError):   # no /proc, no os.major
        return None
    pid = flock_holder(lines, place)
    if pid is None or not _holds_open(pid, info):
        return None
    return pid, _stopped(pid)


def _holds_open(pid: int, info: os.stat_result) -> bool:
    """Whether process `pid` has the file of `info` (its ``os.stat``) open: one of its
    ``/proc/PID/fd`` entries is that file (same device and inode; proc(5)). False where
    they cannot be read (the process ended, or is another user's)."""
    try:
        with os.scandir(f"/proc/{pid}/fd") as entries:
            for entry in entries:
                try:
                    opened = os.stat(entry.path)
                except OSError:
                    continue
                if (opened.st_dev, opened.st_ino) == (info.st_dev, info.st_ino):
                    return True
    except OSError:
        return False
    return False


def flock_holder(lines, place: str) -> int | None:
    """The process id holding a ``flock`` of the file at `place` in the lines of
    ``/proc/locks``, or None.

    Parameters
    ----------
    lines : iterable of str
        The lines of ``/proc/locks``, as ``1: FLOCK  ADVISORY  WRITE 17964
        fe:00:2260995 0 EOF``; a blocked waiter's line reads ``1: -> FLOCK ...`` and is
        not the holder.
    place : str
        The file as ``MAJOR:MINOR:INODE``, the device numbers in hex (two digits at
        least), the inode in decimal.

    Returns
    -------
    int or None
        The holder's process id; None where no line holds it, or the line's process id
        is 0 (a process this one cannot name).

    References
    ----------
    proc(5), Linux man-pages: ``/proc/locks``.
    """
    for line in lines:
        fields = line.split()
        if len(fields) >= 6 and fields[1] == "FLOCK" and fields[5] == place \
                and fields[4].isdigit() and int(fields[4]) > 0:
            return int(fields[4])
    return None


def _stopped(pid: int) -> bool:
    """Whether process `pid` is stopped (``/proc/PID/stat`` state T or t; proc(5))."""
    try:
        stat = Path(f"/proc/{pid}/stat").read_text()
    except OSError:
        return False
    after_name = stat.rsplit(")", 1)[-1].split()
    return bool(after_name) and after_name[0] in ("T", "t")


def _holder_words(path: Path) -> str:
    """" (process N)", or " (process N, stopped: ...)" with how to resume it, where the
    holder of the lock file `path` can be told (:func:`lock_holder`), else "": a run
    suspended with Ctrl-Z in another terminal kept the next run waiting its whole
    timeout, told only that another process was writing (round faults47)."""
    holder = lock_holder(path)
    if holder is None:
        return ""
    pid, stopped = holder
    if pid == os.getpid():
        return ""
    if stopped:
        return (f" (process {pid}, stopped: resume it with fg in its terminal or "
                f"kill -CONT {pid})")
    return f" (process {pid})"


def _names_locked_file(path: Path, locked: os.stat_result) -> bool:
    """True while `path` leads to the file whose lock is held (not deleted or replaced)."""
    try:
        return os.path.samestat(os.stat(path), locked) and locked.st_nlink > 0
    except OSError:
        return False


@contextmanager
def _suppress_os_error():
    try:
        yield
    except OSError:
        pass


def interrupted_writes(directory) -> list[str]:
    """Names of the staging and retired folders of `directory` beside it: what a writer
    running now, or one stopped before it finished (``kill -9``, a power cut), left.
    The folder itself is then the earlier complete result (or, after the swap, the new
    one); :func:`clean_leftovers` of the next writer removes them."""
    directory = _absolute(directory)
    return [p.name for p in _leftovers(directory, _STAGING) + _leftovers(directory, _RETIRED)]


def clean_leftovers(directory) -> list[str]:
    """Repair and tidy what an interrupted write left beside `directory`.

    Call it holding :func:`folder_lock`. When ``directory`` is missing but a
    retired copy (the old complete result, moved aside just before the new one
    was to be renamed in) exists, that copy is moved back. Then every staging and
    retired folder of `directory` is removed.

    Returns
    -------
    list of str
        What was done, one line per action (empty when nothing was left over).
    """
    directory = _absolute(directory)
    done = []
    if not directory.exists():
        complete = [p for p in _leftovers(directory, _RETIRED) if (p / MANIFEST_FILE).is_file()]
        if complete:
            newest = max(complete, key=lambda p: p.stat().st_mtime)
            newest.rename(directory)
            _fsync_dir(directory.parent)
            done.append(f"restored the earlier result from {newest.name}")
    for leftover in (_leftovers(directory, _STAGING) + _leftovers(directory, _RETIRED)
                     + _earlier_staging(directory)):
        shutil.rmtree(leftover, ignore_errors=True)
        done.append(f"removed {leftover.name}")
    return done


def _earlier_staging(directory: Path) -> list[Path]:
    """Staging folders of fluxpart 0.1 writers (``.NAME.`` + 8 random characters) that
    hold nothing but table files and temporary files."""
    pattern = re.compile(rf"^\.{re.escape(directory.name)}\.[a-z0-9_]{{8}}$")
    found = []
    for path in _leftovers(directory, ""):
        if not pattern.match(path.name):
            continue
        try:
            files = list(path.iterdir())
        except OSError:
            continue
        if all(f.is_file() and (f.suffix in (".parquet", ".tmp")) for f in files):
            found.append(path)
    return found


# --------------------------------------------------------------------------- swapping

def _fsync_dir(path: Path) -> None:
    try:
        handle = os.open(path, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(handle)
    except OSError:
        pass
    finally:
        os.close(handle)


_RENAME_EXCHANGE = 2
_AT_FDCWD = -100


def _exchange(first: Path, second: Path) -> bool:
    """Swap two folders atomically (Linux ``renameat2``); False where unsupported."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or None, use_errno=True)
        renameat2 = libc.renameat2
    except (OSError, AttributeError):
        return False
    renameat2.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p,
                          ctypes.c_uint]
    renameat2.restype = ctypes.c_int
    status = renameat2(_AT_FDCWD, os.fsencode(first), _AT_FDCWD, os.fsencode(second),
                       _RENAME_EXCHANGE)
    if status == 0:
        return True
    code = ctypes.get_errno()
    if code in (errno.EINVAL, errno.ENOSYS, errno.ENOTSUP, errno.EOPNOTSUPP):
        return False
    raise OSError(code, os.strerror(code), str(second))


def _swap_in(staging: Path, directory: Path) -> None:
    """Put the complete `staging` folder at `directory`, replacing any old one whole."""
    if not directory.exists():
        staging.rename(directory)
        _fsync_dir(directory.parent)
        return
    if _exchange(staging, directory):
        _fsync_dir(directory.parent)
        shutil.rmtree(staging, ignore_errors=True)      # now holds the old result
        return
    # a file system without RENAME_EXCHANGE (NFS, SMB, sshfs and other FUSE file systems
    # (m)): two renames. An interrupt (Ctrl-C, SIGTERM, SIGHUP: raised between two
    # statements by the handlers) or a failed second rename between them left no folder
    # at `directory`, the earlier result hidden in the retired folder until the next
    # writer's clean-up: it is put back at once
    retired = _sibling(directory, _RETIRED, secrets.token_hex(4))
    try:
        directory.rename(retired)
        staging.rename(directory)
    except BaseException:
        if not directory.exists() and retired.exists():
            retired.rename(directory)
        raise
    _fsync_dir(directory.parent)
    shutil.rmtree(retired, ignore_errors=True)


def make_staging(directory, made: list | None = None) -> Path:
    """Make a fresh, empty staging folder ``.NAME.staging-*`` beside `directory`.

    Parameters
    ----------
    directory : path-like
        The folder to be replaced (need not exist; its parent must).
    made : list, optional
        The caller's list the staging folder's path is put in before the folder is made
        (:func:`fluxpart.store.made_folder`), for its clean-up to remove it wherever a
        stop comes (:func:`staged`).

    Returns
    -------
    pathlib.Path
        The staging folder (mode 755, like the folders it replaces).

    Raises
    ------
    OSError
        If nothing can be made beside `directory` (the caller names the folder).
    """
    directory = _absolute(directory)
    made = [] if made is None else made
    staging = made_folder(directory.parent, f".{directory.name}.{_STAGING}", made=made)
    try:
        set_mode(staging, folder_mode())
    except BaseException:
        remove_folder(staging)
        raise
    return staging


class StagingError(OSError):
    """No staging folder could be made beside the folder to replace (:func:`staged`): the
    error of ``mkdir``, told apart from one writing into the staging folder."""


@contextmanager
def staged(directory):
    """A staging folder beside `directory`, filled in the block; leaving the block
    without an error replaces `directory` whole (:func:`swapped_in`).

    :func:`make_staging` and :func:`swapped_in` in one guard: a stop (Ctrl-C, SIGTERM,
    SIGHUP) raised while the staging folder was made, or before the block that removes
    it on a stop was entered, left it beside the folder (for a report, inside the
    result: one SIGHUP in three sent as it appeared, round faults49).

    Parameters
    ----------
    directory : path-like
        The folder replaced.

    Yields
    ------
    pathlib.Path
        The staging folder.

    Raises
    ------
    StagingError
        If no staging folder can be made (an OSError: its errno and text kept).
    """
    made: list = []
    try:
        try:
            staging = make_staging(directory, made)
        except OSError as error:
            raise StagingError(error.errno, error.strerror or str(error),
                               error.filename) from None
        with swapped_in(staging, directory):
            yield staging
    except BaseException:
        for path in made:
            remove_folder(path)
        raise


@contextmanager
def swapped_in(staging: Path, directory):
    """Fill `staging` in the block; leaving it without an error replaces `directory` whole.

    The files written into `staging` are flushed, then `staging` takes the place of
    `directory` in one step (:func:`_swap_in`). An error or an interrupt in the block,
    or in the swap, removes `staging` and leaves `directory` as it was. Hold the
    folder's lock (:func:`folder_lock`) around it where other writers may run.

    Parameters
    ----------
    staging : pathlib.Path
        From :func:`make_staging` of the same `directory`.
    directory : path-like
        The folder replaced.

    Yields
    ------
    pathlib.Path
        `staging`.
    """
    try:
        yield staging
        _fsync_dir(staging)
        _swap_in(staging, _absolute(directory))
    except BaseException:
        remove_folder(staging)
        raise


def recorded_site_name(directory) -> str | None:
    """The site name in the manifest of the result folder `directory`, or None.

    None where there is no folder, no manifest, or no readable site name in it (a
    damaged manifest does not protect its folder).
    """
    try:
        manifest = json.loads(manifest_text((Path(directory) / MANIFEST_FILE).read_bytes()))
    except (OSError, UnicodeDecodeError, ValueError, RecursionError):
        return None
    site = manifest.get("site") if isinstance(manifest, dict) else None
    name = site.get("name") if isinstance(site, dict) else None
    return name if isinstance(name, str) else None


def other_site_reason(directory, site_name) -> str | None:
    """Why the result folder `directory` must not take a result of `site_name`, or None.

    A result folder holds one site: writing another site's result into it (the same
    ``--out`` given for two sites) would replace the first site's result without a word.
    """
    recorded = recorded_site_name(directory)
    if recorded is None or site_name is None or recorded == site_name:
        return None
    return (f"holds the result of site {recorded!r}, not of {site_name!r} ([site] name), and "
            "writing would replace it; choose another output folder (--out; in Python the "
            "folder given to Result.write) for this site, or delete that "
            "folder first if it is the same site renamed")


#: a file where a result folder is to be written (:func:`replace_refusal`)
_A_FILE = "exists and is not a folder (an existing file)"


def dangling_link_above(path) -> str | None:
    """Why no folder can be made for `path`: a folder above it is a symbolic link that
    leads nowhere (its target moved, deleted or not mounted); None where there is none.

    Parameters
    ----------
    path : path-like
        A folder or file to be written (itself a link or not: a writer writes at a link's
        target).

    Returns
    -------
    str or None
        The reason, to follow the path's name in a message.

    Notes
    -----
    ``Path.exists`` follows links, so the folder looked missing and ``mkdir(parents=True)``
    then met the link: `run` ended in a FileExistsError traceback after its whole
    computation, and `report`, `export --csv` and `--netcdf` blamed "File exists" or a
    file (faults38).
    """
    for above in Path(path).absolute().parents:
        if above.exists():
            return None
        if above.is_symlink():
            return (f"lies below {str(above)!r}, a symbolic link to {os.readlink(above)!r}, "
                    "which does not exist (create or mount what it leads to)")
    return None


def replace_refusal(directory, site_name=None, *, marker: str = MANIFEST_FILE,
                    kind: str = "a fluxpart result folder") -> str | None:
    """Why the folder `directory` must not be replaced whole, or None when it may be.

    Parameters
    ----------
    directory : path-like
        The folder a writer is about to replace (a result folder, a report folder).
    site_name : str, optional
        For a result folder: the site of the result to be written
        (:func:`other_site_reason`).
    marker : str, optional
        The file a folder of this kind holds (``manifest.json``; ``report.html``).
    kind : str, optional
        What such a folder is, for the message.

    Returns
    -------
    str or None
        The reason, to follow the folder's name in a message: it is a file, or a
        folder holding other files and no `marker` (which replacing would delete), a
        result folder holding entries its manifest does not list (its input file
        moved into it: deleted with the old result), a write-protected one (whose old content could not be removed after the swap), or
        another site's result; None for a new or empty folder or one of this kind.
    """
    directory = Path(directory)
    too_long = _name_without_room(directory)
    if too_long:
        return too_long
    if not directory.exists():
        return dangling_link_above(directory)
    if not directory.is_dir():
        # a device node or a named pipe was called "an existing file" (faults38)
        kind = special_kind(directory)
        return f"exists and is not a folder ({kind})" if kind else _A_FILE
    if os.path.ismount(directory):
        return _MOUNT_POINT.format(inside=str(directory / "result"))
    try:
        empty = not any(directory.iterdir())
    except PermissionError as error:
        return _unlistable_reason(directory, error)
    if empty:
        return None
    if not (directory / marker).is_file():
        lost = result_files_without_manifest(directory) if marker == MANIFEST_FILE else []
        if lost:
            shown = ", ".join(lost[:3]) + (", ..." if len(lost) > 3 else "")
            return (f"holds a result's files ({shown}) but no {marker} (deleted, or left "
                    "out of a copy?), so it cannot be told to hold a run's whole result and "
                    f"is not replaced: {lost_manifest_remedy(directory)}, or delete the "
                    "folder yourself to run into it anew")
        return (f"is a folder that holds other files and no {marker}; it is not {kind}, and "
                "writing would replace it whole")
    unlisted = _unlisted_entries(directory, marker)
    if unlisted:
        shown = ", ".join(repr(name) for name in unlisted[:5]) + (
            f" and {len(unlisted) - 5} more" if len(unlisted) > 5 else "")
        return (f"holds {shown}, which fluxpart did not write there (an input file, a site "
                f"config or notes put into {kind}?), and writing would replace the folder "
                "whole and delete them: move them out of it")
    if _read_only_mount(directory):
        return ("is on a file system mounted read-only (a read-only share or mount, a disc), "
                "where nothing can be written or removed")
    protected = _write_protected(directory)
    if protected is not None:
        attribute = _locked_attribute(protected)
        owner = _other_owner(protected)
        remedy = (f"clear its {attribute} attribute (lsattr -d shows it; chattr -R -i -a, "
                  "which takes root)" if attribute else
                  f"it belongs to {owner}, so only they can make it writable" if owner else
                  "make it writable (chmod -R u+w)")
        return (f"is write-protected ({str(protected)!r} cannot be changed: kept read-only on "
                "purpose?); the new one would be swapped in while the old one could not be "
                f"removed and would stay hidden beside it: {remedy}")
    return other_site_reason(directory, site_name)


def _unlistable_reason(directory: Path, error: OSError) -> str:
    """Why a folder this user cannot list must not be replaced (see :func:`replace_refusal`).

    Two users sharing a tree of results: one wrote a result under a private umask (077,
    the folder 0700, as :func:`fluxpart.store.folder_mode` follows it), the other runs
    into the same ``--out``. Listing the folder raised ``PermissionError`` and ``run``
    ended in a 20-line traceback, exit 1.

    Parameters
    ----------
    directory : pathlib.Path
        The folder.
    error : OSError
        The error of listing it.

    Returns
    -------
    str
        The reason, naming the folder's owner where it can be told, and the fix.

    References
    ----------
    POSIX.1-2017 ``opendir``: EACCES where read permission is denied on the directory;
    ``rename(2)``: a directory's own write permission is needed to move it (m).
    """
    try:
        facts = directory.stat()
        import pwd

        owner = pwd.getpwuid(facts.st_uid).pw_name
    except (OSError, KeyError, ImportError):
        owner = None
    whose = f" (owned by {owner!r}, mode {oct(facts.st_mode & 0o777)[2:]})" if owner else ""
    return (f"cannot be read by this user{whose}: {error.strerror or error}; it belongs to "
            "another user or was written under a private umask, and this user could neither "
            "check nor replace it: ask its owner to open it to others (chmod -R g+rwX)")


#: Characters the longest name written beside a folder ``NAME`` adds to it: its staging or
#: retired copy ``.NAME.staging-`` + 8 random characters (:func:`make_staging`).
_SIBLING_EXTRA = len(f"..{_STAGING}") + 8


def _name_limit(directory: Path) -> int:
    """The longest file name [bytes] the file system holding `directory` (or its nearest
    existing parent) allows: ``pathconf`` ``PC_NAME_MAX``, else 255 (common practice:
    ext4, XFS, Btrfs, APFS, NTFS)."""
    place = directory.parent
    while not place.exists() and place != place.parent:
        place = place.parent
    try:
        return int(os.pathconf(place, "PC_NAME_MAX"))
    except (OSError, ValueError, AttributeError):
        return 255


def _name_without_room(directory: Path) -> str | None:
    """Why the name of `directory` is too long for the staging folder written beside it,
    or None.

    The folder is written as ``.NAME.staging-XXXXXXXX`` beside it, 18 characters longer
    than its own name: a name within the file system's limit (255 bytes a name) but
    within 18 of it was computed in full and then failed at its first write with "File
    name too long" (and at ``NAME_MAX`` - 5 the lock file already did, before computing).
    """
    name = os.fsencode(directory.name)
    limit = _name_limit(directory)
    if len(name) + _SIBLING_EXTRA <= limit or len(name) > limit:
        return None     # fits; or beyond the limit itself: the system's ENAMETOOLONG names it
    return (f"has a name of {len(name)} bytes; it is written as a folder named "
            f"'.NAME.{_STAGING}XXXXXXXX' beside it ({_SIBLING_EXTRA} bytes more), beyond this "
            f"file system's limit of {limit} bytes a name: choose a name of at most "
            f"{limit - _SIBLING_EXTRA} bytes")


#: Why a mount point is never replaced whole: renaming it fails (EBUSY, rename(2)).
_MOUNT_POINT = ("is a mount point (a mounted drive, a network share or a container's volume), "
                "which cannot be swapped for a new folder as a written folder is (rename "
                "fails: device busy); give a folder inside it, e.g. {inside!r}")


def _wrong_kind(path: Path, folder: bool) -> str:
    """Why the entry `path` of a result folder, named like a listed entry, is not it: what
    it is (a file, a folder, a link and where it leads, another kind) beside what the
    manifest lists there (a folder where `folder`, else a plain file)."""
    wanted = "the folder a report is drawn into" if folder else "a plain file"
    if path.is_symlink():
        try:
            target = os.readlink(path)
        except OSError:
            target = "?"
        what = f"a symbolic link to {target!r}" + ("" if path.exists() else " (leading nowhere)")
    elif path.is_dir():
        what = "a folder"
    elif path.is_file():
        what = "a plain file"
    else:
        what = "neither a plain file nor a folder (a pipe, socket or device)"
    return f"is {what}, where the result keeps {wanted}"


def _unlisted_entries(directory: Path, marker: str) -> list[str]:
    """Entries of the folder `directory` that a writer of its kind did not write, sorted.

    A result folder (`marker` ``manifest.json``): what its manifest does not list (it
    lists its tables, the run log and the ``report/`` folder); where the manifest cannot
    be read (truncated, edited), what has no name a run writes (:func:`_run_writes`), so
    a damaged manifest lets its own folder be rewritten but not the files a user put
    beside it (a truncated manifest let ``run --out`` delete an input file and notes
    moved into the folder, review round thirteen). A report folder: what is neither
    `marker` nor a ``.png`` figure. What a file manager or a network file system leaves
    (:func:`_disposable`) and an interrupted report's staging are not counted; other
    hidden entries are the user's (a ``.git`` folder, R's ``.RData`` workspace saved
    where R ran) and count: they had been deleted with the folder without a word.
    """
    try:
        names = sorted(path.name for path in directory.iterdir())
    except OSError:
        return []
    if marker == MANIFEST_FILE:
        try:
            manifest = json.loads(manifest_text((directory / MANIFEST_FILE).read_bytes()))
            tables = manifest.get("tables") if isinstance(manifest, dict) else None
            listed = {entry.get("file") for entry in tables.values() if isinstance(entry, dict)}
            listed |= {MANIFEST_FILE, RUN_LOG, REPORT_FOLDER}
        except (OSError, UnicodeDecodeError, ValueError, RecursionError,
                AttributeError):
            listed = {name for name in names if _run_writes(name)}
    else:
        listed = {marker} | {name for name in names if name.endswith(".png")}
    report = directory / REPORT_FOLDER
    if marker == MANIFEST_FILE and report.is_file() and not report.is_symlink():
        # a plain file named like the report folder is none a writer made: a user's note
        # named "report" was deleted by the next run without a word (a link goes, as a
        # link to a folder did: what it leads to is kept)
        listed.discard(REPORT_FOLDER)
    found = [name for name in names if name not in listed and not _disposable(name)
             and not _report_leftover(directory / name)]
    if marker == MANIFEST_FILE and REPORT_FOLDER in listed and report.is_dir() \
            and not report.is_symlink():
        # the report folder goes with the result folder it is in: a user's notes put
        # beside the page were deleted by the next run without a word (`report` itself
        # refuses to replace such a folder)
        found += [f"{REPORT_FOLDER}/{name}" for name in _unlisted_entries(report, "report.html")]
    return sorted(found)


#: Hidden names that file managers and network file systems leave in any folder: macOS
#: Finder's ``.DS_Store`` and AppleDouble ``._*`` files (also what a Mac writes for
#: each file copied onto FAT, exFAT or an SMB share), KDE Dolphin's ``.directory``,
#: NFS's ``.nfs*`` and FUSE's ``.fuse_hidden*`` stand-ins for files deleted while open;
#: Windows Explorer's thumbnail caches ``Thumbs.db`` / ``ehthumbs.db`` (written where a
#: folder of pictures, such as ``report/``, is viewed) and folder settings
#: ``desktop.ini``, named without regard to case as Windows does.
_DISPOSABLE_PREFIXES = ("._", ".nfs", ".fuse_hidden")
_DISPOSABLE_NAMES = (".DS_Store", ".directory")
_DISPOSABLE_FOLDED = ("thumbs.db", "ehthumbs.db", "ehthumbs_vista.db", "desktop.ini")


def _disposable(name: str) -> bool:
    """Whether `name` is what a file manager or network file system leaves in a folder
    (its loss with a replaced folder costs nothing)."""
    return (name in _DISPOSABLE_NAMES or name.startswith(_DISPOSABLE_PREFIXES)
            or name.casefold() in _DISPOSABLE_FOLDED)


#: The tables of a result folder other than the ``parameters_*`` ones.
_RESULT_TABLES = ("timeseries", "daily", "monthly", "annual", "audit", "screening", "ustar")


def _run_writes(name: str) -> bool:
    """Whether `name` is one a run writes into a result folder: its manifest, run log,
    ``report/`` folder, or one of its tables (``parameters_*.parquet`` included)."""
    if name in (MANIFEST_FILE, RUN_LOG, REPORT_FOLDER):
        return True
    stem, dot, suffix = name.rpartition(".")
    return bool(dot) and suffix == "parquet" and (stem in _RESULT_TABLES
                                                  or stem.startswith("parameters_"))


def _read_only_mount(directory: Path) -> bool:
    """Whether `directory` lies on a file system mounted read-only (POSIX statvfs
    ``ST_RDONLY``), where a chmod, which the write-protected message asked for, cannot
    help."""
    flag = getattr(os, "ST_RDONLY", None)
    if flag is None or not hasattr(os, "statvfs"):
        return False
    try:
        return bool(os.statvfs(directory).f_flag & flag)
    except OSError:
        return False


def _write_protected(directory: Path) -> Path | None:
    """The first folder in the tree of `directory` (itself included) whose entries this
    process may not remove (no write or search permission, or an immutable or append-only
    attribute), or None.

    Removing a file takes write permission on the folder that lists it, not on the file
    (POSIX ``unlink``), so only folders are asked.
    """
    for folder, _, _ in os.walk(directory):
        if not os.access(folder, os.W_OK | os.X_OK) or _locked_attribute(Path(folder)):
            return Path(folder)     # an append-only folder passes access(2) (faults36)
    return None


def _other_owner(folder: Path) -> str | None:
    """The user owning `folder` where it is not this process's (effective) user, named
    (``user 'alice'``, or its number), else None; None where it cannot be asked.

    An auditor running into a colleague's result was told "chmod -R u+w", which only the
    owner may do (chmod(2): EPERM for another user's file) (round faults46).
    """
    try:
        uid = folder.stat().st_uid
        if not hasattr(os, "geteuid") or uid == os.geteuid():
            return None
        import pwd

        return f"user {pwd.getpwuid(uid).pw_name!r}"
    except KeyError:
        return f"user number {uid}"
    except (OSError, ImportError):
        return None


#: Linux inode flags (ioctl_iflags(2) (m)): ``FS_IOC_GETFLAGS`` and the two flags under
#: which no entry of a folder can be removed, not even by root, whatever its mode says
_GETFLAGS = 0x80086601
_LOCKING_FLAGS = ((0x00000010, "immutable"), (0x00000020, "append-only"))


def _locked_attribute(folder: Path) -> str | None:
    """"immutable" or "append-only" where such an inode attribute of `folder` (``chattr
    +i`` / ``+a``, Linux) keeps its entries, or None (also where the flags cannot be read).

    No mode lets anyone remove an entry then, root included (ioctl_iflags(2) (m)): the
    write-protected message asked for ``chmod -R u+w``, which changes nothing there
    (faults36).
    """
    try:
        import fcntl
        import struct
        descriptor = os.open(folder, os.O_RDONLY | getattr(os, "O_DIRECTORY", 0))
    except (ImportError, OSError):
        return None
    try:
        flags = struct.unpack("l", fcntl.ioctl(descriptor, _GETFLAGS, struct.pack("l", 0)))[0]
    except OSError:                         # a file system without inode flags (tmpfs, NFS)
        return None
    finally:
        os.close(descriptor)
    return next((name for bit, name in _LOCKING_FLAGS if flags & bit), None)


# --------------------------------------------------------------------------- writing

def _unit_table(name: str) -> str:
    return name if name in ("timeseries", "daily", "monthly", "annual", "audit") else "parameters"


def run_log_record(directory: Path, provenance: dict) -> dict:
    """Who, when, where and how: the content of the run log (never hashed)."""
    try:
        user = getpass.getuser()
    except (KeyError, OSError):
        user = "unknown"
    try:
        working_directory = os.getcwd()
    except OSError:                      # e.g. a worker process whose folder was removed
        working_directory = "unknown"
    inputs = {}
    for key in ("input", "site_config"):
        entry = provenance.get(key)
        if isinstance(entry, dict) and "path" in entry:
            inputs[key] = shown_name(str(entry["path"]))
    # a name that is not UTF-8 (the working folder, an argument) is shown with \xNN escapes:
    # the log is UTF-8 JSON, and such a name failed the write after the whole run
    return {
        "written_utc": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "user": user,
        "host": socket.gethostname(),
        "working_directory": shown_name(working_directory),
        "command_line": [shown_name(str(part)) for part in (sys.executable, *sys.argv)],
        "process_id": os.getpid(),
        "result_folder": shown_name(str(directory)),
        "absolute_paths": inputs,
        "note": "This file is listed in manifest.json but not hashed: it may differ between "
                "runs that give identical tables.",
    }


def _refusal(directory: Path, reason: str) -> OutputError:
    """The error refusing to replace `directory`, its fix named once (another site's
    result names its own)."""
    # the output folder is --out on the command line and Result.write's directory in
    # Python (round mistakes37 found "--out" told to a Python caller)
    fix = "" if "choose another" in reason else "; choose another output folder (--out)"
    if reason == _A_FILE:
        # a batch's site folder (``--out``/<site>) replaced by a file: another --out moves
        # every site; the file in the way is what to remove
        fix = ("; move or delete that file (fluxpart writes a result folder of that name), "
               "or choose another output folder (--out)")
    return OutputError(f"output folder {str(directory)!r} {reason}{fix}")


def write_folder(directory, tables: dict, *, site: dict, config: dict, seed, provenance: dict,
                 warnings=(), lock_timeout: float = DEFAULT_LOCK_TIMEOUT, notify=None,
                 lock_held: bool = False) -> Path:
    """Write result tables and their manifest to `directory`, replacing it as a whole.

    Parameters
    ----------
    directory : path-like
        The result folder. If it exists it must be a result folder of the same
        site (the same ``name``) or empty: it is replaced whole, so files that are
        not part of the new result do not survive.
    tables : dict of str to pandas.DataFrame
        Table name -> table, each written as ``<name>.parquet`` with the units
        of :func:`fluxpart.schema.units_for_table`.
    site, config : dict
        The site and the resolved settings.
    seed : int
        The random seed used.
    provenance : dict
        Input and site config records (absolute or relative paths), reader
        record, screening thresholds.
    warnings : sequence of str
        Warnings of the run.
    lock_timeout : float, optional
        Seconds to wait for another writer of the same folder (0: refuse at once).
    notify : callable, optional
        Where the "waiting for another writer" line goes (default stderr).
    lock_held : bool or HeldLock, optional
        The caller holds the folder's :func:`folder_lock` already (``fluxpart run``
        takes it before computing, so a second run into the same folder waits for
        the first rather than computing alongside and replacing it); default False.
        Given as the :class:`HeldLock` itself, the lock is taken again at the path
        given where it no longer guards it: the folder's parent renamed or moved while
        the caller computed took the lock file along, and the parent made again at the
        path given had none, so a second run into it did not wait (round faults40).

    Returns
    -------
    pathlib.Path
        The folder written (absolute).

    Raises
    ------
    OutputError
        If `directory` is a file, a folder that is not a result folder, the
        result folder of another site, not writable, or locked by another writer for longer than `lock_timeout`.
        Nothing is changed in that case.
    """
    require_owner_access()           # before anything is made beside the folder
    directory = _absolute(directory)
    undecodable = undecodable_paths(provenance if isinstance(provenance, dict) else {},
                                    directory)
    if undecodable:
        raise OutputError(undecodable_message(undecodable[0]))
    site_name = site.get("name") if isinstance(site, dict) else None
    reason = replace_refusal(directory, site_name)
    if reason:
        raise _refusal(directory, reason)
    try:
        directory.parent.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise OutputError(f"cannot create the output folder's parent {str(directory.parent)!r}: "
                          f"{error.strerror or error}") from None
    guarded = lock_held.guards(directory) if isinstance(lock_held, HeldLock) else lock_held
    with (nullcontext() if guarded else folder_lock(directory, lock_timeout, notify,
                                                    remove=True)):
        clean_leftovers(directory)
        reason = replace_refusal(directory, site_name)
        if reason:
            raise _refusal(directory, reason)
        try:
            with staged(directory) as staging:
                _write_tables(staging, directory, tables, site=site, config=config, seed=seed,
                              provenance=provenance, warnings=warnings)
            _name_unremoved(staging, notify)
        except StagingError as error:
            raise OutputError(f"cannot write beside the output folder {str(directory)!r}: "
                              f"{error.strerror or error}") from None
        except OSError as error:
            if error.errno == errno.EBUSY and directory.is_dir():
                # a bind mount of a folder of the same file system: os.path.ismount does not
                # see it, the swap's rename does
                raise _refusal(directory, _MOUNT_POINT.format(
                    inside=str(directory / "result"))) from None
            where = f" ({error.filename})" if error.filename else ""
            # EFBIG: a table beyond the process's file-size limit (ulimit -f, a batch
            # job's or a container's), which no free space would help (setrlimit(2) (m))
            fix = ("; raise the file-size limit (ulimit -f) or run where there is none"
                   if error.errno == errno.EFBIG else
                   f"; {full_disk_remedy(directory.parent)}" if error.errno == errno.ENOSPC
                   else "")
            raise OutputError(f"writing the result folder {str(directory)!r} failed: "
                              f"{error.strerror or error}{where}; the earlier result, if any, "
                              f"is unchanged{fix}") from None
    return directory


def _name_unremoved(old: Path, notify=None) -> None:
    """Name an earlier result the swap left beside the new one because it cannot be removed.

    After the swap the staging folder holds the earlier result, removed without a word
    (``shutil.rmtree(..., ignore_errors=True)``). A file in it that cannot be deleted (the
    immutable or append-only attribute, ``chattr +i`` / ``+a``, a backup tool's or an
    administrator's protection; a file of another user in a folder with the sticky bit)
    left the old result in a hidden ``.NAME.staging-*`` folder: the run ended with exit 0
    and nothing said, and every later run and verify took it for a run stopped part-way.
    The new result is complete and stays; this says where the old one is and why.

    Parameters
    ----------
    old : pathlib.Path
        The staging folder after the swap (the earlier result's new name).
    notify : callable, optional
        Called with the note; by default it is printed to standard error.

    References
    ----------
    Linux man-pages, chattr(1) (the immutable ``i`` and append-only ``a`` attributes:
    such a file cannot be deleted or renamed, also by root) and unlink(2) (``EPERM``)
    (m).
    """
    if not old.exists():
        return
    failures = []
    shutil.rmtree(old, onerror=lambda function, path, info: failures.append((path, info[1])))
    if not old.exists():
        return
    path, error = failures[0] if failures else (old, None)
    cause = getattr(error, "strerror", None) or str(error or "it is still there")
    say = notify if notify is not None else (
        lambda text: print(text, file=sys.stderr, flush=True))
    say(f"note: the new result is complete, but the earlier one could not be removed whole "
        f"({cause}: {str(path)!r}; a file kept immutable, chattr +i, or not yours?); it "
        f"stays in {str(old)!r} beside the new one: remove it by hand once it may go")


def _write_tables(staging: Path, directory: Path, tables: dict, *, site, config, seed,
                  provenance, warnings) -> None:
    """Write the tables, the run log and, last, the manifest into `staging`."""
    from .schema import CALENDAR_YEAR_START, units_for_table

    entries = {}
    # the budget year's label is worded by the year_start the settings record
    year_start = config.get("year_start", CALENDAR_YEAR_START)
    for name, table in tables.items():
        frame = table if table.index.name is not None else table.rename_axis("row")
        columns = [frame.index.name or "index", *frame.columns]
        file = f"{name}.parquet"
        sha = write_table(frame, staging / file,
                          units_for_table(_unit_table(name), columns, year_start), name)
        entries[name] = {"file": file, "sha256": sha, "rows": len(frame),
                         "columns": [str(c) for c in columns]}
    manifest = build_manifest(
        entries, site=site, config=config, seed=seed, provenance=provenance,
        warnings=warnings, versions=library_versions(), code=code_fingerprint(),
        platform_facts=platform_record(), directory=directory)
    log = run_log_record(directory, provenance)
    atomic_write_bytes(staging / RUN_LOG,
                       (json.dumps(log, indent=2, ensure_ascii=False) + "\n").encode())
    atomic_write_bytes(staging / MANIFEST_FILE, manifest_bytes(manifest))


# --------------------------------------------------------------------------- reading

@dataclass(frozen=True)
class FolderProblem:
    """One way a result folder does not match its manifest.

    Attributes
    ----------
    file : str
        The file (or folder) at fault, relative to the result folder.
    kind : str
        ``"seal"`` (manifest edited), ``"format"``, ``"missing"``, ``"hash"``
        (bytes changed), ``"content"`` (rows or columns other than the manifest
        records), ``"extra"`` (not listed in the manifest), ``"entry"`` (a
        malformed table entry) or ``"leftover"`` (what an interrupted report left:
        named, but no mismatch; :func:`read_folder` reads the folder).
    detail : str
        What was found.
    """

    file: str
    kind: str
    detail: str

    def describe(self) -> str:
        """One line naming the file and the problem."""
        return f"{self.file} {self.detail}"


def check_folder(directory, manifest: dict) -> list[FolderProblem]:
    """Compare a result folder with its manifest; return every problem found.

    Checks the manifest's seal and format, that each listed table exists with
    its recorded SHA-256 and, read from its footer, the recorded rows and columns,
    and that nothing else is in the folder than the manifest, its tables, the run
    log and the ``report/`` folder.

    Raises
    ------
    InputFileError
        If the folder or a listed file cannot be read (no permission, an I/O
        error): a file that cannot be read is bad input, not a changed result.
    """
    directory = Path(directory)
    if not any(key in manifest for key in ("seal", "format", "tables")):
        # another program's manifest.json (a web app's, a data package's)
        return [FolderProblem(MANIFEST_FILE, "format", "is not a fluxpart manifest (it has "
                              "no seal, format or tables): the folder is not a fluxpart "
                              "result folder")]
    problems = []
    if "seal" not in manifest:
        problems.append(FolderProblem(MANIFEST_FILE, "seal", "has no seal; it was not written "
                                      "by this version of fluxpart or was edited"))
    elif not seal_intact(manifest):
        problems.append(FolderProblem(MANIFEST_FILE, "seal", "was edited after it was written "
                                      "(its seal does not match its content)"))
    if manifest.get("format") != MANIFEST_FORMAT:
        problems.append(FolderProblem(MANIFEST_FILE, "format", newer_format_reason(manifest)
                                      or f"has format {manifest.get('format')!r}; this fluxpart "
                                      f"reads {MANIFEST_FORMAT!r} (rerun to rewrite the folder)"))
    allowed_files, allowed_dirs = {MANIFEST_FILE}, set()
    unhashed = manifest.get("unhashed") if isinstance(manifest.get("unhashed"), dict) else {}
    if RUN_LOG in unhashed:
        allowed_files.add(RUN_LOG)
    if f"{REPORT_FOLDER}/" in unhashed:
        allowed_dirs.add(REPORT_FOLDER)
    tables = manifest.get("tables")
    if not isinstance(tables, dict) or not tables:
        problems.append(FolderProblem(MANIFEST_FILE, "entry", "lists no tables"))
        tables = {}
    for name, entry in sorted(tables.items()):
        file = entry.get("file") if isinstance(entry, dict) else None
        if not isinstance(file, str) or not file or Path(file).name != file \
                or file in (MANIFEST_FILE, RUN_LOG):
            problems.append(FolderProblem(MANIFEST_FILE, "entry",
                                          f"gives table {name!r} no valid file name ({file!r})"))
            continue
        allowed_files.add(file)
        path = directory / file
        if not path.is_file():
            detail = ("is a symbolic link to a file that is not there (content of a data store "
                      "such as git-annex or DVC not fetched?)"
                      if path.is_symlink() and not path.exists() else
                      "is listed in the manifest but missing from the folder")
            if path.exists():
                detail = ("is listed in the manifest but is not a plain file (a folder, a "
                          "pipe or a device)")
            kept = renamed_table(directory, file, entry.get("sha256"))
            if kept:
                detail += (f"; {kept!r} holds its recorded bytes (a backup never put back?): "
                           f"rename it to {file}")
            other_case = name_in_other_case(directory, file)
            if other_case and not path.exists():
                detail += (f"; {other_case!r} is there, its name in another case (copied by a "
                           "tool or through a file system that does not keep case?): rename "
                           "it to the name the manifest lists")
            problems.append(FolderProblem(file, "missing", detail))
            continue
        actual = file_sha256(path)
        if actual != entry.get("sha256"):
            problems.append(FolderProblem(file, "hash", f"has SHA-256 {actual}, not the "
                                          f"{entry.get('sha256')} recorded in the manifest: "
                                          "the file changed after it was written"))
            continue
        problems += _shape_problems(path, file, entry)
    try:
        entries = sorted(directory.iterdir())
    except OSError as error:
        raise unreadable(directory, error) from None
    for path in entries:
        if path.name in allowed_files and path.is_file():
            # a symbolic link to a plain file passes: data stores such as git-annex and DVC
            # keep each file as a link into their content store, and the hash and shape
            # checks above read the bytes the link leads to
            continue
        if path.name in allowed_files and path.is_symlink() and not path.exists() \
                and path.name != MANIFEST_FILE and path.name != RUN_LOG:
            continue                # a dangling link of a table: named as missing above
        if path.name in allowed_dirs and path.is_dir() and not path.is_symlink():
            continue
        if path.name in allowed_files or path.name in allowed_dirs:
            problems.append(FolderProblem(path.name, "extra", _wrong_kind(
                path, path.name in allowed_dirs)))
            continue
        if _report_leftover(path):
            # the report is not hashed (report/ may hold anything), so what a report killed
            # outright left is no change of the result: named, but the folder still checks
            problems.append(FolderProblem(path.name + "/", "leftover",
                                          "is what an interrupted `fluxpart report` left (not "
                                          "part of the result, like report/); delete it or "
                                          "draw the report again (which removes it)"))
            continue
        if _disposable(path.name) and path.is_file() and not path.is_symlink():
            # a genuine result copied through a Mac (Finder, AppleDouble files on FAT or
            # exFAT) or viewed in Windows Explorer: no table is read from such a file
            problems.append(FolderProblem(path.name, "leftover",
                                          "is what a file manager or a copy left (macOS "
                                          "Finder, Windows Explorer), not part of the "
                                          "result; it may be deleted"))
            continue
        if path.name.startswith(f".{REPORT_FOLDER}.") and path.is_dir():
            problems.append(FolderProblem(path.name + "/", "extra",
                                          "is not listed in the manifest (the folder must hold "
                                          "exactly the files its manifest lists)"))
            continue
        copied = copy_of_table(path, tables)
        problems.append(FolderProblem(path.name + ("/" if path.is_dir() else ""), "extra",
                                      "is not listed in the manifest (the folder must hold "
                                      "exactly the files its manifest lists)"
                                      + (_copy_remedy(directory, copied)
                                         or _unlisted_origin(path, tables))))
    return problems


def _unlisted_origin(path: Path, tables: dict) -> str:
    """What made the unlisted entry `path` of a result folder, where its name or content
    tells, with what to do (or ""): a copy tool's temporary file (an rsync stopped mid-
    copy: the copy may be incomplete) or a result folder of its own inside this one (``cp
    -r result dest`` run twice puts the second copy in the first; round faults47)."""
    files = [entry.get("file") for entry in tables.values() if isinstance(entry, dict)]
    receiving = copy_tool_temporary(path.name, [*files, MANIFEST_FILE, RUN_LOG])
    if receiving is not None and path.is_file():
        return (f"; it is a copy tool's temporary file of {receiving} (an rsync stopped "
                "while copying it?): the copy may be incomplete, so delete it and copy the "
                "folder again from where it came")
    try:
        inner = path.is_dir() and not path.is_symlink() \
            and (path / MANIFEST_FILE).is_file()
    except OSError:
        inner = False
    if inner:
        return ("; it holds a result folder of its own (a copy made into this existing "
                "folder, as `cp -r` run twice does?): move it out of the folder")
    return ""


def _copy_remedy(directory: Path, copied: str | None) -> str:
    """What to do with an unlisted file holding the bytes of the table `copied` (or "")."""
    if not copied:
        return ""
    if (directory / copied).is_file():
        return f"; it holds the same bytes as {copied} (a backup copy?): move it out of the folder"
    return f"; it holds the recorded bytes of {copied}, which is missing: rename it so"


def _report_leftover(path: Path) -> bool:
    """Whether `path` is a staging or retired folder of the ``report/`` folder beside it
    (:func:`make_staging`, :func:`_swap_in`): what a report stopped outright (``kill -9``,
    a power cut) leaves inside a result folder."""
    name = path.name
    prefixes = (f".{REPORT_FOLDER}.{_STAGING}", f".{REPORT_FOLDER}.{_RETIRED}")
    return (any(name.startswith(prefix) and len(name) > len(prefix) for prefix in prefixes)
            and path.is_dir() and not path.is_symlink())


def _shape_problems(path: Path, file: str, entry: dict) -> list[FolderProblem]:
    """The manifest's recorded rows and columns of a table against its file's footer.

    A table whose SHA-256 was forged along with the manifest's seal (both are public
    functions) passes the hash check; a row deleted or a column dropped is then still
    named here, without a rerun. Entries without ``rows`` or ``columns`` (written by
    hand) are not checked.
    """
    rows, columns = entry.get("rows"), entry.get("columns")
    if not isinstance(rows, int) and not isinstance(columns, list):
        return []
    try:
        found_rows, found_columns = table_shape(path)
    except InputFileError:
        return []       # not Parquet at all: reading the table names it (read_table)
    problems = []
    if isinstance(rows, int) and rows != found_rows:
        problems.append(FolderProblem(file, "content", f"has {found_rows} rows, not the "
                                      f"{rows} recorded in the manifest"))
    if isinstance(columns, list):
        # the first recorded column is the index; an unnamed default one is not stored
        expected = [str(c) for number, c in enumerate(columns)
                    if not (number == 0 and c == "index" and c not in found_columns)]
        missing = [c for c in expected if c not in found_columns]
        extra = [c for c in found_columns if c not in expected]
        if missing:
            problems.append(FolderProblem(file, "content", f"lacks column(s) "
                                          f"{', '.join(map(repr, missing))} that the manifest "
                                          "records"))
        if extra:
            problems.append(FolderProblem(file, "content", f"has column(s) "
                                          f"{', '.join(map(repr, extra))} that the manifest "
                                          "does not record"))
    return problems


def recover_missing(directory: Path, notify=None) -> str | None:
    """If `directory` is gone but a complete retired copy is beside it, move it back.

    A writer on a file system without an atomic exchange (NFS, SMB, FUSE) replaces a
    folder by two renames; stopped outright between them (``kill -9``, a power cut) it
    leaves no folder, the earlier result in a retired copy and its own in its staging
    folder. A reader (verify, report, export, diff) puts the earlier result back. Until
    round faults40 it did so without a word and left its lock file beside the folder:
    an auditor's verify then passed as if nothing had happened to the folder.

    Parameters
    ----------
    directory : pathlib.Path
        The result folder (absolute).
    notify : callable, optional
        Called with the note saying what was done (default: printed to standard error).

    Returns
    -------
    str or None
        The note, or None where nothing was missing.
    """
    if directory.exists() or not _leftovers(directory, _RETIRED):
        return None
    try:
        # the wait is said on stderr (also under --quiet), naming the holder: a reader
        # waited up to 30 s without a word for a writer stopped between its two renames
        # (Ctrl-Z, a debugger), then blamed a read-only place (round faults48)
        with folder_lock(directory, timeout=_REPAIR_WAIT, remove=True):
            if directory.exists():          # another reader put it back while we waited
                return None
            done = clean_leftovers(directory)
    except OutputError as error:
        retired = ", ".join(p.name for p in _leftovers(directory, _RETIRED))
        # a writer holding the folder's lock may be the one between its renames: renaming
        # the copy back under it would mix two results, so it is not advised then
        held = _holder_words(lock_file(directory)) if lock_file(directory).exists() else ""
        why = (f"another fluxpart process{held} holds its lock (lock file "
               f"{str(lock_file(directory))!r}); let it finish or end it, then run this again"
               if str(error).startswith("gave up after") else
               f"{error}; rename it to the folder's name")
        raise InputFileError(f"{str(directory)!r} is missing and an interrupted write left the "
                             f"earlier result in {retired} beside it, which could not be moved "
                             f"back: {why}") from None
    restored = [line for line in done if line.startswith("restored")]
    if not restored:
        return None
    note = (f"note: {str(directory)!r} was missing: a fluxpart run into it was stopped between "
            f"moving the earlier result aside and moving its new one in; {restored[0]} (the "
            "stopped run's unfinished copy removed), so the folder holds the earlier result")
    say = notify if notify is not None else (
        lambda text: print(text, file=sys.stderr, flush=True))
    say(note)
    return note


def read_folder(directory) -> tuple[dict, dict]:
    """Read an intact result folder: its manifest and every table.

    Parameters
    ----------
    directory : path-like
        A folder written by :func:`write_folder`.

    Returns
    -------
    manifest : dict
        The parsed manifest.
    tables : dict of str to pandas.DataFrame
        Table name -> table.

    Raises
    ------
    InputFileError
        If the folder is not a result folder, or does not match its manifest
        (the message names the first file at fault and how many more there are).
    """
    directory = _absolute(directory)
    recover_missing(directory)
    for attempt in range(3):
        before = _identity(directory)
        manifest = read_manifest(directory)
        problems = [p for p in check_folder(directory, manifest) if p.kind != "leftover"]
        if problems and _identity(directory) != before and attempt < 2:
            continue                          # replaced while we read: read the new one
        if problems:
            more = (f" (and {len(problems) - 1} more problem(s); `fluxpart verify` lists them)"
                    if len(problems) > 1 else "")
            raise InputFileError(f"result folder {str(directory)!r} does not match its "
                                 f"manifest: {problems[0].describe()}{more}")
        tables = {name: read_table(directory / entry["file"])
                  for name, entry in manifest["tables"].items()}
        if _identity(directory) == before:
            return manifest, tables
        # replaced while the tables were read: they may come from two results (three
        # tries; a folder replaced each time is refused, never returned mixed)
    raise InputFileError(f"result folder {str(directory)!r} kept changing while being read")


def folder_identity(directory):
    """The (device, inode) of the folder at `directory`, or None where there is none.

    A writer replaces a result folder whole (:func:`swapped_in`), so the folder at the
    same path then has another identity: a reader that finds it changed after reading
    read parts of two results and reads again.
    """
    try:
        status = os.stat(directory)
    except OSError:
        return None
    return (status.st_dev, status.st_ino)


_identity = folder_identity
