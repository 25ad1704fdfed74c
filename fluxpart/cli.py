"""The ``fluxpart`` command line: demo, run, check, verify, diff, report, batch.

Every user error (bad config, bad input, too little data) is printed as one
``error: ...`` line naming the setting, column or row, with exit status 2; a
traceback is shown only for a fault of fluxpart itself.
"""

from __future__ import annotations

import argparse
import contextlib
import datetime
import errno
import gc
import importlib
import math
import os
import signal
import sys
import threading
import traceback
import warnings
from pathlib import Path

from . import __version__
from .errors import (
    LOADER_MEMORY_WORDS,
    ConfigError,
    FluxpartError,
    FluxpartWarning,
    InputTooLarge,
    ResourceShortage,
)
from .manifest import CAUTION, shown_path

__all__ = ["main"]

#: Garbage-collector thresholds (generations 0, 1, 2) while a command runs. A command's
#: work is NumPy arrays and pandas frames, which form no reference cycles, but with
#: Python's default (700, 10, 10) the collector ran ~200 times in one `run` of a
#: site-year, scanning the objects the imports of pandas and pyarrow leave behind
#: (0.09-0.12 s CPU); at these thresholds it runs a few times (0.03 s), with the same
#: peak memory (207 MB). The previous thresholds are restored afterwards.
_GC_THRESHOLDS = (50_000, 20, 20)


def _format_annual(annual) -> str:
    """The annual budget, its uncertainty budget and the carbon-accounting units, as text."""
    columns = [c for c in ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime",
                           "reco_daytime", "share_measured", "complete") if c in annual.columns]
    # "measured" counts the records kept after screening and the u* filter, which `check`'s
    # coverage ("present") does not: a new user read 59 % present there against 0.51 here
    # as a contradiction (round newuser56)
    lines = ["Annual budget [g C m-2; NEE < 0 is net uptake; share_measured: share of the "
             "records with measured NEE (kept after screening and the u* filter; the rest "
             "gap-filled); complete: every record present and NEE filled]:",
             annual[columns].to_string(float_format=lambda v: f"{v:9.2f}")]
    if "period_start" in annual.columns and any(
            (start.month, start.day) != (1, 1) for start in annual["period_start"]):
        spans = [f"{year} = {row['period_start']:%Y-%m-%d} to "
                 f"{row['period_end'] - datetime.timedelta(days=1):%Y-%m-%d}"
                 for year, row in annual.iterrows()]
        lines.append(f"Budget years ([processing] year_start): {'; '.join(spans)}")
    from .uncertainty_parts import uncertainty_parts

    table = uncertainty_parts(annual)
    if table is not None:
        # the light shape's column, written with daytime_curvature = average only, named
        # as the other columns whose heading is no plain word (review55)
        shape = ("; light shape: the daytime light response rectangular or with its "
                 "curvature profiled" if "light shape" in table.columns else "")
        lines += ["", "Uncertainty [g C m-2]: parts and total as 1 sigma (root sum of squares), "
                  "and the stated 95 % interval (temperature: the choice of respiration "
                  f"temperature; form: Lloyd–Taylor or a constant Q10{shape}); systematic "
                  "measurement errors not included (see the README's cautions):",
                  table.to_string(float_format=lambda v: f"{v:9.1f}", na_rep="        -")]
    if "net_uptake_t_co2_per_ha" in annual.columns:
        from .units import T_CO2_HA_PER_G_C_M2

        # a partial year's tonnes are its records' sum, not a rate per year (review43)
        # the tonnes are what a carbon-credit reader quotes: their interval says what it
        # leaves out where it stands, not only in the g C table's heading (review54)
        lines += ["", "Net uptake [t CO2 ha-1 over each budget year's records; positive = "
                  "uptake; ± 1 sigma and the 95 % interval are NEE's stated ones, systematic "
                  "measurement errors not included]:"]
        for year, row in annual.iterrows():
            partial = ""
            if not row.get("complete", True) and row.get("records_expected", 0) > 0:
                # the sum of the records held, not scaled up: no rate per year
                if row["records"] < row["records_expected"]:
                    months = 12.0 * row["records"] / row["records_expected"]
                    partial = f"; partial year, {months:.1f} months: not an annual total"
                else:
                    partial = (f"; {int(row.get('records_unfilled', 0))} records unfilled: "
                               "not an annual total")
            # the stated 95 % interval in tonnes, as the report's summary gives it: the
            # g C table above states NEE's, and 1 sigma alone invited ± 2 sigma (review39)
            interval = ""
            low, high = row.get("nee_ci95_low"), row.get("nee_ci95_high")
            if (low is not None and high is not None
                    and math.isfinite(float(low)) and math.isfinite(float(high))):
                interval = (f"; 95 % interval {-float(high) * T_CO2_HA_PER_G_C_M2:.2f} to "
                            f"{-float(low) * T_CO2_HA_PER_G_C_M2:.2f}")
                if float(low) < 0.0 < float(high):
                    # an interval over zero is no evidence of uptake or release (review54)
                    interval += ", holding zero: uptake or release not told apart"
            # a negative uptake is a release: said in words, as the report does (review49)
            source = "a net release; " if row["net_uptake_t_co2_per_ha"] < 0 else ""
            lines.append(f"  {year}: {row['net_uptake_t_co2_per_ha']:.2f} ± "
                         f"{row['net_uptake_t_co2_per_ha_uncertainty']:.2f} ({source}1 sigma"
                         f"{interval}; "
                         f"u* threshold {row['ustar_threshold']:.3f} m s-1{partial})")
        from .manifest import NEE_SCOPE

        lines.append(f"  ({NEE_SCOPE})")
    return "\n".join(lines)


#: What ``--quiet`` of demo, run, report and batch silences: the progress display only
#: (verify's ``--quiet`` shortens its output; its help says so).
QUIET_HELP = ("no progress display (the tables, warnings, the path written and the caution "
              "are still printed on standard output)")
#: ``report`` prints no table and no warning, only the page written and the caution: its
#: help promised "the tables, warnings" too (review58)
REPORT_QUIET_HELP = ("no progress display (the path written and the caution are still "
                     "printed on standard output)")


def _progress_bar(config, quiet):
    """A progress bar for :func:`fluxpart.process` and the callback that advances it."""
    from .pipeline import stage_count
    from .progress import Progress, progress_enabled

    bar = Progress(stage_count(config), "processing", enabled=progress_enabled(quiet))

    def advance(label):
        bar.label = f"processing: {label}"
        bar.advance()
    return bar, advance


def _command_demo(args) -> int:
    from . import demo
    from .config import Config
    from .pipeline import process

    if args.seed < 0:
        raise ConfigError(f"--seed {args.seed}: expected a whole number >= 0 (the seed of the "
                          "demo data)")
    site = demo.site()
    _check_output_folder(Path(args.out), site.name)
    frame, truth = demo.site_year(seed=args.seed)
    frame = demo.as_recorded(frame)
    bar, advance = _progress_bar(Config(), args.quiet)
    with bar:
        result = process(frame, site, provenance={"demo": {"seed": args.seed, "variant": "c3",
                                                     "as_recorded": True}},
                         progress=advance)
    out = Path(args.out)
    result.write(out)
    print(f"fluxpart demo: {site.name}, {frame.index[0]:%Y-%m-%d} to "
          f"{frame.index[-1]:%Y-%m-%d}, {len(frame)} records")
    print()
    print(_format_annual(result.annual))
    for warning in result.warnings:
        print(f"warning: {warning}")
    print("\nError against the demo's known truth [g C m-2]:")
    print(demo.compare_with_truth(result.annual, truth).to_string(
        formatters={"relative_error": "{:+.1%}".format,
                    "truth_in_95": lambda v: "-" if v is None else "yes" if v else "no"},
        float_format=lambda v: f"{v:9.1f}"))
    print("(truth_in_95: the stated 95 % interval holds the truth; a calibrated one misses in "
          "about one estimate of twenty, see the README's cautions for the coverage measured)")
    print(f"\nWrote {shown_path(f'{out}/')} (Parquet tables and manifest.json)")
    try:
        from .report import build_report

        page = build_report(out)
        print(f"Report page: {shown_path(page)}")
    except FluxpartError as error:
        print(f"No report page: {error}")
    print(f"Caution: {CAUTION}")
    return 0


