"""Sites of a network holding the same measured NEE (round mistakes27)."""
import json

import numpy as np
import pandas as pd

from fluxpart import batch, demo
from fluxpart.shared_records import MIN_SHARED_DAYS, day_keys, shared_days

# mass of a mole of CO2 [g mol-1] (IUPAC standard atomic weights, C 12.011, O 15.999 (m))
CO2_MOLAR_MASS = 44.009


def _tower(seed=0):
    frame = demo.site_year(seed)[0]
    return frame.index, frame["nee"].to_numpy(dtype=float)


def _twin(nee, seed):
    """A second tower over the same field: the same flux with its own random error,
    Laplace-distributed with sigma = 0.6 + 0.2 |F| µmol m-2 s-1 (Richardson et al. 2006,
    Agric. For. Meteorol. 136:1-18, the form of their fit (m))."""
    rng = np.random.default_rng(seed)
    sigma = 0.6 + 0.2 * np.abs(nee)
    return nee + rng.laplace(0.0, sigma / np.sqrt(2.0))


def test_a_copy_in_another_unit_is_named_a_twin_tower_is_not():
    """Known-truth recovery on the invented Quillmoor site: its records converted to
    mg CO2 m-2 s-1 and back (a re-export) share every day; a twin tower with its own
    random error (Richardson et al. 2006 (m)) shares none, even written to whole
    µmol m-2 s-1."""
    index, nee = _tower()
    mg = nee * CO2_MOLAR_MASS / 1000.0                 # µmol -> mg CO2 (common practice)
    back = mg / CO2_MOLAR_MASS * 1000.0
    twin = _twin(nee, 1)
    sites = {"east": day_keys(index, nee), "east_reexport": day_keys(index, back),
             "west": day_keys(index, twin)}
    pairs = shared_days(sites)
    assert [pair for pair, *_ in pairs] == [("east", "east_reexport")]
    assert pairs[0][1] > 300                           # nearly every day of the year
    whole = {name: day_keys(index, np.round(values, 0))
             for name, values in (("east", nee), ("west", twin))}
    assert shared_days(whole) == []


def test_a_short_overlap_and_flat_winter_days_are_quiet():
    """One tower's record split into two configs sharing their boundary days is not
    named, nor days of one or two values (a winter flux near 0 written to whole
    µmol m-2 s-1 reads alike at any tower); a week of copied days is."""
    index, nee = _tower()
    day = pd.Timedelta(days=1)
    first = index < index[0] + 200 * day
    second = index >= index[0] + (200 - MIN_SHARED_DAYS + 1) * day
    split = {"a": day_keys(index[first], nee[first]),
             "b": day_keys(index[second], nee[second])}
    assert shared_days(split) == []
    flat = np.where(np.isfinite(nee), np.where(np.arange(nee.size) % 3 == 0, 1.0, 0.0), np.nan)
    assert day_keys(index, flat) == {}
    week = index < index[0] + MIN_SHARED_DAYS * day
    other = _twin(nee, 2)
    pasted = np.where(week, nee, other)
    assert shared_days({"a": day_keys(index, nee), "b": day_keys(index, pasted)})[0][1] \
        == MIN_SHARED_DAYS


def test_batch_names_two_sites_of_the_same_records(tmp_path):
    """A batch whose second tower's folder holds the first tower's file saved again (other
    bytes, the same records): named with both keys, and not as two towers under one
    name; sites of the same input file are left to the same-input warning; a failed site
    is skipped."""
    index, nee = _tower()

    def folder(key, values, sha):
        directory = tmp_path / key
        directory.mkdir()
        pd.DataFrame({"time": index, "nee": values}).to_parquet(
            directory / "timeseries.parquet")
        (directory / "manifest.json").write_text(json.dumps(
            {"site": {"name": "Quillmoor east meadow"},
             "provenance": {"input": {"path": "a.csv", "sha256": sha}}}))
        return batch.SiteOutcome(key=key, config=f"{key}.toml", directory=str(directory),
                                 status="written")

    written = np.round(nee, 3)                   # the file's digits
    single = written.astype(np.float32).astype(float)   # saved again in single precision
    outcomes = [folder("east", written, "aa"), folder("north", single, "bb"),
                folder("west", _twin(nee, 3), "cc"),
                batch.SiteOutcome(key="broken", config="broken.toml",
                                  directory=str(tmp_path / "none"), status="failed")]
    warnings = batch.same_records_sites(outcomes)
    assert len(warnings) == 1
    assert warnings[0].startswith("sites 'east', 'north' hold the same measured NEE")
    assert "different input files" in warnings[0] and "[input] path" in warnings[0]
    # under one [site] name the pair is one tower's records, not "different towers"
    pair = outcomes[:2]
    assert len(batch.same_name_sites(pair)) == 1
    assert batch.same_name_sites(pair, {frozenset(("east", "north"))}) == []
    # a folder whose table lacks the column (or is unreadable) is left out, not an error
    odd = folder("odd", nee, "ee")
    pd.DataFrame({"time": index}).to_parquet(tmp_path / "odd" / "timeseries.parquet")
    assert len(batch.same_records_sites(outcomes + [odd])) == 1
    same_file = [folder("south", nee, "dd"), folder("south_copy", nee, "dd")]
    assert batch.same_records_sites(same_file) == []
    assert len(batch.same_input_sites(same_file)) == 1
