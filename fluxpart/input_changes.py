"""Where an input file edited after a run differs from what the run read.

``fluxpart verify`` of a result whose input file no longer has the recorded SHA-256
said only that: "it is not the input file the result was computed from". The file the
run read is gone, but its values are not: the result's time series holds every input
variable as read (``timeseries.parquet``: ``nee``, ``rg``, ``tair``, ...). Reading the
file now as the run read it (its site config) and comparing the two names the records
and columns that were edited, added or removed, so an auditor learns what differs, not
only that something does.

The comparison is exact (a value re-typed with the same digits is equal; ``0.488``
against ``0.4880`` too, as both read to one float); the verdict stays NOT reproduced
whatever is found, as the recorded SHA-256 decides.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from .counted_time import counted_form
from .errors import FluxpartError
from .variables import VARIABLES

__all__ = ["located_changes"]

#: Differing values named one by one before the rest are counted.
_LISTED = 3


def _value(value, name: str = "") -> str:
    if not np.isfinite(value):
        return "missing"
    if name == "nee_flag":
        # the canonical site flag is 0 or 1, not the file's code (fluxpart.io's
        # flag_accept decides): say what it means, not a number the file does not hold
        return "rejected" if value == 1 else "kept"
    return f"{value:.10g}"


def _stamp(when) -> str:
    return pd.Timestamp(when).strftime("%Y-%m-%d %H:%M")


#: Where in its interval a file's stamp lies, as a share of the interval ([input] time_marks).
_MARK_SHARE = {"start": 0.0, "middle": 0.5, "end": 1.0}


def _file_stamp(start, reader, interval: pd.Timedelta) -> str:
    """The stamp the file itself writes for the record starting `start`, as a phrase.

    The result names records by their interval start in local standard time; a file
    stamped at the interval's end or middle, or in civil time with daylight saving
    (``[input] time_marks``, ``time_zone``), writes another time for the same record, so an
    auditor looking for the edited line finds it by this one. Empty where the file's
    stamp is the start itself, or where its stamps carry their own UTC offset or zone
    (``%z``, ``%Z``, ``ISO8601``, a closing ``Z``), which the reader converted, or where
    they count time since a date (``"days since 1899-12-30"``: a number, no stamp).
    """
    share = _MARK_SHARE.get(getattr(reader, "time_marks", None))
    zone = getattr(reader, "time_zone", None)
    time_format = str(getattr(reader, "time_format", ""))
    if share is None or not isinstance(interval, pd.Timedelta) or pd.isna(interval):
        return ""
    if "%z" in time_format or "%Z" in time_format or time_format.upper() == "ISO8601" \
            or time_format.endswith("Z") or counted_form(time_format) is not None:
        return ""      # converted by the reader, or a count of time (layouts38), no stamp
    if share == 0.0 and zone is None:
        return ""
    stamp = pd.Timestamp(start) + share * interval
    where = "" if share == 0.0 else f"the interval's {reader.time_marks}"
    if zone is not None:
        try:
            offset = pd.Timedelta(hours=float(reader.site.utc_offset))
            stamp = (stamp - offset).tz_localize("UTC").tz_convert(zone).tz_localize(None)
        except (AttributeError, TypeError, ValueError, KeyError):
            return ""
        where = f"{where}, " if where else ""
        where += f"civil time of {zone}"
    return f", stamped {_stamp(stamp)} in the file ({where}),"


def located_changes(site_config: Path, input_path, stored: pd.DataFrame,
                    file_columns: dict | None = None) -> str:
    """Say where a changed input file differs from the input values a result holds.

    Parameters
    ----------
    site_config : pathlib.Path
        The site config the run read (the recorded text), which says how to read the file.
    input_path : pathlib.Path or list of pathlib.Path
        The input file as it is now (its SHA-256 is not the recorded one), or, for a
        result read from several files, every file as it is now in the recorded order
        (read together, as the run read them).
    stored : pandas.DataFrame
        The result's stored ``timeseries`` table (index ``time``, interval starts in
        local standard time): its input columns (``nee``, ``rg``, ``tair``, ``vpd``,
        ``ustar``, ``tsoil``, ``rh``, ``nee_flag``; units as read, µmol m-2 s-1,
        W m-2, °C, hPa, m s-1, °C, %) hold the values the run read.
    file_columns : dict, optional
        The recorded reader's canonical name -> the file's column name
        (``provenance.reader.columns``), to name each column as the file does.

    Returns
    -------
    str
        A phrase for the verdict: how many values of how many records differ (the
        first few named with both values), how many records were added or removed, or
        that every value read is equal (the change lies elsewhere in the file); or
        why the file cannot be read as the run read it. Empty where no comparison
        can be made (no stored time series).

    References
    ----------
    Wilkinson, M. D. et al. (2016). The FAIR Guiding Principles for scientific data
    management and stewardship. Scientific Data 3, 160018 (R1.2: provenance detailed
    enough to tell what data a result came from) (m).
    """
    from .io import read_site_config

    if stored is None or not isinstance(stored.index, pd.DatetimeIndex):
        return ""
    try:
        paths = list(input_path) if isinstance(input_path, (list, tuple)) else [input_path]
        reader = read_site_config(site_config, input_paths=paths)
        frame, _ = reader.read()
    except FluxpartError as error:
        return f"read as the run read it, it is refused now ({error})"
    except (OSError, ValueError) as error:
        return f"it cannot be read as the run read it now ({error})"
    columns = [name for name in frame.columns if name in stored.columns]
    if not columns or not isinstance(frame.index, pd.DatetimeIndex):
        return ""
    names = file_columns if isinstance(file_columns, dict) else {}
    try:
        now = frame[columns].astype("float64")
        then = stored[columns].astype("float64")
    except (TypeError, ValueError):
        return ""
    # the run adds up to a day of empty records at a budget year's edges: not read
    removed = then.index[then.notna().any(axis=1).to_numpy()].difference(now.index)
    added = now.index[now.notna().any(axis=1).to_numpy()].difference(then.index)
    common = now.index.intersection(then.index)
    if now.index.has_duplicates or then.index.has_duplicates:
        return ""
    left = now.loc[common].to_numpy()
    right = then.loc[common].to_numpy()
    differ = ~((left == right) | (np.isnan(left) & np.isnan(right)))
    rows, cols = np.nonzero(differ)
    steps = np.diff(then.index.to_numpy())
    interval = pd.Timedelta(np.median(steps)) if len(steps) else pd.NaT
    parts = []
    if len(rows):
        listed = []
        for row, col in list(zip(rows, cols, strict=True))[:_LISTED]:
            name = columns[col]
            # the values as read, in the canonical unit (a kPa column is shown in hPa)
            unit = VARIABLES[name].unit if name in VARIABLES else ""
            what = f"{name}, {unit}" if unit and unit != "1" else name
            source = names.get(name)
            if isinstance(source, list) and all(isinstance(c, str) for c in source):
                source = " + ".join(source)       # nee_flag may combine several columns
            if name == "nee_flag":
                what = "site flag: record kept or rejected by [input] flag_accept"
            label = f"{source!r} ({what})" if isinstance(source, str) \
                else f"{name!r} ({what})" if name == "nee_flag" \
                else f"{name!r} ({unit})" if unit and unit != "1" else repr(name)
            listed.append(f"record starting {_stamp(common[row])}"
                          f"{_file_stamp(common[row], reader, interval)} {label}: "
                          f"{_value(right[row, col], name)} then, "
                          f"{_value(left[row, col], name)} now")
        more = "; ..." if len(rows) > _LISTED else ""
        parts.append(f"{len(rows)} value(s) in {len(np.unique(rows))} record(s) differ ("
                     f"{'; '.join(listed)}{more})")
    if len(added):
        parts.append(f"{len(added)} record(s) added (first starting {_stamp(added[0])})")
    if len(removed):
        parts.append(f"{len(removed)} record(s) removed (first starting "
                     f"{_stamp(removed[0])})")
    if not parts:
        return ("read as the run read it, every value equals the input the result holds: "
                "the change lies outside the values read (another column, a comment, spaces "
                "or the layout)")
    return ("read as the run read it, against the input values the result holds: "
            + ", ".join(parts))
