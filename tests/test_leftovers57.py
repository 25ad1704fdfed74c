"""What review74 found and left (round leftovers57).

Outside facts, each named beside its check: photosynthesis follows light within minutes
(Lambers, Chapin & Pons 2008, Plant Physiological Ecology, ch. 2 (m)); the molar masses
of C, 12.011 g mol-1, and of CO2, 12.011 + 2 x 15.999 = 44.009 g mol-1 (IUPAC
conventional atomic weights (m)); 1800 s in 30 minutes (SI). Everything else is invented
known truth.
"""

import numpy as np
import pandas as pd
import pytest

CARBON, CO2 = 12.011, 12.011 + 2 * 15.999        # g mol-1 (IUPAC (m))


@pytest.mark.parametrize(("records", "step", "named"), [
    (49, 30, "1 day(s) and 1 record(s) (24.5 h) later"),
    (-47, 30, "1 day(s) less 1 record(s) (23.5 h) earlier"),
    (25, 60, "1 day(s) and 1 record(s) (25 h) later"),
])
def test_nee_a_day_and_a_record_off_is_named(records, step, named):
    """Invented passing clouds (test_column_faults.light_record, known truth: NEE shifted
    by `records`). A day of year counted from 0 in a flux file stamped at interval ends
    joined with weather stamped at starts: NEE a day and a record off, which neither the
    whole days nor the hours (14 h at most) reached: no line before. The clouds line up
    only at that shift, a day on either side of it holds the daily course alone."""
    from test_column_faults import light_record

    from fluxpart.column_faults import nee_day_shift
    nee, rg, potential = light_record(0, 1.0)
    if step == 60:           # hourly records: means of two half-hours
        nee, rg, potential = (v.reshape(-1, 2).mean(axis=1) for v in (nee, rg, potential))
    text = nee_day_shift(np.roll(nee, records), rg, potential, step)
    assert text is not None and named in text, text
    assert "and stamps at the interval's end in one and its start in the other" in text
    assert nee_day_shift(nee, rg, potential, step) is None          # aligned: quiet


def test_a_daily_course_records_off_is_not_named_a_day_and_records():
    """An NEE following temperature, whose daily maximum trails the sun's by hours
    (Campbell & Norman 1998, ch. 2 (m)), matches Rg's course those records off on every
    day alike: without the rule of the days beside, a day and some records was named
    ("17 day(s) less 4 record(s)" on test_column_faults' invented cloudless desert)."""
    from test_column_faults import STEP, cloudless_desert

    from fluxpart.column_faults import nee_day_shift
    rng, potential, rg, tair = cloudless_desert()
    respiration = 0.3 * np.exp(0.07 * (tair - 25.0)) + rng.normal(0, 0.05, rg.size)
    assert nee_day_shift(respiration, rg, potential, STEP) is None


def test_storage_in_grams_of_carbon_per_record_beside_a_rate_is_warned():
    """g C m-2 per record beside NEE in µmol m-2 s-1 reads right (the reader converts
    each) but had no word, where every other pair of units apart had one: 1 µmol m-2 s-1
    over 1800 s is 1800 x 12.011e-6 = 0.02162 g C m-2, so a storage column in the flux's
    unit read as g C m-2 per record is 46.3 times too large (23.1 at 60 minutes)."""
    from fluxpart.storage_labels import storage_unit_apart
    factor = 1.0 / (1800.0 * CARBON * 1e-6)
    assert f"{factor:.3g}" == "46.3"
    text = storage_unit_apart(None, "g C m-2", 30)
    assert text is not None and "46.3 times too large" in text
    assert "set [input.units] storage = 'µmol m-2 s-1'" in text
    hourly = storage_unit_apart("g C m-2", None, 60)
    assert hourly is not None and f"{factor / 2:.3g} times too small" in hourly
    assert storage_unit_apart("g C m-2", "g C m-2", 30) is None       # one unit: quiet
    assert storage_unit_apart(None, "g C m-2") is None                 # no interval given


def test_a_storage_column_in_grams_per_record_reads_right_with_the_warning(tmp_path):
    """The reader: storage written in g C m-2 per record and declared so reads to the
    file whose storage is in µmol m-2 s-1 (to 1e-9), now with the units-apart warning."""
    from test_leftovers56 import _lines, _storage_record
    from test_robustness_layouts26 import _read
    stamps, written, head, columns, expected = _storage_record(tmp_path)
    written[:, -1] *= 1800.0 * CARBON * 1e-6
    (tmp_path / "grams.csv").write_text("\n".join(_lines(stamps, written, head)) + "\n")
    read, report = _read(tmp_path / "grams.csv", columns=columns,
                         units={"vpd": "hPa", "storage": "g C m-2"})
    np.testing.assert_allclose(read["nee"], expected["nee"], rtol=1e-9, atol=1e-9)
    assert [w for w in report.warnings if w.startswith("storage") and "46.3" in w]


