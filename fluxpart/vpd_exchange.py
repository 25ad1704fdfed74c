"""The VPD column exchanged with another column for some months (round layouts28), or in
the whole record's ``[input.columns]`` mapping (round mistakes54).

A logger program changed within the record can write its columns in another order
without a new header line: from some month on the column mapped as VPD holds another
quantity and another mapped column holds the VPD. Where RH and air temperature are
mapped too, they tell which: VPD is e_s(T) (1 - RH / 100) at each moment, so the VPD
column follows the VPD that RH and T imply record for record, and no other quantity
does. VPD and u* exchanged from July had moved the example's annual NEE by -25.4 g C m-2
and were named only by their side effects (a seasonal u* threshold, a "sun-heated
thermometer"): each lies in the other's range and rises by day. The same two columns
exchanged in the mapping itself (``vpd`` and ``ustar`` each given the other's column) moved
the grassland example's annual NEE by -30.2 g C m-2 (-4.4 sigma), GPP and Reco by -3 to
-6 sigma, named only by the same side effects (round mistakes54).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ._groups import group_positions
from .measured_months import month_runs_text
from .record_shifts import _correlation as _paired_correlation
from .variables import vpd_from_rh

__all__ = ["MAPPED_SHARE", "vpd_exchanged_in_months", "vpd_mapped_to_another"]

#: Pearson correlation over a month's records between a VPD column and the VPD that RH
#: and T of the same records imply, above which the column follows it (a probe's own VPD
#: from its RH and T agrees to r above 0.99 (m); a quantity sharing only the diurnal
#: course, u*, Rg, a soil temperature, stays far below; our choice, between the two)
_FOLLOWS = 0.9
#: ... and below which a VPD column does not (our choice: 0.2 below it, so that a VPD
#: of another probe than the RH, r 0.9 to 0.99, is never taken for another quantity,
#: while u* or Rg sharing VPD's diurnal course reach 0.4 to 0.7)
_DOES_NOT_FOLLOW = 0.7
#: Records of a month with VPD, RH, T and the other column present needed to judge it
#: (ten days of half-hours; our choice)
_MONTH_RECORDS = 480
#: Share of the months that judge in which one other mapped column follows the implied VPD
#: (while the VPD column follows it in none) for the mapping to be called exchanged [1];
#: three quarters, our choice: a month whose VPD barely varies (a humid winter) may leave
#: the correlation of the true VPD column short of :data:`_FOLLOWS`
MAPPED_SHARE = 0.75
#: Fewest months that judge for the mapping to be called exchanged (our choice: a season)
_MAPPED_MONTHS = 3


def _correlation(a: np.ndarray, b: np.ndarray) -> float:
    """Pearson correlation of the pairs both present, NaN below :data:`_MONTH_RECORDS`
    (the column checks' sums of products: the same bits on every CPU)."""
    return _paired_correlation(a, b, _MONTH_RECORDS)[0]


def _month_followers(tair, rh, vpd, others: dict, stamps) -> list:
    """Each calendar month that judges: ``(month, r, follower)``, r the VPD column's
    correlation with the VPD that RH and T imply, `follower` the first of `others` whose
    correlation exceeds :data:`_FOLLOWS` where r is below :data:`_DOES_NOT_FOLLOW` (else
    None). A month judges where r is defined (:data:`_MONTH_RECORDS` pairs)."""
    tair = np.asarray(tair, dtype=float)
    implied = vpd_from_rh(np.asarray(rh, dtype=float), tair)
    vpd = np.asarray(vpd, dtype=float)
    months = pd.DatetimeIndex(stamps).to_period("M")
    codes, labels = pd.factorize(months, sort=True)
    others = {name: np.asarray(values, dtype=float) for name, values in others.items()}
    judged = []
    for code, rows in group_positions(codes, where=codes >= 0).items():
        own = _correlation(vpd[rows], implied[rows])
        if not np.isfinite(own):
            continue
        follower = None
        if own < _DOES_NOT_FOLLOW:
            follower = next((name for name, values in others.items()
                             if _correlation(values[rows], implied[rows]) > _FOLLOWS), None)
        judged.append((labels[code], own, follower))
    return judged


def vpd_exchanged_in_months(tair, rh, vpd, others: dict, stamps,
                            columns=None) -> str | None:
    """A message where another column holds the VPD in some months, or None.

    Parameters
    ----------
    tair : array_like
        Air temperature [°C].
    rh : array_like
        Relative humidity [%].
    vpd : array_like
        The column mapped as VPD [hPa].
    others : dict
        Canonical name -> values of the other mapped columns to try (u*, a soil
        temperature, Rg, NEE), in their own units (the correlation needs none).
    stamps : array_like of datetime64
        Interval starts of the records.
    columns : dict, optional
        Canonical name -> file column, to name the columns in the message.

    Returns
    -------
    str or None
        The warning text, naming the months and the other column; None where the VPD
        column follows the implied VPD in every month that can judge, where no month
        can judge, or where the record's other months do not show the VPD column
        following it (then no month is out of step with the rest).

    Notes
    -----
    VPD = e_s(T) (1 - RH / 100) (Campbell & Norman 1998, ch. 3 (m)). A month is named
    where the VPD column's correlation with the implied VPD is below
    :data:`_DOES_NOT_FOLLOW` while another column's is above :data:`_FOLLOWS`, and
    the VPD column follows it (above :data:`_FOLLOWS`) in at least one other month:
    the columns exchanged there. A VPD column that never follows (another probe, a
    wrong mapping) is left to the other checks.

    References
    ----------
    Campbell, G. S. & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
    2nd ed., Springer, ch. 3 (m).
    """
    judged = _month_followers(tair, rh, vpd, others, stamps)
    follows_somewhere = any(own > _FOLLOWS for _, own, _ in judged)
    exchanged = {}
    for label, _, follower in judged:
        if follower is not None:
            exchanged.setdefault(follower, []).append(label)
    if not follows_somewhere or not exchanged:
        return None
    names = {**{"vpd": "vpd", "rh": "rh", "tair": "tair"}, **(columns or {})}
    name, periods = max(exchanged.items(), key=lambda item: len(item[1]))
    other = names.get(name, name)
    # runs of consecutive months, so that March and September are not shown as the run
    # from March to September (review36; as rg_dim's months since the final reread)
    shown = month_runs_text(periods)
    return (f"VPD (column {names['vpd']!r}) does not follow the VPD that RH "
            f"({names['rh']!r}) and air temperature ({names['tair']!r}) imply in "
            f"{len(periods)} month(s) ({shown}), while column {other!r} ({name}) does, "
            f"record for record (correlation above {_FOLLOWS}), and VPD follows it in the "
            "other months: the two columns exchanged there (a logger program changed "
            "within the record without a new header?): exchange them in those months in "
            "a copy of the file")


def vpd_mapped_to_another(tair, rh, vpd, others: dict, stamps, columns=None) -> str | None:
    """A message where ``[input.columns]`` maps VPD's column to another variable, or None.

    Parameters
    ----------
    tair, rh, vpd, others, stamps, columns
        As :func:`vpd_exchanged_in_months`: air temperature [°C], relative humidity [%],
        the column mapped as VPD [hPa], the other mapped columns to try and the records'
        interval starts; the file's column names.

    Returns
    -------
    str or None
        The refusal text, naming both columns and the mapping to write; None where the
        VPD column follows the implied VPD in any month, where fewer than
        :data:`_MAPPED_MONTHS` months judge, or where no single other column follows it
        in :data:`MAPPED_SHARE` of them.

    Notes
    -----
    VPD = e_s(T) (1 - RH / 100) (Campbell & Norman 1998, ch. 3 (m)): a column that
    follows it record for record (correlation above :data:`_FOLLOWS`) month after month
    holds the VPD, whatever it is mapped as; u*, Rg, a soil temperature or NEE share only
    its diurnal course (0.4 to 0.7). Where the column mapped as VPD follows it in no month
    (below :data:`_DOES_NOT_FOLLOW` in every one) and one other mapped column does in
    most, the two columns' names were exchanged in the mapping, and each variable's
    values enter as the other's: the u* filter then screens nights by VPD. The months
    where the VPD column follows in some and not others are
    :func:`vpd_exchanged_in_months`' (a logger program changed within the record).

    References
    ----------
    Campbell, G. S. & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
    2nd ed., Springer, ch. 3 (m).
    """
    judged = _month_followers(tair, rh, vpd, others, stamps)
    if len(judged) < _MAPPED_MONTHS or any(own >= _DOES_NOT_FOLLOW for _, own, _ in judged):
        return None
    followers = [follower for _, _, follower in judged if follower is not None]
    if not followers:
        return None
    name = max(dict.fromkeys(followers), key=followers.count)
    count = followers.count(name)
    if count < MAPPED_SHARE * len(judged):
        return None
    names = {**{"vpd": "vpd", "rh": "rh", "tair": "tair"}, **(columns or {})}
    other = names.get(name, name)
    return (f"[input.columns] vpd = {names['vpd']!r} and {name} = {other!r} look exchanged: "
            f"column {other!r} follows the VPD that RH ({names['rh']!r}) and air temperature "
            f"({names['tair']!r}) imply record for record (correlation above {_FOLLOWS}) in "
            f"{count} of {len(judged)} months, which only a VPD does, while column "
            f"{names['vpd']!r} follows it in none (below {_DOES_NOT_FOLLOW}); map "
            f"vpd = {other!r} and {name} = {names['vpd']!r} (VPD = e_s(T) (1 - RH / 100), "
            "Campbell & Norman 1998)")
