"""The measurement site: name, location and canopy height class."""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

from .errors import ConfigError

__all__ = ["CANOPIES", "Site"]

#: Canopy height classes of ``[site] canopy``.
CANOPIES = ("short", "tall")


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
    canopy : {"tall", "short"}
        Height class of the vegetation around the tower: ``"tall"`` (forest,
        default) or ``"short"`` (crops, grass, shrubs of a metre or two). It sets
        the floor of the detected u* threshold (:data:`fluxpart.ustar.CANOPY_FLOORS`):
        a short canopy keeps little CO2 in the air below the sensor, and its
        thresholds are often below the 0.1 m s-1 floor used for forests. The
        default keeps the higher floor, which rejects more calm nights rather than
        fewer.

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
    canopy: str = "tall"

    def __post_init__(self):
        from .config import setting_text
        units = {"latitude": "degrees north (negative = south)",
                 "longitude": "degrees east (negative = west)",
                 "utc_offset": "hours from UTC of the file's local standard time"}
        for key, low, high in (("latitude", -90.0, 90.0), ("longitude", -180.0, 180.0),
                               ("utc_offset", -12.0, 14.0)):
            value = getattr(self, key)
            if type(value).__module__ == "numpy" and getattr(value, "shape", None) == ():
                value = value.item()
            shown = setting_text(value)
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise ConfigError(f"[site] {key} = {shown} is not a number: expected a number "
                                  f"from {low:g} to {high:g}, in {units[key]}"
                                  + (", written without quotes" if isinstance(value, str)
                                     else ""))
            if not math.isfinite(value) or not low <= value <= high:
                raise ConfigError(f"[site] {key} = {shown} is out of range: expected a value "
                                  f"from {low:g} to {high:g}, in {units[key]}")
            object.__setattr__(self, key, float(value))
        if not isinstance(self.canopy, str) or self.canopy not in CANOPIES:
            raise ConfigError(f"[site] canopy = {setting_text(self.canopy)} is not allowed: "
                              "expected \"short\" (crops, grass) or \"tall\" (forest)")
        if not isinstance(self.name, str) or not self.name.strip():
            raise ConfigError(f"[site] name = {setting_text(self.name)} is not allowed: expected "
                              "the site's name as non-empty text")

    def to_dict(self) -> dict:
        """Return the site as a plain dict (for the manifest)."""
        return asdict(self)