def test_a_co2_rate_label_and_a_declared_unit_take_one_molar_mass():
    """A label's factor (flux_rate_labels) took CO2 as 44.01 g mol-1 while the declared
    unit's conversion takes 44.009 (12.011 + 2 x 15.999, IUPAC (m)): now both, to the bit."""
    from fluxpart.flux_rate_labels import rate_factor
    from fluxpart.variables import to_canonical
    assert rate_factor("mg CO2 m-2 s-1") == pytest.approx(1e3 / CO2, rel=1e-15)
    assert rate_factor("mg CO2 m-2 s-1") == float(to_canonical([1.0], "nee",
                                                               "mg CO2 m-2 s-1")[0])


def test_the_follow_on_note_under_clock_check_warn_has_its_own_words():
    """Under clock_check = "warn" a latitude of the wrong sign still puts Rg above the
    potential radiation and the sky's noise into the night mask (the potential radiation
    is a function of latitude and time: Spencer 1971 (m)), but the note said "the run
    stops" and was left out. Now the warn mode says the run goes on past it."""
    from fluxpart.cli import _follow_on_note
    geometry = ["site geometry: ... set [site] latitude = 49.3"]
    note = _follow_on_note((), (), 3, geometry)
    assert note == ("  note: the run goes on past the clock or site geometry named above "
                    '(clock_check = "warn"); the other problems were judged against the sun '
                    "as [site] places it (Rg above the potential radiation, Rg of 0 with the "
                    "sun up, the night mask) and may follow from it alone: make the change "
                    "it names and run check again\n")
    unit = ["column 'air_temp_c' (tair, read as °C): ... set [input.units] tair = \"°F\""]
    both = _follow_on_note(unit, (), 5, geometry)
    assert both.startswith("  note: the run stops at the unit mix-up named above, and the "
                           "clock or site geometry named above is only warned about")
    assert both.endswith("set the unit, make the change it names and run check again\n")
    assert _follow_on_note((), (), 1, geometry) == ""        # nothing else listed
    assert _follow_on_note((), geometry, 3).startswith("  note: the run stops at the clock")


def test_the_csvw_description_of_the_tonnes_carries_their_caution():
    """The CSVW description of net_uptake_t_co2_per_ha says what the report and the
    command line say beside the tonnes (the NetCDF file's comment too:
    test_export.test_site_and_conventions_are_global_attributes); the Parquet field's
    description (the annual table's bytes) is left as it was."""
    from fluxpart.export_csv import DESCRIPTION_PROPERTY, _table_metadata
    from fluxpart.manifest import TONNES_CAUTION
    from fluxpart.schema import UNCERTAINTY_COLUMNS
    assert "credited removal" in TONNES_CAUTION and "crediting methodology" in TONNES_CAUTION
    unit, stored = UNCERTAINTY_COLUMNS["net_uptake_t_co2_per_ha"]
    assert "credit" not in stored                    # the Parquet field's, unchanged
    frame = pd.DataFrame({"net_uptake_t_co2_per_ha": [1.5], "nee": [-40.9]},
                         index=pd.Index([2021], name="year"))
    described = {"net_uptake_t_co2_per_ha": (unit, stored), "nee": ("g m-2", "NEE")}
    table = _table_metadata("annual", frame, ["year", "net_uptake_t_co2_per_ha", "nee"],
                            ["integer", "double", "double"], described)
    texts = {c["name"]: c.get(DESCRIPTION_PROPERTY) for c in table["tableSchema"]["columns"]}
    assert texts == {"year": None, "net_uptake_t_co2_per_ha": f"{stored}. {TONNES_CAUTION}.",
                     "nee": "NEE"}


@pytest.mark.parametrize(("records", "span", "causes"), [
    (99, "2 day(s) and 3 record(s) (49.5 h) later",
     "(a weather file of other dates joined by stamp, and clocks 90 min apart in the two "
     "files)"),
    (-50, "1 day(s) and 2 record(s) (25 h) earlier",
     "(a day of year counted from 0 in one file and from 1 in the other, and clocks 60 min "
     "apart in the two files)"),
])
def test_a_day_and_records_off_names_the_causes_that_fit(records, span, causes):
    """Invented passing clouds (known truth: NEE shifted by `records`). A day of year
    counted from 0 in one file and from 1 in the other moves one day (24 h), stamps at the
    interval's end in one file and its start in the other one record (30 min here): two
    days and three records were given those two as the causes (review79)."""
    from test_column_faults import light_record

    from fluxpart.column_faults import nee_day_shift
    nee, rg, potential = light_record(0, 1.0)
    text = nee_day_shift(np.roll(nee, records), rg, potential, 30)
    assert text is not None and span in text and causes in text, text
