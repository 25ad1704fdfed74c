"""The SHA-256 of a file's bytes, read in blocks: the one hashing of input and result files.

The reader (:mod:`fluxpart.io`, the input's provenance) and the result store
(:mod:`fluxpart.store`, the seals of tables and manifests) each had their own copy of the
same loop (round leftovers58); each keeps its own words for a file it cannot read, so this
module raises the operating system's error as it comes and knows neither.

References
----------
NIST (2015). FIPS PUB 180-4, Secure Hash Standard (SHA-256).
"""
from __future__ import annotations

import hashlib

__all__ = ["BLOCK_BYTES", "sha256_of_file"]

#: Bytes read at a time [B]: 1 MiB, so a file of any size is hashed in constant memory.
BLOCK_BYTES = 1 << 20


def sha256_of_file(path) -> str:
    """The hexadecimal SHA-256 of the bytes of the file at `path`.

    Parameters
    ----------
    path : str or path-like
        The file.

    Returns
    -------
    str
        64 lower-case hexadecimal digits.

    Raises
    ------
    OSError
        Where the file cannot be opened or read; the caller words it.

    References
    ----------
    NIST (2015). FIPS PUB 180-4, Secure Hash Standard.
    """
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(BLOCK_BYTES), b""):
            digest.update(block)
    return digest.hexdigest()
