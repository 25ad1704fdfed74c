"""CF-1.10 NetCDF export of a result: ``fluxpart export DIR --netcdf FILE``, ``Result.to_xarray()``.

A modeller who calibrates or benchmarks a land-surface model wants the series in the
form such models read: NetCDF following the CF conventions, fluxes of carbon in
kg m-2 s-1, times in UTC with their cell bounds, quality flags that explain
themselves and the site as global attributes. :func:`to_xarray` builds that
:class:`xarray.Dataset` from a :class:`~fluxpart.result.Result` (in memory or loaded
from a result folder) and :func:`write_netcdf` writes it.

Layout (one file, four time axes):

- ``time`` (one per record): NEE, GPP and Reco of both methods as carbon mass fluxes
  [kg m-2 s-1] (the record means; ``cell_methods = "time: mean"``), the 1-sigma random
  error of NEE, the drivers (Rg, Tair, VPD, u*, Tsoil where present) and the flag
  variables ``nee_fill_quality`` and ``rejection_reason`` (``flag_values`` /
  ``flag_meanings``), and ``<driver>_fill_quality`` for each gap-filled driver (its
  ``ancillary_variables``); ``nep`` links NEE's flags and random error, and
  ``gpp_nighttime`` (Reco - NEE) ``nee_fill_quality`` and ``nee_random_error``;
- ``day`` (one per local standard day): the same fluxes as daily means [kg m-2 s-1]
  and as daily sums [g m-2, carbon] (``cell_methods = "day: sum"``), with their 1-sigma
  where the run estimated it, that of the sum [g m-2] and that of the mean
  [kg m-2 s-1], each with a ``comment`` saying what it covers (:func:`_sigma_variables`);
- ``month`` (one per calendar month of local standard time) and ``year`` (one per budget
  year, bounded by the annual table's ``period_start`` and ``period_end``): the sums
  ``<flux>_monthly_sum`` / ``<flux>_annual_sum`` [g m-2, carbon], the means
  [kg m-2 s-1], the 1-sigma ``*_sum_sigma`` and, for the annual budget, the ends of its
  stated 95 % interval ``*_annual_sum_ci95_low`` / ``_high``, the coverage shares and
  the u* threshold of each year (:func:`_period_variables`), and the auxiliary coordinate
  ``budget_year``, the annual table's label (the calendar year a budget year starts in);
  ``local_date`` (on ``day``) and ``local_month`` (on ``month``) likewise hold the daily
  and monthly tables' labels as ISO 8601 strings, on which the files of sites in other
  time zones (whose local days are other UTC cells) and the Parquet tables join;
- ``time_bounds``, ``day_bounds``, ``month_bounds`` and ``year_bounds`` give each cell's
  start and end; coordinate values
  are the cell midpoints, in UTC (the site's local standard time minus its
  ``utc_offset``, which is also a global attribute);
- scalar coordinates ``lat``, ``lon`` and ``station_name`` (``featureType =
  "timeSeries"``) and the site, the record length and the caution (``comment``, with
  :data:`fluxpart.manifest.TONNES_CAUTION`: what NEE leaves out, since leftovers57) as
  global attributes,
  with CF's ``title``, ``institution`` (a placeholder: fluxpart records none), ``source``
  (the release), ``history`` and ``references`` (the methods' publications);
- the respiration choices the partitioned series rest on (the temperature, its delay,
  how it was chosen, the constant-Q10 form's weight;
  :func:`fluxpart.respiration_facts.respiration_facts`) as global attributes
  ``respiration_temperature*`` and ``respiration_form_share_constant_q10``, and as one
  sentence in the ``comment`` of each GPP and Reco variable.

Standard names are given where the CF standard name table has one that fits (checked
against version 93 of the table: :data:`STANDARD_NAMES`); NEE and Reco have none, so
they carry a ``long_name`` only, and the downward net flux ``nep`` = -NEE carries the
CF name of the net land carbon flux.

Needs the ``netcdf`` extra (xarray, h5netcdf and h5py; netCDF4 is used instead when it
is installed).

References
----------
Eaton, B. et al. (2022). NetCDF Climate and Forecast (CF) Metadata Conventions,
version 1.10. https://cfconventions.org (sections 2.5.1 missing data, 3.3 standard names,
3.5 flags, 4.4 time, 7.1 cell boundaries, 7.3 cell methods, 9 discrete sampling geometries).
"""

from __future__ import annotations

import errno
import os
import re
import tempfile
from contextlib import ExitStack
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import FluxpartError, InputFileError, OutputError
from .manifest import TONNES_CAUTION, recorded_paths, shown_path
from .respiration_facts import respiration_comment, respiration_facts
from .store import (
    file_mode,
    full_disk_remedy,
    remove_stale,
    require_owner_access,
    set_mode,
    special_kind,
)
from .units import KG_CARBON_PER_UMOL

__all__ = ["INSTITUTION_PLACEHOLDER", "REFERENCES", "STANDARD_NAMES", "command_export",
           "to_xarray", "write_netcdf", "written_by_fluxpart"]

#: CF standard names used, per exported variable. Recalled from the CF standard name
#: table (m) when first written; each found, with canonical units the exported unit
#: converts to, in the CF standard name table version 93 (the copy shipped with the IOOS
#: compliance checker 6.1.0, read in round modeller25), which has no name for total
#: ecosystem respiration (only plant and heterotrophic respiration apart) nor for a net
#: upward land CO2 flux: NEE and Reco carry a ``long_name`` only.
STANDARD_NAMES = {
    "gpp": "gross_primary_productivity_of_biomass_expressed_as_carbon",
    # downward = uptake by the land: -NEE
    "nep": ("surface_net_downward_mass_flux_of_carbon_dioxide_expressed_as_carbon_due_to_all_"
            "land_processes_excluding_anthropogenic_land_use_change"),
    "rg": "surface_downwelling_shortwave_flux_in_air",
    "tair": "air_temperature",
    "tsoil": "soil_temperature",
    "vpd": "water_vapor_saturation_deficit_in_air",
    "rh": "relative_humidity",
    # the tower's u*: "a reference wind velocity derived from the relationship between air
    # density and downward stress", near the surface (the table's description)
    "ustar": "magnitude_of_surface_friction_velocity_in_air",
    "time": "time",
    "lat": "latitude",
    "lon": "longitude",
}

