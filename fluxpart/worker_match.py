"""The environment of a batch's workers: their code compared with the client's before a
site is computed, and the scratch folder a local cluster's workers need.

A batch sends each site to a Dask worker as a path and a function name; the worker
imports *its own* installed fluxpart and libraries. On an existing cluster
(``fluxpart batch --scheduler``) a worker started from another environment (an older
install on one node, another container image, a stale ``PYTHONPATH``) computed and
wrote its sites with other code than the client's, without a word: the batch summary
said "processed", the network tables joined results of two codes, and a rerun judged
each such site up to date by the *worker's* code. Each task now carries the client's
code fingerprint and library versions (:func:`client_environment`), and a worker that
differs refuses the site before reading or writing anything
(:func:`mismatch_error`).
"""

from __future__ import annotations

import os
import socket

from .errors import FluxpartError
from .fingerprint import code_fingerprint
from .manifest import library_versions

__all__ = ["WorkerMismatchError", "client_environment", "mismatch_error", "older_worker_error",
           "scratch_folder_problem"]


class WorkerMismatchError(FluxpartError):
    """A batch worker runs other fluxpart code or library versions than its client."""


def client_environment() -> dict:
    """The code and library versions a batch's client runs, to send with each task.

    Returns
    -------
    dict
        ``code`` (the SHA-256 of fluxpart's source files,
        :func:`fluxpart.fingerprint.code_fingerprint`) and ``versions`` (Python and
        the libraries that shape the numbers, :func:`fluxpart.manifest.library_versions`),
        the two records of a result's manifest that decide whether a rerun gives the
        same tables.

    References
    ----------
    Dask.distributed documentation, "Futures": a submitted task runs in the worker's
    own Python process with the worker's imports (m); FIPS PUB 180-4 (2015), SHA-256 (m).
    """
    return {"code": code_fingerprint()["sha256"], "versions": library_versions()}


def mismatch_error(expected: dict | None) -> WorkerMismatchError | None:
    """The error of a worker whose code differs from its client's, or None.

    Parameters
    ----------
    expected : dict or None
        The client's :func:`client_environment`; None checks nothing (a task sent
        without the client's record).

    Returns
    -------
    WorkerMismatchError or None
        Names the worker's host, what differs (the code fingerprint, or each library
        whose version differs, with both versions) and the fix.

    Notes
    -----
    The manifest of every result records its code fingerprint and library versions,
    and :func:`fluxpart.batch.is_up_to_date` compares them with the code that judges:
    the worker's. A worker of other code therefore wrote sites the client's release
    would not have written and later found them current. Refusing on the worker, at the
    start of the task, leaves the site's folder as an earlier run left it.

    References
    ----------
    Dask.distributed documentation, "Futures": a submitted function runs in the
    worker's own Python process and imports (m).
    """
    if not expected:
        return None
    here = client_environment()
    differences = []
    theirs = expected.get("versions") or {}
    for name in sorted(set(theirs) | set(here["versions"])):
        if theirs.get(name) != here["versions"].get(name):
            differences.append(f"{name} {here['versions'].get(name, 'not installed')} "
                               f"on the worker, {theirs.get(name, 'not installed')} on the "
                               "client")
    if expected.get("code") != here["code"]:
        differences.append(f"fluxpart code SHA-256 {here['code'][:12]} on the worker, "
                           f"{str(expected.get('code'))[:12]} on the client (the same "
                           "release with edited files, or another copy on PYTHONPATH)")
    if not differences:
        return None
    return WorkerMismatchError(
        f"the Dask worker on {socket.gethostname()} runs other code than the batch's "
        f"client: {'; '.join(differences)}. The site was not computed; its folder keeps "
        "what an earlier run left. Start every worker from the client's environment (the "
        "same fluxpart and libraries), then rerun the batch")


def older_worker_error(error: BaseException) -> WorkerMismatchError | None:
    """The mismatch error of a cluster whose fluxpart predates the check, or None.

    Parameters
    ----------
    error : BaseException
        What a batch task raised on its worker, or while the scheduler or the worker
        unpacked it (Dask's RuntimeError "Error during deserialization of the task
        graph", caused by the lookup that failed).

    Returns
    -------
    WorkerMismatchError or None
        Where `error` or its cause says the batch's task function (``_checked_site``)
        is missing from the cluster's ``fluxpart.batch`` (fluxpart 0.24.0 or earlier
        there), the error naming it; else None.

    Notes
    -----
    Dask sends a task's function by reference (module and name), and the scheduler and
    the worker look it up in their own release: one older than this check does not
    have it and fails the task before running anything (measured with a scheduler and a
    worker of 0.24.0: a 30-line traceback per site).

    References
    ----------
    Dask.distributed documentation, "Futures" and its serialization notes: functions
    are sent by reference and looked up by module and name where they run (m); Python
    Language Reference, "The raise statement": ``__cause__`` and ``__context__`` chain
    an exception to the one it was raised from (m).
    """
    seen = set()
    while error is not None and id(error) not in seen:
        seen.add(id(error))
        if isinstance(error, (AttributeError, ImportError)) and "_checked_site" in str(error):
            return WorkerMismatchError(
                "the Dask cluster (its scheduler or worker) runs an older fluxpart than the "
                "batch's client (its fluxpart.batch has no _checked_site). The site was not "
                "computed; its folder keeps what an earlier run left. Start the scheduler "
                "and every worker from the client's environment (the same fluxpart and "
                "libraries), then rerun the batch")
        error = error.__cause__ or error.__context__
    return None


def scratch_folder_problem(folder) -> str | None:
    """Why Dask's configured ``temporary-directory`` cannot hold local workers, or None.

    Parameters
    ----------
    folder : str or path-like or None
        The value of Dask's ``temporary-directory`` setting (``dask.config``: the
        ``DASK_TEMPORARY_DIRECTORY`` variable or a Dask config file); None or empty
        when unset (the workers then use the system's temporary folder).

    Returns
    -------
    str or None
        A sentence naming the setting, the folder and the fix, or None where the folder
        is usable (or not set).

    Notes
    -----
    Each local worker makes its scratch space in that folder at start. A folder that
    is missing or not writable (a setting made for another machine, a scratch file
    system not mounted on this node) ended the batch with "the local Dask cluster ...
    could not start (RuntimeError: ... No such file or directory: ...); give fewer
    --workers, or raise the limit that ran out", a remedy that does not help.

    References
    ----------
    Dask documentation, "Configuration": the ``temporary-directory`` key and the
    ``DASK_`` environment variables that set keys (m).
    """
    if not folder:
        return None
    path = os.path.expanduser(os.fspath(folder))
    if not os.path.isdir(path):
        state = "is not a folder" if os.path.exists(path) else "does not exist"
    elif not os.access(path, os.W_OK | os.X_OK):
        state = "is not writable by this user"
    else:
        return None
    return (f"Dask's temporary-directory setting is {str(folder)!r} (from "
            "DASK_TEMPORARY_DIRECTORY or a Dask config file), which "
            f"{state}, so no local worker can start; create the folder, or unset the "
            "setting (the system's temporary folder is then used)")
