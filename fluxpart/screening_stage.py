"""Solar geometry, screening, and the checks that stop a run before any fit.

The night mask from potential radiation (:mod:`fluxpart.solar`), the screening of
plausible ranges, the site's flag and spikes (:mod:`fluxpart.screening`), the clock and
site-geometry verdict (:mod:`fluxpart.clock`) and the preflight of every stage
(:mod:`fluxpart.preflight`); :func:`refuse` stops on a clock problem (unless
``clock_check`` allows it) or a condition a stage cannot run with.
"""

from __future__ import annotations

from contextlib import contextmanager
from typing import NamedTuple

import numpy as np
import pandas as pd

from . import clock, preflight, screening, solar, unit_checks, ustar_scale
from .errors import ConfigError, ImplausibleValueError, InsufficientDataError
from .fill_labels import FILLED_LABEL_MARK
from .storage_size import STORAGE_SMOOTHS_MARK
from .variables import VARIABLES

#: Marks the reader sets on the frame (``frame.attrs``) where its own message names a
#: cause, and the preflight finding on the same column each leaves out (one finding, one
#: message): a storage column whose changes smooth NEE (round mistakes41), a column
#: labelled gap-filled whose every gap is filled (round polish47).
READER_NAMED_FINDINGS = {STORAGE_SMOOTHS_MARK: "input (nee smoothed)",
                         FILLED_LABEL_MARK: "input (nee gapless)"}


def night_rg(rg) -> np.ndarray:
    """Rg as the night mask reads it: values outside Rg's plausible range are missing.

    The night mask (:func:`fluxpart.solar.night_mask`) lets measured Rg decide where it
    exists, and Rg below ``night_rg_threshold`` is night. A value outside the range of
    :data:`fluxpart.variables.VARIABLES` (below -50 or above 1500 W m-2) is no reading of
    the sky: a logger's missing code left in a caller's frame (-9999, which the file
    reader reads as missing by default) or a code a site config does not list. Screening
    rejects it (:func:`fluxpart.screening.range_flags`), but read by the night mask a
    -9999 by day made that record night, its uptake entered the respiration fits: on the
    invented grassland of :func:`fluxpart.demo.site_year` with -9999 in 5 % of Rg,
    nighttime Reco 1179 -> 686 g C m-2 (round mistakes37). Here such a value is missing
    and the sun decides, as for any gap in Rg.

    Parameters
    ----------
    rg : numpy.ndarray
        Global radiation [W m-2], NaN where missing.

    Returns
    -------
    numpy.ndarray
        `rg` with values outside the plausible range set to NaN (a copy where any is).

    References
    ----------
    Reichstein, M. et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration. Global Change Biology 11, 1424-1439 (the
    night of measured Rg below a threshold, else of the sun) (m).
    """
    variable = VARIABLES["rg"]
    outside = (rg < variable.minimum) | (rg > variable.maximum)
    return np.where(outside, np.nan, rg) if outside.any() else rg


def geometry_and_screening(frame, site, config, interval):
    """Solar geometry, the night mask and the screening of a record.

    Parameters
    ----------
    frame : pandas.DataFrame
        The prepared record (``rg`` [W m-2] and the other canonical variables).
    site : Site
        The tower's location.
    config : Config
        Settings (``night_rg_threshold`` [W m-2], despiking and Rg margins).
    interval : int
        Record interval [minutes].

    Returns
    -------
    geometry : pandas.DataFrame
        Potential radiation [W m-2] and sun elevation [°] per record.
    is_night : numpy.ndarray of bool
        Night records (:func:`fluxpart.solar.night_mask`: measured Rg below
        ``night_rg_threshold``; where Rg is missing, the sun below the horizon).
    screens : fluxpart.screening.Screening
        The screened record, flags, reasons, counts and thresholds.

    References
    ----------
    Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem
    Exchange measured with eddy covariance technique. Biogeosciences 3, 571-583.
    """
    geometry = solar.solar_geometry(frame.index, site, interval_minutes=interval)
    potential = geometry["potential_radiation"].to_numpy()
    is_night = solar.night_mask(night_rg(frame["rg"].to_numpy(dtype=float)), potential,
                                config.night_rg_threshold)
    screens = screening.screen(
        frame, potential, is_night, despike_z=config.despike_z,
        despike_block_days=config.despike_block_days, rg_margin=config.rg_margin,
        rg_relative_margin=config.rg_relative_margin)
    return geometry, is_night, screens


