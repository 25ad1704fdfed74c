"""[input] time_zone written as an abbreviation or a fixed offset (round mistakes56)."""

from __future__ import annotations

from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import pytest

from fluxpart.errors import ConfigError
from fluxpart.time_zones import check_time_zone
from fluxpart.zone_names import ABBREVIATIONS, zone_shorthand_hint


def test_abbreviations_are_no_zones_of_the_tz_database():
    """Every abbreviation named is one the system's IANA database (zoneinfo, an outside
    reference) has no zone of, so the hint never speaks of a name it reads; "EST",
    "CET" and "MET" are zones there and keep being read as zones."""
    for name in ABBREVIATIONS:
        with pytest.raises((ZoneInfoNotFoundError, ValueError)):
            ZoneInfo(name)
    for name in ("EST", "CET", "MET"):
        ZoneInfo(name)


@pytest.mark.parametrize(("zone", "offset", "said"), [
    # "CST" is the standard time of central North America, China and Cuba; "IST" of
    # India, Ireland's summer and Israel (common knowledge (m))
    ("CST", -6.0, r"CST is an abbreviation, not a zone.*UTC-6 .*UTC\+8 .*UTC-5 "),
    ("IST", 5.5, r"UTC\+5\.5 \(India.*UTC\+1 .*UTC\+2 "),
    ("CEST", 1.0, r"UTC\+2 \(Central European summer.*half the year's offset only"),
    ("UTC+1", 1.0, r"a fixed offset \(UTC\+1\).*leave time_zone out, as \[site\] utc_offset "
     r"= 1 states it"),
    ("GMT-05:00", -6.0, r"fixed offset \(UTC-5\).*set \[site\] utc_offset = -5 \(now -6\)"),
    ("+05:30", 5.5, r"fixed offset \(UTC\+5\.5\)"),
    ("UTC+0", 0.0, r"it is UTC itself: .*time_zone = \"UTC\""),
])
def test_shorthand_refused_naming_what_it_stands_for(zone, offset, said):
    """Refused as before (exit 2, one line), now saying what the shorthand stands for
    and what to write; the ambiguous ones list each clock (IANA theory.html: an
    abbreviation names no place (m))."""
    with pytest.raises(ConfigError, match=r"^\[input\] time_zone = .* is not a known time "
                       r"zone; .*" + said) as caught:
        check_time_zone(zone, offset)
    assert "\n" not in str(caught.value)


def test_a_misspelt_city_gets_no_shorthand_hint():
    assert zone_shorthand_hint("Europe/Berln", 1.0) == ""
    assert zone_shorthand_hint("Berlin", 1.0) == ""


def test_a_fixed_offset_whose_sign_is_the_site_offsets_reversed_names_both_readings():
    """"GMT+5" beside [site] utc_offset = -5: told to set utc_offset = 5 before round
    review80, a wrong sign where the name was the POSIX count (hours west of Greenwich,
    IEEE Std 1003.1 TZ (m)); now both readings are named, and the database's own
    "Etc/GMT+5" (zoneinfo, an outside reference) is the offset the site states."""
    from datetime import datetime, timedelta

    hint = zone_shorthand_hint("GMT+5", -5.0)
    assert "UTC+5 as a person says it, but UTC-5 as a POSIX TZ string" in hint
    assert "\"Etc/GMT+5\"" in hint and "for a clock kept at UTC-5 all year leave" in hint
    assert ZoneInfo("Etc/GMT+5").utcoffset(datetime(2021, 1, 1)) == timedelta(hours=-5)
    assert "Etc/" not in zone_shorthand_hint("UTC-3:30", 3.5)
    assert "POSIX" not in zone_shorthand_hint("GMT+5", 5.0)