def _enclosing_result(folder: Path) -> Path | None:
    """The nearest of `folder` and its parents that is a result folder (has a manifest).

    A folder this user may not search (another user's, under a private umask) cannot be
    told: it is passed over (``Path.is_file`` raised PermissionError there, a traceback),
    and the write into it is refused by the checks that follow.
    """
    for candidate in (folder, *folder.parents):
        try:
            if (candidate / "manifest.json").is_file():
                return candidate
        except PermissionError:
            continue
    return None


def _physical(folder: Path) -> Path:
    """`folder` with its links and ``..`` resolved as the file system does (as given where
    a link loop or an unreadable folder stops that)."""
    try:
        return folder.resolve()
    except (OSError, RuntimeError):
        return folder


def _refuse_network_dataset(option: str, given, path: Path) -> None:
    """Refuse to write `path` inside a batch's network dataset folder (rewritten whole by
    every batch: see :func:`fluxpart.network_layout.enclosing_network_dataset`)."""
    from .errors import OutputError
    from .network_layout import enclosing_network_dataset

    dataset = enclosing_network_dataset(path)
    if dataset is not None:
        raise OutputError(f"{option} {str(given)!r} is inside the network table folder "
                          f"{str(dataset)!r} of a batch, which every batch run replaces whole "
                          "(what is put there is deleted, and Parquet readers of the folder "
                          "fail on it until then); choose a place outside it")


def _command_report(args) -> int:
    """``fluxpart report``: refuse an --out inside the result folder but outside report/."""
    from .errors import OutputError
    from .report import command_report

    if getattr(args, "out", None) is not None:
        out = Path(args.out).absolute().resolve()
        _refuse_network_dataset("--out", args.out, out)
        enclosing = _enclosing_result(out)
        if enclosing is not None and not (out == enclosing / "report"
                                          or enclosing / "report" in out.parents):
            raise OutputError(f"--out {args.out!r} is inside the result folder "
                              f"{str(enclosing)!r}, which must hold only the files its "
                              "manifest lists (a report there would make load, verify and "
                              "diff refuse it); leave out --out (the page goes to "
                              f"{str(Path(args.directory) / 'report')!r}) or choose a folder "
                              "outside it")
    return command_report(args)


def _command_export(args) -> int:
    """``fluxpart export``: refuse a NetCDF file or CSV folder inside a result folder, and
    check both targets before either is written."""
    from .errors import OutputError
    from .export import command_export

    if args.netcdf is None and args.csv is None:
        raise OutputError("fluxpart export: give --netcdf FILE, --csv FOLDER or both (see "
                          "fluxpart export --help)")
    _refuse_other_format(args.netcdf, args.csv)
    if args.netcdf is not None:
        target = Path(args.netcdf).absolute().resolve()
        _refuse_network_dataset("--netcdf", args.netcdf, target)
        enclosing = _enclosing_result(target.parent)
        if enclosing is not None and enclosing / "report" not in target.parents:
            raise OutputError(f"--netcdf {args.netcdf!r} is inside the result folder "
                              f"{str(enclosing)!r}, which must hold only the files its manifest "
                              "lists (a file there would make load, verify and diff refuse it); "
                              "write it outside the folder")
    if args.csv is not None:
        from .export_csv import check_name, check_target

        check_name(Path(args.csv))        # a name too long, before probing inside it
        target = Path(args.csv).absolute().resolve()
        _refuse_network_dataset("--csv", args.csv, target)
        enclosing = _enclosing_result(target)
        if enclosing is not None:
            raise OutputError(f"--csv {args.csv!r} is inside the result folder "
                              f"{str(enclosing)!r}, which must hold only the files its manifest "
                              "lists (files there would make load, verify and diff refuse it); "
                              "write the CSV folder outside it")
        check_target(Path(args.csv))
    return command_export(args)


#: Name endings of files that are no NetCDF: a ``--netcdf`` name ending so (``site.csv``:
#: a spreadsheet user after a CSV) wrote a binary NetCDF file under it without a word
#: (round newuser57)
_NOT_NETCDF_SUFFIXES = (".csv", ".tsv", ".txt", ".dat", ".json", ".toml", ".parquet",
                        ".feather", ".arrow", ".xlsx", ".xls", ".ods", ".zip", ".gz")


def _refuse_other_format(netcdf, csv) -> None:
    """Refuse a ``--netcdf`` file named as another format and a ``--csv`` folder named as one
    CSV file, where no such file or folder exists yet: each would be written as asked, but
    not as its name says (round newuser57). A ``--csv`` name written with a closing
    separator (``tables.csv/``) names a folder and is kept (review95).

    References
    ----------
    Unidata's NetCDF User's Guide names ``.nc`` as the conventional file name extension
    of NetCDF files (m).
    """
    from .errors import OutputError

    # an existing file or folder keeps its own refusals (an input file or the site
    # config named as the target is named as such; a file fluxpart did not write is kept)
    if (netcdf is not None and Path(netcdf).suffix.lower() in _NOT_NETCDF_SUFFIXES
            and not os.path.lexists(netcdf)):
        raise OutputError(
            f"--netcdf {str(netcdf)!r} is named as a {Path(netcdf).suffix} file, but --netcdf "
            "writes one binary NetCDF file (read by xarray or ncdump): name it .nc (e.g. "
            f"{str(Path(netcdf).with_suffix('.nc'))!r}); for tables a spreadsheet opens give "
            "--csv FOLDER")
    # a name written with a closing separator ("tables.csv/") names a folder (review95)
    if (csv is not None and Path(csv).suffix.lower() in (".csv", ".tsv", ".txt")
            and not os.path.lexists(csv) and not str(csv).endswith(("/", os.sep))):
        raise OutputError(
            f"--csv {str(csv)!r} is named as one {Path(csv).suffix} file, but --csv writes a "
            "folder holding every table as its own CSV file (timeseries.csv, daily.csv, "
            "annual.csv, ...) and csv-metadata.json: give a folder name such as "
            f"{str(Path(csv).with_suffix('')) + '_csv'!r}")


def _check_output_folder(out: Path, site_name=None) -> None:
    """Fail before any computation where the result folder `out` cannot be written.

    `site_name` (text, or a callable giving it, called only where `out` holds a
    manifest) must be the site of an earlier result in `out`.
    """
    import tempfile

    from .resultdir import replace_refusal

    try:
        here = Path.cwd().resolve()
    except OSError:
        # the shell's folder was deleted (e.g. replaced whole by another run): it cannot
        # lie in --out, and only an absolute --out can be found (a relative one is named)
        here = None
        if not out.is_absolute():
            raise FluxpartError(f"--out {str(out)!r} is relative to the current folder, "
                                "which no longer exists (deleted or replaced while this "
                                "shell was in it): cd to an existing folder, or give "
                                "--out as an absolute path") from None
    out = out.absolute()
    if here is not None and (out.resolve() == here or out.resolve() in here.parents):
        # the folder is replaced whole: the process (and the user's shell) would be left
        # in a deleted folder, and demo's report then failed with a traceback
        raise FluxpartError(f"--out {str(out)!r} is the current folder or holds it; a result "
                            "folder is replaced whole, which would leave this shell in a "
                            "deleted folder: choose a folder below the current one, or run "
                            "from outside it")
    reason = replace_refusal(out)
    if reason:
        raise FluxpartError(f"--out {str(out)!r} {reason}; choose another --out")
    _refuse_network_dataset("--out", out, out)
    # the folder it lands in, not the spelling: 'r/../r' is r itself, not a folder in r
    # (its lexical parent 'r/..' has r among its own parents; round faults47)
    enclosing = _enclosing_result(_physical(out.parent))
    if enclosing is not None:
        raise FluxpartError(f"--out {str(out)!r} is inside the result folder "
                            f"{str(enclosing)!r}, which must hold only the files its manifest "
                            "lists; choose an --out outside it")
    if site_name is not None and (out / "manifest.json").is_file():
        other = replace_refusal(out, site_name() if callable(site_name) else site_name)
        if other:
            raise FluxpartError(f"--out {str(out)!r} {other}")
    ancestor = out.parent
    while not ancestor.exists():
        ancestor = ancestor.parent
    if not ancestor.is_dir():
        raise FluxpartError(f"--out {str(out)!r}: {str(ancestor)!r} is a file, so no folder "
                            "can be made below it; choose another --out")
    try:
        with tempfile.TemporaryFile(dir=ancestor):
            pass
    except OSError as error:
        from .store import full_disk_remedy

        # ENOSPC here, with space to spare, is a file system out of inodes
        remedy = (full_disk_remedy(ancestor) if error.errno == errno.ENOSPC
                  else "choose a writable place")
        raise FluxpartError(f"--out {str(out)!r}: cannot write in {str(ancestor)!r} "
                            f"({error.strerror or error}); {remedy}") from None


