"""What produced a result: the product's own code and the machine's numerical platform.

Two results computed from the same input and settings can still differ:

- because the **code** differs. The version string alone does not show this
  (it changes only at a release), so :func:`code_fingerprint` hashes the source
  of the installed package itself;
- because the **platform** differs. NumPy picks SIMD kernels by the CPU features
  it finds at run time, and the BLAS library (OpenBLAS, MKL, Accelerate) picks
  its own kernels and thread split; each changes the order of floating-point
  operations and so the last bits of sums and fits. :func:`platform_record`
  lists those choices.

Both go into ``manifest.json`` so that ``fluxpart verify`` and ``fluxpart diff``
can name the likely cause of a difference. Neither holds a user name, a host
name or a time, so they do not make two runs of one machine differ.
"""

from __future__ import annotations

import hashlib
import json
import platform
from functools import lru_cache
from pathlib import Path

__all__ = ["code_fingerprint", "load_blas_libraries", "platform_differences", "platform_record",
           "reserve_numpy_blas"]


@lru_cache(maxsize=1)
def _package_digest(package_dir: str) -> tuple[str, int]:
    digest = hashlib.sha256()
    files = sorted(p for p in Path(package_dir).rglob("*.py") if "__pycache__" not in p.parts)
    for path in files:
        relative = path.relative_to(package_dir).as_posix()
        digest.update(relative.encode("utf-8") + b"\0")
        digest.update(hashlib.sha256(path.read_bytes()).hexdigest().encode("ascii") + b"\n")
    return digest.hexdigest(), len(files)


def code_fingerprint() -> dict:
    """Return the version and a SHA-256 over the source files of the running package.

    Returns
    -------
    dict
        ``version`` (the package version), ``sha256`` (hash over the sorted
        relative paths and SHA-256 of every ``.py`` file of the package, so any
        edited constant, added or removed module changes it) and ``files`` (how
        many were hashed).

    Notes
    -----
    Computed once per process: a result written after the package's files were
    edited in the same process still carries the fingerprint of the code that
    was loaded, which is the code that ran.
    """
    from . import __version__

    package_dir = str(Path(__file__).resolve().parent)
    sha, count = _package_digest(package_dir)
    return {"version": __version__, "sha256": sha, "files": count}


def _cpu_features() -> list[str]:
    try:
        from numpy._core._multiarray_umath import __cpu_features__
    except ImportError:  # pragma: no cover - older NumPy layout
        try:
            from numpy.core._multiarray_umath import __cpu_features__
        except ImportError:
            return []
    return sorted(name for name, present in __cpu_features__.items() if present)


@lru_cache(maxsize=1)
def _load_scipy_blas() -> None:
    """Load the BLAS that ``scipy.linalg`` would load, without importing SciPy (~0.5 s).

    A wheel of SciPy ships its OpenBLAS in ``scipy.libs/``; loading that file is what
    importing ``scipy.linalg`` does for the record, so the record is the same. Other
    layouts (SciPy linked to a system BLAS) fall back to the import.
    """
    import ctypes
    import importlib.util
    from pathlib import Path

    spec = importlib.util.find_spec("scipy")
    if spec is None or spec.origin is None:
        return
    libraries = sorted((Path(spec.origin).parent.parent / "scipy.libs").glob("libscipy_openblas*.so*"))
    try:
        for library in libraries:
            if not _openblas_loaded(library):
                require_address_space(library.stat().st_size + 2 * OPENBLAS_BUFFER,
                                      f"to load {library.name}")
            ctypes.CDLL(str(library))
    except OSError:
        libraries = []
    if not libraries:
        import scipy.linalg  # noqa: F401


#: Bytes of one work buffer of OpenBLAS on x86-64 (``BUFFER_SIZE``, 32 MiB, OpenBLAS's
#: common_x86_64.h (m); the 33 554 432-byte mmap seen under strace), which it maps as it
#: is loaded and at its first product
OPENBLAS_BUFFER = 32 << 20