_CONVENTIONS = "CF-1.10"
#: The first bytes of an HDF5 file (a netCDF-4 file is one), at offset 0 in ours.
_HDF5_SIGNATURE = b"\x89HDF\r\n\x1a\n"
_TIME_UNITS = "minutes since 1970-01-01 00:00:00"
_CALENDAR = "proleptic_gregorian"
_FLUXES = {
    "nee": ("nee_filled", "net ecosystem exchange of CO2 as carbon, gap-filled; positive = "
            "release to the atmosphere, negative = uptake"),
    "gpp_nighttime": ("gpp_nighttime", "gross primary production as carbon, nighttime method "
                      "(Reco - NEE); positive = uptake by photosynthesis; at night it "
                      "scatters around zero and can be negative"),
    "gpp_daytime": ("gpp_daytime", "gross primary production as carbon, daytime "
                    "light-response method; positive = uptake by photosynthesis, >= 0"),
    "reco_nighttime": ("reco_nighttime", "ecosystem respiration as carbon, nighttime method "
                       "(Lloyd-Taylor); positive = release"),
    "reco_daytime": ("reco_daytime", "ecosystem respiration as carbon, daytime light-response "
                     "method; positive = release"),
}
_DRIVERS = {   # canonical name -> (file column, export unit, factor, long name)
    "rg": ("rg_filled", "W m-2", 1.0, "global radiation, gap-filled"),
    "tair": ("tair_filled", "degC", 1.0, "air temperature, gap-filled"),
    "vpd": ("vpd_filled", "Pa", 100.0, "vapour pressure deficit, gap-filled"),
    "tsoil": ("tsoil_filled", "degC", 1.0, "soil temperature, gap-filled"),
    "ustar": ("ustar", "m s-1", 1.0, "friction velocity u*, as measured"),
    "rh": ("rh", "percent", 1.0, "relative humidity, as measured"),
}
#: CF-1.10 2.6.2 ``institution`` ("where the original data was produced"): no setting of
#: fluxpart names it, so the file says so and what to put there.
INSTITUTION_PLACEHOLDER = ("not stated: fluxpart records no institution; put the institution "
                           "that runs the site here before submitting the file to a data "
                           "repository")
#: CF-1.10 2.6.2 ``references`` ("published or web-based references that describe the data
#: or methods used to produce it"): the methods of the series in the file, as the modules
#: computing them cite them (journal, volume and pages recalled (m) where not in
#: ../shared/reference-checks.md; Barr et al. 2013 wholly (m)).
REFERENCES = (
    "Reichstein, M. et al. (2005), Global Change Biology 11, 1424-1439 (gap filling by "
    "marginal distribution sampling; nighttime partitioning); Lloyd, J. and Taylor, J. A. "
    "(1994), Functional Ecology 8, 315-323 (temperature response of respiration); Lasslop, "
    "G. et al. (2010), Global Change Biology 16, 187-208 (daytime light-response "
    "partitioning); Papale, D. et al. (2006), Biogeosciences 3, 571-583 (screening, u* "
    "threshold); Barr, A. G. et al. (2013), Agricultural and Forest Meteorology 171-172, "
    "31-45 (u* change-point detection); Richardson, A. D. et al. (2006), Agricultural and "
    "Forest Meteorology 136, 1-18 (random error); Eaton, B. et al. (2022), NetCDF Climate "
    "and Forecast (CF) Metadata Conventions 1.10")
_CAUTION = ("A tower budget is one line of evidence for carbon-credit quantification, not a "
            "certified credit; the applicable crediting methodology and accredited verification "
            "decide how it may be used.")


def _xarray():
    from .fingerprint import load_blas_libraries

    # xarray imports dask.array, which imports SciPy's FFT and its OpenBLAS: without room
    # for its buffers OpenBLAS retried without end (`export --netcdf` hung under ulimit -d
    # 200 MB, faults38); loaded first where the room is asked, the lack is one line
    load_blas_libraries()
    try:
        import xarray
    except ImportError:
        from .install_hints import install_command

        raise FluxpartError("the NetCDF export needs xarray and a NetCDF engine; install the "
                            f"netcdf extra: {install_command('netcdf')}") from None
    return xarray


def _engine() -> str:
    # h5netcdf reads and writes through h5py, which its recent releases no longer install
    # themselves (their package metadata lists h5py under an extra of their own): without
    # it the write failed deep in xarray with a traceback
    refused = None
    for modules, engine in ((("netCDF4",), "netcdf4"), (("h5netcdf", "h5py"), "h5netcdf")):
        try:
            for module in modules:
                __import__(module)
        except ModuleNotFoundError:
            continue
        except ImportError as error:    # installed, its compiled library not loaded
            refused = refused or (module, " ".join(str(error).split()))
            continue
        return engine
    if refused:
        raise FluxpartError(_not_loaded(*refused))
    from .install_hints import install_command, package_command

    raise FluxpartError("writing NetCDF needs netCDF4, or h5netcdf together with h5py (recent "
                        "h5netcdf releases do not install h5py themselves); install the netcdf "
                        f"extra: {install_command('netcdf')} (or {package_command('h5py')})")


def _not_loaded(module: str, text: str) -> str:
    """The line for a NetCDF library that is installed but whose compiled part the system
    did not load.

    Under a memory limit (``ulimit -v`` 450 and 550 MB, `export` of the grassland
    example) the dynamic loader could not map h5py's HDF5 library ("failed to map
    segment from shared object") and `export` said to install the netcdf extra, which
    was installed. A module that is absent raises :class:`ModuleNotFoundError`, any other
    :class:`ImportError` is a module found and not loaded (Python documentation, "The
    import system" (m)); the loader's words name the likely cause.

    References
    ----------
    glibc's dynamic loader, ``dlopen(3)``: "failed to map segment from shared object" where
    ``mmap(2)`` is refused (ENOMEM under a memory limit, EPERM on a ``noexec`` mount) (m).
    """
    cause = ("the system refused it memory (a memory limit of this process: ulimit -v, a "
             "container's or a batch job's; give the process more memory) or its file "
             "system does not allow loading code (noexec)"
             if "map" in text or "allocate memory" in text.lower()
             else "reinstall it in this environment")
    return f"writing NetCDF: {module} is installed but could not be loaded ({text}): {cause}"


