"""The rerun of ``fluxpart verify``: the result recomputed from its recorded input and settings.

A ``fluxpart demo`` result is regenerated from its recorded seed; a ``fluxpart run``
result is rerun from the input and site config :mod:`fluxpart.verify_inputs` found, with
the settings of the site config's ``[processing]`` table or the manifest's, a setting added
after the writing release at the value that behaves as that release did
(:func:`_as_written`). The rerun is written to a scratch folder named by the process id
(:func:`scratch_folder`), removed however verify ends; a killed verify's is removed by the
next (:func:`remove_dead_scratch`).
"""

from __future__ import annotations

import dataclasses
import json
import os
import re
import shutil
import tempfile
from contextlib import contextmanager
from pathlib import Path

from .config import Config, absent_added_settings
from .errors import InputFileError
from .store import file_sha256
from .verify_inputs import _input_files, _packed_note, _site_config


def _recompute(directory: Path, manifest: dict, input_path, config_path, scratch: Path,
               notes: list, stored_timeseries=None):
    """Return (source, result or None, input differences).

    An input file that is not the recorded one is compared with the input values the
    stored time series holds (`stored_timeseries`, :func:`fluxpart.input_changes.
    located_changes`), so the difference says what was edited."""
    from .pipeline import process, process_site_config

    provenance = manifest["provenance"]

    def recorded_config() -> Config:
        return Config.from_mapping(manifest["config"], where="manifest config:")

    if "demo" in provenance:
        config = recorded_config()
        from . import demo

        config = _as_written(config, manifest, set(), notes)
        recorded = provenance["demo"]
        variant = recorded.get("variant", "c3")
        frame, _ = demo.site_year(seed=recorded.get("seed", 0), variant=variant)
        if recorded.get("as_recorded"):
            frame = demo.as_recorded(frame)
        result = process(frame, demo.site(variant), config,
                         provenance={"demo": recorded})
        return "demo", result, []
    if not isinstance(provenance.get("input"), dict) or \
            not isinstance(provenance.get("site_config"), dict):
        raise InputFileError("verify: the manifest records neither an input file and site "
                             "config (fluxpart run) nor a demo seed (fluxpart demo), so the "
                             "result cannot be recomputed")
    recorded_input = provenance["input"]
    input_digests = {entry.get("sha256") for entry in (
        recorded_input.get("files") if isinstance(recorded_input.get("files"), list)
        else [recorded_input]) if isinstance(entry, dict)}
    if config_path is not None and Path(config_path).is_file() \
            and file_sha256(Path(config_path)) in input_digests:
        raise InputFileError(f"verify: {str(config_path)!r} given with --config is a recorded "
                             "input file, not the site config; give the site config with "
                             "--config and the input file(s) with --input")
    site_config, locating, changed = _site_config(directory, provenance["site_config"],
                                                  config_path, scratch, notes)
    if changed is not None:
        return "run", None, [changed]
    data_path, changed = _input_files(directory, recorded_input, input_path, locating,
                                      provenance["site_config"].get("sha256"), scratch, notes)
    if changed is not None:
        several = isinstance(recorded_input.get("files"), list)
        if changed.column == "input file" and (data_path is not None or not several):
            from .input_changes import located_changes

            reader = provenance.get("reader")
            # several files: all of them as they are now, read together as the run did
            located = located_changes(site_config, data_path if several
                                      else Path(changed.row), stored_timeseries,
                                      reader.get("columns") if isinstance(reader, dict)
                                      else None)
            if located:
                changed = dataclasses.replace(
                    changed, cause="it is not the input file the result was computed "
                                   f"from; {located}{_packed_note(recorded_input, changed.row)}")
        return "run", None, [changed]
    if provenance.get("settings") == "site config":
        # the settings came from the site config's [processing] table: rerun from it,
        # so that a setting edited in the manifest is named as a differing field (also
        # one the manifest holds out of range, which is not read as settings at all)
        threshold = None
        if _fixed_without_threshold(site_config):
            # a result of a version before 0.24.0 took the default threshold: rerun it so
            # (the manifest's settings are read only then)
            recorded = recorded_config()
            threshold = recorded.ustar_threshold if recorded.ustar_method == "fixed" else None
        config = Config.from_toml(site_config, recorded_threshold=threshold)
        if threshold is not None:
            notes.append(f'site config: [processing] ustar_method = "fixed" without '
                         f"ustar_threshold is refused for new runs since 0.24.0; rerun "
                         f"with the threshold the result recorded, {threshold:g} m s-1 "
                         f"(write ustar_threshold = {threshold:g} in the site config to run "
                         "it again)")
        as_read = config
        config = _as_written(config, manifest, set(_processing_table(site_config)), notes)
        result = process_site_config(site_config, config, input_path=data_path)
        if config != as_read:
            # the site config's settings as the writing release read them: the rerun
            # records them as the site config's, as that release did (not as the
            # caller's, which only a setting the file does not name made them)
            result = dataclasses.replace(
                result, provenance={**result.provenance, "settings": "site config"},
                _computed=None)
        return "run", result, []
    config = _as_written(recorded_config(), manifest, set(), notes)
    return "run", process_site_config(site_config, config, input_path=data_path), []