def _address_headroom() -> int | None:
    """Bytes this process may still map under its memory limits, or None where there is
    no limit or it cannot be told (not Linux).

    Two limits count: the address space (``ulimit -v``, RLIMIT_AS) against every mapping
    (``VmSize``), and the data segment (``ulimit -d``, RLIMIT_DATA), which since Linux 4.7
    counts every private writable mapping (``VmData``: the heap and each anonymous mmap,
    such as OpenBLAS's work buffers), setrlimit(2) and proc(5) (m). Under ``ulimit -d``
    alone `run` hung in OpenBLAS (100 MB), or it printed "Memory allocation still failed"
    and ended with exit 1 (60 MB), where the address space was not limited (faults38).
    """
    try:
        import resource

        limits = {"VmSize:": resource.getrlimit(resource.RLIMIT_AS)[0],
                  "VmData:": resource.getrlimit(resource.RLIMIT_DATA)[0]}
        limits = {key: soft for key, soft in limits.items() if soft != resource.RLIM_INFINITY}
        if not limits:
            return None
        with open("/proc/self/status") as status:
            used = {fields[0]: int(fields[1]) << 10 for fields in map(str.split, status)
                    if fields and fields[0] in limits}
        return min(soft - used[key] for key, soft in limits.items())
    except (ImportError, OSError, ValueError, IndexError, KeyError):
        return None


def require_address_space(needed: int, purpose: str) -> None:
    """Raise :class:`MemoryError` where a memory limit leaves less than `needed` bytes.

    OpenBLAS, loaded or first used with no room for its work buffer, neither fails nor
    says so: it retries the buffer's mmap without end in its start-up (``gotoblas_init``
    → ``blas_memory_alloc``: `run` hung under ``ulimit -v`` 160 MB with the folder
    locked, where SIGTERM cannot reach it, faults36), or prints "Memory allocation still
    failed after 10 retries, giving up" and ends the process with exit 1. Asked first,
    the command stops with its one line about memory instead.
    """
    headroom = _address_headroom()
    if headroom is not None and headroom < needed:
        raise MemoryError(f"{needed >> 20} MiB {purpose}, {max(headroom, 0) >> 20} MiB left "
                          "under the memory limit (ulimit -v or -d)")


def _openblas_loaded(library: Path) -> bool:
    """Whether the shared library `library` is mapped into this process already."""
    try:
        with open("/proc/self/maps") as maps:
            return any(line.rstrip().endswith(library.name) for line in maps)
    except OSError:
        return False


_RESERVE_SIDE = 256     # a product of two 256 x 256 matrices: above OpenBLAS's small-matrix
                        # path (which needs no buffer), a few milliseconds


def load_blas_libraries() -> None:
    """Load the BLAS libraries the platform record lists (:func:`platform_record`) now.

    OpenBLAS allocates its buffers when it is loaded, and where that fails (the address
    space of a memory limit, ``ulimit -v`` or a batch job's, nearly used up) it retries
    without end: a run loading SciPy's OpenBLAS only for the record, after its whole
    computation, hung there holding its folder's lock (0.5 GB limit: 10 minutes of CPU and
    counting). Called at the start of a computation, when its memory is still free; a
    library loaded once is not loaded again (``dlopen``), so the record is the same.

    Loading is not all: OpenBLAS maps its work buffers (tens of MB each) at the first
    matrix product that needs one, and where that fails it prints "Memory allocation still
    failed after 10 retries, giving up" and ends the process (``exit(1)``), before Python
    can say why: measured under ``ulimit -v`` from 425 to 700 MB, `run` and `verify` ended
    so at 7 of 12 limits (NumPy's OpenBLAS, in ``lstsq``), the others with one ``error:``
    line or a result. One product of NumPy's (:func:`reserve_numpy_blas`), once per
    process, takes its buffer at the start; OpenBLAS keeps a buffer once mapped and hands
    it out again, so later products need no new one. A result's numbers do not depend on
    it. SciPy's is only loaded: a product of it through ``ctypes`` under a tight limit
    looped in its allocator without end (measured at 425 MB: 10 minutes), worse than the
    line it would save.
    """
    _reserve_buffers()


@lru_cache(maxsize=1)
def _reserve_buffers() -> None:
    reserve_numpy_blas()
    _load_scipy_blas()


