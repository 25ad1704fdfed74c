"""The result of a run: its tables, site, settings, warnings and provenance.

:class:`Result` is what :func:`fluxpart.pipeline.process` returns; :meth:`Result.write`
writes it as a result folder (:mod:`fluxpart.resultdir`) and :func:`load` reads one
back. Writers and readers of results (the NetCDF export, the report) use this module,
not the orchestrator.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from .config import Config, absent_added_settings
from .site import Site

__all__ = ["TABLES", "Result", "load"]


@dataclass(frozen=True)
class Result:
    """Everything one run of :func:`process` produced.

    Attributes
    ----------
    site : Site
        The site processed.
    config : Config
        The settings used.
    timeseries : pandas.DataFrame
        One row per interval (start-stamped DatetimeIndex ``time``): the canonical
        inputs, solar geometry, screening flags, filled drivers, ``nee_filled`` and
        its fill columns, ``gpp_nighttime``, ``reco_nighttime``, ``gpp_daytime``,
        ``reco_daytime`` [µmol m-2 s-1]. ``rejection_reason``, ``nee_fill_method``
        and the ``*_fill_quality`` columns are labelled categoricals (``"measured"``,
        ``"A"``, ``"B"``, ``"C"``, ``"interpolated"`` (a short driver gap),
        ``"unfilled"``; reason names). Units and
        descriptions: :func:`fluxpart.schema.describe`.
    daily, monthly, annual : pandas.DataFrame
        Budgets [g C m-2 per period] with coverage, indexed by ``date``, ``month``
        (first day) and budget ``year``; sums over the records present (``complete``
        false where a period lacks records or has unfilled NEE). ``annual`` carries
        ``ustar_threshold`` [m s-1] and the u* scenario spread.
    ustar : pandas.DataFrame
        u* thresholds per year and season with their bootstrap percentiles [m s-1].
    audit : pandas.DataFrame
        Per year: records present, rejected by each screening reason, measured and
        filled by quality class, and the share of the |NEE| sum measured vs filled.
    parameters : dict of str to pandas.DataFrame
        Fitted parameter tables: ``nighttime_e0``, ``nighttime_e0_annual``,
        ``nighttime_rref``, ``daytime``, and the uncertainty models
        ``random_error_bins``, ``random_error_model``, ``gapfill_error_model``,
        ``ustar_bootstrap``.
    screening_counts : pandas.Series
        Records per screening reason.
    warnings : tuple of str
        Things a reader of the budget must know (fall-backs used, methods that
        disagree, partial years); :func:`process` also issues each through
        :func:`warnings.warn` as a :class:`~fluxpart.errors.FluxpartWarning`.
    provenance : dict
        Input file(s) and their SHA-256 where known, the screening thresholds;
        ``clock``: the clock and geometry verdict (:meth:`fluxpart.clock.ClockVerdict.to_dict`:
        status, estimated shift of Rg [min] and its spread, hemisphere) and the
        ``clock_check`` setting; ``preflight``: the non-fatal findings of
        :mod:`fluxpart.preflight` (stage: message).
    """

    site: Site
    config: Config
    timeseries: pd.DataFrame
    daily: pd.DataFrame
    monthly: pd.DataFrame
    annual: pd.DataFrame
    ustar: pd.DataFrame
    audit: pd.DataFrame
    parameters: dict
    screening_counts: pd.Series
    warnings: tuple = ()
    provenance: dict = field(default_factory=dict)
    #: Internal: the record of the result as :func:`process` made it
    #: (:func:`fluxpart.result_edits.as_computed`), made on creation and handed on by
    #: ``dataclasses.replace``, pickling and copying, so that :meth:`write` refuses tables,
    #: settings or warnings exchanged since (round mistakes39). Not a parameter to pass.
    _computed: dict | None = field(default=None, repr=False, compare=False)

    def __post_init__(self):
        # the tables as computed (lazy copies), for write() to refuse tables changed since
        from .result_edits import as_computed, kept_tables
        kept = kept_tables(self.tables())
        object.__setattr__(self, "_as_computed", kept)
        if self._computed is None:
            object.__setattr__(self, "_computed", as_computed(self, kept))

    def __getstate__(self):
        from .result_edits import portable
        state = dict(self.__dict__)
        state.pop("_as_computed", None)         # not pickled twice: made again on load
        if state.get("_computed") is not None:  # the record as digests, not a second copy
            state["_computed"] = portable(state["_computed"])
        return state

    def __setstate__(self, state):
        self.__dict__.update(state)
        self.__post_init__()

    def __repr__(self) -> str:
        years = ", ".join(str(year) for year in self.annual.index)
        return (f"<fluxpart.Result {self.site.name!r}, {len(self.timeseries)} records, "
                f"years {years or 'none'}, {len(self.warnings)} warning(s)>")

    def _repr_html_(self) -> str:
        """A notebook's view: the annual sums with NEE's stated 95 % interval, the
        warnings and the caution every written result carries (a notebook showed the
        sums alone before review36: numbers an auditor could take for a credit)."""
        import html

        from .manifest import CAUTION

        columns = [c for c in ("nee", "nee_ci95_low", "nee_ci95_high", "gpp_nighttime",
                               "gpp_daytime", "reco_nighttime", "reco_daytime",
                               "share_measured") if c in self.annual.columns]
        # sums to 0.1 g C m-2; a share to two decimals, as `run` prints it (0.553 read
        # "0.6" before review39)
        table = self.annual[columns].to_html(
            float_format=lambda v: f"{v:.1f}",
            formatters={"share_measured": lambda v: f"{v:.2f}"} if "share_measured" in columns
            else None)
        interval = ("; nee_ci95_low / nee_ci95_high: the stated 95 % interval of NEE, "
                    "systematic measurement errors not included"
                    if "nee_ci95_low" in columns else "")
        notes = "".join(f"<li>{html.escape(text)}</li>" for text in self.warnings)
        return (f"<p><b>fluxpart.Result</b> {html.escape(self.site.name)}: "
                f"{len(self.timeseries)} records; annual sums [g C m-2]{interval}</p>{table}"
                + (f"<ul>{notes}</ul>" if notes else "")
                + f"<p><i>Caution.</i> {html.escape(CAUTION)}</p>")

    def to_xarray(self):
        """Return the record (30 or 60 min), daily, monthly and annual series as a CF-1.10
        :class:`xarray.Dataset`.

        Needs the ``netcdf`` extra; see :func:`fluxpart.export.to_xarray`.
        """
        from .export import to_xarray

        return to_xarray(self)

    def tables(self) -> dict:
        """Every table of the result by its file name in a result folder."""
        tables = {name: getattr(self, name) for name in TABLES}
        for name, table in self.parameters.items():
            tables[f"parameters_{name}"] = table
        counts = self.screening_counts.rename("records").to_frame()
        counts.index = counts.index.rename("reason")
        tables["screening"] = counts
        return tables

    def write(self, directory, *, lock_timeout: float | None = None,
              lock_held=False) -> Path:
        """Write the tables and ``manifest.json`` to `directory`, replacing it as a whole.

        See :func:`fluxpart.resultdir.write_folder`: the folder holds either the
        earlier result or this one, never a mix; a second writer of the same
        folder waits up to `lock_timeout` seconds (default 600); `lock_held`: the
        caller holds the folder's lock already (True, or the
        :class:`~fluxpart.resultdir.HeldLock` :func:`~fluxpart.resultdir.folder_lock`
        yields, taken again where it no longer guards `directory`). Returns the folder.

        Raises :class:`~fluxpart.errors.OutputError` where a table was changed after the
        run (a sum converted in place, a column added): the folder would hold numbers
        fluxpart did not compute under its descriptions and seal
        (:func:`fluxpart.result_edits.changed_tables`); also where a table, the site, the
        config, the warnings or the provenance was exchanged by ``dataclasses.replace``
        or changed before the result was pickled or copied
        (:func:`fluxpart.result_edits.changed_since_digests`).
        """
        from .errors import OutputError
        from .result_edits import changes
        from .resultdir import DEFAULT_LOCK_TIMEOUT, write_folder

        changed = changes(self)
        if changed:
            raise OutputError(
                f"Result.write: table(s) changed after the run: {', '.join(changed)}; a "
                "result folder holds the tables fluxpart computed, described and sealed as "
                "such (verify would vouch for the changed numbers): write your own tables "
                "elsewhere (e.g. table.to_parquet(path)) and this result as it was computed "
                "(process it again, or change a copy: result.annual.copy(); "
                "dataclasses.replace and a result changed before pickling count as changes)")
        return write_folder(directory, self.tables(), site=self.site.to_dict(),
                            config=self.config.to_dict(), seed=self.config.seed,
                            provenance=self.provenance, warnings=self.warnings,
                            lock_timeout=DEFAULT_LOCK_TIMEOUT if lock_timeout is None
                            else lock_timeout, lock_held=lock_held)


#: The tables every result has, by their file names in a result folder.
TABLES = ("timeseries", "daily", "monthly", "annual", "ustar", "audit")


def load(directory) -> Result:
    """Load a result folder written by :meth:`Result.write`.

    Parameters
    ----------
    directory : path-like
        Folder with ``manifest.json`` and the Parquet tables.

    Returns
    -------
    Result
        The same tables, site and settings that were written. A setting added after
        the release that wrote the folder (:data:`fluxpart.config.ADDED_SETTINGS`),
        absent from its recorded settings, takes the value that behaves as that
        release did, not this release's default: the settings say what computed the
        tables (as ``fluxpart verify`` reruns such a folder).

    Raises
    ------
    InputFileError
        If the folder does not match its manifest (an edited manifest, a table
        whose bytes changed, a missing or an extra file): the file is named.

    Notes
    -----
    Each table's ``attrs`` hold ``units`` (UDUNITS-2) and ``descriptions`` of its
    columns, the ``site``, ``interval_minutes``, ``time_convention`` and ``table``.
    One table alone can be read without fluxpart: ``pandas.read_parquet(FILE)`` gives
    the same ``attrs`` (from the file key ``PANDAS_ATTRS``; tables written by 0.22.0 and
    earlier lack it) with the stored index as a first column, and no check against the
    manifest.
    """
    from .resultdir import read_folder

    manifest, tables = read_folder(directory)
    parameters = {name[len("parameters_"):]: table for name, table in tables.items()
                  if name.startswith("parameters_")}
    recorded = manifest["config"]
    as_written = {added.name: added.earlier for added in absent_added_settings(recorded)}
    config = Config.from_mapping({**as_written, **recorded}, where="manifest config:")
    return Result(site=Site(**manifest["site"]), config=config,
                  **{name: tables[name] for name in TABLES},
                  parameters=parameters, screening_counts=tables["screening"]["records"],
                  warnings=tuple(manifest["warnings"]), provenance=manifest["provenance"])