def _check_recordable_paths(site_config, config_path, out: Path) -> None:
    """Fail before any computation where the manifest could not record the input or site
    config path (a name that is not UTF-8: :func:`fluxpart.manifest.undecodable_paths`)."""
    from .manifest import undecodable_message, undecodable_paths

    provenance = {"input": {"path": str(Path(site_config.input_path).resolve()),
                            "files": [{"path": str(Path(p).resolve())}
                                      for p in site_config.input_paths]},
                  "site_config": {"path": str(Path(config_path).resolve())}}
    undecodable = undecodable_paths(provenance, out.absolute())
    if undecodable:
        raise FluxpartError(undecodable_message(undecodable[0]))


def _inputs_held(out: Path) -> tuple:
    """The input files the result folder `out` records, ``(path, sha256)`` each; empty
    where it holds no readable result (a new folder, a damaged manifest)."""
    from .manifest import read_manifest, recorded_inputs

    if not (out / "manifest.json").is_file():
        return ()
    try:
        return recorded_inputs(read_manifest(out))
    except (FluxpartError, OSError, ValueError):
        return ()


def replaced_note(out: Path, earlier: tuple) -> str:
    """A note where `run` replaced a result of other input files (another year's config
    into the same --out; allowed for the same [site] name), else ``""``.

    The folder is replaced whole, as documented, but said nothing of what it held: an
    operator rerunning 2022 into the folder that held 2024 lost that result without a
    word (review63). Inputs are compared by their recorded SHA-256.

    Parameters
    ----------
    out : pathlib.Path
        The result folder just written.
    earlier : tuple of (str, str)
        ``(path, sha256)`` of the input files it recorded before the run
        (:func:`_inputs_held`).
    """
    now = _inputs_held(out)
    if not earlier or not now or {sha for _, sha in earlier} == {sha for _, sha in now}:
        return ""
    names = ", ".join(f"{Path(path).name!r} (sha256 {sha[:12]}...)" for path, sha in earlier[:3])
    more = f" and {len(earlier) - 3} more" if len(earlier) > 3 else ""
    return (f"note: {shown_path(f'{out}/')} held the result of another input, {names}{more}; "
            "this run replaced it")


def _command_run(args) -> int:
    from .config import Config
    from .io import read_site_config
    from .pipeline import process_site_config
    from .resultdir import DEFAULT_LOCK_TIMEOUT, folder_lock

    config = Config.from_toml(args.config)
    out = Path(args.out) if args.out else Path(args.config).with_suffix("").parent / (
        Path(args.config).stem + "-output")
    _check_output_folder(out, lambda: read_site_config(args.config).site.name)
    _check_recordable_paths(read_site_config(args.config), args.config, out)
    bar, advance = _progress_bar(config, args.quiet)
    earlier = _inputs_held(out)
    # the folder's lock is held from the start: a second run into the same --out waits
    # for this one (saying so on stderr) instead of computing alongside and overwriting it
    out.absolute().parent.mkdir(parents=True, exist_ok=True)
    with folder_lock(out, DEFAULT_LOCK_TIMEOUT, remove=True) as held:
        with bar:
            # the settings are read again with the site and recorded with the text they
            # came from (`config` above only sizes the progress bar)
            result = process_site_config(args.config, progress=advance)
        # the lock itself: where --out's parent was renamed meanwhile, the write takes
        # the lock again at the path given (round faults40)
        result.write(out, lock_held=held)
    # the period read, as `demo` and `check` state it (review54: `run` named the site only)
    stamps = result.timeseries.index
    print(f"fluxpart run: {result.site.name}, {stamps[0]:%Y-%m-%d} to {stamps[-1]:%Y-%m-%d}, "
          f"{len(stamps)} records")
    print()
    print(_format_annual(result.annual))
    for warning in result.warnings:
        print(f"warning: {warning}")
    # how the reader understood the file's layout, every value read as the file means it
    for note in result.provenance.get("reader", {}).get("notes", ()):
        print(f"note: input: {note}")
    print(f"\nWrote {shown_path(f'{out}/')} (Parquet tables and manifest.json)")
    replaced = replaced_note(out, earlier)
    if replaced:
        print(replaced)
    # `demo` draws its page; `run` leaves it to `report`, and says so (review54)
    import shlex

    shown = shown_path(out)      # quoted for the shell where a name needs it (spaces)
    print(f"Figures and report page: fluxpart report "
          f"{shlex.quote(shown) if shown == str(out) else shown}")
    print(f"Caution: {CAUTION}")
    return 0


def _format_clock(verdict) -> str:
    """The clock and site-geometry section of ``fluxpart check``."""
    if verdict is None:
        return "clock and site geometry: not checked ([processing] clock_check = \"off\")"
    lines = ["clock and site geometry (measured Rg against potential radiation)"]
    if verdict.months_used:
        # rounded to a whole minute first: -0.4 printed as "-0 min" (round newuser56)
        shift = verdict.shift_minutes
        shift = round(shift) if math.isfinite(shift) else shift
        lines.append(f"  shift of Rg      {shift:+.0f} min (spread "
                     f"{verdict.spread_minutes:.0f} min over {verdict.months_used} months; "
                     "positive = Rg later than the sun)")
    clock = verdict.status.replace("_", " ")
    if verdict.status in ("hemisphere", "latitude"):
        # the status names the geometry where the clock itself agreed (or could not be
        # judged): "clock  hemisphere" above "hemisphere  mismatch" read as a clock fault
        judged = "consistent" if math.isfinite(verdict.shift_minutes) else "cannot judge"
        clock = f"{judged} (the {verdict.status} is not: see the problems)"
    lines.append(f"  clock            {clock}")
    lines.append(f"  hemisphere       {verdict.hemisphere.replace('_', ' ')}")
    lines.extend(f"  note: {note}" for note in verdict.notes)
    return "\n".join(lines)


def _follow_on_note(unit_refusals, clock_stops, listed: int, clock_warned=()) -> str:
    """The note ``check`` prints after its problems where a refusal may explain the rest.

    A temperature read in the wrong unit is out of range everywhere, so every stage finds no
    night records and the list went on to advise e0_fallback (review49); a missing code
    read as a value is refused the same way and is fixed in ``[input] missing``, not in
    ``[input.units]``; a latitude of the wrong sign or a clock an hour off moves the sun
    every record is judged against, so Rg exceeds the potential radiation and the night
    mask counts the sky's noise as day (the list advised a ``night_rg_threshold`` of
    hundreds of W m-2; newuser54). Under ``clock_check = "warn"`` the run goes on past the
    clock's problems, but the problems that follow from them are the same: the note says
    so in its own words (leftovers57; it was absent, its words being "the run stops").

    Parameters
    ----------
    unit_refusals : sequence of str
        The reader's refusals (``ReadReport.unit_refusals``), each among the problems.
    clock_stops : sequence of str
        The clock and site-geometry problems that stop the run (empty where
        ``clock_check`` is not ``"refuse"``).
    listed : int
        Every problem listed, the refusals included.
    clock_warned : sequence of str, optional
        The clock and site-geometry problems the run warns about and goes on past
        (``clock_check = "warn"``), each among the problems.

    Returns
    -------
    str
        One indented line ending in a newline, naming each cause given (a unit and a
        clock problem both where both are listed), or ``""`` where nothing else is
        listed.
    """
    causes = []          # (what stops the run, how the rest was judged, the fix)
    if unit_refusals:
        causes.append(("the missing code", "with that code read as a value",
                       "add it to [input] missing")
                      if all("[input] missing" in text for text in unit_refusals) else
                      ("the unit mix-up", "on the values as read in that unit", "set the unit"))
    # Rg of 0 with the sun up is judged by the same sun: a clock hours off puts the
    # settings' noon in the record's night, and the zeros were blamed on the logger alone
    # (newuser55: utc_offset -10 for +10 named 1014 "lost values written as 0")
    clock = ("the clock or site geometry", "against the sun as [site] places it (Rg above "
             "the potential radiation, Rg of 0 with the sun up, the night mask)",
             "make the change it names")
    if clock_stops:
        causes.append(clock)
    # both at once: each named, where the unit's note alone counted the clock's refusal
    # among what may follow from the unit (a temperature's unit moves no sun; review74)
    warned = bool(clock_warned) and not clock_stops
    if (not causes and not warned) or listed <= (len(unit_refusals) + len(clock_stops)
                                                 + len(clock_warned)):
        return ""
    stops = [cause[0] for cause in causes]
    said = [f"the run stops at {' and at '.join(stops)} named above"] if stops else []
    if warned:
        # clock_check = "warn": the run goes on, the follow-on problems are the same
        said.append(f"{clock[0]} named above is only warned about (clock_check = "
                    '"warn")' if stops else
                    f"the run goes on past {clock[0]} named above (clock_check = "
                    '"warn")')
        causes.append(clock)
    _, judged, fixes = zip(*causes, strict=True)
    return (f"  note: {', and '.join(said)}; the other problems were judged "
            f"{' and '.join(judged)} and may follow from "
            f"{'it' if len(causes) == 1 else 'them'} alone: {', '.join(fixes)} and run "
            "check again\n")


