"""RH written as a fraction beside a right VPD column names RH, not the VPD's unit (round
mistakes60).

VPD = e_s(T) (1 - RH / 100) (Campbell & Norman 1998, ch. 3 (m)); e_s is fluxpart's own,
checked against the CRC Handbook in test_variables. INVENTED series: ten warm, humid days
(RH 76-88 %: the deficit some 0.18 of e_s, which read as psi (6.9 kPa) where RH was written
as a fraction beside a VPD in kPa). Values as read, VPD in hPa.
"""
from __future__ import annotations

import numpy as np

from fluxpart.unit_checks import mixup_messages
from fluxpart.variables import saturation_vapour_pressure


def _record():
    count = 48 * 10
    tair = 22.0 + 6.0 * np.sin(np.arange(count) * 2 * np.pi / 48)
    rh = 82.0 - 6.0 * np.sin(np.arange(count) * 2 * np.pi / 48)    # a humid site, as v30
    vpd = saturation_vapour_pressure(tair) * (1 - rh / 100)     # hPa, as read
    return tair, rh, vpd


def test_rh_as_a_fraction_gives_the_vpd_check_no_basis():
    """The reader's own RH check names the fraction (``all ... values are at most 1 %``,
    measured on a clean site-year in ``probe_mistakes60``); the VPD is not refused."""
    tair, rh, vpd = _record()
    columns = {"vpd": "vpd", "tair": "tair", "rh": "rh"}
    named, _ = mixup_messages({"vpd": vpd, "tair": tair, "rh": rh / 100.0},
                              {"vpd": "kPa"}, columns, 30)
    assert "vpd" not in named, named             # it had been named "the file is in psi"


def test_a_vpd_in_the_wrong_unit_beside_rh_in_percent_is_still_named():
    tair, rh, vpd = _record()
    columns = {"vpd": "vpd", "tair": "tair", "rh": "rh"}
    named, _ = mixup_messages({"vpd": vpd / 10.0, "tair": tair, "rh": rh}, {"vpd": "hPa"},
                              columns, 30)
    assert 'vpd = "kPa"' in named["vpd"]
