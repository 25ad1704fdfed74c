"""Two sites of a network whose input files were swapped, told by their day lengths.

A network manager who copies site configs, or renames two towers' files, can point
tower A's config at tower B's records and B's at A's. Each site's own clock and
latitude checks (:mod:`fluxpart.clock`) name a latitude 10° or more off; two towers
closer than that pass them, while each budget is the other tower's under the wrong
name (round mistakes46: two example towers swapped moved a site's annual NEE by 3.8
times its stated 1 sigma, without a word). Day length fixes the latitude whatever the
clouds: the width of Rg's monthly envelope minus that of the potential radiation stays
nearly constant through the year at the right latitude and swings with the seasons at a
wrong one. Two sites whose Rg each fits the other's latitude far better than its own
are named.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .clock import MIN_DAYLENGTH_SWING, MIN_LATITUDE_MONTHS, monthly_shifts

__all__ = ["MIN_SWAP_GAIN", "daylength_swing", "swapped_pairs"]

#: How many times smaller each site's day-length swing must be at the other's latitude
#: than at its own for the pair to be called swapped [1]; 2, the factor
#: :func:`fluxpart.clock.check_latitude` asks of the best latitude over the configured one.
MIN_SWAP_GAIN = 2.0


def daylength_swing(index, rg, latitude, longitude, utc_offset, interval_minutes) -> float:
    """Standard deviation over the months of Rg's minus the sun's day length [min].

    Parameters
    ----------
    index, rg, latitude, longitude, utc_offset, interval_minutes
        As for :func:`fluxpart.clock.monthly_shifts` (the latitude the sun is computed
        for, which need not be the site's).

    Returns
    -------
    float
        The swing [min]; NaN with fewer than
        :data:`fluxpart.clock.MIN_LATITUDE_MONTHS` months of a sunrise and a sunset.

    References
    ----------
    Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). Crop
    evapotranspiration. FAO Irrigation and Drainage Paper 56, Rome, eq. 34 (day length
    from the sunset hour angle, set by latitude and season).
    """
    months = monthly_shifts(index, rg, latitude, longitude, utc_offset, interval_minutes)
    usable = months[months["used"] & months["sun_sets"]]
    off = (usable["daylength_rg"] - usable["daylength_potential"]).to_numpy(dtype=float)
    off = off[np.isfinite(off)]
    return float(np.std(off)) if off.size >= MIN_LATITUDE_MONTHS else np.nan


def swapped_pairs(records: dict) -> list[tuple]:
    """The pairs of sites whose Rg each fits the other's latitude far better than its own.

    Parameters
    ----------
    records : dict
        Site key -> (index, rg, latitude, longitude, utc_offset, interval_minutes), as
        for :func:`daylength_swing`.

    Returns
    -------
    list of tuple
        ``((first, second), own_first, other_first, own_second, other_second)`` for each
        pair named, the swings [min] of each site's Rg at its own and at the other's
        latitude (its own longitude and UTC offset kept).

    Notes
    -----
    Only a site whose swing at its own latitude exceeds
    :data:`fluxpart.clock.MIN_DAYLENGTH_SWING` can belong to a pair (a site that fits
    its latitude is its own), so a network of sites that fit costs one swing per site.
    A pair is named where each site's swing at the other's latitude is below its own
    divided by :data:`MIN_SWAP_GAIN`: two towers of the same latitude cannot be told
    apart so, nor can one file read by two sites (``batch`` names that by its hash).

    References
    ----------
    Allen et al. (1998), FAO-56, eq. 34 (as :func:`daylength_swing`).
    """
    own = {key: daylength_swing(*record) for key, record in records.items()}
    suspects = sorted(key for key, swing in own.items() if swing > MIN_DAYLENGTH_SWING)
    pairs = []
    for place, first in enumerate(suspects):
        for second in suspects[place + 1:]:
            lat_first, lat_second = records[first][2], records[second][2]
            if lat_first == lat_second:
                continue
            other_first = daylength_swing(*_at(records[first], lat_second))
            other_second = daylength_swing(*_at(records[second], lat_first))
            if (other_first * MIN_SWAP_GAIN < own[first]
                    and other_second * MIN_SWAP_GAIN < own[second]):
                pairs.append(((first, second), own[first], other_first, own[second],
                              other_second))
    return pairs


def _at(record: tuple, latitude: float) -> tuple:
    index, rg, _, longitude, utc_offset, interval = record
    return pd.DatetimeIndex(index), rg, latitude, longitude, utc_offset, interval