def _command_check(args) -> int:
    """List every problem ``run`` would trip on; exit 0 clean, 1 problems, 2 error (the
    reader's notes, a layout understood, are listed apart and leave exit 0)."""
    from .config import Config
    from .coverage import coverage_table, format_check
    from .io import read_site_config
    from .pipeline import check_record, screening_summary

    site_config = read_site_config(args.config)
    config = Config.from_toml(args.config)
    frame, report = site_config.read(unit_problems="report")  # listed, exit 1; run refuses
    table = coverage_table(frame, report.interval_minutes)
    verdict, findings = check_record(frame, site_config.site, config,
                                     time_marks=report.time_marks,
                                     shift_applied_minutes=report.shift_minutes,
                                     columns=report.columns,
                                     time_zone=report.stamp_conversions.get("time_zone"))
    refuse = config.clock_check == "refuse"
    problems = [f"{text}{' (run stops)' if refuse else ''}"
                for text in (verdict.problems if verdict is not None else ())]
    counts = thresholds = None
    stopped = []
    if not any(finding.fatal for finding in findings):
        try:
            counts, thresholds = screening_summary(frame, site_config.site, config)
        except FluxpartError as error:             # run would stop in the u* stage
            stopped.append(f"u* threshold: {error} (run stops)")
    if thresholds is not None:
        findings = _without_detected_years(findings, thresholds)
    problems += [f"{finding}{' (run stops)' if finding.fatal else ''}" for finding in findings]
    problems += stopped
    if thresholds is not None:
        fallback = sorted(set(thresholds.loc[thresholds["source"] == "fallback", "year"]))
        if fallback and not any(f.stage == "u* threshold" for f in findings):
            problems.append(f"u* threshold: not detectable in {', '.join(map(str, fallback))}; "
                            f"the fixed ustar_threshold = {config.ustar_threshold:g} m s-1 "
                            "would be used there")
        from .config import Config
        from .ustar import unused_threshold_note
        unused = unused_threshold_note(thresholds, config.ustar_threshold,
                                       config.ustar_method, Config().ustar_threshold)
        if unused:
            problems.append(f"u* threshold: {unused}")
        # each note names its stage itself ("u* threshold: ...", as run warns it)
        problems += list(thresholds.attrs.get("setting_notes", ()))
        problems += [f"{text} (run stops)" for text in thresholds.attrs.get("e0_stops", ())]
    from .settings_notes import ignored_settings
    from .year_start_season import calendar_year_in_the_south, day_first_year_start

    problems += ignored_settings(config)
    order = day_first_year_start(config.year_start)
    problems += [f"budget year: {order}"] if order else []
    text = format_check(site_config.site, report, table, problems=problems,
                        notes=report.notes)
    clock_problems = tuple(verdict.problems) if verdict is not None else ()
    text += _follow_on_note(report.unit_refusals, clock_problems if refuse else (),
                            len(problems) + len(report.warnings),
                            () if refuse else clock_problems)
    # a fact of the setting, no problem: a note apart, exit status unchanged; not where
    # Rg says the site lies in the other hemisphere (a latitude of the wrong sign)
    south = (None if verdict is not None and verdict.hemisphere == "mismatch" else
             calendar_year_in_the_south(config.year_start, site_config.site.latitude,
                                        Config().year_start))
    text += f"\nnote: {south}\n" if south else ""
    print(text)
    print(_format_clock(verdict))
    if counts is not None:
        print("\nscreening of NEE (records per first reason, before the u* filter)")
        print(counts.to_string())
        print("\nu* threshold [m s-1] (bootstrap percentiles where drawn)")
        # the months name each season: "winter" is JJA south of the equator
        columns = [c for c in ("year", "period", "months", "threshold", "threshold_p05",
                               "threshold_p16", "threshold_p50", "threshold_p84",
                               "threshold_p95", "night_records", "source", "reason")
                   if c in thresholds.columns]
        print(thresholds[columns].to_string(index=False, float_format=lambda v: f"{v:.3f}"))
        for line in _outside_range_lines(thresholds):
            print(line)
    else:
        print("\nscreening and u* threshold: not estimated (run would stop; see the problems)")
    return 1 if (problems or report.warnings) else 0


def _outside_range_lines(thresholds) -> list[str]:
    """A note per row of the u* table whose threshold lies outside its bootstrap 5-95 %
    range as printed (:func:`fluxpart.ustar_range_note.outside_range_clause`)."""
    from .ustar_range_note import outside_range_clause

    if not {"threshold", "threshold_p05", "threshold_p95"} <= set(thresholds.columns):
        return []
    lines = []
    for row in thresholds.itertuples(index=False):
        clause = outside_range_clause(row.threshold, row.threshold_p05, row.threshold_p95,
                                      median=getattr(row, "threshold_p50", None))
        if clause:
            where = " ".join(str(getattr(row, name)) for name in ("year", "period")
                             if hasattr(row, name))
            lines.append(f"  note: {where}: the threshold {row.threshold:.3f} m s-1 lies "
                         f"{clause}")
    return lines


def _without_detected_years(findings, thresholds) -> list:
    """`findings` without the preflight's u* finding of a year whose seasons gave a threshold.

    The preflight counts a season's night records against what the detector needs with all
    its temperature classes (:func:`fluxpart.preflight.preflight`); the moving point test
    merges classes down to one where it cannot resolve them, so a season of fewer records
    can still give a threshold. Where the u* table shows the year's threshold detected
    from its own seasons, the finding that it would not be is dropped.
    """
    years = thresholds[(thresholds["period"] == "year") & (thresholds["source"] == "detected")]
    detected = {f"{int(year)}:" for year in years["year"]}
    return [finding for finding in findings
            if finding.stage != "u* threshold" or finding.message.split(" ", 1)[0] not in detected]


class _Parser(argparse.ArgumentParser):
    """argparse with a usage mistake as one ``error:`` line (exit 2), like every user error.

    argparse's own form is the usage block and then ``PROG: error: ...``; the help
    stays one option away. The sub-command parsers are of this class too
    (``add_subparsers`` makes them with the parent's class).
    """

    #: The arguments being parsed (set by :func:`_parse`), for :func:`_dash_named_path`.
    given: tuple = ()

    def error(self, message):
        self.exit(2, f"error: {self.prog}: {message}{_dash_named_path(self.given)} (see "
                     f"{self.prog} --help)\n")


def _dash_named_path(arguments) -> str:
    """A hint where an argument that argparse took for an option names an existing path.

    A result folder or file whose name begins with ``-`` (``-out``, ``-2021``; made by a
    script or a typo of ``--out``) is read as an option: ``fluxpart verify -out`` said
    only that the folder argument was missing. The shell gives no way around it; the
    usual one is a path that does not begin with the dash (``./-out``) or ``--`` before
    it (POSIX Utility Syntax Guideline 10 (m)).
    """
    for argument in arguments:
        if isinstance(argument, str) and argument.startswith("-") and argument not in ("-", "--") and "=" not in argument:
            try:
                exists = os.path.lexists(argument)
            except (OSError, ValueError):
                exists = False
            if exists:
                return (f"; {argument!r} was read as an option, but it is also a path here: "
                        f"give it as {'./' + argument!r}")
    return ""


def _path(text: str) -> str:
    """A file or folder argument; an empty one (an unset shell variable) is a usage mistake.

    ``Path("")`` is the current folder: ``--out ""`` made ``demo`` write its result
    folder over the working directory and ``report`` its page into it.
    """
    if not text.strip():
        raise argparse.ArgumentTypeError("an empty path (an unset shell variable?); give a "
                                         "file or folder")
    return text


