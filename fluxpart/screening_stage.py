"""Solar geometry, screening, and the checks that stop a run before any fit.

The night mask from potential radiation (:mod:`fluxpart.solar`), the screening of
plausible ranges, the site's flag and spikes (:mod:`fluxpart.screening`), the clock and
site-geometry verdict (:mod:`fluxpart.clock`) and the preflight of every stage
(:mod:`fluxpart.preflight`); :func:`refuse` stops on a clock problem (unless
``clock_check`` allows it) or a condition a stage cannot run with.
"""

from __future__ import annotations

from . import clock, preflight, screening, solar
from .errors import ConfigError, InsufficientDataError


def geometry_and_screening(frame, site, config, interval):
    geometry = solar.solar_geometry(frame.index, site, interval_minutes=interval)
    potential = geometry["potential_radiation"].to_numpy()
    is_night = solar.night_mask(frame["rg"].to_numpy(), potential, config.night_rg_threshold)
    screens = screening.screen(
        frame, potential, is_night, despike_z=config.despike_z,
        despike_block_days=config.despike_block_days, rg_margin=config.rg_margin,
        rg_relative_margin=config.rg_relative_margin)
    return geometry, is_night, screens


def clock_and_preflight(frame, site, config, interval, geometry, is_night, screens,
                        reader=None):
    """The clock verdict (None when ``clock_check = "off"``) and the preflight findings."""
    reader = reader or {}
    verdict = None
    if config.clock_check != "off":
        verdict = clock.check_clock(
            frame.index, frame["rg"].to_numpy(dtype=float), site.latitude, site.longitude,
            site.utc_offset, interval, time_marks=reader.get("time_marks"),
            shift_applied_minutes=float(reader.get("shift_minutes") or 0.0))
    findings = preflight.preflight(
        frame, screens.screened, is_night, geometry["potential_radiation"].to_numpy(),
        screens.flags["rg_above_potential"].to_numpy(), site.latitude, config, interval,
        reader.get("columns"), sun_elevation=geometry["sun_elevation"].to_numpy())
    findings = preflight.defer_to_clock(findings, None if verdict is None else verdict.status)
    if verdict is not None:
        findings = preflight.shade_at_clock_shift(
            findings, verdict, screens.screened["rg"].to_numpy(dtype=float), frame.index,
            site.latitude, site.longitude, site.utc_offset, interval, reader.get("columns"))
    return verdict, findings


def refuse(verdict, findings, config) -> None:
    """Stop before any fit on a clock problem (unless allowed) or a fatal finding."""
    clock_problems = list(verdict.problems) if verdict is not None else []
    if config.clock_check != "refuse":
        clock_problems = []
    fatal = [str(finding) for finding in findings if finding.fatal]
    if not clock_problems and not fatal:
        return
    text = "; ".join(clock_problems + fatal)
    if clock_problems:
        raise ConfigError(f"{text} (to process anyway, set [processing] clock_check = "
                          "\"warn\")")
    raise InsufficientDataError(f"{text} (fluxpart check lists every problem)")
