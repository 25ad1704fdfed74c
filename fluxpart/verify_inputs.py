"""Finding and checking the input file(s) and site config a result was computed from.

Each is looked for where the manifest records it, relative to the result folder (a
bundle moved whole is found), where ``--input`` and ``--config`` say, beside the site
config, or where the run read it (its run log; :func:`_places_at_run`), and is used only
with its recorded SHA-256 (FIPS 180-4: equal digests stand for equal bytes). A site config
that differs only in its ``[input] path`` locates the input while its recorded text drives
the rerun (:func:`_site_config`); one that is gone is rebuilt from the text the manifest
records. An input re-saved or compressed since the run is restored to its recorded bytes
(:mod:`fluxpart.verify_restore`). Whatever cannot be found is one clear error naming the
file and what to give.

References
----------
NIST (2015). FIPS 180-4: Secure Hash Standard.
"""

from __future__ import annotations

import os
from pathlib import Path

from .errors import FluxpartError, InputFileError
from .io import broken_link
from .manifest import (
    RUN_LOG,
    recorded_path,
)
from .store import file_sha256
from .verify_compare import Difference
from .verify_folder import _read_run_log
from .verify_report import CONFIG_EDITED
from .verify_restore import _packed_beside, _packed_not_taken, _restored_text


def _matching(path: Path | None, sha: str | None) -> bool:
    return path is not None and path.is_file() and file_sha256(path) == sha


def _recorded_copy(recorded: dict, scratch: Path) -> Path | None:
    """Write the site config text recorded in the manifest to `scratch`; None if absent."""
    import hashlib

    text = recorded.get("text")
    if not isinstance(text, str):
        return None
    data = text.encode("utf-8")
    if hashlib.sha256(data).hexdigest() != recorded.get("sha256"):
        return None
    copy = scratch / (Path(str(recorded.get("path", "site.toml"))).name or "site.toml")
    copy.write_bytes(data)
    return copy


def _same_but_input_path(path: Path, copy: Path | None) -> bool:
    """True when two site configs differ at most in ``[input] path``."""
    import tomllib

    if copy is None:
        return False
    try:
        documents = [tomllib.loads(p.read_text(encoding="utf-8-sig")) for p in (path, copy)]
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return False
    for document in documents:
        if isinstance(document.get("input"), dict):
            document["input"].pop("path", None)
    return documents[0] == documents[1]


def _config_changes(path: Path, copy: Path | None, limit: int = 5) -> str:
    """The settings in which the site config at `path` differs from the recorded `copy`.

    Returns text such as ``"; changed since the run: [processing] seed 0 -> 1"``
    (at most `limit` keys named, the rest counted), or "" where either file cannot
    be read as TOML or they hold the same settings.
    """
    import tomllib

    if copy is None:
        return ""
    try:
        now, then = (tomllib.loads(p.read_text(encoding="utf-8-sig")) for p in (path, copy))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return ""

    def flat(document, prefix=""):
        out = {}
        for key, value in document.items():
            if isinstance(value, dict):
                out.update(flat(value, f"{prefix}{key}."))
            else:
                out[f"{prefix}{key}"] = value
        return out

    now, then = flat(now), flat(then)
    missing = object()
    changed = [key for key in sorted(set(now) | set(then))
               if now.get(key, missing) != then.get(key, missing)]
    if not changed:
        return ""

    def shown(value):
        return "(absent)" if value is missing else repr(value)

    def name(key):
        section, _, leaf = key.rpartition(".")
        return f"[{section}] {leaf}" if section else leaf

    parts = [f"{name(key)} {shown(then.get(key, missing))} -> {shown(now.get(key, missing))}"
             for key in changed[:limit]]
    more = f" and {len(changed) - limit} more" if len(changed) > limit else ""
    return "; changed since the run: " + ", ".join(parts) + more


def _why_not_a_file(path: Path, hint: str = "") -> str:
    """Why a path given as a file is none: a folder (the input's folder given for the file
    was called missing) or nothing there."""
    if path.is_dir():
        return f"is a folder, not a file: give the file itself{hint}"
    if path.exists():
        # a named pipe or a device (`--input <(zcat x.gz)`, /dev/stdin) was "does not exist"
        return ("is not a plain file (a pipe or a device); give the file itself (unpacked "
                f"where it was compressed){hint}")
    return broken_link(path) or "does not exist"