def _parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="fluxpart",
        description="Carbon budgets from eddy-covariance flux-tower records.")
    parser.add_argument("--version", action="version", version=f"%(prog)s {__version__}")
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    demo = commands.add_parser(
        "demo", help="run the full pipeline on the invented demo site",
        description="Generate a year of the invented (fictional) Quillmoor site, run the full "
        "pipeline on it, print its annual budget and its error against the demo's known truth, "
        "and write the result folder with its report page. Exit 0: written; 2: error.")
    demo.add_argument("--out", type=_path, default="fluxpart-demo", help="output folder (default: %(default)s)")
    demo.add_argument("--seed", type=int, default=0, help="seed of the demo data (default: 0)")
    demo.add_argument("--quiet", action="store_true", help=QUIET_HELP)
    demo.set_defaults(handler=_command_demo)

    run = commands.add_parser(
        "run", help="process one site config (one or more years)",
        description="Read the records the site config names, run every stage and write the "
        "result folder (Parquet tables, manifest.json, run-log.json). Warnings are printed and "
        "kept in the manifest. Exit 0: written; 2: an input or usage error (nothing written).")
    run.add_argument("config", type=_path, help="site config (TOML)")
    run.add_argument("--out", type=_path, help="output folder (default: <config name>-output beside it)")
    run.add_argument("--quiet", action="store_true", help=QUIET_HELP)
    run.set_defaults(handler=_command_run)

    check = commands.add_parser(
        "check", help="validate the input only: coverage, gaps, problems",
        description="Read and validate the input without fitting: coverage per variable, gaps, "
        "ranges and units, the clock check, every stage's preflight, screening counts and the "
        "u* threshold. Exit 0: nothing found, or notes alone (the reader's notes: a layout "
        "understood, every value read as the file means it); 1: problems listed (the reader's "
        "warnings among them); 2: an input or usage error.")
    check.add_argument("config", type=_path, help="site config (TOML)")
    check.set_defaults(handler=_command_check)

    verify = commands.add_parser(
        "verify", help="rerun from DIR/manifest.json and compare",
        description="Check DIR against its manifest, rerun it from the recorded input and "
        "settings, and compare. Exit 0: bit-identical, or reproduced within floating-point "
        "rounding; 1: any other difference or tampering; 2: error. A batch output folder: its "
        "network.json seal is checked, then each site folder it lists is verified, one after "
        "another (serially, no cluster), one line per site with its result: line below it "
        "(and, without --quiet, what differs for a site not reproduced); a site the batch "
        "failed is "
        "'not computed by the batch' and does not fail the verdict by itself; exit 0 only if "
        "every computed site is reproduced, 1 if any is not or the seal does not hold, 2 on "
        "error (a listed site folder missing).")
    verify.add_argument("directory", type=_path,
                        help="result folder written by run, demo or batch, or a batch's "
                        "output folder (every site in it)")
    verify.add_argument("--input", type=_path, action="append", help="the input file, if it is not "
                        "where the manifest says (relative to DIR); once per file for several")
    verify.add_argument("--config", type=_path, help="the site config, likewise (default: the recorded "
                        "place, else the copy of its text in the manifest)")
    verify.add_argument("--exact", action="store_true",
                        help="demand bit identity: rounding differences exit 1")
    verify.add_argument("--quiet", action="store_true",
                        help="print only the verdict (naming a changed, missing or "
                        "unlisted file, and an input or site config that is another "
                        "file), the result: line naming which result the folder holds, and "
                        "the caution (same exit status); and the notes that change the folder "
                        "or what the verdict means: the folder repaired after an interrupted "
                        "write, a run into it running or stopped, nothing recomputed, the "
                        "site config at its recorded place edited since the run (the verdict "
                        "used the manifest's copy)")
    verify.add_argument("--detail", action="store_true",
                        help="print each differing metadata entry (a column's description or "
                        "unit, each copy) with both texts in full; by default a table's "
                        "metadata differences are one line naming the columns")
    verify.add_argument("--json", action="store_true",
                        help="print the report as one JSON object (verdict, exit_code, "
                        "differences, notes, caution, the text lines, and the recorded seed, "
                        "release, code fingerprint and whole SHA-256 of each input and the "
                        "site config) for a script; same exit status; an error (exit 2) is "
                        "still one error: line on stderr")
    verify.set_defaults(handler=_lazy("verify", "command_verify"))

    diff = commands.add_parser(
        "diff", help="what differs between two result folders",
        description="Compare two result folders: input hashes, settings, site, reader's "
        "record, versions, code fingerprint, platform, and how each annual number moved, in "
        "its unit. The inputs' SHA-256 (a tar archive and the table unpacked from it hold the "
        "same records), the reader's notes, library versions, the code fingerprint and "
        "platform facts (CPU features, BLAS) are facts of the run, listed apart. Exit 0: the "
        "same result, or the only differences of the result are tables whose values are "
        "equal within floating-point rounding (as verify judges it), whatever platform facts, "
        "versions or code, input hashes or reader's notes differ; 1: anything else differs; "
        "2: error.")
    diff.add_argument("first", type=_path, help="a result folder")
    diff.add_argument("second", type=_path, help="another result folder")
    diff.set_defaults(handler=_lazy("diff", "command_diff"))

    report = commands.add_parser(
        "report", help="figures and a self-contained HTML page",
        description="Draw the figures and one self-contained HTML page from the tables of a "
        "result folder (nothing is rerun). Exit 0: written; 2: error.")
    report.add_argument("directory", type=_path,
                        help="result folder written by run, demo or batch")
    report.add_argument("--out", type=_path, help="where to write the page (default: DIR/report/)")
    report.add_argument("--quiet", action="store_true", help=REPORT_QUIET_HELP)
    report.set_defaults(handler=_command_report)

    batch = commands.add_parser(
        "batch", help="many sites on Dask",
        description="Process every site config listed in SITES.toml, one Dask task per site. "
        "SITES.toml: [batch] sites = [\"a.toml\", \"towers/*.toml\"] (paths or globs relative to "
        "it) and optionally out = \"network-output\". Inputs travel to the workers as paths, so "
        "every worker must see the same file system. Exit 0: every site succeeded; 1: a site "
        "failed (listed in failures.parquet); 2: error.")
    batch.add_argument("sites", type=_path, help="SITES.toml listing site configs (paths or globs)")
    batch.add_argument("--scheduler", help="address of an existing Dask scheduler, e.g. "
                       "tcp://scheduler-host:8786; its workers must share this file system (default: a "
                       "local cluster of processes on 127.0.0.1)")
    batch.add_argument("--workers", type=int,
                       help="worker processes of the local cluster (default: 2, at most one "
                            "per site)")
    batch.add_argument("--out", type=_path, help="output folder (default: from SITES.toml)")
    batch.add_argument("--force", action="store_true", help="rerun sites already up to date")
    batch.add_argument("--site-time-limit", type=float, metavar="MINUTES",
                       help="minutes a site may run on its worker before it is taken for hung "
                            "and failed (default: [batch] site_time_limit, else 240)")
    batch.add_argument("--quiet", action="store_true", help=QUIET_HELP)
    batch.set_defaults(handler=_lazy("batch", "command_batch"))

    export = commands.add_parser(
        "export", help="write a result folder as CF-1.10 NetCDF (needs the netcdf extra) "
        "and/or as CSV tables with units (W3C CSVW metadata)",
        description="--netcdf: write the record series (at the record interval, 30 or 60 "
        "min), the daily and monthly series and the annual budget with its 95 % interval "
        "of a result folder as one CF-1.10 NetCDF file, carbon fluxes in kg m-2 s-1, sums "
        "in g m-2, times in UTC (the middle of each record, day, month or year) with cell "
        "bounds. --csv: write every "
        "table as a plain CSV file (UTF-8, comma, ISO 8601 times of interval starts with "
        "the UTC offset, empty = missing) into a "
        "new folder with csv-metadata.json (W3C CSVW: each column's datatype, UDUNITS-2 "
        "unit and description, the site and the time convention). Exit 0: written; 2: "
        "error (no file or folder left half-written).")
    export.add_argument("directory", type=_path,
                        help="result folder written by run, demo or batch")
    export.add_argument("--netcdf", type=_path, metavar="FILE",
                        help="NetCDF file to write, named .nc (record, daily, monthly and annual "
                             "series)")
    export.add_argument("--csv", type=_path, metavar="FOLDER",
                        help="new (or empty) folder for the CSV tables (one file per table) and "
                             "csv-metadata.json")
    export.set_defaults(handler=_command_export)
    return parser