def _interval_minutes(index: pd.DatetimeIndex) -> int:
    steps = np.diff(index.to_numpy().astype("datetime64[s]").astype(np.int64))
    if steps.size == 0:
        raise InputFileError("the timeseries has fewer than two records; nothing to export")
    return int(np.median(steps) // 60)


def _flag(values, name: str, long_name: str, comment: str = ""):
    """Codes, attributes of a CF flag variable from a labelled (categorical) column.

    `comment`, where given (the column's description in the result's tables), says what
    each of the ``flag_meanings`` means: the words alone ("A B C") do not (CF-1.10
    section 2.6.2, ``comment``: "miscellaneous information about the data or methods
    used to produce it").
    """
    labels = pd.Categorical(values) if not isinstance(values, pd.Categorical) else values
    if not isinstance(getattr(values, "dtype", None), pd.CategoricalDtype) and \
            pd.api.types.is_numeric_dtype(np.asarray(values)):
        raise FluxpartError(f"column {name!r} holds codes, not labels; export a result of this "
                            "version of fluxpart (load the folder again or rerun)")
    codes = np.asarray(labels.codes, dtype=np.int8)
    if (codes < 0).any():
        raise FluxpartError(f"column {name!r} has records without a label; cannot write it as "
                            "a CF flag")
    meanings = " ".join(str(c).replace(" ", "_") for c in labels.categories)
    attrs = {"long_name": long_name, "flag_values": np.arange(len(labels.categories),
                                                              dtype=np.int8),
             "flag_meanings": meanings}
    if comment:
        attrs["comment"] = comment
    return codes, attrs


def _bounds(starts: pd.DatetimeIndex, length: pd.Timedelta, offset: pd.Timedelta):
    """UTC cell midpoints and (n, 2) bounds of cells starting at local `starts`."""
    start_utc = (starts - offset).to_numpy()
    end_utc = (starts + length - offset).to_numpy()
    middle = start_utc + (end_utc - start_utc) / 2
    return middle, np.stack([start_utc, end_utc], axis=1)


def _refuse_changed(result) -> None:
    """Refuse a result whose tables were changed since :func:`fluxpart.process` made it.

    Every variable of the Dataset carries the unit and meaning of the column it came
    from as computed: ``result.annual["nee"] *= 44.01 / 12.011`` was exported as
    ``nee_annual_sum`` -884.7 "g m-2 ... grams of carbon" for -241.4 (round mistakes39).
    An added column or table is not exported, so it is no change here.
    """
    from .result_edits import changes

    changed = changes(result, manifest=False, additions=False)
    if changed:
        raise FluxpartError(
            f"to_xarray: table(s) changed after the run: {', '.join(changed)}; each variable "
            "of the Dataset is labelled with the unit and meaning of the column as fluxpart "
            "computed it: export the result as computed and convert the Dataset (e.g. "
            "ds['nee_annual_sum'] * 44.01 / 12.011 with its 'units' attribute), or change "
            "a copy (result.annual.copy())")


def to_xarray(result):
    """Return the record (30 or 60 min), daily, monthly and annual series of a result as a
    CF-1.10 Dataset.

    Parameters
    ----------
    result : fluxpart.result.Result or path-like
        A result from :func:`fluxpart.process` or :func:`fluxpart.load`, or a result
        folder (loaded first).

    Returns
    -------
    xarray.Dataset
        Dimensions ``time`` (records), ``day`` (local standard days), ``month`` and
        ``year`` (budget years), ``nv`` = 2 for the bounds. Fluxes of carbon in
        kg m-2 s-1 (record and period means) and daily, monthly and annual sums in
        g m-2 (carbon) with their 1-sigma and, for the years, the 95 % interval;
        drivers in CF units; flags with
        ``flag_values``/``flag_meanings``; times in UTC with bounds; the site as
        global attributes. Each variable's unit is a UDUNITS-2 string. ``source``
        names the release that computed the series where known (a result folder
        computed by another release: that release, :func:`_credit`), ``history`` the
        export; ``references`` the methods' papers; ``institution`` is a placeholder.
        The auxiliary coordinates ``budget_year``, ``local_date`` and ``local_month``
        hold the budget tables' labels. Times are whole minutes, stored as int64, so
        that xarray writing the Dataset again gives its coordinates no ``_FillValue``
        (CF-1.10 2.5.1; it gives one to every float variable).

    Raises
    ------
    FluxpartError
        If xarray is not installed, the result lacks a required column, or its tables
        were changed after the run (a sum converted in place; since round mistakes39).

    Notes
    -----
    Carbon mass flux [kg m-2 s-1] = flux [µmol CO2 m-2 s-1] x 12.011e-9 kg µmol-1
    (one C per CO2; IUPAC conventional atomic weight of carbon 12.011 g mol-1). A daily
    mean is the daily sum divided by the seconds of the records present that day.
    """
    xr = _xarray()
    if isinstance(result, (str, os.PathLike)):
        from .result import load

        folder, result = result, load(result)
        return _linked(_credit(to_xarray(result), _computed_by(folder)), folder)
    _refuse_changed(result)
    series = result.timeseries
    missing = [column for column, _ in _FLUXES.values() if column not in series.columns]
    if missing:
        raise FluxpartError(f"the timeseries lacks column(s) {', '.join(map(repr, missing))}; "
                            "cannot export")
    site = result.site
    interval = _interval_minutes(series.index)
    offset = pd.Timedelta(hours=float(site.utc_offset))
    time, time_bounds = _bounds(series.index, pd.Timedelta(minutes=interval), offset)
    variables = {"time_bounds": (("time", "nv"), time_bounds)}
    mean_attrs = {"cell_methods": "time: mean", "units": "kg m-2 s-1"}
    ancillary = []
    # what each label means, as the tables' column descriptions say (round modeller23)
    described = series.attrs.get("descriptions") or {}
    for flag_column, long_name in (("nee_fill_quality", "fill quality of nee"),
                                   ("rejection_reason", "screening outcome of the measured NEE "
                                    "(first reason it was rejected)")):
        if flag_column in series.columns:
            codes, attrs = _flag(series[flag_column].array, flag_column, long_name,
                                 str(described.get(flag_column) or ""))
            variables[flag_column] = ("time", codes, attrs)
            ancillary.append(flag_column)
    if "nee_random_error" in series.columns:
        variables["nee_random_error"] = (
            "time", series["nee_random_error"].to_numpy(dtype=float) * KG_CARBON_PER_UMOL,
            {"long_name": "random error of nee, one standard deviation (as carbon)",
             "units": "kg m-2 s-1",
             "comment": "a measured record: the random measurement error modelled at its "
             "flux; a filled record: the larger of that and the spread of the measured "
             "records its fill averaged (where it averaged 5 or more); also the random "
             "error of the record's gpp_nighttime (Reco - NEE) and of nep. Errors of "
             "neighbouring records and of fills that share records are correlated, so "
             "these do not add in quadrature to a day's error: use the daily "
             "*_daily_sum_sigma"})
        ancillary.append("nee_random_error")
    # which temperature and respiration form the partitioned series rest on, which only
    # manifest.json recorded (round modeller25)
    facts = respiration_facts(result.provenance)
    modelled = _modelled_comment(respiration_comment(facts))
    for name, (column, long_name) in _FLUXES.items():
        values = series[column].to_numpy(dtype=float) * KG_CARBON_PER_UMOL
        attrs = {"long_name": long_name, **mean_attrs, **modelled.get(name, {})}
        if name.startswith("gpp"):
            attrs["standard_name"] = STANDARD_NAMES["gpp"]
        if name == "nee" and ancillary:
            attrs["ancillary_variables"] = " ".join(ancillary)
        elif name == "gpp_nighttime":
            # Reco - NEE of the same record: measured or filled as that NEE, and NEE's random
            # error is its own (the Parquet description says so); the daytime method's and
            # the modelled Reco do not rest on the record's NEE (CF-1.10 section 3.4)
            linked = [a for a in ancillary if a != "rejection_reason"]
            if linked:
                attrs["ancillary_variables"] = " ".join(linked)
        variables[name] = ("time", values, attrs)
    nep_attrs = {"long_name": "net ecosystem production as carbon = -nee; positive = uptake by "
                 "the land", "standard_name": STANDARD_NAMES["nep"], **mean_attrs}
    if ancillary:       # -NEE: NEE's flags and error, also for a reader choosing by CF name
        nep_attrs["ancillary_variables"] = " ".join(ancillary)
    variables["nep"] = ("time", -variables["nee"][1], nep_attrs)
    for name, (column, unit, factor, long_name) in _DRIVERS.items():
        if column in series.columns:
            attrs = {"long_name": long_name, "units": unit, "cell_methods": "time: mean"}
            if name in STANDARD_NAMES:
                attrs["standard_name"] = STANDARD_NAMES[name]
            quality = f"{name}_fill_quality"
            if column.endswith("_filled") and quality in series.columns:
                # which values are measured and which filled, as for NEE (CF-1.10 3.4, 3.5)
                codes, flag_attrs = _flag(series[quality].array, quality,
                                          f"fill quality of {name}",
                                          str(described.get(quality) or ""))
                variables[quality] = ("time", codes, flag_attrs)
                attrs["ancillary_variables"] = quality
            variables[name] = ("time", series[column].to_numpy(dtype=float) * factor, attrs)

    daily = result.daily
    day, day_bounds = _bounds(pd.DatetimeIndex(daily.index), pd.Timedelta(days=1), offset)
    variables["day_bounds"] = (("day", "nv"), day_bounds)
    seconds, present = _coverage(daily, interval, np.full(len(daily), 86400.0))
    described_daily = daily.attrs.get("descriptions") or {}
    shares = ("share_measured_daily" if "share_measured" in daily.columns else None,
              None if present is None else "share_present_daily")
    for name in _FLUXES:
        if name not in daily.columns:
            continue
        grams = daily[name].to_numpy(dtype=float)
        text = _FLUXES[name][1]
        mean = {"long_name": f"daily mean of {text}", "units": "kg m-2 s-1",
                "cell_methods": _cell_method("day", "mean", interval),
                **modelled.get(name, {})}
        if name.startswith("gpp"):
            mean["standard_name"] = STANDARD_NAMES["gpp"]
        # a day the record begins or ends within sums only its records present: say so
        # where the method is stated (CF 1.10 §7.3) and link how much of the day that is
        total = {"long_name": f"daily sum of {text}; grams of carbon", "units": "g m-2",
                 "cell_methods": _cell_method("day", "sum", interval),
                 **modelled.get(name, {})}
        variables[f"{name}_daily_mean"] = ("day", grams * 1e-3 / seconds, mean)
        variables[f"{name}_daily_sum"] = ("day", grams, total)
        sigma = f"{name}_sigma"
        # the uncertainty of the sum and of the mean (in the mean's unit) and the coverage
        # travel with each (CF 1.10 §3.4 ancillary data)
        spread = (_sigma_variables(variables, "day", "daily", name, mean,
                                   daily[sigma].to_numpy(dtype=float), seconds,
                                   str(described_daily.get(sigma) or ""))
                  if sigma in daily.columns else {})
        _link(total, spread.get("sum"), *shares)
        _link(mean, spread.get("mean"), shares[1])
    if "share_measured" in daily.columns:
        variables["share_measured_daily"] = ("day", daily["share_measured"].to_numpy(dtype=float),
                                             {"long_name": "share of the day's records with "
                                              "measured NEE", "units": "1"})
    if present is not None:
        variables["share_present_daily"] = ("day", present, {
            "long_name": "share of the day's records present (records over the records a "
                         "full day has at this interval); below 1 on a day the record begins "
                         "or ends within, whose daily sums and means cover only the records "
                         "present", "units": "1"})

    month_coord = _period_variables(variables, result.monthly, "month", interval, offset,
                                    modelled)
    year_coord = _period_variables(variables, result.annual, "year", interval, offset,
                                   modelled)

    coords = {
        "time": ("time", time, {"standard_name": "time", "long_name": "middle of the averaging "
                                "interval, UTC", "axis": "T", "bounds": "time_bounds"}),
        "day": ("day", day, {"standard_name": "time", "long_name": "middle of the local "
                             "standard day, UTC", "bounds": "day_bounds"}),
        "month": month_coord,
        "year": year_coord,
        # the annual table's label: the calendar year a budget year starts in, which the
        # UTC midpoint does not give where year_start is after early July (CF-1.10 5.2)
        "budget_year": ("year", np.asarray(result.annual.index, dtype=np.int32), {
            "long_name": "budget year as labelled in the annual table (year): the calendar "
                         "year of local standard time in which the budget year starts"}),
        # the daily and monthly tables' labels: a site's local day is its own UTC cell,
        # so sites in other time zones share no `day` value; the label joins them (and
        # the Parquet tables) where the midpoint's UTC date is another day (round modeller26)
        "local_date": ("day", _labels(daily.index, "%Y-%m-%d"), {
            "long_name": "local standard date of the day, as labelled in the daily table "
                         "(date), ISO 8601"}),
        "local_month": ("month", _labels(result.monthly.index, "%Y-%m"), {
            "long_name": "calendar month of local standard time, as labelled in the monthly "
                         "table (month), ISO 8601"}),
        "lat": ((), float(site.latitude), {"standard_name": "latitude",
                                           "units": "degrees_north"}),
        "lon": ((), float(site.longitude), {"standard_name": "longitude",
                                            "units": "degrees_east"}),
        "station_name": ((), str(site.name), {"cf_role": "timeseries_id",
                                              "long_name": "site name"}),
    }
    data_vars = {name: spec if len(spec) == 3 else (*spec, {})
                 for name, spec in variables.items()}
    dataset = xr.Dataset(data_vars=data_vars, coords=coords)
    for name in ("time", "day", "month", "year", "time_bounds", "day_bounds", "month_bounds",
                 "year_bounds"):
        # whole minutes: records of 30 or 60 min, UTC offsets in quarter hours, cells of
        # whole days (their middles whole hours). An integer, unlike a float, gets no
        # _FillValue when xarray writes a Dataset read from the file again, which made
        # every rewritten or merged file break CF-1.10 2.5.1 (round modeller26)
        dataset[name].encoding.update({"units": _TIME_UNITS, "calendar": _CALENDAR,
                                       "dtype": "int64"})
    for variable in dataset.data_vars.values():
        # NaN marks a missing float; the flags have no missing value (no _FillValue)
        variable.encoding["_FillValue"] = np.nan if variable.dtype.kind == "f" else None
    for name in ("time", "day", "month", "year", "lat", "lon"):
        # coordinates have no missing values (CF-1.10 section 2.5.1), so no _FillValue,
        # which xarray would otherwise give every float variable
        dataset[name].encoding["_FillValue"] = None
    from . import __version__

    dataset.attrs = {
        "Conventions": _CONVENTIONS,
        "featureType": "timeSeries",
        "title": f"Eddy-covariance carbon fluxes of {site.name}: gap-filled NEE and its "
                 "partitioning into GPP and Reco",
        "institution": INSTITUTION_PLACEHOLDER,
        "source": f"fluxpart {__version__}",
        # a Result in memory carries no release; a folder's is added by _credit
        "history": f"exported to {_CONVENTIONS} NetCDF by fluxpart {__version__}",
        "references": REFERENCES,
        "site_name": str(site.name),
        "site_latitude": float(site.latitude),
        "site_longitude": float(site.longitude),
        "site_utc_offset_hours": float(site.utc_offset),
        "interval_minutes": int(interval),
        "time_convention": "time values are UTC cell midpoints; the Parquet tables of the same "
                           "result stamp the start of each interval in local standard time "
                           "(UTC + site_utc_offset_hours)",
        "sign_convention": "nee, reco: positive = release to the atmosphere; gpp positive = "
                           "uptake; nep = -nee",
        **facts,
        # what NEE leaves out and that a net uptake is no credited removal, as the
        # report and the command line say beside the tonnes (leftovers57)
        "comment": f"{_CAUTION} {TONNES_CAUTION}.",
    }
    return dataset


def _labels(index, pattern: str) -> np.ndarray:
    """The local labels of a budget table's index as ISO 8601 strings (`pattern`)."""
    return np.asarray(pd.DatetimeIndex(index).strftime(pattern), dtype=str)


_PERIOD_TEXT = {"month": ("monthly", "calendar month of local standard time"),
                # "budget year (from ...), local standard time, UTC" read as if the
                # middle were stated in two time scales at once (review58)
                "year": ("annual", "budget year of local standard time (from [processing] "
                         "year_start)")}


def _coverage(table, interval, full_seconds) -> tuple:
    """Seconds the records present in each period span [s] (NaN for none) and the share of
    the period's records present (None where the table has no record counts).

    `table` holds a budget table's ``records`` and ``records_expected``; `interval` is the
    record length [min]; `full_seconds` the periods' lengths [s], taken where ``records``
    is absent (a table written before the counts).
    """
    seconds = (table["records"].to_numpy(dtype=float) * interval * 60.0
               if "records" in table.columns else np.asarray(full_seconds, dtype=float))
    seconds = np.where(seconds > 0, seconds, np.nan)
    present = None
    if {"records", "records_expected"} <= set(table.columns):
        expected = table["records_expected"].to_numpy(dtype=float)
        present = table["records"].to_numpy(dtype=float) / np.where(expected > 0, expected,
                                                                     np.nan)
    return seconds, present


def _period_variables(variables: dict, table: pd.DataFrame, dim: str, interval: int,
                      offset: pd.Timedelta, modelled: dict | None = None):
    """Add the sums of one budget table (``monthly`` or ``annual``) to `variables`.

    Each flux of :data:`_FLUXES` gets ``<flux>_<period>_sum`` [g m-2, carbon] with
    ``cell_methods = "<dim>: sum (interval: <record length> min comment: over the records
    present)"`` (:func:`_cell_method`), its mean
    ``<flux>_<period>_mean`` [kg m-2 s-1] over the seconds of the records present, the
    1-sigma ``<flux>_<period>_sum_sigma`` and ``<flux>_<period>_mean_sigma``
    (:func:`_sigma_variables`) and, where the table states them (the annual
    budget), the ends of the 95 % interval ``<flux>_<period>_sum_ci95_low`` /
    ``_high`` (their ``comment`` the table's description: what they cover), linked as
    ``ancillary_variables`` with the coverage shares ``share_measured_<period>`` and
    ``share_present_<period>``. The annual table adds ``ustar_threshold_annual`` [m s-1].

    Parameters
    ----------
    variables : dict
        Name -> (dims, values, attrs); changed in place (also ``<dim>_bounds``).
    table : pandas.DataFrame
        ``Result.monthly`` (index: first day of the month) or ``Result.annual``
        (index: budget year; ``period_start`` / ``period_end`` give its local bounds).
    dim : str
        ``"month"`` or ``"year"``: the dimension.
    interval : int
        Record length [min].
    offset : pandas.Timedelta
        Local standard time minus UTC.
    modelled : dict, optional
        Attributes per flux name added to its sum and mean (:func:`_modelled_comment`).

    Returns
    -------
    tuple
        The coordinate ``(dim, UTC midpoints, attrs)``.

    References
    ----------
    Eaton, B. et al. (2022). CF Conventions 1.10, sections 3.4 (ancillary data), 7.1
    (cell boundaries), 7.3 (cell methods; the records' spacing as ``interval:``, free
    text after it as ``comment:``).
    """
    period, text_of_cell = _PERIOD_TEXT[dim]
    modelled = modelled or {}
    if dim == "year" and {"period_start", "period_end"} <= set(table.columns):
        starts = pd.DatetimeIndex(table["period_start"])
        ends = pd.DatetimeIndex(table["period_end"])
    elif dim == "year":                      # an older table: calendar years
        starts = pd.DatetimeIndex([pd.Timestamp(year=int(y), month=1, day=1)
                                   for y in table.index])
        ends = pd.DatetimeIndex([pd.Timestamp(year=int(y) + 1, month=1, day=1)
                                 for y in table.index])
    else:
        starts = pd.DatetimeIndex(table.index)
        ends = starts + pd.offsets.MonthBegin(1)
    start_utc = (starts - offset).to_numpy()
    end_utc = (ends - offset).to_numpy()
    middle = start_utc + (end_utc - start_utc) / 2
    variables[f"{dim}_bounds"] = ((dim, "nv"), np.stack([start_utc, end_utc], axis=1))
    seconds, present = _coverage(table, interval,
                                 (end_utc - start_utc).astype("timedelta64[s]").astype(float))
    method = _cell_method(dim, "sum", interval)
    described = table.attrs.get("descriptions") or {}
    shares = (f"share_measured_{period}" if "share_measured" in table.columns else None,
              None if present is None else f"share_present_{period}")
    for name, (_, text) in _FLUXES.items():
        if name not in table.columns:
            continue
        grams = table[name].to_numpy(dtype=float)
        mean = {"long_name": f"{period} mean of {text}", "units": "kg m-2 s-1",
                "cell_methods": _cell_method(dim, "mean", interval),
                **modelled.get(name, {})}
        total = {"long_name": f"{period} sum of {text}; grams of carbon", "units": "g m-2",
                 "cell_methods": method, **modelled.get(name, {})}
        if name.startswith("gpp"):           # the mean is the flux; the sum [g m-2] is not
            mean["standard_name"] = STANDARD_NAMES["gpp"]
        variables[f"{name}_{period}_mean"] = ((dim,), grams * 1e-3 / seconds, mean)
        variables[f"{name}_{period}_sum"] = ((dim,), grams, total)
        sigma = f"{name}_sigma" if f"{name}_sigma" in table.columns else \
            f"{name}_uncertainty_total"
        spread = (_sigma_variables(variables, dim, period, name, mean,
                                   table[sigma].to_numpy(dtype=float), seconds,
                                   str(described.get(sigma) or ""))
                  if sigma in table.columns else {})
        interval_ends = []
        for end, word in (("low", "lower"), ("high", "upper")):
            column = f"{name}_ci95_{end}"
            if column in table.columns:
                key = f"{name}_{period}_sum_ci95_{end}"
                attrs = {"long_name": f"{word} end of the stated 95 % interval of the {period} "
                                      f"sum of {name} (the budget table's {column}); grams of "
                                      "carbon",
                         "units": "g m-2"}
                if described.get(column):    # what the interval covers and leaves out
                    attrs["comment"] = str(described[column])
                variables[key] = ((dim,), table[column].to_numpy(dtype=float), attrs)
                interval_ends.append(key)
        _link(total, spread.get("sum"), *interval_ends, *shares)
        _link(mean, spread.get("mean"), shares[1])
    if "share_measured" in table.columns:
        variables[f"share_measured_{period}"] = (
            (dim,), table["share_measured"].to_numpy(dtype=float),
            {"long_name": f"share of the {dim}'s records with measured NEE", "units": "1"})
    if present is not None:
        variables[f"share_present_{period}"] = ((dim,), present, {
            "long_name": f"share of the {dim}'s records present (records over the records "
                         "the full period has at this interval); below 1 where the record "
                         f"begins or ends within the {dim}, whose sums cover only the records "
                         "present", "units": "1"})
    if "ustar_threshold" in table.columns:
        variables[f"ustar_threshold_{period}"] = (
            (dim,), table["ustar_threshold"].to_numpy(dtype=float),
            {"long_name": "u* threshold applied in the year (the largest where a budget year "
                          "spans two calendar years' thresholds)", "units": "m s-1"})
    return (dim, middle, {"standard_name": "time", "long_name": f"middle of the {text_of_cell}"
                          ", UTC", "bounds": f"{dim}_bounds"})


def _cell_method(dim: str, method: str, interval: int) -> str:
    """The ``cell_methods`` of a period's sum or mean of the records present.

    CF-1.10 section 7.3.2: ``interval:`` gives the spacing of the original values the
    method was applied to (here the records, `interval` minutes apart); section 7.3.3:
    free text follows as ``comment:`` after the standardized information (a text alone
    in the parentheses goes without the keyword). Before round modeller25 the text
    stood alone after ``comment:``, which the IOOS compliance checker 6.1.0 (CF 1.10,
    strict) flagged on every period variable.

    Parameters
    ----------
    dim : str
        The dimension (``"day"``, ``"month"``, ``"year"``).
    method : str
        ``"sum"`` or ``"mean"``.
    interval : int
        Record length [min].

    Returns
    -------
    str
        E.g. ``"day: sum (interval: 30 min comment: over the records present)"``.

    References
    ----------
    Eaton, B. et al. (2022). CF Conventions 1.10, sections 7.3.2 (recording the spacing
    of the original data) and 7.3.3 (comments in the cell_methods attribute).
    """
    return f"{dim}: {method} (interval: {int(interval)} min comment: over the records present)"


def _modelled_comment(comment: str) -> dict:
    """Flux name -> attributes saying which respiration choices the flux rests on.

    `comment` is :func:`fluxpart.respiration_facts.respiration_comment` of the run; NEE
    rests on none of them and gets none (an empty `comment`: none for any).
    """
    if not comment:
        return {}
    return {name: {"comment": comment} for name in _FLUXES if name != "nee"}


def _link(attrs: dict, *names) -> None:
    """Set ``ancillary_variables`` of `attrs` to the `names` given (None skipped)."""
    linked = [name for name in names if name]
    if linked:
        attrs["ancillary_variables"] = " ".join(linked)


def _sigma_variables(variables: dict, dim: str, period: str, name: str, mean: dict,
                     sigma, seconds, description: str) -> dict:
    """Add the 1 sigma of a period's sum [g m-2] and of its mean [kg m-2 s-1].

    The mean is the sum over the seconds of the records present, so its standard
    deviation is the sum's over the same seconds (x 1e-3 kg g-1). A modeller comparing a
    model's monthly mean flux gets the uncertainty in the mean's unit; before round
    modeller25 only the sum's was written, and neither said what it covers, which the
    table's column description does (it becomes the ``comment``).

    Parameters
    ----------
    variables : dict
        Name -> (dims, values, attrs); changed in place.
    dim : str
        The dimension (``"day"``, ``"month"``, ``"year"``).
    period : str
        ``"daily"``, ``"monthly"`` or ``"annual"``: the middle of the variable names.
    name : str
        The flux (a key of :data:`_FLUXES`).
    mean : dict
        Attributes of the flux's mean; its ``standard_name``, where it has one, is given
        to the mean's sigma with the CF modifier ``standard_error``.
    sigma : numpy.ndarray
        1 sigma of the period's sum [g m-2, carbon].
    seconds : numpy.ndarray
        Seconds of the records present in each period [s].
    description : str
        The budget table's description of the sigma column ("" for none).

    Returns
    -------
    dict
        ``{"sum": <name of the sum's sigma>, "mean": <name of the mean's sigma>}``.

    References
    ----------
    Eaton, B. et al. (2022). CF Conventions 1.10, section 3.3 and appendix C (standard
    name modifier ``standard_error``: same units as the quantity), section 3.4
    (ancillary data).
    """
    keys = {"sum": f"{name}_{period}_sum_sigma", "mean": f"{name}_{period}_mean_sigma"}
    covers = {"comment": description} if description else {}
    variables[keys["sum"]] = ((dim,), sigma, {
        "long_name": f"one standard deviation of the {period} sum of {name}; grams of carbon",
        "units": "g m-2", **covers})
    of_mean = {"long_name": f"one standard deviation of the {period} mean of {name} "
                            f"(as carbon; {keys['sum']} over the seconds of the records present)",
               "units": "kg m-2 s-1", **covers}
    if "standard_name" in mean:
        of_mean["standard_name"] = f"{mean['standard_name']} standard_error"
    variables[keys["mean"]] = ((dim,), sigma * 1e-3 / seconds, of_mean)
    return keys


def _computed_by(directory) -> str | None:
    """The fluxpart release that computed the result folder `directory` (its manifest's
    ``versions.fluxpart``), or None where the manifest does not say."""
    from .manifest import read_manifest

    versions = read_manifest(directory).get("versions")
    release = versions.get("fluxpart") if isinstance(versions, dict) else None
    return release if isinstance(release, str) and release else None


def _credit(dataset, computed_by: str | None):
    """Name in `dataset`'s global attributes the release that computed its numbers.

    ``source`` is "the method of production of the original data" and ``history``
    "an audit trail for modifications to the original data" (CF-1.10 section 2.6.2):
    a result computed by another release keeps that release as its ``source``, and the
    export by this one goes to ``history``. A result of this release keeps ``source`` =
    this release, and ``history`` says it computed and exported the series (a
    :class:`~fluxpart.result.Result` in memory, whose release is not known, says only
    which release exported it). No time of day, so two exports stay byte-identical;
    before round modeller26 a result of this release had no ``history``.

    Parameters
    ----------
    dataset : xarray.Dataset
        From :func:`to_xarray`; changed in place.
    computed_by : str or None
        Release recorded in the result folder's manifest (None: unknown, unchanged).

    Returns
    -------
    xarray.Dataset
        `dataset`.

    References
    ----------
    Eaton, B. et al. (2022). NetCDF Climate and Forecast (CF) Metadata Conventions,
    version 1.10, section 2.6.2 (description of file contents: ``source``, ``history``).
    """
    from . import __version__

    if computed_by is None:
        return dataset
    if computed_by != __version__:
        dataset.attrs["source"] = f"fluxpart {computed_by}"
        dataset.attrs["history"] = (f"computed by fluxpart {computed_by}; exported to "
                                    f"{_CONVENTIONS} NetCDF by fluxpart {__version__}")
    else:
        dataset.attrs["history"] = (f"computed by fluxpart {computed_by} and exported to "
                                    f"{_CONVENTIONS} NetCDF by the same release")
    return dataset


def _linked(dataset, directory):
    """Name in `dataset`'s global attributes the result its numbers come from: each fact of
    :func:`fluxpart.manifest.result_links` of the folder `directory` as ``result_<fact>``
    (``result_manifest_seal``, ``result_seed``, ``result_input_sha256``, ...), so a file
    that travels without its folder still says which result, input bytes and seed made it.
    Changed in place; returned.

    A whole number outside the signed 64-bit range (a seed: the config takes any whole
    number >= 0) is written as its decimal text, as NetCDF has no wider integer type: such
    a seed had the export fail with a traceback (review71)."""
    from .manifest import read_manifest, result_links

    for name, value in result_links(read_manifest(directory)).items():
        wide = isinstance(value, int) and not -2 ** 63 <= value < 2 ** 63
        dataset.attrs[f"result_{name}"] = str(value) if wide else value
    return dataset


def write_netcdf(result, path) -> Path:
    """Write :func:`to_xarray` of `result` to the NetCDF file `path` (atomically).

    Parameters
    ----------
    result : fluxpart.result.Result or path-like
        A result, or a result folder.
    path : path-like
        The NetCDF (netCDF-4) file to write; its folder is created. An existing
        file is replaced only if fluxpart wrote it (:func:`written_by_fluxpart`)
        and it is none of the files the result was computed from.

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    OutputError
        If `path` is a folder, an existing file fluxpart did not write, the
        result's input file or site config, or cannot be written (no permission,
        a full disk, the file-size limit). Nothing is written then and an existing
        file is unchanged.
    """
    path = _through_link(Path(path))
    if path.is_dir():
        raise OutputError(f"--netcdf {str(path)!r} is a folder: give the path of the NetCDF "
                          "file to write, e.g. result.nc")
    directory = None
    if isinstance(result, (str, os.PathLike)):
        from .result import load

        directory, result = Path(result), load(result)
    _check_target(path, result.provenance, directory)
    require_owner_access()
    dataset = to_xarray(result)
    if directory is not None:
        _linked(_credit(dataset, _computed_by(directory)), directory)
    engine = _engine()
    with ExitStack() as held:
        return _write_locked(dataset, path, engine, held)


def _through_link(path: Path) -> Path:
    """The file a symbolic link `path` leads to (every link resolved), or `path`.

    The NetCDF file is renamed into place over its name: given a link (``latest.nc`` ->
    a shared disk's file), the rename replaced the link by a file and left the file it led
    to unchanged, under "wrote latest.nc" (round faults42). A link's file is written and
    the link kept, as ``run --out`` writes through a link to a folder.

    Raises
    ------
    OutputError
        If the link leads into no folder (a share not mounted): the link is kept.
    """
    if not path.is_symlink():
        return path
    target = Path(os.path.realpath(path))
    if not target.parent.is_dir():
        raise OutputError(f"--netcdf {str(path)!r} is a symbolic link to {str(target)!r}, "
                          f"whose folder {str(target.parent)!r} does not exist (a disk or "
                          "share not mounted?); nothing was written: mount it, or give "
                          "another file name")
    return target


def _write_locked(dataset, path: Path, engine: str, held: ExitStack) -> Path:
    """Write `dataset` to `path` through a temporary file beside it, holding the lock
    of `path` (:func:`fluxpart.resultdir.folder_lock`, entered on `held`) from before
    the temporary file is made and those of killed exports are swept until the file is
    in place.

    Two exports to one file at once: the second swept the first's temporary file as a
    leftover (made before the second began, not yet written to) and the first failed
    "writing failed (No such file or directory) ... free space" (round faults27).
    """
    from .resultdir import DEFAULT_LOCK_TIMEOUT, dangling_link_above, folder_lock

    dangling = dangling_link_above(path)
    if dangling:
        raise OutputError(f"--netcdf {str(path)!r} {dangling}; choose another place")
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        # a probe, removed at once: a folder that cannot be written or a name too long
        # is named before the lock is taken; the file written is made under the lock,
        # where no other export of `path` can take it for a leftover
        # (a folder of the temporary file's name and length)
        os.rmdir(tempfile.mkdtemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent))
    except OSError as error:        # a read-only medium, no permission, a file in the path
        if error.errno == errno.ENAMETOOLONG:
            # the name fits, its temporary file '.NAME.xxxxxxxx.tmp' (14 bytes more) does not
            raise OutputError(f"--netcdf {str(path)!r}: the name is too long for the temporary "
                              f"file written beside it first ('.NAME.xxxxxxxx.tmp', 14 bytes "
                              f"longer: {error.strerror}); choose a name of at most "
                              f"{_name_limit(path.parent) - 14} bytes") from None
        remedy = (full_disk_remedy(path.parent) if error.errno == errno.ENOSPC
                  else "choose a writable place")
        raise OutputError(f"--netcdf {str(path)!r}: cannot write in {str(path.parent)!r} "
                          f"({error.strerror or error}); {remedy}") from None
    handle = temporary = None
    try:
        # waits for another export of the same file (saying so on stderr)
        held.enter_context(folder_lock(path, DEFAULT_LOCK_TIMEOUT, remove=True))
        handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp",
                                             dir=path.parent)
        _sweep_temporary(path, keep=Path(temporary))
        # inside: a network file system reports a failed write (full quota, I/O error) at
        # close, and the error then escaped as a traceback leaving the temporary file
        if engine == "h5netcdf":
            # the file is made in memory and written with Python's own I/O: the HDF5
            # library writing a file on a full disk (ENOSPC) printed ~150 lines of
            # tracebacks and most often crashed the interpreter (SIGSEGV, exit 139),
            # leaving its temporary file; a failed write is now a plain OSError here
            import io

            buffer = io.BytesIO()
            dataset.to_netcdf(buffer, engine=engine, format="NETCDF4")
            with os.fdopen(handle, "wb") as stream:
                handle = None
                stream.write(buffer.getbuffer())
                stream.flush()
                os.fsync(stream.fileno())
        else:
            os.close(handle)
            handle = None
            dataset.to_netcdf(temporary, engine=engine, format="NETCDF4")
        set_mode(temporary, file_mode())
        os.replace(temporary, path)
    except OSError as error:        # a full disk, the file-size limit (ulimit -f), an I/O error
        _close_quietly(handle)
        if temporary is not None:
            Path(temporary).unlink(missing_ok=True)
        reason = os.strerror(error.errno) if error.errno else str(error).split(" (")[0]
        remedy = (full_disk_remedy(Path(path).parent) if error.errno == errno.ENOSPC
                  else "free space, or choose another place")
        failed = OutputError(f"--netcdf {str(path)!r}: writing failed ({reason}); nothing was "
                             f"written and an existing file is unchanged: {remedy}")
        # the HDF5 library may crash the interpreter's exit after such a failure (see
        # fluxpart.cli.main, which ends the process at once after printing this error)
        failed.end_process = True
        raise failed from None
    except BaseException:
        _close_quietly(handle)
        if temporary is not None:
            Path(temporary).unlink(missing_ok=True)
        raise
    return path


