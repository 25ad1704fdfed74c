"""Small input checks shared by the modules (private): arrays, time axis, TOML files."""

from __future__ import annotations

import tomllib
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import ConfigError, FluxpartError, InputFileError, LengthMismatchError, TimestampError


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


def as_float(values, name: str, length: int) -> np.ndarray:
    """Return `values` as a new float64 vector of one value per record.

    Nullable pandas values (``pd.NA``) become NaN.

    Raises
    ------
    FluxpartError
        If the values are not numbers.
    LengthMismatchError
        If they are not one-dimensional with `length` values.
    """
    try:
        if isinstance(values, (pd.Series, pd.Index)):
            array = values.to_numpy(dtype=np.float64, na_value=np.nan, copy=True)
        else:
            array = np.array(values, dtype=np.float64)
    except (TypeError, ValueError):
        raise FluxpartError(f"{name}: expected numbers (NaN where missing)") from None
    if array.shape != (length,):
        raise LengthMismatchError(f"{name}: expected one value per record ({length}), found "
                                  f"shape {array.shape}")
    return array


def read_toml(path, what: str) -> dict:
    """Parse the TOML file `path`; `what` names it in errors (e.g. ``"site config"``).

    Raises
    ------
    InputFileError
        If the file does not exist or cannot be read as UTF-8 text.
    ConfigError
        If it is not valid TOML.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputFileError(f"{what} {str(path)!r} does not exist") from None
    except (OSError, UnicodeDecodeError) as error:
        raise InputFileError(f"{what} {str(path)!r} cannot be read: {error}") from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        raise ConfigError(f"{what} {str(path)!r} is not valid TOML: {error}") from None
