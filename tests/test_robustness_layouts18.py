"""Logger layouts of the layouts18 round: stamps labelled with European zone
abbreviations (CET in winter, CEST in summer).

Outside facts, each named beside its check: the IANA time-zone database as shipped with
Python's ``zoneinfo`` (Europe/Berlin: CET = UTC+1, CEST = UTC+2, summer time from
2021-03-28 02:00 CET to 2021-10-31 03:00 CEST); the abbreviations CEST, EEST and WEST
name the summer times one hour ahead of CET, EET and WET (IANA "europe" file (m)).
"""

import re

import numpy as np
import pandas as pd
import pytest

from fluxpart.errors import TimestampError
from fluxpart.timestamps import parse_stamps


def _parse(text, time_format, utc_offset=1.0, **kwargs):
    series = pd.Series(text, dtype=object)
    return parse_stamps(series, time_format, time_columns=("stamp",), source="t.dat",
                        lines=np.arange(2, len(text) + 2), utc_offset=utc_offset,
                        **kwargs).stamps


def _labelled(zone, truth_standard, standard_offset):
    """Civil-time stamps of `zone` with their abbreviation, for standard-time `truth`."""
    utc = (truth_standard - pd.Timedelta(hours=standard_offset)).tz_localize("UTC")
    return list(utc.tz_convert(zone).strftime("%Y-%m-%d %H:%M %Z"))


@pytest.mark.parametrize("zone, offset", [("Europe/Berlin", 1.0), ("Europe/Helsinki", 2.0),
                                          ("Europe/Lisbon", 0.0)])
def test_stamps_labelled_with_winter_and_summer_abbreviations_are_read(zone, offset):
    """A civil-time logger that writes the zone label beside each stamp ("... 02:30 CEST"
    then "... 02:30 CET" in the repeated autumn hour): each label names one offset, so
    the stamps are read as local standard time without a time_zone, both autumn hours
    kept apart. Before, CEST was refused ("not read") and the first summer stamp of a
    day-first check stopped the reader with a traceback of pandas' mixed offsets."""
    truth = pd.date_range("2021-03-27 00:00", "2021-11-01 00:00", freq="30min")
    text = _labelled(zone, truth, offset)
    assert any(t.endswith("ST") for t in text)          # summer labels present
    clock = pd.Series([t.rsplit(" ", 1)[0] for t in text])
    assert clock.duplicated().sum() == 2                 # the repeated autumn hour
    assert len(set(text)) == len(text)                   # ... told apart by its labels
    stamps = _parse(text, "%Y-%m-%d %H:%M %Z", utc_offset=offset)
    assert list(stamps) == list(truth)


def test_labels_of_several_zones_are_still_refused_with_the_list():
    """BST is British Summer Time and Bangladesh Standard Time: not read, named."""
    text = ["2021-07-01 00:30 BST", "2021-07-01 01:00 BST"]
    with pytest.raises(TimestampError, match=r"'BST' is not read .*CEST, MEST, EEST, WEST"):
        _parse(text, "%Y-%m-%d %H:%M %Z", utc_offset=0.0)


def test_a_damaged_stamp_among_cet_labels_is_named_not_a_traceback():
    """A damaged stamp (30 February: no such day in the Gregorian calendar) among stamps
    labelled CET over several months: the day/month exchange hint parsed the other
    stamps with %d and %m exchanged, where pandas reads "CET" as a zone with summer time
    and refused to mix the offsets (ValueError, a traceback). Now the stamp is named."""
    truth = pd.date_range("2021-01-01 00:30", "2021-06-30 00:00", freq="6h")
    text = list(truth.strftime("%Y-%m-%d %H:%M CET"))
    text[100] = "2021-02-30 00:30 CET"
    with pytest.raises(TimestampError, match=re.escape("line 102 of 't.dat' has stamp "
                                                       "'2021-02-30 00:30 CET'")):
        _parse(text, "%Y-%m-%d %H:%M %Z")
