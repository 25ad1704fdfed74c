"""A VPD column that reads 0 in sunshine month after month (round mistakes42).

Air in bright sunshine is not saturated: the sun heats the surface and the air above it,
so fog and dew dissipate within hours of sunrise, and a shower falls under cloud. With
global radiation Rg of 300 W m-2 or more and the air above 10 degC, the vapour pressure
deficit VPD stays above 0.1 hPa (relative humidity below 99 %) in nearly every record,
in the humid tropics too, where the midday deficit is several hPa (Monteith & Unsworth
2013 (m)). A column whose values are 0 in most such records of a month is no VPD: a
rain gauge's column mapped as ``vpd`` (0 in dry records, of VPD's size in wet ones), a
humidity sensor lost and written as 0, or a VPD derived from an RH column that stays at
100 % (a wet or failed sensor). That passes every range and unit check, and the light
response reads those records as free of any VPD limitation. On the invented grassland
example a rain gauge's column mapped as VPD (kPa) moved daytime GPP by +14.5 and Reco by
+25.1 g C m-2 (1-sigma 12.3 and 19.7), VPD written as 0 from 1 June to mid-July by
+6.7 and +11.9, without a word.

References
----------
Monteith, J. L., & Unsworth, M. H. (2013). Principles of Environmental Physics, 4th ed.
Academic Press (m)

Lasslop, G. et al. (2010). Separation of net ecosystem exchange into assimilation and
respiration using a light response curve approach: critical issues and global
evaluation. Global Change Biology 16, 187-208. doi:10.1111/j.1365-2486.2009.02041.x
"""
from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["STAGE", "SUNLIT_RG", "WARM_TAIR", "ZERO_SHARE", "ZERO_VPD",
           "vpd_zero_in_sunshine"]

#: The stage named in the preflight finding.
STAGE = "input (vpd zeros)"

#: Global radiation at and above which a record is in bright sunshine [W m-2]: about
#: 0.3-0.4 of the clear-sky noon radiation of mid-latitude summer (our choice; the
#: day-sign check's bright records use the same bound).
SUNLIT_RG = 300.0
#: Air temperature at and above which a sunlit record is judged [degC] (our choice: a
#: cold, snow-covered surface can hold the air near saturation under a low sun).
WARM_TAIR = 10.0
#: VPD at or below which a record reads as saturated [hPa]: relative humidity of 99 %
#: or more at 10 degC (saturation vapour pressure 12.3 hPa, Magnus formula (m)), within
#: a humidity sensor's accuracy of 100 % and below any deficit of sunlit air.
ZERO_VPD = 0.1
#: Share of a month's sunlit, warm records at or below :data:`ZERO_VPD` that names the
#: month [1]. Our choice: most records, far above any month of fog under sunshine.
ZERO_SHARE = 0.5
#: Fewest sunlit, warm records with VPD for a month to be judged (a day's worth of
#: half-hours; our choice).
_MIN_RECORDS = 48


def vpd_zero_in_sunshine(vpd, rg, tair, index, names=None) -> str | None:
    """A message naming the months whose VPD reads 0 in most sunlit, warm records, or None.

    Parameters
    ----------
    vpd : array_like
        Vapour pressure deficit of each record [hPa], NaN where missing.
    rg : array_like
        Global radiation [W m-2].
    tair : array_like
        Air temperature [degC].
    index : pandas.DatetimeIndex
        The records' stamps (calendar months).
    names : dict, optional
        Canonical name -> file column (or how it was derived), to name it in the message.

    Returns
    -------
    str or None
        The warning text, or None where no month with :data:`_MIN_RECORDS` or more
        records of Rg >= :data:`SUNLIT_RG` and tair >= :data:`WARM_TAIR` has VPD <=
        :data:`ZERO_VPD` in more than :data:`ZERO_SHARE` of them.

    Notes
    -----
    The daytime partitioning reduces the light response's saturation by VPD above a
    threshold (Lasslop et al. 2010); VPD of 0 in sunshine removes that limitation from
    those records, so the fitted capacity and the respiration with it drift.

    References
    ----------
    Lasslop, G. et al. (2010). Global Change Biology 16, 187-208.
    doi:10.1111/j.1365-2486.2009.02041.x
    """
    vpd = np.asarray(vpd, dtype=float)
    rg = np.asarray(rg, dtype=float)
    tair = np.asarray(tair, dtype=float)
    if not (vpd.shape == rg.shape == tair.shape == (len(index),)) or vpd.size == 0:
        return None
    with np.errstate(invalid="ignore"):
        judged = (rg >= SUNLIT_RG) & (tair >= WARM_TAIR) & np.isfinite(vpd)
        zero = judged & (vpd <= ZERO_VPD)
    months = pd.DatetimeIndex(index).to_period("M")
    table = pd.DataFrame({"judged": judged, "zero": zero}).groupby(months).sum()
    table = table[table["judged"] >= _MIN_RECORDS]
    named = table[table["zero"] > ZERO_SHARE * table["judged"]]
    if named.empty:
        return None
    source = (names or {}).get("vpd", "vpd")
    column = (f"VPD ({source})" if source.startswith("derived")
              else f"vpd (column {source!r})")
    listed = ", ".join(f"{month} ({100 * row.zero / row.judged:.0f} %)"
                       for month, row in named.head(6).iterrows())
    more = f" and {len(named) - 6} more" if len(named) > 6 else ""
    return (f"{column} reads {ZERO_VPD:g} hPa or less in most records with Rg of "
            f"{SUNLIT_RG:g} W m-2 or more and the air at {WARM_TAIR:g} °C or warmer in "
            f"{len(named)} month(s): {listed}{more}. Air in bright sunshine is not "
            "saturated (fog and dew dissipate once the sun heats the ground), so these "
            "zeros are no deficit: a rain gauge's column mapped as vpd, a humidity sensor "
            "lost and written as 0, or a relative humidity stuck at 100 %. The daytime "
            "partitioning would read those records as free of any VPD limitation; map "
            "the VPD column (or blank the zeros in a copy of the file)")
