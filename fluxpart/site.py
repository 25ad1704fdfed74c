"""The measurement site: name and location."""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

from .errors import ConfigError

__all__ = ["Site"]


@dataclass(frozen=True)
class Site:
    """A flux-tower site.

    Parameters
    ----------
    name : str
        Site name, free text.
    latitude : float
        Geographic latitude, north positive [degrees], within [-90, 90].
    longitude : float
        Geographic longitude, east positive [degrees], within [-180, 180].
    utc_offset : float
        Offset of the record's local standard time from UTC [hours], within
        [-12, 14]; e.g. 1.0 for Central European standard time.

    Raises
    ------
    ConfigError
        If a value is missing, not a number or out of range; the message names
        the ``[site]`` setting.
    """

    name: str
    latitude: float
    longitude: float
    utc_offset: float = 0.0

    def __post_init__(self):
        for key, low, high in (("latitude", -90.0, 90.0), ("longitude", -180.0, 180.0),
                               ("utc_offset", -12.0, 14.0)):
            value = getattr(self, key)
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise ConfigError(f"[site] {key} = {value!r} is not a number; "
                                  f"expected a number of degrees/hours in [{low:g}, {high:g}]")
            if not math.isfinite(value) or not low <= value <= high:
                raise ConfigError(f"[site] {key} = {value!r} is out of range; "
                                  f"expected a value in [{low:g}, {high:g}]")
            object.__setattr__(self, key, float(value))
        if not isinstance(self.name, str) or not self.name.strip():
            raise ConfigError(f"[site] name = {self.name!r}: expected a non-empty string")

    def to_dict(self) -> dict:
        """Return the site as a plain dict (for the manifest)."""
        return asdict(self)