def clock_and_preflight(frame, site, config, interval, geometry, is_night, screens,
                        reader=None):
    """The clock and site-geometry verdict and the preflight findings of a record.

    Parameters
    ----------
    frame : pandas.DataFrame
        Canonical record on its budget years.
    site : Site
        The tower's location.
    config : Config
        Settings (``clock_check`` and every setting a stage's preflight reads).
    interval : int
        Record interval [minutes].
    geometry : pandas.DataFrame
        ``potential_radiation`` [W m-2] and ``sun_elevation`` [degrees] per record.
    is_night : numpy.ndarray of bool
        The night mask.
    screens : fluxpart.screening.Screening
        The screened record and its flags.
    reader : dict, optional
        ``time_marks``, ``shift_minutes`` [minutes] and ``columns`` of the file reader,
        named in the messages.

    Returns
    -------
    verdict : fluxpart.clock.ClockVerdict or None
        None where ``clock_check = "off"``.
    findings : list of fluxpart.preflight.Finding
        Conditions under which a stage fails (``fatal``) or falls back.

    References
    ----------
    Michalsky, J. J. (1988). The Astronomical Almanac's algorithm for approximate solar
    position (1950-2050). Solar Energy 40(3):227-235. doi:10.1016/0038-092X(88)90045-X
    (the potential radiation the clock check compares Rg with; :mod:`fluxpart.clock`)
    """
    reader = reader or {}
    verdict = None
    if config.clock_check != "off":
        verdict = clock.check_clock(
            frame.index, frame["rg"].to_numpy(dtype=float), site.latitude, site.longitude,
            site.utc_offset, interval, time_marks=reader.get("time_marks"),
            shift_applied_minutes=float(reader.get("shift_minutes") or 0.0),
            time_zone=(reader.get("stamp_conversions") or {}).get("time_zone"),
            potential=geometry["potential_radiation"].to_numpy())
    solar.forget_courses()      # the last call that asks for the record's sun course again
    findings = preflight.preflight(
        frame, screens.screened, is_night, geometry["potential_radiation"].to_numpy(),
        screens.flags["rg_above_potential"].to_numpy(), site.latitude, config, interval,
        reader.get("columns"), sun_elevation=geometry["sun_elevation"].to_numpy(),
        utc_offset=site.utc_offset)
    findings += _ustar_scale(frame, site, is_night, findings, reader.get("columns") or {})
    # a finding the reader's message names already (its mark on the frame)
    named = {stage for mark, stage in READER_NAMED_FINDINGS.items() if frame.attrs.get(mark)}
    findings = [f for f in findings if f.stage not in named]
    findings = preflight.defer_to_clock(findings, None if verdict is None else verdict.status)
    if verdict is not None:
        findings = preflight.shade_at_clock_shift(
            findings, verdict, screens.screened["rg"].to_numpy(dtype=float), frame.index,
            site.latitude, site.longitude, site.utc_offset, interval, reader.get("columns"))
    return verdict, findings


def _ustar_scale(frame, site, is_night, findings, columns) -> list:
    """u* whose nights lie beyond the surface layer, or step up as km h-1 from one day on
    (:mod:`fluxpart.ustar_scale`): a warning, where no fatal finding stops the run first."""
    if "ustar" not in frame.columns or any(finding.fatal for finding in findings):
        return []
    ustar, column = frame["ustar"].to_numpy(dtype=float), columns.get("ustar", "ustar")
    text = (ustar_scale.ustar_beyond_surface_layer(ustar, is_night, frame.index, site.canopy,
                                                   column)
            or ustar_scale.ustar_stepped_to_kmh(ustar, is_night, frame.index, column))
    return [preflight.Finding(ustar_scale.STAGE, text, False)] if text else []