def _close_quietly(handle) -> None:
    """Close the descriptor `handle` of a temporary file if still open (None: closed)."""
    if handle is not None:
        try:
            os.close(handle)
        except OSError:
            pass


def _name_limit(folder: Path) -> int:
    """The longest file name [bytes] in `folder` (``pathconf`` ``PC_NAME_MAX``, else 255:
    common practice on ext4, XFS, APFS, NTFS)."""
    try:
        return int(os.pathconf(folder, "PC_NAME_MAX"))
    except (OSError, ValueError, AttributeError):
        return 255


def _sweep_temporary(path: Path, keep: Path) -> None:
    """Remove the temporary files killed exports to `path` left: ``.NAME.xxxxxxxx.tmp``
    beside `path` (the names :func:`write_netcdf` gives them) other than `keep`, this
    export's own. Called holding the lock of `path`, under which no other export of it
    writes, so every other such file is a leftover whatever its modification time (a
    file system whose clock runs ahead kept them for good when they were judged by it,
    and one whose clock runs behind swept the file of an export running now).
    """
    remove_stale(path.parent, re.compile(rf"^\.{re.escape(path.name)}\.[a-z0-9_]{{8}}\.tmp$"),
                 keep=keep)


def _check_target(path: Path, provenance, directory) -> None:
    """Refuse to replace a file fluxpart did not write, or one the result was computed from."""
    if not path.exists():
        return
    special = special_kind(path)
    if special:
        # opened to read its first bytes, a pipe with no writer blocked without end
        # (``--netcdf /dev/stdout | ...``, a named pipe): fifo(7) (m)
        raise OutputError(f"--netcdf {str(path)!r} is {special}, not a file: the NetCDF is "
                          "written to a temporary file beside the target and renamed into "
                          "place, so it cannot go to a pipe or a device; give a file name "
                          "(then copy or send that file)")
    recorded = recorded_paths(provenance if isinstance(provenance, dict) else {},
                              directory if directory is not None else Path.cwd())
    for source in recorded:
        try:
            same = os.path.samefile(source, path)
        except OSError:             # the recorded file is gone or unreadable
            same = False
        if same:
            raise OutputError(f"--netcdf {str(path)!r} is a file the result was computed from "
                              "(an input file or the site config recorded in its manifest); "
                              "it is not replaced: choose another file name")
    if not written_by_fluxpart(path):
        raise OutputError(f"--netcdf {str(path)!r} is an existing file that fluxpart did not "
                          "write (not a NetCDF file whose global attribute source reads "
                          "\"fluxpart ...\"); it is not replaced: choose another file name, "
                          "or delete the file first")


