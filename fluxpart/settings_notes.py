"""Settings that the chosen method never reads (a silent combination of ``[processing]``).

A setting written in ``[processing]`` reads as "this run uses it" to whoever wrote it and
to whoever audits the config later. Some settings only act under one choice of another:
the u* detectors' own parameters change no number where the threshold is fixed (a few
still tune the warning that checks a fixed threshold for being too low), the moving
point test's parameters do nothing under the change-point detector, and the bootstrap
percentiles do nothing without bootstrap draws. Such a setting changed from its default
passed without a word (round mistakes21: ``ustar_scenarios = [5, 50, 95]`` beside
``ustar_method = "fixed"`` gave the same sums as without it). :func:`ignored_settings`
names them; a setting left at its default is never named, so a config that does not
write them cannot raise it.
"""

from __future__ import annotations

from dataclasses import fields

from .config import Config, setting_text

__all__ = ["FIXED_CHECK_READS", "ignored_settings"]

#: Parameters of the moving point test only (Reichstein et al. 2005; Papale et al. 2006
#: (m)), which :func:`fluxpart.ustar.detect_threshold` passes to that detector alone.
MOVING_POINT_ONLY = ("ustar_classes", "ustar_plateau_share", "ustar_correlation_limit",
                     "ustar_min_resolution", "ustar_annual", "ustar_plateau_reference")

#: Parameters of u* threshold detection and its bootstrap, which change no number where
#: the threshold is fixed (``fluxpart.ustar_stage.ustar_thresholds`` returns before detecting).
DETECTION = ("ustar_temperature_classes", *MOVING_POINT_ONLY, "ustar_distinct_seasons",
             "ustar_min_threshold", "ustar_bootstrap_draws", "ustar_scenarios")

#: The detection settings a fixed run still reads: :func:`fluxpart.ustar_fixed.fixed_threshold_note`
#: runs the moving point test with them to name a fixed threshold the night records show
#: too low (round mistakes24). They change that warning, never a number of the run.
FIXED_CHECK_READS = ("ustar_temperature_classes", *MOVING_POINT_ONLY, "ustar_min_threshold")


def _changed(config: Config, names) -> list:
    """The names among `names` whose value in `config` differs from the default."""
    default = Config()
    known = {f.name for f in fields(Config)}
    return [name for name in names
            if name in known and getattr(config, name) != getattr(default, name)]


def _listed(config: Config, names) -> str:
    return ", ".join(f"{name} = {setting_text(getattr(config, name))}" for name in names)


def _verb(names) -> str:
    return "change" if len(names) > 1 else "changes"


def ignored_settings(config: Config) -> list:
    """Warnings for ``[processing]`` settings changed from their default that the run
    never reads under the chosen u* method.

    Parameters
    ----------
    config : fluxpart.Config
        The run's settings.

    Returns
    -------
    list of str
        At most one text: under ``ustar_method = "fixed"`` the detection and bootstrap
        settings (the threshold is ``ustar_threshold`` [m s-1] for every year; those in
        :data:`FIXED_CHECK_READS` are named as tuning only the too-low check); under
        ``"change_point"`` the moving point test's own parameters; with
        ``ustar_bootstrap_draws = 0`` a non-empty ``ustar_scenarios``. Empty where no
        setting is so changed.

    Notes
    -----
    Pure and cheap (settings only, no data). A value equal to the default is not named
    even where it is written out, so a config written in full is quiet; the warning
    cannot change any number of a run.

    References
    ----------
    Reichstein, M., et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration. Global Change Biology 11, 1424-1439 (m) (the
    moving point test and its parameters).
    Barr, A. G., et al. (2013). Use of change-point detection for friction-velocity
    threshold evaluation in eddy-covariance studies. Agricultural and Forest Meteorology
    171-172, 31-45 (m) (the change-point detector, which has no u* classes or plateau).
    """
    method = config.ustar_method
    if method == "fixed":
        unused = _changed(config, DETECTION)
        if not unused:
            return []
        checked = [name for name in unused if name in FIXED_CHECK_READS]
        check = ((f" ({_listed(config, checked)} only {'tune' if len(checked) > 1 else 'tunes'} "
                  "the detection that checks the fixed value for being too low, a warning)")
                 if checked else "")
        return [f"settings: {_listed(config, unused)} {_verb(unused)} no number of the run: "
                f"ustar_method = \"fixed\" filters every year at ustar_threshold = "
                f"{setting_text(config.ustar_threshold)} m s-1, not at a detected threshold "
                f"or its bootstrap percentiles{check}; remove the setting(s), or choose "
                "ustar_method = \"moving_point\" or \"change_point\" to use them"]
    if method == "change_point":
        unused = _changed(config, MOVING_POINT_ONLY)
        if unused:
            return [f"settings: {_listed(config, unused)} {_verb(unused)} nothing: "
                    f"{'they are parameters' if len(unused) > 1 else 'it is a parameter'} of "
                    "the moving point test, and ustar_method = "
                    "\"change_point\" has no u* classes or plateau; remove the setting(s), or choose "
                    "ustar_method = \"moving_point\" to use them"]
    if config.ustar_bootstrap_draws == 0 and config.ustar_scenarios and _changed(
            config, ("ustar_scenarios",)):
        return [f"settings: ustar_scenarios = {setting_text(config.ustar_scenarios)} "
                "changes nothing: ustar_bootstrap_draws = 0 draws no bootstrap, so there "
                "are no percentiles of the threshold to rerun with; set ustar_bootstrap_draws "
                "(100 is the default) to use them"]
    return []
