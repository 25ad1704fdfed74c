"""Review round review37: findings in this session's merges (layouts31's
``[input.missing_by_variable]`` and its refusal message)."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from fluxpart.code_values import ordinary_code_message
from fluxpart.errors import ConfigError
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.variables import PPFD_PER_RG

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)


def _ppfd_file(path, days=30):
    """Invented half-hourly records (30 days) whose radiation column is PPFD, written 0
    on every record with the sun wholly down (a quantum sensor reads no photons in the
    dark, a fact of the trade; a logger clamping negative offsets writes exactly 0)."""
    ends = pd.date_range("2021-05-01 00:30", periods=48 * days, freq="30min")
    hour = (ends - pd.Timedelta(minutes=15)).hour + 0.25
    day = np.clip(np.sin((hour - 5) / 15 * np.pi), 0, None)        # sun up 05-20 h
    ppfd = np.round(1600 * day, 1)
    rng = np.random.default_rng(37)
    fc = np.round(2.0 - ppfd / 200 + rng.normal(0, 0.4, ends.size), 3)
    ta = np.round(15 + 5 * np.sin((hour - 9) / 12 * np.pi), 2)
    lines = ["stamp,co2_flux,us,par,t_air,vpd"] + [
        f"{e:%Y-%m-%d %H:%M},{f:g},0.3,{p:g},{t:g},{5 + t / 3:.2f}"
        for e, f, p, t in zip(ends, fc, ppfd, ta, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path, ppfd


def _read(path, **options):
    settings = {"columns": {"nee": "co2_flux", "ustar": "us", "ppfd": "par", "tair": "t_air",
                            "vpd": "vpd"},
                "time_column": "stamp", "time_format": "%Y-%m-%d %H:%M", "time_marks": "end",
                "units": {"vpd": "hPa"}, "site": SITE} | options
    return read_table(path, **settings)


def test_codes_for_a_variable_no_column_is_mapped_to_are_refused(tmp_path):
    """Before: ``rg = [0]`` in [input.missing_by_variable] beside a radiation column
    mapped as ppfd applied to no column, without a word (the night zeros the user meant
    to blank stayed). Now refused naming the table, the variable and the mapped name;
    ``ppfd = [0]`` blanks exactly the zeros (known truth of the invented file)."""
    path, ppfd = _ppfd_file(tmp_path / "p.csv")
    with pytest.raises(ConfigError) as caught:
        _read(path, missing_by_variable={"rg": [0]})
    message = str(caught.value)
    assert message.startswith("[input.missing_by_variable] rg: no column is mapped to rg")
    assert "mapped as ppfd: write ppfd = [0]" in message
    with pytest.raises(ConfigError, match=r"missing_by_variable\] tsoil: no column"):
        _read(path, missing_by_variable={"tsoil": [-99]})
    frame, _ = _read(path, missing_by_variable={"ppfd": [0]})
    assert int(frame["rg"].isna().sum()) == int((ppfd == 0).sum()) > 0
    # the rest converted as PPFD / PPFD_PER_RG (the reader's stated conversion)
    kept = ppfd != 0
    assert np.allclose(frame["rg"].to_numpy()[kept], ppfd[kept] / PPFD_PER_RG)


def test_night_zeros_in_files_of_a_day_each_are_judged_over_all_the_files(tmp_path):
    """Before: a logger writing one file a day (48 records) with PPFD 0 at night and
    ``missing = [-9999, 0]``: each file's 18 night zeros were under the 48 cells judged,
    so every night's radiation was blanked without a word, while the same records in one
    file were refused. Now the files' cells are judged together (known truth: the zeros
    are dark records of the invented file, a quantum sensor's reading in the dark)."""
    path, ppfd = _ppfd_file(tmp_path / "whole.csv")
    lines = path.read_text(encoding="utf-8").splitlines()
    days = []
    for day in range(30):
        days.append(tmp_path / f"day{day:02d}.csv")
        days[-1].write_text("\n".join([lines[0]] + lines[1 + 48 * day: 1 + 48 * (day + 1)])
                            + "\n", encoding="utf-8")
    zeros_a_day = int((ppfd[:48] == 0).sum())
    assert 0 < zeros_a_day < 48 <= int((ppfd == 0).sum())
    one, _ = _read(days[0], missing=[-9999, 0])            # a file alone: too few cells
    assert int(one["rg"].isna().sum()) == zeros_a_day
    with pytest.raises(ConfigError) as caught:
        _read(days, missing=[-9999, 0])
    message = str(caught.value)
    assert "column 'par' (ppfd)" in message and "day00.csv and 29 more file(s)" in message
    assert f"{int((ppfd == 0).sum())} of its {ppfd.size} values are 0" in message
    with pytest.raises(ConfigError, match=r"column 'par' \(ppfd\)"):
        _read(path, missing=[-9999, 0])                     # as the one file
    kept, _ = _read(days, missing=[-9999], missing_by_variable={"nee": [0]})
    assert not kept["rg"].isna().any()


