"""Where a batch keeps its network tables inside its output folder.

The names are a concern of their own so that ``run``, ``report`` and ``export``, which
refuse to write inside a network dataset, need not load :mod:`fluxpart.batch` (Dask
and the batch machinery) to know them.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["NETWORK_DATASET", "NETWORK_DATASETS", "NETWORK_SEAL", "enclosing_network_dataset"]

#: Folder of the network's annual dataset inside the batch output folder.
NETWORK_DATASET = "network_annual"
#: Folder of each network dataset (budget table -> folder) inside the batch output folder.
NETWORK_DATASETS = {"annual": NETWORK_DATASET, "monthly": "network_monthly",
                    "daily": "network_daily"}
#: The network tables' seal inside the batch output folder: written last, it names the SHA-256
#: of every network file and the manifest seal of every site folder they were read from.
NETWORK_SEAL = "network.json"


def enclosing_network_dataset(path) -> Path | None:
    """The network dataset folder of a batch output folder that holds `path`, or None.

    A batch rewrites ``OUT/network_annual/``, ``OUT/network_monthly/`` and
    ``OUT/network_daily/`` whole on every run, so anything else put there is deleted
    without a word by the next batch, and until then ``pandas.read_parquet`` and
    ``pyarrow.dataset`` of the folder (the documented readers, Hive-style partitions)
    meet a file that is not Parquet. ``run``, ``report`` and ``export`` refuse to write
    there.

    Parameters
    ----------
    path : path-like
        A file or folder about to be written (absolute or relative to the working
        folder; symbolic links are resolved).

    Returns
    -------
    pathlib.Path or None
        The dataset folder (its parent holds ``network.json``), or None.
    """
    target = Path(path).absolute().resolve()
    names = set(NETWORK_DATASETS.values())
    for folder in (target, *target.parents):
        if folder.name in names and (folder.parent / NETWORK_SEAL).is_file():
            return folder
    return None
