"""A VPD computed from RH with the soil temperature instead of the air's (round polish48).

VPD = e_s(T) (1 - RH / 100) holds at one moment with the temperature T of the air whose
humidity was measured (Campbell & Norman 1998, ch. 3 (m)), so a VPD column and the RH
column imply the temperature it was computed with: the inverse of the Magnus form
(:func:`~fluxpart.variables.saturation_temperature`). A processing step that took the
soil temperature for T writes a VPD that passes every range and unit check, wrong by day
and by night, since the soil's temperature swings less over the day than the air's
(on the example, soil at 5 cm: 2.8 K cooler than the air in the median sunlit record,
3.0 K warmer in the dark). On the invented grassland example (soil at 5 cm) it moved daytime
Reco by +18.5 g C m-2 (about its 1-sigma) and was named only as a thermometer heated by
the sun (round mistakes42), the air thermometer blamed for the humidity column's fault.

Where the soil temperature is mapped, the data tell the two apart: the implied
temperature then follows the soil column within the rounding of the VPD column (0.0006 K
in the median on the example, written in kPa with four decimals), while a humidity
probe's own VPD implies the air temperature within a few tenths of a K and lies as far
from the soil's as the air does (2.8 K on the example). A VPD computed with a soil
temperature that is not mapped (another depth) cannot be told from a sun-heated
thermometer; the sun-heated check's message names both causes
(:func:`fluxpart.column_faults.sun_heated_tair`).

References
----------
Campbell, G. S., & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
2nd ed. Springer, ch. 3 (m).

Alduchov, O. A. & Eskridge, R. E. (1996). Improved Magnus form approximation of
saturation vapor pressure. Journal of Applied Meteorology 35:601-609.
"""
from __future__ import annotations

import numpy as np

from .variables import saturation_temperature

__all__ = ["STAGE", "vpd_from_soil_temperature"]

#: The stage named in the preflight finding.
STAGE = "input (vpd from tsoil)"

#: Highest RH [%] of a record judged: nearer saturation, 1 - RH / 100 is small and the
#: VPD column's rounding moves the implied temperature by tenths of a K (the sun-heated
#: check's bound, :data:`fluxpart.column_faults._SUNLIT_MAX_RH`).
_MAX_RH = 90.0
#: Records with VPD, RH, tair and tsoil needed to judge (the sun-heated check's count).
_MIN_RECORDS = 200
#: Largest median |implied temperature - tsoil| [K] of a VPD computed with tsoil: the
#: rounding of a VPD written in hPa with one decimal at RH up to 90 % moves the implied
#: temperature by up to about 0.5 K, at drier records by less (our choice).
_FOLLOWS_SOIL = 0.5
#: Smallest median |tair - tsoil| [K] over the records judged: nearer, a probe's own VPD
#: (within a few tenths of a K of the air, Lin et al. 2001 (m)) could follow the soil
#: too, and one sensor mapped twice is named by another check (our choice, three times
#: :data:`_FOLLOWS_SOIL`).
_SOIL_APART = 1.5


def vpd_from_soil_temperature(tair, rh, vpd, tsoil, columns=None) -> str | None:
    """A message where the VPD column was computed with the soil temperature, or None.

    Parameters
    ----------
    tair : array_like
        The column mapped as air temperature [°C].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        The column mapped as VPD [hPa].
    tsoil : array_like
        The column mapped as soil temperature [°C].
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text; None where fewer than :data:`_MIN_RECORDS` records (RH from 1
        to :data:`_MAX_RH` %, VPD above 0, all four present) can judge, where the median
        |tair - tsoil| over them is below :data:`_SOIL_APART` (the two cannot be told
        apart), or where the temperature VPD and RH imply lies a median
        :data:`_FOLLOWS_SOIL` K or more from tsoil, or no nearer to it than to tair
        (a VPD of the air, or of a temperature not mapped).
    """
    tair, rh, vpd, tsoil = (np.asarray(v, dtype=float) for v in (tair, rh, vpd, tsoil))
    if not tair.size == rh.size == vpd.size == tsoil.size:
        return None
    with np.errstate(invalid="ignore", divide="ignore"):
        usable = (np.isfinite(tair) & np.isfinite(tsoil) & np.isfinite(rh)
                  & np.isfinite(vpd) & (rh >= 1.0) & (rh <= _MAX_RH) & (vpd > 0))
        implied = saturation_temperature(np.where(usable, vpd / (1.0 - rh / 100.0), np.nan))
        usable &= np.isfinite(implied)
    count = int(usable.sum())
    if count < _MIN_RECORDS:
        return None
    apart = float(np.median(np.abs(tair[usable] - tsoil[usable])))
    from_soil = float(np.median(np.abs(implied[usable] - tsoil[usable])))
    from_air = float(np.median(np.abs(implied[usable] - tair[usable])))
    if apart < _SOIL_APART or not (from_soil < _FOLLOWS_SOIL and from_soil < from_air):
        return None
    names = columns or {}
    return (f"vpd (column {names.get('vpd', 'vpd')!r}) was computed with the soil "
            f"temperature: the temperature that it and RH ({names.get('rh', 'rh')!r}) "
            f"imply lies a median {from_soil:.2f} K from tsoil "
            f"({names.get('tsoil', 'tsoil')!r}) and {from_air:.1f} K from the air "
            f"temperature ({names.get('tair', 'tair')!r}) in {count} records; a soil's "
            "temperature swings less over the day than the air's, so this VPD is wrong "
            "by day and by night and the light response's VPD limit is misread; map a VPD "
            "computed with the air temperature, or leave vpd unmapped so that it is "
            "derived from rh and tair")