def test_the_zero_code_hint_of_nee_gives_the_code_of_nee_alone_first(tmp_path):
    """Before: NEE written 0 where missing was told "add 0 to [input] missing" first,
    which blanks 0 in every column, also where it is a reading the ordinary-code rule
    does not judge: VPD at saturation (VPD = es - e is 0 at 100 % relative humidity, its
    definition), a column's lower bound. Now ``nee = [0]`` in
    [input.missing_by_variable] comes first and the global code names what it blanks;
    the first fix keeps the VPD zeros (known truth of the invented file), the second
    loses them."""
    path, _ = _ppfd_file(tmp_path / "z.csv", days=60)
    lines = path.read_text(encoding="utf-8").splitlines()
    body = [line.split(",") for line in lines[1:]]
    for number, fields in enumerate(body):
        if number % 7 == 0:
            fields[1] = "0"                      # NEE's gaps written 0
        if number % 48 in (2, 3, 4):
            fields[5] = "0.00"                   # a saturated night: VPD 0
        if fields[3] == "0":
            fields[3] = "0.3"                    # a quantum sensor's dark offset, not 0
    path.write_text("\n".join([lines[0]] + [",".join(f) for f in body]) + "\n",
                    encoding="utf-8")
    with pytest.raises(Exception) as caught:
        _read(path)
    message = str(caught.value)
    first, second = message.index("nee = [0]"), message.index("add 0 to [input] missing")
    assert first < second and "VPD at saturation" in message[second:]
    kept, _ = _read(path, missing_by_variable={"nee": [0]})
    saturated = np.arange(len(body)) % 48
    saturated = np.isin(saturated, (2, 3, 4)) & (np.arange(len(body)) % 7 != 0)
    assert (kept["vpd"].to_numpy()[saturated] == 0).all()
    blanked, _ = _read(path, missing=[-9999, 0])
    assert blanked["vpd"].isna().to_numpy()[saturated].all()


def test_a_refused_nee_column_is_not_offered_its_own_code_as_the_other_columns_fix():
    """Before: an NEE column whose 0 is an ordinary value (values to 0.1 µmol m-2 s-1
    near 0, 0.0 as frequent as ±0.1) was told "if 0 means no value only in other
    columns, move it to [input.missing_by_variable] for those (e.g. nee = [0])", the
    setting that blanks NEE's own readings. Now the example names another column.
    Invented values: a continuous variable of smooth density rounded to 0.1 puts about
    as many values on 0 as on ±0.1 (a fact of rounding), which the test checks."""
    values = np.round(np.random.default_rng(3).normal(0.0, 0.5, 2000), 1)
    zeros = int((values == 0).sum())
    assert zeros >= 100 and zeros > 0.05 * values.size
    assert 0.7 < zeros / (0.5 * int((np.abs(values) == 0.1).sum())) < 1.3
    message = ordinary_code_message("nee", "co2_flux", 0.0, values)
    assert message is not None and "column 'co2_flux' (nee)" in message
    assert "(e.g. nee = [0])" not in message
    assert "(e.g. rg = [0])" in message and "add nee = [0]" in message
    # any other column keeps the NEE example
    other = ordinary_code_message("tair", "t_air", 0.0, values)
    assert "(e.g. nee = [0])" in other and "add tair = [0]" in other