#: What a command stopped by Ctrl-C, SIGTERM, SIGHUP or SIGXCPU leaves behind, by command ('' for the rest).
_AFTER_STOP = {
    "": "an output folder holds its earlier content or a complete new result, never a mix",
    "batch": "each site's result folder holds its earlier content or a complete new result, "
             "but the network tables and failures.parquet may still describe an earlier run "
             "or be only partly rewritten (network.json then says so and read_network refuses "
             "them): run the batch again, which skips the sites up to date and rewrites them "
             "whole",
    # the NetCDF file is written before the CSV folder: a stop between the two leaves the
    # new NetCDF file (its 'wrote' line printed) and no CSV folder (faults29)
    "export": "the NetCDF file and the CSV folder are each as before (the earlier file, or "
              "none) or complete and new where a 'wrote' line above names them, never "
              "half-written",
    "report": "the report folder holds the earlier report (or none) or the complete new one, "
              "never a mix",
    "verify": "nothing was written",
    "diff": "nothing was written",
    "check": "nothing was written",
}


class _Terminated(BaseException):
    """SIGTERM (``kill``, a batch scheduler's time limit), SIGHUP (the terminal or the
    SSH session closed) or another stop signal of :data:`_STOP_NAMES` raised in the
    running command.

    A BaseException like KeyboardInterrupt, so that it unwinds the same way: a result
    folder being staged is removed (:func:`fluxpart.resultdir.write_folder`) instead of
    being left beside the output folder by a process killed outright. ``signum`` is the
    signal received (SIGTERM where raised without one).
    """

    def __init__(self, signum=signal.SIGTERM):
        super().__init__(signum)
        self.signum = signum


def _posix_signal(name: str):
    """The signal called `name` where this system has it, else None."""
    return getattr(signal, name, None)


#: How the stop message names each signal handled as :class:`_Terminated`: SIGTERM, and
#: the signals whose default action ends the process outright (signal(7): "Term" or, for
#: SIGXCPU, "Core" (m)) that something other than a fault of the program sends: a closed
#: terminal, a CPU-time limit, a batch scheduler's warning before its time limit (Slurm's
#: ``--signal``, Grid Engine's ``-notify``, a job script's ``kill -USR1``), a timer
#: (``timeout -s ALRM``, an interval timer) and a UPS daemon's power failure. SIGQUIT
#: (a user asking for a core dump), SIGINT (KeyboardInterrupt) and the signals of a
#: program's own faults (SIGSEGV, SIGABRT, ...) are not among them.
_STOP_NAMES = {signal.SIGTERM: "terminated (SIGTERM)"} | {
    _posix_signal(name): said for name, said in (
        ("SIGHUP", "hung up (SIGHUP: the terminal or session closed)"),
        ("SIGXCPU", "out of CPU time (SIGXCPU: the process's CPU-time limit, ulimit -t or a "
                    "batch job's, was reached)"),
        ("SIGUSR1", "stopped by SIGUSR1 (a batch scheduler's warning before its time limit, "
                    "or a kill -USR1)"),
        ("SIGUSR2", "stopped by SIGUSR2 (a batch scheduler's warning before its time limit, "
                    "or a kill -USR2)"),
        ("SIGALRM", "stopped by SIGALRM (a timer's alarm: timeout -s ALRM, an interval timer)"),
        ("SIGVTALRM", "stopped by SIGVTALRM (a virtual-time timer ran out)"),
        ("SIGPROF", "stopped by SIGPROF (a profiling timer ran out)"),
        ("SIGPWR", "stopped by SIGPWR (a power failure announced by a UPS daemon)"))
    if _posix_signal(name) is not None}

#: Stop signals a timer or a limit sends again and again (SIGXCPU every CPU second past
#: the soft limit until the hard limit's SIGKILL, setrlimit(2) RLIMIT_CPU (m); an
#: interval timer's at every interval, setitimer(2) (m)): the first one sets them
#: ignored, so that a repeat cannot cut the removal of a staging folder short.
_REPEATING = {signum for signum in map(_posix_signal, ("SIGXCPU", "SIGALRM", "SIGVTALRM",
                                                        "SIGPROF")) if signum is not None}


def _raise_terminated(signum, frame):
    if signum in _REPEATING:
        signal.signal(signum, signal.SIG_IGN)
    raise _Terminated(signum)


def _open_file_limit() -> str:
    """This process's soft limit on open files (``ulimit -n``), as text; "?" where unknown."""
    try:
        import resource
    except ImportError:         # not POSIX
        return "?"
    soft = resource.getrlimit(resource.RLIMIT_NOFILE)[0]
    return "unlimited" if soft == resource.RLIM_INFINITY else str(soft)


def _install_stop_handlers() -> dict:
    """Handle SIGTERM, and the other signals of :data:`_STOP_NAMES` where they have their
    default action, as :class:`_Terminated`.

    Their default action ends the process outright, like ``kill -9``: a terminal or SSH
    session closed during ``run`` or ``report`` left the staging folder, and a report's lies
    inside the result folder, which then failed its manifest check in ``verify``, ``load``
    and ``diff``. SIGXCPU's (a soft CPU-time limit: ``ulimit -St``, a scheduler's CPU
    limit) did the same with no line and a core dump where the core limit allows
    (faults34); a scheduler's SIGUSR1 or SIGUSR2, a timer's SIGALRM and a UPS daemon's
    SIGPWR ended every command with no line, and a batch with its Dask workers and
    semaphores left to the system (faults35). A signal already ignored (``nohup``,
    ``disown`` under some shells) or handled by the caller stays so. Returns the handlers
    replaced, to be put back.
    """
    replaced = {signal.SIGTERM: signal.signal(signal.SIGTERM, _raise_terminated)}
    for signum in _STOP_NAMES:
        if signum != signal.SIGTERM and signal.getsignal(signum) is signal.SIG_DFL:
            replaced[signum] = signal.signal(signum, _raise_terminated)
    return replaced


#: Errors of a write that mean its output is lost where it goes (write(2) (m)): a full
#: disk, a full quota, a file-size limit (``ulimit -f``; Python ignores SIGXFSZ), an I/O
#: error of the device or of a hung-up terminal.
_OUTPUT_LOST = {errno.ENOSPC, errno.EDQUOT, errno.EFBIG, errno.EIO}


class _QuietWhenClosed:
    """Standard output that goes quiet once its reader has gone (``| head`` closed early).

    The command then runs to its end and exits with its own status (``check`` 1 on
    problems, ``verify`` 1 when not reproduced) instead of stopping at the first
    write with status 0. Once the pipe is found closed, standard output is pointed at
    the null device, so the interpreter's last flush at exit fails no more.
    """

    def __init__(self, stream):
        self._stream = stream
        self._closed = False
        #: the error that lost part of the output where it goes (a full disk, a file-size
        #: limit, an I/O error: ``verify > log`` on a full disk); None while none was lost
        self.lost: OSError | None = None

    def write(self, text):
        if not self._closed:
            try:
                return self._stream.write(text)
            except BrokenPipeError:
                self._quiet()
            except OSError as error:
                self._lose(error)
        return len(text)

    def flush(self):
        if not self._closed:
            try:
                self._stream.flush()
            except BrokenPipeError:
                self._quiet()
            except OSError as error:
                self._lose(error)

    def _lose(self, error: OSError):
        """Output refused by the place it goes (ENOSPC, EDQUOT, EFBIG, EIO: write(2) (m)).

        It raised out of the command's first ``print`` with a traceback and exit 1 (which
        for ``verify`` reads "NOT reproduced"), or, held in the buffer, made the
        interpreter's last flush fail (exit 120) after a complete result. The command now
        runs to its end with its output discarded and :func:`main` says so, exit 2.
        """
        if error.errno not in _OUTPUT_LOST:
            raise error
        self.lost = error
        self._quiet()
        try:
            self._stream.flush()    # now into the null device: the buffer is emptied
        except (OSError, ValueError):
            pass

    def _quiet(self):
        self._closed = True
        try:
            null = os.open(os.devnull, os.O_WRONLY)
            os.dup2(null, self._stream.fileno())
            os.close(null)
        except (OSError, ValueError, AttributeError):   # no file descriptor (a test capture)
            pass

    def __getattr__(self, name):
        return getattr(self._stream, name)


