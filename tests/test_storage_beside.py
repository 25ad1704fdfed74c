"""The storage-corrected NEE left unread beside a turbulent flux mapped as nee (round
mistakes59, `fluxpart.storage_beside`).

Source of every check: NEE is the turbulent flux plus the storage term (Finnigan 2006,
Agric. For. Meteorol. 136:108-113; Aubinet et al. 2012, ch. 1 (m)); the storage term is
positive while CO2 pools below the sensor in the stable night and negative as the
morning's mixing vents it, about zero over a day (Finnigan 2006; a fact of the trade).
Invented records only (known-truth recovery).
"""
import warnings

import numpy as np
import pytest
from test_storage_mapping import _maize_copy

from fluxpart.io import read_input, read_site_config
from fluxpart.storage_beside import same_flux, storage_corrected_beside


def _tower(days=60, per_hour=2, seed=0):
    """Invented half-hourly records: light, NEE, and a storage term that pools half the
    night's respiration and vents it in the 3 h after sunrise (sums to 0 each day)."""
    rng = np.random.default_rng(seed)
    per_day = 24 * per_hour
    hours = (np.arange(days * per_day) % per_day) / per_hour
    light = np.clip(800 * np.sin(np.pi * (hours - 6) / 12), 0, None)
    light = light + rng.normal(0, 2, light.size)
    respiration = 3.0 + rng.normal(0, 0.3, light.size)
    nee = respiration - 20 * light / (light + 400) + rng.laplace(0, 0.4, light.size)
    storage = np.zeros(light.size)
    for day in range(days):
        night = np.arange(day * per_day, day * per_day + 6 * per_hour)
        storage[night] = 0.5 * respiration[night]
        vent = np.arange(day * per_day + 6 * per_hour, day * per_day + 9 * per_hour)
        storage[vent] = -storage[night].sum() / vent.size
    turbulent = nee - storage
    return light, nee, turbulent, storage


def test_the_turbulent_flux_mapped_beside_unread_nee_is_named():
    light, nee, turbulent, _ = _tower()
    message = storage_corrected_beside(turbulent, light, {"co2_nee": nee}, 30, "co2_flux")
    assert message is not None
    assert "'co2_nee'" in message and "[input.columns] nee = 'co2_nee'" in message


def test_nee_mapped_beside_the_unread_turbulent_flux_is_not_named():
    """The opposite signs: the right column is mapped."""
    light, nee, turbulent, _ = _tower()
    assert storage_corrected_beside(nee, light, {"co2_flux": turbulent}, 30, "co2_nee") is None


@pytest.mark.parametrize("other", ["offset", "copy", "mg", "noise"])
def test_columns_that_are_no_storage_term_are_not_named(other):
    """A constant offset (one sign all day), a gap-filled copy (identical where both are
    measured), the flux in mg CO2 (a factor of 0.044: Mw of CO2 44.01 g mol-1) and a
    second analyser's independent noise are not a storage course."""
    light, nee, _, _ = _tower()
    rng = np.random.default_rng(5)
    column = {"offset": nee + 0.5, "copy": np.where(np.isnan(nee), 1.0, nee),
              "mg": nee * 0.044, "noise": nee + rng.laplace(0, 0.4, nee.size)}[other]
    assert storage_corrected_beside(nee, light, {"other": column}, 30, "co2_nee") is None


def test_same_flux_asks_for_the_unit_and_a_close_course():
    light, nee, turbulent, _ = _tower()
    assert same_flux(turbulent, nee)
    assert not same_flux(turbulent, nee * 0.044)
    assert not same_flux(turbulent, light)


def _reader_warnings(config):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        _, report = read_input(read_site_config(config))
    return [text for text in report.warnings if "holds the flux mapped as nee" in text]


def test_the_maize_examples_turbulent_flux_mapped_without_its_storage_is_named(tmp_path):
    """The maize example (invented) with a column of NEE (flux plus its storage column)
    added and the storage mapping dropped: the reader names the unread NEE column."""
    config = _maize_copy(tmp_path, flux_as_storage=True)
    text = config.read_text()
    config.write_text("\n".join(line for line in text.splitlines()
                                if not line.startswith("storage =")) + "\n")
    named = _reader_warnings(config)
    assert len(named) == 1 and "'co2_total'" in named[0]
    # the same file with NEE mapped and the turbulent flux unread: nothing named
    config.write_text(config.read_text().replace('nee = "co2_turb"', 'nee = "co2_total"'))
    assert _reader_warnings(config) == []