# ------------------------------------------------ nee_limits on values of a coarse grid
#: Molar mass of CO2 [g mol-1] (IUPAC standard atomic weights: C 12.011, O 15.999 (m)).
_CO2_G_PER_MOL = 44.01


def _as_mg_co2_to_two_decimals(nee):
    """NEE [µmol m-2 s-1] written in mg CO2 m-2 s-1 to 0.01 and read back: steps of
    0.01 / 0.04401 = 0.227 µmol m-2 s-1, which do not divide the 0.5 band."""
    mg_per_umol = _CO2_G_PER_MOL * 1e-3
    return np.round(np.asarray(nee) * mg_per_umol, 2) / mg_per_umol


def test_values_on_a_grid_that_does_not_divide_the_band_are_not_named_as_cut():
    """Before: a clean generated year (``scenarios.generate(22)``, invented) written in
    mg CO2 m-2 s-1 to two decimals was named "ends abruptly in 2019-12 above 2.045
    (52 values within 0.5 below it, 2 within 0.5 above)": the band inside held three
    of the grid's levels and the band beyond two. Now bands of whole steps; a real cut
    of the same values (below their 5th percentile removed, known truth) is still
    named, and values of 0.001 keep the 0.5 and 2 µmol m-2 s-1 widths."""
    from fluxpart import nee_limits, scenarios
    from fluxpart.nee_limits import BAND, FAR, cut_nee

    site_year = scenarios.generate(22)
    nee = site_year.frame["nee"].to_numpy(dtype=float)
    coarse = _as_mg_co2_to_two_decimals(nee)
    steps = np.diff(np.unique(coarse[np.isfinite(coarse)]))
    assert np.isclose(np.median(steps), 0.01 / (_CO2_G_PER_MOL * 1e-3), rtol=1e-6)
    assert cut_nee(coarse, site_year.frame.index) is None
    level = np.nanpercentile(coarse, 5)
    cut = np.where(coarse < level, np.nan, coarse)
    message = cut_nee(cut, site_year.frame.index)
    assert message is not None and "ends abruptly" in message and "below" in message
    widths = nee_limits._widths
    assert widths(0.001) == (BAND, FAR, 0.0) and widths(0.05) == (BAND, FAR, 0.0)
    band, far, offset = widths(0.01 / (_CO2_G_PER_MOL * 1e-3))
    assert np.isclose(band, 2 * 0.227, atol=1e-3) and np.isclose(far, 8 * 0.227, atol=1e-2)
    assert 0 < offset < band / 2


def test_the_methods_name_the_donor_rule_the_result_was_made_with():
    """Before: the report's methods named no donor rule, so a result of
    ``gapfill_donors = "dark_first"`` (dark donors first for night gaps in darkness, not
    the default) read as one of the default. Now the gap-filling item says which records
    filled a gap, citing Falge et al. (2001, Agric. For. Meteorol. 107:43-69: day and
    night filled separately) or Reichstein et al. (2005, the single rule), and a config
    without the setting is told nothing."""
    from fluxpart import report

    def gap_filling(config):
        listed, cited = report._methods(config, False)
        item = next(item for item in listed.split("<li>") if item.startswith("Gap filling"))
        return item, cited

    dark, cited = gap_filling({"gapfill_donors": "dark_first"})
    assert "sun below the horizon took night records with the sun below" in dark
    assert "Falge et al. 2001" in dark and "falge2001" in cited
    default, cited = gap_filling({"gapfill_donors": "separate_day_night"})
    assert "Night gaps of NEE took night records" in default
    assert "sun below the horizon" not in default and "falge2001" in cited
    single, cited = gap_filling({"gapfill_donors": "similar_conditions_only"})
    assert "Any record within the tolerances" in single and "falge2001" not in cited
    older, cited = gap_filling({})
    assert "Night gaps of NEE" not in older and "Any record" not in older
