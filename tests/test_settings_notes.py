"""Settings the chosen u* method never reads (fluxpart.settings_notes, round mistakes21).

The moving point test's parameters (u* classes, plateau share, correlation limit) are its
own (Reichstein et al. 2005, Global Change Biology 11:1424-1439 (m)); the change-point
detector fits two-phase regressions and has no u* classes or plateau (Barr et al. 2013,
Agric. For. Meteorol. 171-172:31-45 (m)); a fixed threshold needs neither, nor a
bootstrap of a threshold it does not detect (Papale et al. 2006, Biogeosciences 3:571-583
(m)).
"""

from dataclasses import fields

import pytest

from fluxpart.config import Config
from fluxpart.settings_notes import DETECTION, MOVING_POINT_ONLY, ignored_settings


def test_detection_settings_beside_a_fixed_threshold_are_named():
    config = Config(ustar_method="fixed", ustar_threshold=0.15,
                    ustar_scenarios=(5, 50, 95), ustar_min_threshold=0.2)
    notes = ignored_settings(config)
    assert len(notes) == 1
    assert "ustar_scenarios = [5, 50, 95]" in notes[0]
    assert "ustar_min_threshold = 0.2" in notes[0] and "ustar_threshold = 0.15" in notes[0]


def test_moving_point_parameters_under_the_change_point_detector_are_named():
    notes = ignored_settings(Config(ustar_method="change_point", ustar_plateau_share=0.95))
    assert len(notes) == 1 and "ustar_plateau_share = 0.95" in notes[0]
    # the temperature classes stratify both detectors: used, not named
    assert ignored_settings(Config(ustar_method="change_point",
                                   ustar_temperature_classes=4)) == []


def test_scenarios_without_bootstrap_draws_are_named():
    notes = ignored_settings(Config(ustar_bootstrap_draws=0, ustar_scenarios=(5, 50, 95)))
    assert len(notes) == 1 and "ustar_bootstrap_draws = 0" in notes[0]
    assert ignored_settings(Config(ustar_bootstrap_draws=0, ustar_scenarios=())) == []


@pytest.mark.parametrize("method", ["moving_point", "change_point", "fixed"])
def test_defaults_and_used_settings_are_quiet(method):
    assert ignored_settings(Config(ustar_method=method)) == []
    # every detection setting is read by the moving point test
    assert ignored_settings(Config(ustar_plateau_share=0.95, ustar_min_threshold=0.05,
                                   ustar_scenarios=(5, 50, 95))) == []


def test_the_lists_name_only_settings_that_exist():
    names = {f.name for f in fields(Config)}
    assert set(DETECTION) <= names and set(MOVING_POINT_ONLY) <= set(DETECTION)
    assert "ustar_threshold" not in DETECTION


def test_a_fixed_run_names_the_settings_its_too_low_check_reads_as_tuning_that_check():
    # review27: the fixed-threshold check (fluxpart.ustar_fixed, round mistakes24) runs the
    # moving point test (Reichstein et al. 2005 (m)) with the run's floor and classes, so
    # ustar_min_threshold is read there; the note may not say it "changes nothing"
    notes = ignored_settings(Config(ustar_method="fixed", ustar_threshold=0.15,
                                    ustar_min_threshold=0.2, ustar_scenarios=(5, 50, 95)))
    assert len(notes) == 1 and "change no number of the run" in notes[0]
    assert "changes nothing" not in notes[0] and "change nothing" not in notes[0]
    assert "(ustar_min_threshold = 0.2 only tunes the detection that checks" in notes[0]
    # a setting the check does not read (the scenarios need a bootstrap of the run's own
    # threshold, Papale et al. 2006 (m)) is not said to tune it
    only_scenarios = ignored_settings(Config(ustar_method="fixed", ustar_scenarios=(5, 50, 95)))
    assert len(only_scenarios) == 1 and "tunes the detection" not in only_scenarios[0]


def test_the_floor_setting_is_truly_read_by_the_fixed_check():
    # known-truth recovery on an invented site-year (fluxpart.scenarios seed 0): with the
    # planted threshold fixed the check is quiet, but a floor (ustar_min_threshold) set at
    # twice the planted value lifts the detected threshold above 1.2 times the fixed one
    # and the check names it, so FIXED_CHECK_READS must keep ustar_min_threshold
    from fluxpart import scenarios, solar
    from fluxpart.settings_notes import FIXED_CHECK_READS
    from fluxpart.ustar_fixed import fixed_threshold_note
    site_year = scenarios.generate(0)
    frame, site = site_year.frame, site_year.site
    planted = scenarios.draw(0).parameters["ustar_threshold"]
    potential = solar.potential_radiation(frame.index, site.latitude, site.longitude,
                                          site.utc_offset)
    is_night = solar.night_mask(frame["rg"].to_numpy(), potential, 10.0)
    arguments = (frame.index, frame["nee"], frame["ustar"], frame["tair"], is_night,
                 site.latitude, planted, Config())
    assert fixed_threshold_note(*arguments, planted * 0.5) is None
    assert fixed_threshold_note(*arguments, planted * 2.0) is not None
    assert "ustar_min_threshold" in FIXED_CHECK_READS
