"""The daytime light response's shape as a stated part (``daytime_curvature = "average"``).

Sources: the standard deviation of a two-point distribution, numpy.std (population
form) of the two values, as the reference; the posterior variance of Bayesian model
averaging, sum_k w_k (X_k - X_avg)^2 (Hoeting et al. 1999 (m)), written out here; the
non-rectangular hyperbola of Johnson & Thornley (1984, eq. 2 (m)) as the planted truth.
Data below are invented known-truth series.
"""

import dataclasses
import re

import numpy as np
import pandas as pd
import pytest
from test_respiration_form import flat_inputs

from fluxpart.config import Config
from fluxpart.errors import ConfigError
from fluxpart.partition.daytime import DaytimeResult
from fluxpart.partition.light_shape import (
    AVERAGE,
    PROFILED_WEIGHT,
    average_shapes,
    central_curvature,
)
from fluxpart.schema import describe
from fluxpart.uncertainty import period_uncertainty
from fluxpart.uncertainty_parts import uncertainty_parts

_G_C_PER_UMOL_HALF_HOUR = 1800 * 12.011e-6     # 30 min x molar mass of carbon [g µmol-1]


def _day(gpp, reco, curvature=0.0):
    parameters = pd.DataFrame({"curvature": [curvature]})
    gpp, reco = np.asarray(gpp, dtype=float), np.asarray(reco, dtype=float)
    return DaytimeResult(gpp=gpp, reco=reco, e0=np.full(gpp.shape, 200.0),
                         parameters=parameters, gpp_before=gpp.copy(), gpp_after=gpp.copy())


def test_average_is_the_midpoint_and_its_part_the_two_point_standard_deviation():
    """Equal weights: the central flux is the mean of the two shapes' fluxes and the
    spread per |ΣΔ| is numpy.std of the two values per |difference| (½); NaN records
    stay NaN, a NaN of the profiled fit shifts nothing."""
    rectangular = _day([0.0, 10.0, 12.0, np.nan], [3.0, 4.0, 5.0, 2.0])
    profiled = _day([0.0, 8.0, np.nan, 1.0], [2.5, 3.0, 4.0, 2.0], curvature=0.62)
    shape = average_shapes(rectangular, profiled)
    assert shape.weight == PROFILED_WEIGHT == 0.5
    assert shape.curvature == 0.62
    central = shape.shifted(rectangular)
    np.testing.assert_allclose(central.gpp[:2], np.mean([[0.0, 10.0], [0.0, 8.0]], axis=0))
    assert central.gpp[2] == 12.0 and np.isnan(central.gpp[3])
    np.testing.assert_allclose(central.reco, [2.75, 3.5, 4.5, 2.0])
    np.testing.assert_allclose(central.gpp_before[:2], central.gpp[:2])
    totals = np.array([rectangular.reco.sum(), profiled.reco.sum()])
    assert shape.spread_factor * abs(totals[1] - totals[0]) == pytest.approx(np.std(totals))
    # the BMA posterior variance written out, at any weight
    other = dataclasses.replace(shape, weight=0.3)
    mean = 0.7 * totals[0] + 0.3 * totals[1]
    assert other.shifted(rectangular).reco.sum() == pytest.approx(mean)
    assert other.spread_factor * abs(totals[1] - totals[0]) == pytest.approx(
        np.sqrt(0.7 * (totals[0] - mean) ** 2 + 0.3 * (totals[1] - mean) ** 2))
    with pytest.raises(ValueError, match="weight"):
        average_shapes(rectangular, profiled, 1.5)


