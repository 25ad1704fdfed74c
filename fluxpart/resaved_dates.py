"""One file of several whose stamps a spreadsheet rewrote in another layout.

A month file opened in a spreadsheet and saved again comes back with its dates in the
computer's regional layout ("2021-03-04 00:30" saved as "04/03/2021 00:30"), while the
other files of the year keep the logger's. One ``[input] time_format`` cannot read both,
and no setting reads the year. The file's own layout is read where it is provable:

- no stamp of the file reads under `time_format`;
- exactly one of the common layouts (:func:`fluxpart.stamp_hints.common_formats`) reads
  every stamp of it: a file whose days are all 12 or less reads day first and month first
  alike and stays refused;
- that layout and `time_format` both write the year, month, day, hour and minute.

The reader applies it to a later file only (a file read under `time_format` before it),
with a reader note naming the file and the layout; the combined records then meet the
usual checks of order, interval and overlap. Pure functions of the stamp text.

References
----------
Common practice: spreadsheets parse a date cell on opening and write it back in the
regional date layout of the computer on saving as CSV.
"""

import pandas as pd

from .stamp_hints import common_formats

#: The fields both layouts must write.
_FIELDS = ("%Y", "%m", "%d", "%H", "%M")


def file_layout(text: pd.Series, time_format: str) -> str | None:
    """The one common layout every stamp of `text` reads under where none reads under
    `time_format` (rules of the module); else None."""
    if not all(field in time_format for field in _FIELDS):
        return None
    if pd.to_datetime(text, format=time_format, errors="coerce").notna().any():
        return None
    fitting = common_formats(text, time_format)
    if len(fitting) != 1 or not all(field in fitting[0] for field in _FIELDS):
        return None
    return fitting[0]