def _site_config(directory: Path, recorded: dict, given, scratch: Path, notes: list):
    """Return (site config for the rerun, site config that locates the input, difference).

    A config given with ``--config`` must have the recorded SHA-256, or differ from
    the recorded text only in its ``[input] path`` (an auditor pointing it at a
    moved input): then the recorded text drives the rerun and the given file
    locates the input. The config at the recorded place is used the same way.
    """
    sha = recorded.get("sha256")
    if given is not None:
        path = Path(given)
        if not path.is_file():
            raise InputFileError(f"verify: the site config {str(path)!r} given with --config "
                                 f"{_why_not_a_file(path)}")
        if file_sha256(path) == sha:
            return path, path, None
        copy = _recorded_copy(recorded, scratch)
        if _same_but_input_path(path, copy):
            notes.append(f"site config: {str(path)!r} is not the recorded file but holds its "
                         "settings (it differs at most in [input] path, comments, layout or "
                         "line endings); the recorded text was used, the given file only to "
                         "find the input")
            return copy, path, None
        # the settings that differ named, as for a config edited where it lies (a seed
        # changed between run and verify was only "not the site config", mistakes48)
        changes = _config_changes(path, copy)
        return None, None, Difference(
            "input", "input", column="site config", row=str(path), stored=str(sha),
            recomputed=file_sha256(path),
            cause=("it is not the site config the result was computed from" + changes)
            if changes else "")
    path = recorded_path(directory, recorded)
    if _matching(path, sha):
        return path, path, None
    copy = _recorded_copy(recorded, scratch)
    if path is not None and path.is_file() and _same_but_input_path(path, copy):
        # edited where it lies to point at a moved or renamed input, as --config allows
        notes.append(f"site config: {str(path)!r} is not the recorded file but holds its "
                     "settings (it differs at most in [input] path, comments, layout or line "
                     "endings); the recorded text was used, the file only to find the input")
        return copy, path, None
    if copy is not None:
        where = (f"the file at {str(path)!r} {CONFIG_EDITED}{_config_changes(path, copy)}"
                 if path is not None and path.is_file() else f"it is not at {str(path)!r}")
        notes.append(f"site config: {where}; used the copy of its text recorded in the "
                     "manifest (SHA-256 checked)")
        return copy, None, None
    if path is not None and path.is_file():
        return None, None, Difference("input", "input", column="site config", row=str(path),
                                      stored=str(sha), recomputed=file_sha256(path))
    raise InputFileError(f"verify: the site config {str(path)!r} recorded in the manifest "
                         "does not exist and the manifest holds no copy of it; give it with "
                         "--config")


def _in_recorded_order(wanted: list, given: list, config_sha=None) -> list:
    """The files given with ``--input`` put in the recorded order by their SHA-256.

    A file whose content is the recorded one is matched whatever its name or its
    place among the ``--input`` options; files that match nothing keep their places
    (and are reported as another input). A file that is the recorded site config
    is a usage error: the two options were swapped.
    """
    digests = [file_sha256(path) for path in given]
    for path, digest in zip(given, digests, strict=True):
        if config_sha and digest == config_sha and all(digest != entry.get("sha256")
                                                       for entry in wanted):
            raise InputFileError(f"verify: {str(path)!r} given with --input is the recorded "
                                 "site config, not an input file; give the site config with "
                                 "--config and the input file(s) with --input")
    unused = list(range(len(given)))
    order = [None] * len(wanted)
    for number, entry in enumerate(wanted):
        match = next((i for i in unused if digests[i] == entry.get("sha256")), None)
        if match is not None:
            order[number] = given[match]
            unused.remove(match)
    leftover = iter(given[i] for i in unused)
    return [path if path is not None else next(leftover) for path in order]


