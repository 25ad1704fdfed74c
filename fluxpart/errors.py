"""Error classes of fluxpart.

Every error a user can cause by bad input or a bad setting is a subclass of
:class:`FluxpartError`, itself a :class:`ValueError`, and its message names the
setting, column or row at fault, what was expected, what was found and a fix.
"""

__all__ = [
    "ConfigError",
    "DuplicateTimestampError",
    "FluxpartError",
    "FluxpartWarning",
    "ImplausibleValueError",
    "InputFileError",
    "InsufficientDataError",
    "LOADER_MEMORY_WORDS",
    "LengthMismatchError",
    "MissingColumnError",
    "NonMonotonicTimestampError",
    "OutputError",
    "ResourceShortage",
    "SpacingError",
    "TimestampError",
    "UnitError",
    "caller_stacklevel",
    "read_fault_remedy",
]


class FluxpartError(ValueError):
    """Base class of every error fluxpart raises for bad input or settings."""


class ConfigError(FluxpartError):
    """A setting in the site config or in :class:`fluxpart.Config` is invalid or unknown."""


class InputFileError(FluxpartError):
    """The input file is missing, unreadable or not what the config says."""


class OutputError(FluxpartError):
    """The result folder cannot be written: a file, not writable, or locked by another run."""


class ResourceShortage(MemoryError):
    """The system refused memory or a thread while a file was read: no fault of the file.

    A :class:`MemoryError`, not a :class:`FluxpartError`: the command stops with one line
    naming the limit (``fluxpart.cli``), and no file is judged damaged for it.
    """


class InputTooLarge(MemoryError):
    """Memory ran out while an input file was read: its text names the file, its size
    and line count beside what a tower's records take (``io.too_large_to_read``).

    A :class:`MemoryError`, so the command ends as on any memory limit (``fluxpart.cli``:
    one line, exit 2, the process ended without the interpreter's clean-up).
    """


class MissingColumnError(FluxpartError):
    """A required column is absent from the input."""


class TimestampError(FluxpartError):
    """Timestamps cannot be parsed with the configured format."""


class DuplicateTimestampError(FluxpartError):
    """The same timestamp occurs more than once."""


class NonMonotonicTimestampError(FluxpartError):
    """Timestamps go backwards."""


class SpacingError(FluxpartError):
    """The record spacing is neither 30 nor 60 minutes, or irregular."""


class UnitError(FluxpartError):
    """A declared unit is unknown for its variable."""


class LengthMismatchError(FluxpartError):
    """An array passed beside a time axis does not have one value per record."""


class ImplausibleValueError(FluxpartError):
    """Values lie far outside the physically plausible range (often a unit mix-up)."""


class InsufficientDataError(FluxpartError):
    """Too few usable records for a method to give a defensible estimate."""


class FluxpartWarning(UserWarning):
    """A note a reader of the budget must see (issued through :mod:`warnings`).

    Fall-backs used, methods that disagree, partial years, input notes; the same
    texts are kept in ``Result.warnings`` and the manifest.
    """


def caller_stacklevel() -> int:
    """The ``stacklevel`` that makes :func:`warnings.warn` name the caller's own line.

    Counted from the function that calls this one (level 1) outwards to the first frame
    whose file lies outside the fluxpart package: the user's line, also where the call
    came through another fluxpart function (``process_site_config`` calling ``process``:
    the warning had named ``fluxpart/pipeline.py``, round review43). Python 3.12's
    ``skip_file_prefixes`` does the same; fluxpart supports 3.11.

    Returns
    -------
    int
        The level to pass as ``stacklevel`` from the calling function.
    """
    import os
    import sys
    from pathlib import Path

    package = str(Path(__file__).resolve().parent) + os.sep
    frame, level = sys._getframe(1), 1
    # a frame's file name that is not absolute ("<frozen runpy>" under `python -m`,
    # "<string>", "<stdin>") is no file of the package: resolving it asked for the current
    # folder, and a shell in a deleted folder ended `run` and `verify` of absolute paths
    # with "the current folder no longer exists ... give absolute paths" (faults38)
    while frame is not None and os.path.isabs(frame.f_code.co_filename) and os.path.realpath(
            frame.f_code.co_filename).startswith(package):
        frame, level = frame.f_back, level + 1
    return level


def read_fault_remedy(error: OSError) -> str:
    """What to do about a file the system would not read, told from `error`'s errno.

    A refused permission calls for a permission fix; a fault of the medium or of the
    file system that holds the file does not, and "make it readable by this user" sent
    the user after permissions that were in order (a stale handle of a network share
    reading a table in ``verify``, round faults35).

    Parameters
    ----------
    error : OSError
        What reading (or opening, or listing) the file raised.

    Returns
    -------
    str
        ``"; <remedy>"`` to append to the message naming the file, or ``""`` where the
        error itself says all (an errno this function does not know).

    References
    ----------
    POSIX ``open(2)``, ``read(2)``: EACCES, EPERM, EIO; Linux ``errno(3)``: ESTALE
    ("stale file handle", NFS), ENOTCONN and EHOSTDOWN (a FUSE or network file system
    whose connection is gone), ETIMEDOUT (m).
    """
    import errno

    if error.errno in (errno.EACCES, errno.EPERM):
        return "; make it and its folder readable by this user"
    if error.errno == errno.EIO:
        return ("; the disk, drive or network share holding it failed to deliver its bytes: "
                "check the device (the system log), or read a sound copy of the file")
    if error.errno == errno.ESTALE:
        return ("; the network file system's handle went stale (the file was replaced on "
                "the server, or the share was remounted): open the folder again (cd out "
                "and back in) or remount the share, then run again")
    if error.errno in (errno.ENOTCONN, errno.EHOSTDOWN, errno.ETIMEDOUT):
        return ("; the network or FUSE file system holding it is not connected: mount it "
                "again, then run again")
    return ""


#: What the dynamic loader says (glibc's dlopen (m)) when the address space left is too
#: small to map a shared library: its segments, its zero-filled pages or its descriptor.
#: An ImportError holding one of these is a memory limit, not a broken install: the
#: command line's one line about memory (``cli``) says so.
LOADER_MEMORY_WORDS = ("failed to map segment from shared object",
                       "cannot map zero-fill pages", "cannot allocate memory")
