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