def _input_files(directory: Path, recorded: dict, given, config_path: Path | None,
                 config_sha, scratch: Path, notes: list):
    """Return (input path or list of paths, difference or None).

    One file: the file given with ``--input``, else the one at the recorded path
    (relative to the result folder), else the one the site config names; it must
    have the recorded SHA-256. Several files (``recorded["files"]``): each is
    looked for likewise, ``--input`` given once per file in any order (matched by
    SHA-256); each must have its recorded SHA-256. A file given with ``--input``
    that is the recorded site config (`config_sha`) is refused as swapped options. A file
    holding the recorded text re-saved otherwise (line endings, encoding) is restored to
    the recorded bytes in `scratch` and used, with a note (:func:`_restored_text`).

    Where a file of several differs, the difference names the first, and the paths
    returned are every file as it is now (to locate the edit,
    :func:`fluxpart.input_changes.located_changes`); None where one of the others cannot
    be found (the first difference stands alone, as before).
    """
    parts = recorded.get("files") if isinstance(recorded.get("files"), list) else None
    wanted = parts if parts else [recorded]
    given = [] if given is None else [given] if isinstance(given, (str, Path)) else list(given)
    for path in given:
        if not Path(path).is_file():
            raise InputFileError(f"verify: the input file {str(path)!r} given with --input "
                                 f"{_why_not_a_file(Path(path), ' (one --input per file)')}")
    if given and len(given) != len(wanted):
        raise InputFileError(f"verify: the result was computed from {len(wanted)} input "
                             f"file(s); give --input once for each ({len(given)} given)")
    beside_config = []
    if config_path is not None and not given:
        from .io import read_site_config

        try:
            beside_config = list(read_site_config(config_path).input_paths)
        except FluxpartError:
            beside_config = []
    if given:
        given = _in_recorded_order(wanted, [Path(p) for p in given], config_sha)
    at_run = [] if given else _places_at_run(directory, wanted)
    found, first, moved = [], None, []
    for number, entry in enumerate(wanted):
        sha = entry.get("sha256")
        if given:
            path = Path(given[number])
        elif first is not None and not _findable(directory, entry, beside_config + at_run):
            return None, first       # the edit is named by its file alone, as before
        else:
            path = recorded_path(directory, entry)
            if not _matching(path, sha):
                path = next((p for p in beside_config if _matching(p, sha)), path)
            if not _matching(path, sha) and _matching(at_run[number], sha):
                # a result moved or copied elsewhere on the machine that wrote it, its
                # input left in place, had been "does not exist; give --input" (round
                # faults43); the recorded SHA-256 decides, as for any file found
                moved.append((path, at_run[number]))
                path = at_run[number]
            packed = None if path is None or path.exists() else _packed_beside(
                path, sha, scratch, number)
            if packed is not None:
                notes.append(f"input file: {str(path)!r} is gone, and {packed[0].name!r} "
                             "beside it holds its recorded bytes compressed or re-saved "
                             "(compressed to archive it after the run?); restored, they have "
                             "the recorded "
                             f"SHA-256 {sha}, and those bytes were rerun")
                found.append(packed[1])
                continue
            if path is None or not path.is_file():
                broken = "" if path is None else broken_link(path)
                if broken:
                    raise InputFileError(f"verify: the input file {str(path)!r} recorded in "
                                         f"the manifest {broken.split(';')[0]}; point the "
                                         "link at the file again, or give the file's "
                                         "location with --input")
                if path is not None and path.exists():
                    # a folder or a pipe now at the recorded name was "does not exist",
                    # though the auditor sees it there
                    kind = "a folder" if path.is_dir() else "a pipe or a device"
                    raise InputFileError(f"verify: the input file {str(path)!r} recorded in "
                                         f"the manifest is now {kind}, not a plain file (the "
                                         "result was computed from a file of that name): put "
                                         "the file back, or give its location with --input")
                raise InputFileError(f"verify: the input file {str(path)!r} recorded in the "
                                     "manifest (relative to the result folder) does not exist"
                                     f"{_packed_not_taken(path)}; give its new location with "
                                     "--input")
        actual = file_sha256(path)
        if actual != sha:
            restored = _restored_text(path, sha, scratch, number)
            if restored is None:
                changed = Difference("input", "input", column="input file", row=str(path),
                                     stored=str(sha), recomputed=actual)
                other = None if given else _recorded_one_where_run_read(
                    directory, entry, number, wanted, path)
                notes.extend([other] if other else [])
                if not parts:
                    return None, changed
                # several files: the others are looked for too, so that the whole input
                # as it is now can be read and compared with the values the result holds
                first = first or changed
                found.append(path)
                continue
            notes.append(f"input file: {str(path)!r} holds the recorded file's text re-saved "
                         "otherwise (line endings, byte-order mark, encoding, final line "
                         "break or gzip: git core.autocrlf, unzip -a, an editor, an "
                         "archive); converted back, "
                         f"its bytes have the recorded SHA-256 {sha}, and those bytes were "
                         "rerun")
            path = restored
        found.append(path)
    if moved:
        notes.append(_found_where_run_read(moved))
    return (found if parts else found[0]), first