def _processing_table(site_config) -> dict:
    """The site config's ``[processing]`` table ({} where it has none)."""
    from ._validate import read_toml

    processing = read_toml(site_config, "site config").get("processing", {})
    return processing if isinstance(processing, dict) else {}


def _as_written(config: Config, manifest: dict, named: set, notes: list) -> Config:
    """`config` with each setting added after the writing release
    (:func:`fluxpart.config.absent_added_settings` of the manifest's ``config``) at
    the value of the releases before it, unless the site config names it (`named`);
    one line in `notes` per setting so taken."""
    earlier = [added for added in absent_added_settings(manifest.get("config"))
               if added.name not in named]
    for added in earlier:
        notes.append(f"{added.name} is absent from the recorded settings (added in "
                     f"{added.release}): rerun with {json.dumps(added.earlier)}, the "
                     "behaviour of the release that wrote the folder")
    return dataclasses.replace(config, **{added.name: added.earlier for added in earlier})


def _fixed_without_threshold(site_config) -> bool:
    """True where the site config's ``[processing]`` sets ``ustar_method = "fixed"``
    without ``ustar_threshold`` (refused for runs since 0.24.0)."""
    processing = _processing_table(site_config)
    return processing.get("ustar_method") == "fixed" and "ustar_threshold" not in processing


#: Name of a rerun's scratch folder in the system's temporary folder: prefix, the
#: verifying process's id, a random part.
_SCRATCH_PREFIX = "fluxpart-verify-"


_SCRATCH = re.compile(rf"{re.escape(_SCRATCH_PREFIX)}(\d+)-")


def _alive(pid: int) -> bool:
    """Whether a process with id `pid` exists (one of another user counts as alive)."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError):   # another user's, or no such id at all
        return True
    return True


def remove_dead_scratch(root=None) -> list[str]:
    """Remove rerun scratch folders that a killed ``verify`` left behind.

    A folder is removed only where its name carries the id of a process that no longer
    exists and it belongs to the current user: a verify running now, or another user's,
    keeps its folder.

    Parameters
    ----------
    root : path-like, optional
        The folder that holds the scratch folders (default: the system's temporary
        folder, :func:`tempfile.gettempdir`).

    Returns
    -------
    list of str
        The names of the folders removed.
    """
    root = Path(tempfile.gettempdir() if root is None else root)
    removed = []
    try:
        entries = list(root.iterdir())
    except OSError:
        return removed
    for entry in entries:
        match = _SCRATCH.match(entry.name)
        if not match or _alive(int(match[1])):
            continue
        try:
            if entry.is_symlink() or not entry.is_dir() or entry.stat().st_uid != os.getuid():
                continue
        except OSError:
            continue
        shutil.rmtree(entry, ignore_errors=True)
        if not entry.exists():
            removed.append(entry.name)
    return removed


@contextmanager
def scratch_folder():
    """A rerun's scratch folder in the system's temporary folder, removed however the
    block ends.

    A stop (SIGTERM, Ctrl-C: an exception raised by the command line's handler) that
    came between :func:`tempfile.mkdtemp` making the folder and
    :class:`tempfile.TemporaryDirectory` registering its removal left it behind (once in
    15 SIGTERMs sent as the folder appeared, round faults45); on such a stop (an
    exception that is no :class:`Exception`) the folders of this process's id are then
    removed, as the process is ending; an error removes only the block's own folder.

    Yields
    ------
    pathlib.Path
        The folder, named ``fluxpart-verify-<process id>-<random>``.
    """
    try:
        with tempfile.TemporaryDirectory(prefix=f"{_SCRATCH_PREFIX}{os.getpid()}-") as made:
            yield Path(made)
    except Exception:
        # an error, not a stop: its own folder is removed by TemporaryDirectory, and a
        # folder of another verify of this process (a caller's threads) is left in use
        # (review69: every folder of the process was removed on any error)
        raise
    except BaseException:
        own = f"{_SCRATCH_PREFIX}{os.getpid()}-"
        for entry in Path(tempfile.gettempdir()).glob(f"{own}*"):
            if entry.is_dir() and not entry.is_symlink():
                shutil.rmtree(entry, ignore_errors=True)
        raise