@pytest.mark.parametrize("share", [0.08, 0.12, 0.16])
def test_the_flux_before_its_density_correction_is_not_named(share):
    """The same flux before its density correction (a share of the open-path term: an
    enclosed-path analyser's damped temperature term) beside NEE mapped rightly: the term
    is rho_c (1 + mu sigma) H / (rho cp T) + mu rho_c E / rho_d (Webb et al. 1980, QJRMS
    106:85-100 (m)), negative by night with H and largest at midday, where a store is
    empty (Finnigan 2006): not a storage course, so not named. Constants: CO2 density
    16.5 mmol m-3 at 400 ppm (a fact of the trade), rho cp 1200 J m-3 K-1 (handbook value
    for air near 20 °C), mu = 1.6 (Mw air / Mw water: 28.96 / 18.02), latent heat of
    vaporisation 2.45 MJ kg-1 (handbook value at 20 °C)."""
    light, nee, _, _ = _tower()
    sensible = 0.4 * light - 50.0 * (light < 5)          # W m-2: H by day, the stable night
    latent = 0.3 * light                                 # W m-2
    density_term = share * (16500.0 * sensible / (1200.0 * 293.15)
                            + 16500.0 * 1.6 * (latent / 2.45e6) / 1.2)
    before = nee - density_term
    assert same_flux(nee, before)      # the same flux in the same unit: the case is live
    assert storage_corrected_beside(nee, light, {"co2_raw": before}, 30, "co2_nee") is None


def test_a_store_vented_through_the_whole_day_is_not_confused_with_a_density_term():
    """The turbulent flux mapped beside NEE stays named when its store vents in the
    morning and the rest of the day is about zero (Finnigan 2006): the new test does not
    lose the mistake it was made for."""
    light, nee, turbulent, _ = _tower(seed=3)
    assert storage_corrected_beside(turbulent, light, {"co2_nee": nee}, 30,
                                    "co2_flux") is not None


def _series(tmp_path, files, program_change=False):
    """The invented tower of :func:`_tower` (90 days, half-hourly) written as `files`
    files of a series (each under :data:`MIN_NIGHTS` nights where `files` is 4), the
    turbulent flux mapped as nee beside the unread NEE; or as one file whose header is
    written again halfway with one more column (a logger program change)."""
    import pandas as pd

    light, nee, turbulent, _ = _tower(days=90, seed=2)
    stamps = pd.date_range("2021-05-01 00:30", periods=light.size, freq="30min")
    table = pd.DataFrame({"stamp": stamps.strftime("%Y-%m-%d %H:%M"),
                          "fc": turbulent.round(3), "sw": light.round(1),
                          "ta": 15.0, "vpd": 0.8, "ust": 0.3, "nee_total": nee.round(3)})
    if program_change:
        half = len(table) // 2
        first = table.iloc[:half].to_csv(index=False)
        second = table.iloc[half:].assign(extra=1.0).to_csv(index=False)
        (tmp_path / "tower_1.csv").write_text(first + second)
    else:
        for number, rows in enumerate(np.array_split(np.arange(len(table)), files)):
            table.iloc[rows].to_csv(tmp_path / f"tower_{number + 1}.csv", index=False)
    config = tmp_path / "site.toml"
    config.write_text('[site]\nname = "Fictional test tower"\nlatitude = 10.0\n'
                      'longitude = 0.0\nutc_offset = 0.0\ncanopy = "tall"\n\n'
                      '[input]\npath = "tower_*.csv"\ntime_column = "stamp"\n'
                      'time_format = "%Y-%m-%d %H:%M"\ntime_marks = "end"\n\n'
                      '[input.columns]\nnee = "fc"\nrg = "sw"\ntair = "ta"\nvpd = "vpd"\n'
                      'ustar = "ust"\n\n[input.units]\nvpd = "kPa"\n')
    return config


@pytest.mark.parametrize("files", [1, 4])
def test_a_series_of_short_files_is_judged_joined(tmp_path, files):
    """Four files of about 22 nights each (under MIN_NIGHTS alone): the mistake is named
    once on the joined records, as in the one file of the same records."""
    named = _reader_warnings(_series(tmp_path, files))
    assert len(named) == 1 and "'nee_total'" in named[0]


def test_a_program_change_names_the_column_once(tmp_path):
    """A file whose logger program changed halfway is read as two parts: one warning for
    the file, not one per part."""
    named = _reader_warnings(_series(tmp_path, 1, program_change=True))
    assert len(named) == 1 and "'nee_total'" in named[0]
