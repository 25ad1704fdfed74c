"""Which night records the nighttime respiration fits use: all of them, or the dark ones.

The night mask (:func:`fluxpart.solar.night_mask`) is measured Rg below
``night_rg_threshold`` (10 W m-2). At high latitude in summer, and at every dawn and
dusk, it holds records with the sun above the horizon: diffuse skylight under that Rg
can hold ~20 µmol m-2 s-1 of PPFD (10 W m-2 of global radiation, about 2 µmol of PAR
photons per joule (m)), enough for leaves above their light compensation point to take
up CO2. Such records are NEE = Reco - GPP with GPP > 0, and a respiration fitted to
them is low. With the sun below the horizon the sky's light falls from about 400 lx
at sunset to about 3 lx at the end of civil twilight (-6°) (m), i.e. below ~8 µmol
m-2 s-1 of PPFD, under the light compensation point of a canopy (common practice;
tens of µmol m-2 s-1). The sun's own horizon (0°), not civil twilight, is therefore
the line: it keeps every record whose light cannot drive uptake, and it removes fewer
records from the short nights where they are scarce.

Where too few such dark records remain (weeks of midnight sun), a window falls back to
all night records, so that it fits exactly as it did before (and the low-light Rref
rule of :func:`fluxpart.partition.nighttime.fit_rref_windows` applies as before).
"""

from __future__ import annotations

import numpy as np

_SECONDS_PER_DAY = 86400.0


def fit_mask(seconds, usable, is_night, sun_up, *, window_days=4.0, min_points=6) -> np.ndarray:
    """Night records the respiration fits use: those with the sun down, where enough.

    Parameters
    ----------
    seconds : numpy.ndarray
        Start of each interval [s] since local noon at or before the first record (the
        nighttime windows' anchor, which no window of whole days splits a night at).
    usable : numpy.ndarray of bool
        Night records a fit could use (measured NEE and temperature).
    is_night : numpy.ndarray of bool
        The night mask (Rg below the night threshold).
    sun_up : numpy.ndarray of bool
        The sun above the horizon for part of the interval (potential radiation above 0).
    window_days : float, optional
        Length of the windows judged, from the anchor [days];
        the Rref windows' 4 days (Reichstein et al. 2005).
    min_points : int, optional
        Fewest usable dark records a window needs to use dark records only; the Rref
        windows' fewest records, 6.

    Returns
    -------
    numpy.ndarray of bool
        Per record: in a window with at least `min_points` usable records with the
        sun down, night records with the sun down; elsewhere every night record.

    References
    ----------
    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration: review and improved algorithm. Global
    Change Biology 11:1424–1439. doi:10.1111/j.1365-2486.2005.001002.x (night records
    and the 4-day windows).
    """
    is_night = np.asarray(is_night, dtype=bool)
    dark = is_night & ~np.asarray(sun_up, dtype=bool)
    length = float(window_days) * _SECONDS_PER_DAY
    window = np.floor(np.asarray(seconds, dtype=float) / length).astype(np.int64)
    counts = np.bincount(window, weights=(np.asarray(usable, dtype=bool) & dark))
    enough = counts[window] >= min_points
    return np.where(enough, dark, is_night)
