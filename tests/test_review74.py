"""Fresh-eyes review of rounds leftovers56 and newuser54 (round review74).

Outside facts, each named beside its check: RFC 3339 section 4.3, "-00:00" states a time
in UTC whose local offset is unknown, and RFC 9557 section 2 gives "Z" that meaning too;
RFC 3339's time-numoffset takes hours 00-23 and minutes 00-59 (m). Everything else is
invented known truth.
"""

import pandas as pd
import pytest
from test_robustness_layouts26 import _read
from test_robustness_layouts49 import _clean, _lines

from fluxpart.errors import TimestampError


def test_an_unknown_local_offset_before_a_zone_reads_as_utc(tmp_path):
    """UTC stamps written "-00:00[Europe/Berlin]" (the instant in UTC, no local offset
    stated, as "Z[Europe/Berlin]" reads): refused before as stating two times, since the
    zone keeps +02:00 in June; now read as the clean file (UTC+1 standard time)."""
    ends, values, expected = _clean(tmp_path)
    stamps = [f"{e - pd.Timedelta('1h'):%Y-%m-%dT%H:%M}-00:00[Europe/Berlin]" for e in ends]
    path = tmp_path / "unknown.csv"
    path.write_text("\n".join(_lines(stamps, values)) + "\n")
    read, _ = _read(path, time_format="ISO8601")
    pd.testing.assert_frame_equal(read, expected)


@pytest.mark.parametrize("suffix", ["[+02:99]", "[+24:00]"])
def test_a_bracketed_offset_out_of_range_is_refused_naming_it(tmp_path, suffix):
    """"[+02:99]" was read as +03:39 and the refusal named that offset, written nowhere."""
    ends, values, _ = _clean(tmp_path)
    stamps = [f"{e + pd.Timedelta('1h'):%Y-%m-%dT%H:%M}+02:00{suffix}" for e in ends]
    path = tmp_path / "zoned.csv"
    path.write_text("\n".join(_lines(stamps, values)) + "\n")
    with pytest.raises(TimestampError, match=r"line 2 .*its suffix \[\+\d\d:\d\d\] is no UTC "
                                             r"offset \(hours 00-23, minutes 00-59\)"):
        _read(path, time_format="ISO8601")


def test_a_unit_and_a_geometry_refusal_are_both_named_as_causes():
    """Air temperature in °F undeclared beside a latitude of the wrong sign (the example,
    probed in review74): the unit's note alone was printed, counting the latitude's
    refusal, Rg above the potential radiation and the night mask among what "may follow"
    from a temperature's unit, which moves no sun (the potential radiation is a function
    of latitude, longitude and time only: Spencer 1971 (m)). Now both are named; with
    nothing listed beyond the two refusals, no note."""
    from fluxpart.cli import _follow_on_note

    unit = ["column 'air_temp_c' (tair, read as °C): ... set [input.units] tair = \"°F\""]
    geometry = ["site geometry: ... set [site] latitude = 49.3"]
    note = _follow_on_note(unit, geometry, 5)
    assert note.startswith("  note: the run stops at the unit mix-up and at the clock or "
                           "site geometry named above;"), note
    assert note.endswith("may follow from them alone: set the unit, make the change it "
                         "names and run check again\n"), note
    assert _follow_on_note(unit, geometry, 2) == ""
    assert _follow_on_note(unit, (), 2).startswith("  note: the run stops at the unit mix-up "
                                                   "named above;")
    assert "clock" not in _follow_on_note(unit, (), 2)


def test_the_tonnes_of_an_uptake_whose_interval_holds_zero_are_not_said_taken_up():
    """Invented NEE of -20 g C m-2 with a 95 % interval of -60 to +20: the headline said
    the record does not tell an uptake from a release, then "These tonnes are CO2 taken
    from the air". The clause now stays conditional there; a clear uptake keeps it as it
    was (newuser54's test_review39 case). Tonnes as 44.009 / 12.011 x 0.01 (m)."""
    import html
    import re

    from fluxpart import report
    from fluxpart.figures import Written

    index = pd.date_range("2023-01-01", "2023-12-31 23:30", freq="30min")
    for nee, low, high, said in ((-20.0, -60.0, 20.0, "Were they an uptake, these tonnes "
                                  "would be CO2 taken from the air above the canopy"),
                                 (-229.8, -243.0, -216.0, "These tonnes are CO2 taken from "
                                  "the air above the canopy")):
        annual = pd.DataFrame({
            "nee": [nee], "complete": [True], "records": [17520],
            "records_expected": [17520], "records_unfilled": [0],
            "net_uptake_t_co2_per_ha": [-nee * 44.009 / 12.011 * 0.01],
            "nee_ci95_low": [low], "nee_ci95_high": [high], "ustar_threshold": [0.17]},
            index=pd.Index([2023], name="year"))
        written = Written(manifest={}, tables={
            "timeseries": pd.DataFrame({"nee_filled": nee / 1e3}, index=index),
            "annual": annual})
        headline = re.search(r'<p class="headline">(.*?)</p>',
                             report._summary_card(written)[0], re.S).group(1)
        plain = " ".join(html.unescape(re.sub(r"<[^>]+>", "", headline)).split())
        assert said in plain, plain
        assert ("holds zero" in plain) is (high > 0), plain
