"""Small input checks shared by the stage modules (private)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from .errors import FluxpartError, TimestampError


def as_bool(values, name: str) -> np.ndarray:
    """Return `values` as a new boolean array; 0/1 numbers are accepted, missing values not."""
    array = np.asarray(values)
    if array.dtype != bool:
        if array.dtype.kind not in "iuf" or np.any(~np.isin(array, (0, 1))):
            raise FluxpartError(f"{name} must be boolean (True/False for every record, no "
                                "missing values)")
        array = array.astype(bool)
    return array.copy()


def datetime_index(index) -> pd.DatetimeIndex:
    """Return `index` if it is a DatetimeIndex, else raise a TimestampError."""
    if not isinstance(index, pd.DatetimeIndex):
        raise TimestampError(f"the time axis must be a pandas DatetimeIndex of interval starts; "
                             f"found {type(index).__name__}")
    return index