#: Share of the records with an NEE value that the site flag rejects beyond which a fatal
#: finding's refusal names the flag as its likely cause (round mistakes35: a flag of the
#: opposite meaning left 25 of 17520 records and was refused as "supply measured night
#: NEE"; a site's own checks reject some 5-40 % of the records, Papale et al. 2006 (m)).
FLAG_CAUSE_SHARE = 0.5


#: Stages whose fatal findings are a want of measured NEE records (the nighttime E0 and
#: Rref windows, the daytime light-response windows, :mod:`fluxpart.preflight`): the
#: refusals a flag rejecting most records explains. A constant or wind-speed u*, a
#: constant driver or a temperature without values are not.
NEE_SHORTAGE_STAGES = ("nighttime partitioning (E0)", "nighttime partitioning (Rref)",
                       "daytime partitioning (light response)")


def flag_cause(frame, why: str = "these stages lack measured NEE") -> str | None:
    """The site flag named as the cause of a shortage of measured NEE, or None.

    Parameters
    ----------
    frame : pandas.DataFrame or None
        The record, with ``nee`` [µmol m-2 s-1] and, where mapped, ``nee_flag`` [1]
        (non-zero = rejected by the site's own checks).
    why : str, optional
        What the flag likely explains, in the clause's words.

    Returns
    -------
    str or None
        A clause naming how many of the records with an NEE value the flag rejects,
        where that is more than :data:`FLAG_CAUSE_SHARE` of them; None otherwise.

    References
    ----------
    Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem Exchange
    measured with eddy covariance technique: algorithms and uncertainty estimation.
    Biogeosciences 3, 571-583 (the share of records quality control removes) (m).
    """
    if frame is None or "nee_flag" not in frame.columns or "nee" not in frame.columns:
        return None
    present = np.isfinite(frame["nee"].to_numpy(dtype=float))
    flag = frame["nee_flag"].to_numpy(dtype=float)
    rejected = present & np.isfinite(flag) & (flag != 0.0)
    if not present.any() or rejected.sum() <= FLAG_CAUSE_SHARE * present.sum():
        return None
    return (f"the site flag (nee_flag) rejects {int(rejected.sum())} of the "
            f"{int(present.sum())} records with an NEE value "
            f"({100 * (rejected.sum() / present.sum()):.1f} %), likely why {why}: "
            "check [input] flag_accept, the flag values that mean a good "
            "record (a flag of the opposite meaning?)")


@contextmanager
def flag_named_in_failure(frame):
    """Name the site flag in a fit's refusal raised within, where it rejects most records.

    The preflight names the flag beside a want of measured NEE it finds before any fit
    (:func:`refuse`); a fit can still fail on the records the flag leaves (a flag of the
    opposite meaning keeps the few records the site's checks rejected, too few or too
    noisy for an E0: round mistakes60's inverted flag at 94.9 % stopped at the E0 fit
    with an error line that named the E0 windows alone, round review97).

    Parameters
    ----------
    frame : pandas.DataFrame or None
        The record, as for :func:`flag_cause`.

    Yields
    ------
    None
        The block runs unchanged; only an error it raises is reworded.

    Raises
    ------
    InsufficientDataError
        The error raised within, followed by :func:`flag_cause` where the flag rejects
        more than :data:`FLAG_CAUSE_SHARE` of the records with an NEE value (the same
        error class, chained to the original).

    References
    ----------
    Papale, D. et al. (2006), as in :func:`flag_cause` (m).
    """
    try:
        yield
    except InsufficientDataError as error:
        cause = flag_cause(frame, "the fit found too few good records")
        if cause is None:
            raise
        raise type(error)(f"{error} {cause[0].upper()}{cause[1:]}") from error