def _lazy(module: str, function: str):
    """A handler that imports ``fluxpart.<module>.<function>`` only when its command runs."""
    def handler(args) -> int:
        from importlib import import_module

        return getattr(import_module(f"fluxpart.{module}"), function)(args)
    return handler


#: The option a stray positional argument of a command most likely meant.
_OUTPUT_OPTION = {"run": "--out", "demo": "--out", "report": "--out", "export": "--netcdf"}


def _parse(argv):
    """Parse the command line; an argument left over is named with its command.

    argparse names leftovers from the top-level parser ("fluxpart: unrecognized
    arguments"), so ``fluxpart run site.toml out`` pointed at ``fluxpart --help``; a
    single folder or file given without its option is named with that option.
    """
    parser = _parser()
    _Parser.given = tuple(sys.argv[1:] if argv is None else argv)
    args, extra = parser.parse_known_args(argv)
    if extra:
        command = getattr(args, "command", None)
        prog = f"fluxpart {command}" if command else "fluxpart"
        option = _OUTPUT_OPTION.get(command)
        hint = ""
        if option and len(extra) == 1 and not extra[0].startswith("-"):
            hint = f"; to write to {extra[0]!r}, give it as {option} {extra[0]}"
        hint = hint or _dash_named_path(extra)
        parser.exit(2, f"error: {prog}: unrecognized arguments: {' '.join(extra)}{hint} "
                       f"(see {prog} --help)\n")
    return args


@contextlib.contextmanager
def _suppress_value_error():
    try:
        yield
    except (ValueError, OSError):
        pass


def _cwd_gone() -> bool:
    """Whether the process's current folder has been deleted."""
    try:
        os.getcwd()
    except FileNotFoundError:
        return True
    return False


def _output_lost(error: OSError, command: str, code: int) -> int:
    """Say that a command's standard output was lost (:class:`_QuietWhenClosed`); exit 2.

    The line goes to standard error; where that is lost too nothing more can be said and
    the status alone tells. The command's own status is named (for ``verify`` its
    verdict: 0 reproduced, 1 not), so the trail an auditor kept is known incomplete.
    """
    try:
        print(f"error: the output of fluxpart {command} could not be written to standard "
              f"output ({error.strerror or error}); the command ran to its end with its own "
              f"exit status {code}, but its report is lost: free space (or raise the "
              "file-size limit, ulimit -f) where the output goes and run it again",
              file=sys.stderr)
    except OSError:
        pass
    return 2


def _too_long(error: OSError) -> str:
    """The message for a path the operating system refuses as too long (ENAMETOOLONG)."""
    name = str(error.filename or "")
    shown = name if len(name) <= 80 else f"{name[:50]}...{name[-25:]}"
    named = f"the path {shown!r} ({len(name)} characters)" if name else "a path given"
    return (f"{named} is longer than this system allows "
            f"({os.strerror(errno.ENAMETOOLONG)}: one name in it, or the whole path, beyond "
            "the file system's limit, usually 255 bytes a name); choose a shorter name")


#: The commands that compute a result in this process and write (or compare) its platform
#: record (batch computes in its workers, whose `process` loads them first).
_COMPUTING = ("run", "demo", "verify")
#: commands that read results with NumPy only (fingerprint.reserve_numpy_blas)
_READING = ("report", "export", "diff")
#: The modules a command imports when it starts (its handler's imports), imported first by
#: :func:`_import_uncollected` where the command is the process's own.
_COMMAND_MODULES = {"run": ("fluxpart.config", "fluxpart.io", "fluxpart.pipeline",
                            "fluxpart.resultdir"),
                    "check": ("fluxpart.config", "fluxpart.coverage", "fluxpart.io",
                              "fluxpart.pipeline"),
                    "demo": ("fluxpart.demo", "fluxpart.config", "fluxpart.pipeline",
                             "fluxpart.report"),
                    "verify": ("fluxpart.verify",),
                    "report": ("fluxpart.report",),
                    "diff": ("fluxpart.diff",),
                    "export": ("fluxpart.export",)}


def _import_uncollected(names) -> None:
    """Import the modules `names` with the garbage collector paused, then freeze what is alive.

    The imports of pandas, pyarrow and fluxpart's own modules leave ~120,000 objects that
    live as long as the process; at :data:`_GC_THRESHOLDS` the collector passed over them
    three or four times while they were imported, finding next to nothing to free: 0.03 s
    CPU of every such command (~1.5 % of a `run` of a site-year, 3-5 % of `check` and
    `diff`, round speed48). Frozen (:func:`gc.freeze`), later passes skip them. A module
    that cannot be imported (an extra not installed) is left to the command, which says so
    as before. Only for the process's own command (:func:`main` without `argv`), whose
    objects are not kept beyond it: a caller's would stay frozen.
    """
    enabled = gc.isenabled()
    gc.disable()
    try:
        for name in names:
            try:
                importlib.import_module(name)
            except ImportError:
                pass
    finally:
        gc.freeze()
        if enabled:
            gc.enable()


def _tolerate_encoding(stream) -> str | None:
    """Let `stream` write characters its encoding lacks as escapes; return the error
    handler replaced (None where nothing changed).

    The output names units and ranges with characters beyond ASCII (µ, °, −, –). Where
    standard output is ASCII (``LC_ALL=C`` with ``PYTHONUTF8=0``, ``PYTHONIOENCODING=ascii``,
    an old terminal) or another 8-bit code page, the first such character raised
    UnicodeEncodeError: a traceback and exit 1 after a run had written its result, and
    whatever verify's verdict. Python writes standard error so already
    (``backslashreplace``).
    """
    errors = getattr(stream, "errors", None)
    # surrogateescape: Python's choice for standard output under the C or POSIX locale
    # (PYTHONUTF8=0), which writes a file name's undecodable bytes but fails on any other
    # character the encoding lacks
    if errors not in ("strict", "surrogateescape") or not hasattr(stream, "reconfigure"):
        return None
    try:
        stream.reconfigure(errors="backslashreplace")
    except (OSError, ValueError, AttributeError):   # a detached or closed stream
        return None
    return errors


try:
    import resource as _resource
except ImportError:             # not POSIX
    _resource = None


def _library_not_loaded(error: ImportError | SystemError) -> str | None:
    """What went wrong where `error` is a library refused its memory, else None.

    An ImportError in the dynamic loader's words (:data:`LOADER_MEMORY_WORDS`); a
    SystemError "error return without exception set" raised by the import machinery (a
    compiled module's initialisation that failed to allocate and said nothing: ulimit -v
    300 MB in run, faults36) only under a limit on this process's address space, the one
    cause seen for it.
    """
    text = str(error).lower()
    if isinstance(error, ImportError):
        return next((words for words in LOADER_MEMORY_WORDS if words in text), None)
    if "without exception set" not in text or not _address_space_limited():
        return None
    importing = any(frame.filename.startswith("<frozen importlib")
                    for frame in traceback.extract_tb(error.__traceback__))
    return "a compiled module's initialisation failed without a reason" if importing else None


def _address_space_limited() -> bool:
    """Whether this process runs under a limit on its address space or its data segment
    (``ulimit -v``, ``ulimit -d``: since Linux 4.7 the latter counts every private writable
    mapping, setrlimit(2) (m)).

    :mod:`resource` is imported with this module: a compiled module itself, it cannot be
    loaded once the limit is reached."""
    if _resource is None:       # not POSIX
        return False
    return any(_resource.getrlimit(which)[0] != _resource.RLIM_INFINITY
               for which in (_resource.RLIMIT_AS, _resource.RLIMIT_DATA))


def _end_process(code: int) -> None:
    """End the `fluxpart` process with `code` now, its output flushed, without the
    interpreter's clean-up (which a native library's failure can crash: SIGSEGV)."""
    for stream in (sys.stdout, sys.stderr):
        with contextlib.suppress(OSError, ValueError):
            stream.flush()
    os._exit(code)