def written_by_fluxpart(path) -> bool:
    """True when `path` is a NetCDF file that :func:`write_netcdf` wrote.

    Recognised by the HDF5 signature at its start (netCDF-4 files) and, read back,
    the global attribute ``source`` = ``"fluxpart <version>"`` that
    :func:`to_xarray` sets. Any file that cannot be opened so is not one.

    Parameters
    ----------
    path : path-like
        An existing file.

    Returns
    -------
    bool
        Whether an export may replace it.
    """
    try:
        with open(path, "rb") as handle:
            if handle.read(len(_HDF5_SIGNATURE)) != _HDF5_SIGNATURE:
                return False
    except OSError:
        return False
    xr = _xarray()
    try:
        with xr.open_dataset(path, engine=_engine(), decode_cf=False,
                             decode_times=False) as dataset:
            source = dataset.attrs.get("source")
    except Exception:               # noqa: BLE001 - any file the engine cannot read is not ours
        return False
    return isinstance(source, str) and source.startswith("fluxpart ")


def command_export(args) -> int:
    """``fluxpart export DIR [--netcdf FILE] [--csv FOLDER]``: write the folder's series as
    CF NetCDF and/or its tables as CSV with CSVW metadata (:mod:`fluxpart.export_csv`)."""
    if getattr(args, "netcdf", None) is not None:
        path = write_netcdf(args.directory, args.netcdf)
        given = Path(args.netcdf)
        through = (f" through the link {shown_path(given)}"
                   if given.is_symlink() and os.path.realpath(given) == str(path) else "")
        print(f"wrote {shown_path(path)}{through} (CF-1.10 NetCDF: records, days, months and "
              "years, carbon fluxes in kg m-2 s-1 and sums in g m-2)")
    if getattr(args, "csv", None) is not None:
        from .export_csv import command_csv

        command_csv(args.directory, args.csv)
    # the files carry the annual t CO2 ha-1 and the 95 % intervals: the caution every other
    # command that shows them prints (run, demo, report, verify, diff, batch; review39)
    from .manifest import CAUTION

    print(f"Caution: {CAUTION}")
    return 0