@lru_cache(maxsize=1)
def reserve_numpy_blas() -> None:
    """Have NumPy's BLAS take its work buffers now, by one matrix product (once).

    For the commands that only read results (`report`, `export`, `diff`): matplotlib's
    and pandas' products use NumPy's OpenBLAS, which ended `report` under ``ulimit -v``
    450 MB with "OpenBLAS error: Memory allocation still failed after 10 retries, giving
    up" (exit 1); see :func:`load_blas_libraries`. SciPy's is not loaded for them.
    """
    import numpy as np

    require_address_space(2 * OPENBLAS_BUFFER, "for NumPy's OpenBLAS work buffers")
    a = np.ones((_RESERVE_SIDE, _RESERVE_SIDE))
    np.matmul(a, a, out=np.empty_like(a))      # NumPy's OpenBLAS (cblas_dgemm)


def _blas_libraries() -> list[dict]:
    try:
        from threadpoolctl import threadpool_info
    except ImportError:  # pragma: no cover - threadpoolctl is a core dependency
        return []
    # Load the BLAS of both NumPy and SciPy first: threadpoolctl lists only libraries
    # already loaded, and the record must not depend on what the caller imported before.
    import numpy  # noqa: F401

    _load_scipy_blas()
    # The thread count is left out: it differs between the command line and batch
    # workers of one machine (Dask limits it), which would make their manifests differ.
    keys = ("user_api", "internal_api", "prefix", "version", "architecture", "threading_layer")
    found = [{key: info.get(key) for key in keys} for info in threadpool_info()]
    # sorted on every field: two libraries may share a prefix (NumPy's and SciPy's OpenBLAS)
    # and their load order must not change the record
    return sorted(found, key=lambda entry: json.dumps(entry, sort_keys=True, default=str))


def platform_record() -> dict:
    """Return the facts of this machine that can change the last bits of a result.

    Returns
    -------
    dict
        ``machine`` and ``system`` (CPU architecture, operating system),
        ``byteorder``, ``numpy_cpu_features`` (the SIMD features NumPy found and
        uses for its kernels), ``numpy_simd`` (baseline and dispatched SIMD
        targets from NumPy's build configuration), ``numpy_blas`` (the BLAS NumPy
        was built against, with its version) and ``blas`` (every BLAS/OpenMP pool
        loaded, from ``threadpoolctl``: implementation, version, CPU kernel
        architecture and threading layer; not the thread count, which batch
        workers limit).
    """
    import sys

    import numpy as np

    try:
        config = np.show_config(mode="dicts")
    except TypeError:  # pragma: no cover - NumPy < 1.26 has no dict mode
        config = {}
    simd = config.get("SIMD Extensions", {}) or {}
    blas = (config.get("Build Dependencies", {}) or {}).get("blas", {}) or {}
    return {
        "machine": platform.machine(),
        "system": platform.system(),
        "byteorder": sys.byteorder,
        "numpy_cpu_features": _cpu_features(),
        "numpy_simd": {"baseline": list(simd.get("baseline", []) or []),
                       "found": list(simd.get("found", []) or [])},
        "numpy_blas": {"name": blas.get("name"), "version": blas.get("version")},
        "blas": _blas_libraries(),
    }


def platform_differences(recorded: dict | None, current: dict | None) -> list[str]:
    """Name each platform fact that differs, e.g. ``"numpy_cpu_features (AVX2 absent)"``.

    Parameters
    ----------
    recorded, current : dict or None
        Two :func:`platform_record` results (None: not recorded).

    Returns
    -------
    list of str
        One short phrase per differing key; empty when the platforms agree.
    """
    if not recorded or not current:
        return [] if recorded == current else ["platform (not recorded on one side)"]
    out = []
    for key in sorted(set(recorded) | set(current)):
        a, b = recorded.get(key), current.get(key)
        if a == b:
            continue
        if key == "numpy_cpu_features" and isinstance(a, list) and isinstance(b, list):
            gone, new = sorted(set(a) - set(b)), sorted(set(b) - set(a))
            parts = ([f"{', '.join(gone)} only in the first"] if gone else []) + (
                [f"{', '.join(new)} only in the second"] if new else [])
            out.append(f"{key} ({'; '.join(parts)})")
        elif isinstance(a, (str, int, float)) or isinstance(b, (str, int, float)):
            out.append(f"{key} ({a} vs {b})")
        else:
            out.append(key)
    return out
