"""Agreement of the two partitioning methods (daytime vs nighttime GPP and Reco).

The nighttime (Reichstein et al. 2005) and daytime (Lasslop et al. 2010) methods
rest on different data (night NEE vs day NEE) and assumptions; their difference
is one part of the uncertainty of GPP and Reco, and a large difference is a sign
that one of them is not fit for the site-year.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["disagreements", "method_agreement"]

_FLUXES = ("gpp", "reco")
#: How the messages name each flux, as the README, the report and the tables' descriptions do.
_LABELS = {"gpp": "GPP", "reco": "Reco"}


def method_agreement(budget: pd.DataFrame, margin: float = 0.15) -> pd.DataFrame:
    """Add the daytime-minus-nighttime differences to a budget table.

    Parameters
    ----------
    budget : pandas.DataFrame
        A daily, monthly or annual budget with ``gpp_nighttime``, ``gpp_daytime``,
        ``reco_nighttime`` and ``reco_daytime`` [g C m-2 per period].
    margin : float, optional
        Largest accepted relative difference ``|day - night| / mean(day, night)``
        [1]; default 0.15 (see :class:`fluxpart.Config` ``agreement_margin``).

    Returns
    -------
    pandas.DataFrame
        A copy with ``gpp_method_difference`` and ``reco_method_difference``
        [g C m-2] (daytime - nighttime), ``gpp_relative_difference`` and
        ``reco_relative_difference`` [1], and ``methods_agree`` (bool: both relative
        differences within `margin`; False where either is undefined).

    References
    ----------
    Lasslop, G. et al. (2010). Separation of net ecosystem exchange into
    assimilation and respiration using a light response curve approach: critical
    issues and global evaluation. Global Change Biology 16:187–208.
    doi:10.1111/j.1365-2486.2009.02041.x
    """
    out = budget.copy()
    agree = np.ones(len(out), dtype=bool)
    for flux in _FLUXES:
        day = out[f"{flux}_daytime"].to_numpy(dtype=float)
        night = out[f"{flux}_nighttime"].to_numpy(dtype=float)
        difference = day - night
        mean = 0.5 * (day + night)
        with np.errstate(divide="ignore", invalid="ignore"):
            relative = np.where(np.abs(mean) > 0, difference / np.abs(mean), np.nan)
        out[f"{flux}_method_difference"] = difference
        out[f"{flux}_relative_difference"] = relative
        agree &= np.abs(relative) <= margin
    out["methods_agree"] = agree
    return out


#: Fewest days of records a budget year needs for its two methods to be compared: the
#: methods' windows (4-day daytime windows, 15-day E0 windows) need weeks of data, and a
#: relative difference of sums over hours or days (a file that ends a few records into
#: the next year) is noise. A month, our choice.
MIN_COMPARED_DAYS = 30.0


def disagreements(annual: pd.DataFrame, margin: float) -> list[str]:
    """Warnings for the years whose two methods differ by more than `margin`, or that one
    method left without an annual sum of a flux the other has.

    A year with ``records`` and ``records_expected`` columns holding fewer than
    :data:`MIN_COMPARED_DAYS` days of records is not compared (its partial-year warning
    says what it is).
    """
    messages = []
    for year, row in annual.iterrows():
        relative = {flux: row[f"{flux}_relative_difference"] for flux in _FLUXES}
        compared = [flux for flux in _FLUXES if np.isfinite(relative[flux])]
        if row["methods_agree"] or not compared or _too_short(row):
            continue    # agreeing, or no sums to compare (a year without data, a stub)
        missing = [_LABELS[flux] for flux in _FLUXES if flux not in compared]
        beyond = [flux for flux in compared if abs(relative[flux]) > margin]
        if beyond:
            parts = [f"{_LABELS[flux]} daytime - nighttime = "
                     f"{row[f'{flux}_method_difference']:+.0f} g C m-2 "
                     f"({100 * relative[flux]:+.0f} %)"
                     for flux in compared]
            parts += [f"{name} not compared (a method gave no annual sum)" for name in missing]
            messages.append(f"{year}: the daytime and nighttime partitionings disagree by more "
                            f"than agreement_margin = {100 * margin:.0f} %: {'; '.join(parts)}")
        else:
            messages.append(f"{year}: the daytime and nighttime partitionings could not be "
                            f"compared for {' and '.join(missing)}: a method gave no annual sum")
    return messages


def _too_short(row) -> bool:
    """Whether a budget year holds fewer than MIN_COMPARED_DAYS days of records."""
    if "records" not in row or "records_expected" not in row:
        return False
    expected = float(row["records_expected"])
    if not np.isfinite(expected) or expected <= 0:
        return False
    # records_expected covers the whole budget year: about 365.25 days of records
    return float(row["records"]) < expected * MIN_COMPARED_DAYS / 365.25