def refuse(verdict, findings, config, frame=None) -> None:
    """Stop before any fit on a clock problem (unless allowed) or a fatal finding.

    Parameters
    ----------
    verdict : fluxpart.clock.ClockVerdict or None
        The clock check's verdict.
    findings : list of fluxpart.preflight.Finding
        The preflight findings.
    config : Config
        Settings; ``clock_check = "refuse"`` makes a clock problem stop the run.
    frame : pandas.DataFrame, optional
        The record: where its site flag rejects most records with an NEE value, a
        refusal with a fatal finding of :data:`NEE_SHORTAGE_STAGES` ends with
        :func:`flag_cause`.

    Raises
    ------
    ConfigError
        On a clock problem, naming ``clock_check = "warn"``.
    InsufficientDataError
        On a fatal finding.
    """
    clock_problems = list(verdict.problems) if verdict is not None else []
    if config.clock_check != "refuse":
        clock_problems = []
    fatal = [str(finding) for finding in findings if finding.fatal]
    if not clock_problems and not fatal:
        return
    text = "; ".join(clock_problems + fatal)
    if clock_problems:
        raise ConfigError(f"{text} (to process anyway, set [processing] clock_check = "
                          "\"warn\", in Python Config(clock_check=\"warn\"))")
    # the flag is named only beside a want of measured NEE: a constant u* or a wind speed
    # mapped as u* was told "likely why these stages lack measured NEE" (review40)
    cause = (flag_cause(frame) if any(finding.fatal and finding.stage in NEE_SHORTAGE_STAGES
                                      for finding in findings) else None)
    text = text if cause is None else f"{text}; {cause}"
    raise InsufficientDataError(f"{text} (fluxpart check lists every problem)")


class ScreenedRecord(NamedTuple):
    """What the screening stage hands the u* stage.

    Attributes
    ----------
    geometry : pandas.DataFrame
        Solar geometry per record (``potential_radiation`` [W m-2], ``sun_elevation`` [°]).
    is_night : numpy.ndarray of bool
        The night mask.
    screens : fluxpart.screening.Screening
        The screened record, its flags, reasons, counts and thresholds.
    verdict : fluxpart.clock.ClockVerdict or None
        None where ``clock_check = "off"``.
    findings : list of fluxpart.preflight.Finding
        Every preflight finding (none fatal: a fatal one stops the run).
    clock_record : dict
        The clock check as the provenance records it.
    warnings : list of str
        The unit checks of a caller's frame, the clock's problems and the findings of
        the stages before the u* threshold, in this order.
    """

    geometry: pd.DataFrame
    is_night: np.ndarray
    screens: object
    verdict: object
    findings: list
    clock_record: dict
    warnings: list


def screened_record(frame, site, config, interval, provenance, accepted) -> ScreenedRecord:
    """Screen the record, check its units (a caller's frame), clock and every stage's needs.

    Parameters
    ----------
    frame : pandas.DataFrame
        The prepared record (:func:`fluxpart.canonical_frame.run_record`).
    site : Site
        The tower's location.
    config : Config
        Settings.
    interval : int
        Record interval [minutes].
    provenance : dict or None
        The run's provenance: without a ``reader`` record no reader checked the
        frame's units, so :mod:`fluxpart.unit_checks` does here.
    accepted : tuple of str
        Variables whose units ``[input] accept_units`` keeps as they are.

    Returns
    -------
    ScreenedRecord

    Raises
    ------
    ImplausibleValueError
        A unit mix-up in a caller's frame.
    ConfigError, InsufficientDataError
        A clock problem (``clock_check = "refuse"``) or a fatal finding (:func:`refuse`).
    """
    geometry, is_night, screens = geometry_and_screening(frame, site, config, interval)
    warnings = []
    if "reader" not in (provenance or {}):      # a caller's frame: no reader checked its units
        refusal = unit_checks.frame_refusal(frame, interval, accept_units=accepted)
        if refusal:
            raise ImplausibleValueError(f"input: {refusal}")
        warnings.extend(f"input: {text}" for text in unit_checks.frame_messages(
            frame, geometry["potential_radiation"].to_numpy(), interval, accept_units=accepted))
    verdict, findings = clock_and_preflight(frame, site, config, interval, geometry, is_night,
                                            screens, (provenance or {}).get("reader"))
    refuse(verdict, findings, config, frame)
    if verdict is not None:
        warnings.extend(verdict.problems)
    warnings.extend(str(f) for f in findings if f.stage not in ("u* threshold", "annual budget"))
    clock_record = ({"setting": "off", "status": "not_checked"} if verdict is None
                    else {"setting": config.clock_check, **verdict.to_dict()})
    return ScreenedRecord(geometry, is_night, screens, verdict, findings, clock_record, warnings)