def main(argv=None) -> int:
    """Run the command line; return the exit status.

    Called without `argv` (the ``fluxpart`` script, ``python -m fluxpart``), the process
    ends right after: the objects still alive are then frozen (:func:`gc.freeze`), so the
    interpreter's exit frees them without its garbage collection passes over every object
    the imports and the command left (~0.2 s CPU of a 2 s ``report``).
    """
    args = _parse(argv)
    thresholds = gc.get_threshold()
    gc.set_threshold(*_GC_THRESHOLDS)
    replaced = {}
    if threading.current_thread() is threading.main_thread():
        replaced = _install_stop_handlers()
    stdout = sys.stdout
    strict = _tolerate_encoding(stdout)
    # started with standard output closed (`>&-`, some service managers): Python then has
    # no sys.stdout, and the first print raised AttributeError, exit 1 whatever the verdict
    sys.stdout = _QuietWhenClosed(stdout if stdout is not None else open(os.devnull, "w"))
    try:
        if args.command in _COMPUTING:
            # before the command's memory is in use: OpenBLAS retries its buffers without
            # end where a memory limit leaves it no room (fingerprint.load_blas_libraries)
            from .fingerprint import load_blas_libraries

            load_blas_libraries()
        elif args.command in _READING:
            from .fingerprint import reserve_numpy_blas

            reserve_numpy_blas()
        if argv is None:
            _import_uncollected(_COMMAND_MODULES.get(args.command, ()))
        with warnings.catch_warnings():
            # the commands print a result's warnings themselves, once, in their output
            warnings.simplefilter("ignore", FluxpartWarning)
            code = args.handler(args)
        sys.stdout.flush()
        if sys.stdout.lost is not None:
            return _output_lost(sys.stdout.lost, args.command, code)
        return code
    except FluxpartError as error:
        print(f"error: {error}", file=sys.stderr)
        if argv is None and getattr(error, "end_process", False):
            # a NetCDF write that failed part-way (full disk, ulimit -f) leaves the HDF5
            # library with objects it cannot close; its clean-up at the interpreter's exit
            # then crashed the process (SIGSEGV, exit 139) after the error line. Only on this
            # path, and only as the `fluxpart` process itself (not main() called from Python),
            # the process ends here: the output is flushed, nothing else is left to do.
            _end_process(2)
        return 2
    except KeyboardInterrupt:
        # a result folder is written whole or not at all (fluxpart.resultdir), so an
        # interrupt leaves it as it was, or complete if it came after the swap
        print(f"error: interrupted (Ctrl-C); {_AFTER_STOP.get(args.command, _AFTER_STOP[''])}",
              file=sys.stderr)
        return 130
    except _Terminated as stop:
        said = _STOP_NAMES.get(stop.signum, f"stopped by signal {int(stop.signum)}")
        try:
            print(f"error: {said}; {_AFTER_STOP.get(args.command, _AFTER_STOP[''])}",
                  file=sys.stderr)
        except OSError:
            pass                    # a hung-up terminal takes no more output (EIO)
        return 128 + int(stop.signum)
    except ResourceShortage as error:
        # memory or a thread refused while a stored table was read (store.shortage): said
        # so, not "the file is damaged"
        print(f"error: {error}; {_AFTER_STOP.get(args.command, _AFTER_STOP[''])}: give the "
              "process more memory", file=sys.stderr)
        return 2
    except MemoryError as error:
        # a memory limit (ulimit -v, a container's or a batch job's) reached inside NumPy or
        # pandas: a traceback ending in _ArrayMemoryError; the write stages are undone on
        # any exception (resultdir.swapped_in), so the folder is as it was
        # an input file too large to read names itself (io.too_large_to_read)
        said = (f"{error}; {_AFTER_STOP.get(args.command, _AFTER_STOP[''])}"
                if isinstance(error, InputTooLarge) else
                "ran out of memory (a memory limit of this process: ulimit -v or -d, a "
                f"container's or a batch job's); "
                f"{_AFTER_STOP.get(args.command, _AFTER_STOP[''])}: give the process more "
                "memory")
        print(f"error: {said}", file=sys.stderr)
        if argv is None:
            # the interpreter's clean-up under the same limit crashed after the line
            # (`check` under ulimit -d 60 MB: SIGSEGV, exit 139, faults38); the command's
            # work is undone and its output flushed, so the `fluxpart` process ends here
            _end_process(2)
        return 2
    except (ImportError, SystemError) as error:
        words = _library_not_loaded(error)
        if words is None:
            raise
        # a compiled library (pandas', SciPy's OpenBLAS) that a memory limit leaves no room to
        # load: a 15-line traceback, exit 1 (ulimit -v 150 to 300 MB in run and verify,
        # faults36)
        print(f"error: ran out of memory loading a library ({words}; a memory limit of "
              "this process: ulimit -v or -d, a container's or a batch job's); "
              f"{_AFTER_STOP.get(args.command, _AFTER_STOP[''])}: give the process more "
              "memory", file=sys.stderr)
        if argv is None:
            # a library loaded part-way crashed the interpreter's clean-up at exit (SIGSEGV,
            # exit 139 after the line, ulimit -v 280 MB); the command's work is undone and
            # its output flushed, so the process ends here, as the `fluxpart` process only
            _end_process(2)
        return 2
    except RuntimeError as error:
        if not str(error).startswith("Symlink loop"):
            raise
        # Path.resolve of a path through a symbolic link that leads to itself (Python
        # < 3.13 raises RuntimeError, later ones OSError ELOOP): a traceback in run and report
        where = str(error).removeprefix("Symlink loop from ").strip("'")
        print(f"error: the path {where!r} leads through a symbolic link back to itself "
              f"({os.strerror(errno.ELOOP)}); fix or remove the link, or give another path",
              file=sys.stderr)
        return 2
    except BrokenPipeError:          # output piped into e.g. `head`, which closed early
        sys.stderr.close()
        return 0
    except OSError as error:
        if error.errno == errno.ENOENT and error.filename is None and _cwd_gone():
            # os.getcwd() (Path.absolute, Path.resolve of a relative path) in a folder
            # deleted while the shell was in it: a traceback before
            print("error: the current folder no longer exists (deleted or replaced while "
                  "this shell was in it), so relative paths cannot be found: cd to an "
                  "existing folder, or give absolute paths", file=sys.stderr)
            return 2
        if error.errno == errno.ENOMEM:
            # the system refused memory to a system call (importlib listing a package
            # folder under ulimit -v 600 MB in `export`: a 35-line traceback, exit 1)
            print(f"error: ran out of memory ({error.strerror}; a memory limit of this "
                  "process: ulimit -v or -d, a container's or a batch job's); "
                  f"{_AFTER_STOP.get(args.command, _AFTER_STOP[''])}: give the process more "
                  "memory", file=sys.stderr)
            return 2
        if error.errno in (errno.EMFILE, errno.ENFILE):
            # a limit on open files met outside the places that name it (the clean-up of
            # verify's scratch folder under ulimit -n 5: a 33-line traceback, exit 1, which
            # for verify reads "NOT reproduced", faults34)
            whose = ("the system's" if error.errno == errno.ENFILE else
                     f"this process's, ulimit -n {_open_file_limit()}")
            print(f"error: too many open files ({error.strerror}; the limit is {whose}); "
                  f"{_AFTER_STOP.get(args.command, _AFTER_STOP[''])}: raise the limit "
                  "(ulimit -n 1024) and run again", file=sys.stderr)
            return 2
        if error.errno == errno.ELOOP:
            print(f"error: the path {str(error.filename or '')!r} leads through a symbolic "
                  f"link back to itself ({os.strerror(errno.ELOOP)}); fix or remove the link, "
                  "or give another path", file=sys.stderr)
            return 2
        if error.errno in (errno.EACCES, errno.EPERM) and error.filename is not None:
            # a path below a folder this user may not enter (another user's result under a
            # private umask, in a shared tree): pathlib's exists() and is_file() raise
            # PermissionError instead of answering (Python 3.11), a 20-line traceback, exit 1
            # in run, report and export; the write stages were undone as the error unwound
            print(f"error: {str(error.filename)!r}: {error.strerror}; this user may not enter "
                  "or change it (another user's folder, or one written under a private "
                  "umask): choose another place, or ask its owner to open it to others "
                  f"(chmod -R g+rwX); {_AFTER_STOP.get(args.command, _AFTER_STOP[''])}",
                  file=sys.stderr)
            return 2
        if error.errno != errno.ENAMETOOLONG:
            raise
        # a path given on the command line (or a name derived from it) longer than the
        # file system allows: pathlib's exists() and is_file() raise this one instead of
        # answering False (Python 3.11), deep inside every command's checks
        print(f"error: {_too_long(error)}", file=sys.stderr)
        return 2
    finally:
        sys.stdout = stdout
        if strict is not None:
            with _suppress_value_error():
                stdout.reconfigure(errors=strict)
        for signum, handler in replaced.items():
            signal.signal(signum, handler)
        gc.set_threshold(*thresholds)
        if argv is None:
            gc.freeze()