def _found_where_run_read(moved: list) -> str:
    """The note for input files found where the run read them, not beside the result:
    `moved` holds (recorded place now, place at the run) of each; one note for all,
    naming each file and every folder (review66: several files named the first alone)."""
    if len(moved) == 1:
        (recorded, read), = moved
        return (f"input file: not at the recorded place beside the result folder, "
                f"{str(recorded)!r} (the folder was moved or copied since the run); found "
                f"where the run read it ({RUN_LOG}), {str(read)!r}, with the recorded SHA-256")

    def folders(paths) -> str:
        shown = list(dict.fromkeys(str(Path(p).parent) for p in paths))
        return ", ".join(repr(f) for f in shown[:3]) + (
            f" and {len(shown) - 3} more" if len(shown) > 3 else "")

    names = [Path(read).name for _, read in moved]
    named = ", ".join(names[:3]) + (f" and {len(names) - 3} more" if len(names) > 3 else "")
    return (f"{len(moved)} input files ({named}): not at their recorded places beside the "
            f"result folder, in {folders(r for r, _ in moved)} (the folder was moved or "
            f"copied since the run); found where the run read them ({RUN_LOG}), in "
            f"{folders(r for _, r in moved)}, each with its recorded SHA-256")


def _places_at_run(directory: Path, wanted: list) -> list:
    """Where the run read each recorded input file that is not at its recorded place
    (None where something is there, or not known): its recorded path, relative to the
    result folder, taken from the folder's place at the run.

    The run log (never hashed) records the folder and the working folder of the run;
    a file found there is used only with its recorded SHA-256, so an edited log can
    point at no other input than the one the manifest records.
    """
    places = []
    for entry, then in zip(wanted, _read_at_run(directory, wanted), strict=True):
        here = recorded_path(directory, entry) if then is not None else None
        # only where nothing is at the recorded place: a file edited there, a link or a
        # folder is what the auditor gave and is reported as before
        gone = here is not None and not os.path.lexists(here)
        places.append(then if gone else None)
    return places


def _read_at_run(directory: Path, wanted: list) -> list:
    """Where the run read each recorded input file given by a relative path (None where
    not known, or where the result folder is where the run wrote it), from the run log's
    result folder and working folder."""
    log = _read_run_log(directory) or {}
    folder, working = log.get("result_folder"), log.get("working_directory")
    if not isinstance(folder, str) or not isinstance(working, str) \
            or not os.path.isabs(os.path.join(working, folder)):   # "unknown" working folder
        return [None] * len(wanted)
    then = Path(os.path.abspath(os.path.join(working, folder)))
    if then == Path(os.path.abspath(directory)):
        return [None] * len(wanted)
    places = []
    for entry in wanted:
        text = entry.get("path") if isinstance(entry, dict) else None
        relative = isinstance(text, str) and text and not Path(text).is_absolute()
        places.append(Path(os.path.abspath(then / text)) if relative else None)
    return places


def _recorded_one_where_run_read(directory: Path, entry: dict, number: int, wanted: list,
                                 path: Path) -> str | None:
    """The note where the input file at the recorded place is another file of its name
    and the one with the recorded SHA-256 is still where the run read it (review66: two
    files of one name, the verdict said only that this one is not the input)."""
    then = _read_at_run(directory, wanted)[number]
    if then is None or then == Path(os.path.abspath(path)) \
            or not _matching(then, entry.get("sha256")):
        return None
    return (f"input file: {str(path)!r} is another file of that name; the one with the "
            f"recorded SHA-256 is where the run read it ({RUN_LOG}), {str(then)!r}: to "
            "verify the result against it, give it with --input")


def _findable(directory: Path, entry: dict, beside_config: list) -> bool:
    """Whether a recorded input file is at its recorded place or beside the site config."""
    path = recorded_path(directory, entry)
    if path is not None and path.is_file():
        return True
    return any(_matching(p, entry.get("sha256")) for p in beside_config)


#: Endings of a recorded input that the run unpacked (a tar, zip or compressed file of
#: one table, :func:`fluxpart.io._decompressed`).
_PACKED = (".tar", ".tgz", ".tar.gz", ".tar.bz2", ".tar.xz", ".zip", ".gz", ".bz2", ".xz")


def _packed_note(recorded_input: dict, given) -> str:
    """The clause naming the archive the run read where the file given is another.

    A result run from ``tower.tar.gz`` verified with the table unpacked from it gave
    "every value equals the input the result holds: the change lies outside the values
    read (another column, a comment, spaces or the layout)" and nothing of the archive
    (review64): the run's input is the archive's bytes, which the table alone cannot
    give back.
    """
    name = Path(str(recorded_input.get("path", ""))).name
    if not name.lower().endswith(_PACKED) or Path(str(given)).name == name:
        return ""
    return (f"; the run read {name!r} (an archive or compressed file whose table this may "
            "be: the recorded SHA-256 is of its packed bytes; give it with --input)")