def test_light_shape_part_in_the_daytime_totals_only_and_among_the_daytime_parts():
    """½ |ΣΔ| in carbon for daytime GPP and Reco, in their totals (root sum of squares),
    not in the nighttime ones; the partitioning part counts it as the daytime method's
    own, so with d² = p² it vanishes. Without the shape the columns are not written."""
    plain = flat_inputs()
    n, fluxes = len(plain.fluxes), plain.fluxes
    keys = np.zeros(n, dtype=int)
    without = period_uncertainty(plain, keys, 30).iloc[0]
    assert not [c for c in without.index if "light_shape" in c]
    # the daytime sums 2 x 0.4 x n x factor above the nighttime ones: d equals 2 x the part
    shifted = fluxes.assign(gpp_daytime=1.4, reco_daytime=1.4)
    inputs = dataclasses.replace(plain, fluxes=shifted, shape_gpp_delta=np.full(n, 0.8),
                                 shape_reco_delta=np.full(n, -0.8), shape_spread=0.5)
    out = period_uncertainty(inputs, keys, 30).iloc[0]
    part = 0.5 * 0.8 * n * _G_C_PER_UMOL_HALF_HOUR
    for flux in ("gpp_daytime", "reco_daytime"):
        assert out[f"{flux}_uncertainty_light_shape"] == pytest.approx(part)
    # d = 0.4 n factor = part: max(d² - part², 0) = 0, so no partitioning part is left
    assert out["gpp_uncertainty_partitioning"] == pytest.approx(0.0, abs=1e-9)
    assert without["gpp_uncertainty_partitioning"] == 0.0
    assert out["gpp_daytime_uncertainty_total"] == pytest.approx(part)
    assert out["reco_nighttime_uncertainty_total"] == pytest.approx(0.0, abs=1e-9)
    # the totals' descriptions name the part (review55): the parts they name by column,
    # with the u*, parameter and partitioning parts, give the total back
    for flux in ("gpp_daytime", "reco_daytime"):
        text = describe("annual", f"{flux}_uncertainty_total")[1]
        named = re.findall(r"\(((?:gpp|reco)\w*_uncertainty_\w+)\)", text)
        assert f"{flux}_uncertainty_light_shape" in named
        parts = [f"{flux}_uncertainty_ustar", f"{flux}_uncertainty_parameters",
                 f"{flux.split('_')[0]}_uncertainty_partitioning", *named]
        assert np.sqrt(np.nansum(np.square(out[parts].to_numpy(dtype=float)))) == \
            pytest.approx(out[f"{flux}_uncertainty_total"], rel=1e-12)
    annual = pd.DataFrame([out]).assign(year=2021).set_index("year")
    shown = uncertainty_parts(annual)
    assert shown.loc[(2021, "reco_daytime"), "light shape"] == pytest.approx(part)
    assert np.isnan(shown.loc[(2021, "reco_nighttime"), "light shape"])
    assert "light shape" not in uncertainty_parts(
        pd.DataFrame([without]).assign(year=2021).set_index("year")).columns


def test_setting_accepted_and_the_runs_fit_the_rectangular_shape():
    """``"average"`` is a valid setting; the u* runs fit curvature 0 with it, other
    settings pass through; an unknown word is refused naming the setting."""
    assert Config(daytime_curvature=AVERAGE).daytime_curvature == "average"
    assert central_curvature(AVERAGE) == 0.0
    assert central_curvature("fit") == "fit" and central_curvature(0.4) == 0.4
    with pytest.raises(ConfigError, match="daytime_curvature"):
        Config(daytime_curvature="averaged")


def test_average_that_cannot_profile_says_so(monkeypatch):
    """Where the profiled light response cannot be fitted, ``"average"`` leaves the daytime
    fluxes rectangular without their light-shape part; the run said nothing of it
    (review55), a warning now names the setting, the reason and the missing part. Other
    settings fit nothing more and say nothing."""
    from fluxpart import central_run
    from fluxpart.errors import InsufficientDataError
    from fluxpart.method_failure import nan_nighttime
    from fluxpart.ustar_runs import RunOutcome

    def no_profile(*args, **kwargs):
        raise InsufficientDataError("no light-response window with a profiled curvature")

    monkeypatch.setattr(central_run, "fit_daytime", no_profile)
    monkeypatch.setattr(central_run, "respiration_temperature", lambda *args, **kwargs: None)
    night = dataclasses.replace(nan_nighttime(2, "tair"), e0_annual=pd.DataFrame({"e0": [200.0]}))
    central = RunOutcome(None, np.zeros(2), None, night, _day([1.0, 2.0], [1.0, 1.0]), None)
    arguments = (None, None, None, central, np.zeros(2, dtype=bool), "tair", 0)
    shape, note = central_run.averaged_shape(*arguments, Config(daytime_curvature=AVERAGE))
    assert shape is None
    assert note.startswith("daytime partitioning: daytime_curvature = \"average\"")
    assert "no light-response window with a profiled curvature" in note
    assert "no light-shape part" in note
    assert central_run.averaged_shape(*arguments, Config()) == (None, "")
