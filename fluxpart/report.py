"""Figures and a self-contained report page for a result folder: ``fluxpart report``.

:func:`build_report` reads a folder written by :meth:`fluxpart.Result.write`,
draws the diagnostic figures as PNG files and writes ``report.html``: one page
with every figure embedded as a data URI, inline CSS, no scripts and nothing
to fetch, so it can be mailed, archived or opened offline. The page gives the
site, the annual budget with its uncertainty and coverage, the screening
audit trail, the settings and the papers behind each method, the warnings and
the cautions that go with a tower budget.

Figures are drawn with matplotlib (the ``report`` extra) on the Agg canvas
without pyplot, so no display and no global backend change is needed.
matplotlib is imported only when a report is built. Colour scales read in grey
and for colour-blind readers: sequential maps are viridis and cividis, and NEE
has a scale of our own whose lightness rises steadily from strong uptake (dark
blue) to release (pale orange), with the hue changing at zero. PNG files carry
no timestamp or software tag, so the same folder gives the same bytes.
"""

from __future__ import annotations

import base64
import html
import inspect
import io
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .budget import flux_to_carbon
from .config import Config
from .constants import CARBON_MOLAR_MASS, CO2_MOLAR_MASS, SOLAR_CONSTANT
from .errors import FluxpartError
from .manifest import CAUTION, read_manifest
from .pipeline import load
from .responses import LASSLOP_VPD0_HPA, light_response, lloyd_taylor
from .store import atomic_write_bytes

__all__ = ["FIGURES", "build_report", "command_report"]

#: File names of the figures, in page order.
FIGURES = (
    "heatmaps.png",
    "cumulative_nee.png",
    "monthly_gpp_reco.png",
    "diurnal_by_month.png",
    "night_respiration.png",
    "ustar_threshold.png",
    "light_response.png",
)

_DPI = 100
_FLUX_UNIT = "µmol m-2 s-1"
_CARBON_UNIT = "g C m-2"

# Okabe & Ito (2008) colour-blind-safe palette, used with distinct line styles and
# markers so that lines can be told apart in grey too.
_GREEN = "#009E73"
_VERMILLION = "#D55E00"
_BLUE = "#0072B2"
_ORANGE = "#E69F00"
_BLACK = "#000000"

_RC = {
    "font.family": "DejaVu Sans",
    "font.size": 9.0,
    "axes.titlesize": 10.0,
    "axes.labelsize": 9.0,
    "axes.grid": True,
    "grid.color": "#d0d0d0",
    "grid.linewidth": 0.5,
    "legend.fontsize": 8.0,
    "legend.frameon": False,
    "image.interpolation": "nearest",
    "svg.hashsalt": "fluxpart",
}

_BUDGET_COLUMNS = ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime",
                   "ustar_threshold")
_COVERAGE_PATTERN = re.compile(r"records.*|complete|share_.*|nee_share_from_filled")

_REFERENCES = {
    "reichstein2005": "Reichstein, M. et al. (2005). On the separation of net ecosystem exchange "
                      "into assimilation and ecosystem respiration: review and improved algorithm. "
                      "Global Change Biology 11:1424–1439. doi:10.1111/j.1365-2486.2005.001002.x",
    "papale2006": "Papale, D. et al. (2006). Towards a standardized processing of Net Ecosystem "
                  "Exchange measured with eddy covariance technique: algorithms and uncertainty "
                  "estimation. Biogeosciences 3:571–583. doi:10.5194/bg-3-571-2006",
    "barr2013": "Barr, A. G. et al. (2013). Use of change-point detection for friction-velocity "
                "threshold evaluation in eddy-covariance studies. Agricultural and Forest "
                "Meteorology 171–172:31–45. doi:10.1016/j.agrformet.2012.11.023",
    "lloyd1994": "Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil "
                 "respiration. Functional Ecology 8:315–323. doi:10.2307/2389824",
    "lasslop2010": "Lasslop, G. et al. (2010). Separation of net ecosystem exchange into "
                   "assimilation and respiration using a light response curve approach: "
                   "critical issues and global evaluation. Global Change Biology 16:187–208. "
                   "doi:10.1111/j.1365-2486.2009.02041.x",
    "hollinger2005": "Hollinger, D. Y. & Richardson, A. D. (2005). Uncertainty in eddy "
                     "covariance measurements and its application to physiological models. "
                     "Tree Physiology 25:873–885. doi:10.1093/treephys/25.7.873",
    "richardson2006": "Richardson, A. D. et al. (2006). A multi-site analysis of random error "
                      "in tower-based measurements of carbon and energy fluxes. Agricultural "
                      "and Forest Meteorology 136:1–18. doi:10.1016/j.agrformet.2006.01.007",
    "kopp2011": "Kopp, G. & Lean, J. L. (2011). A new, lower value of total solar irradiance: "
                "evidence and climate significance. Geophysical Research Letters 38, L01706. "
                "doi:10.1029/2010GL045777",
    "okabe2008": "Okabe, M. & Ito, K. (2008). Color Universal Design (CUD): how to make figures "
                 "and presentations that are friendly to colorblind people (colour palette of "
                 "the figures).",
}


@dataclass(frozen=True)
class _Figure:
    """One drawn figure: file name, PNG bytes, title and caption (plain text)."""

    name: str
    png: bytes
    title: str
    caption: str


# --------------------------------------------------------------------------- matplotlib


def _matplotlib():
    """Import matplotlib's object-oriented parts, or explain how to install them."""
    try:
        import matplotlib
        from matplotlib import colors, dates
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure
    except ImportError:
        raise FluxpartError(
            "the report needs matplotlib, which is not installed; install the report extra "
            'with: pip install "fluxpart[report]"') from None
    return matplotlib, colors, dates, FigureCanvasAgg, Figure


class _Drawing:
    """matplotlib modules plus the helpers every figure uses."""

    def __init__(self):
        self.mpl, self.colors, self.dates, self._canvas, self._figure = _matplotlib()

    def figure(self, width, height):
        figure = self._figure(figsize=(width, height), dpi=_DPI, layout="constrained")
        self._canvas(figure)
        return figure

    def png(self, figure) -> bytes:
        buffer = io.BytesIO()
        figure.savefig(buffer, format="png", dpi=_DPI, metadata={"Software": None})
        return buffer.getvalue()

    def nee_colormap(self):
        """Our NEE scale: lightness rises monotonically, hue changes from blue to orange at 0."""
        uptake = self.colors.LinearSegmentedColormap.from_list(
            "uptake", ["#0b1a4a", "#1f4f9a", "#5b93cc", "#a7cbe6"])
        release = self.colors.LinearSegmentedColormap.from_list(
            "release", ["#efb46c", "#f4cc8f", "#f8e2b6"])
        table = np.vstack([uptake(np.linspace(0.0, 1.0, 128)),
                           release(np.linspace(0.0, 1.0, 128))])
        return self.colors.ListedColormap(table, name="fluxpart_nee").with_extremes(
            bad="#ffffff")

    def nee_norm(self, *arrays):
        values = np.concatenate([np.asarray(a, dtype=float).ravel() for a in arrays])
        values = values[np.isfinite(values)]
        if values.size == 0:
            return self.colors.TwoSlopeNorm(vcenter=0.0, vmin=-1.0, vmax=1.0)
        low = min(float(np.percentile(values, 0.5)), -1e-3)
        high = max(float(np.percentile(values, 99.5)), 1e-3)
        return self.colors.TwoSlopeNorm(vcenter=0.0, vmin=low, vmax=high)

    def date_axis(self, axis):
        locator = self.dates.AutoDateLocator(minticks=4, maxticks=13)
        axis.xaxis.set_major_locator(locator)
        axis.xaxis.set_major_formatter(self.dates.ConciseDateFormatter(locator))


def _no_data(axis, text):
    axis.text(0.5, 0.5, text, transform=axis.transAxes, ha="center", va="center",
              fontsize=10, color="#444444", wrap=True)
    axis.set_xticks([])
    axis.set_yticks([])


def _panels(figure, count, ncols, **options):
    """A grid of `count` axes (the spare ones hidden), returned as a flat list."""
    ncols = max(1, min(ncols, count))
    nrows = -(-count // ncols)
    grid = figure.subplots(nrows, ncols, squeeze=False, **options).ravel()
    for axis in grid[count:]:
        axis.set_visible(False)
    return list(grid[:count])


# ------------------------------------------------------------------------------ data


def _interval_minutes(index: pd.DatetimeIndex) -> int:
    seconds = np.diff(index.to_numpy().astype("datetime64[s]").astype(np.int64))
    return int(np.median(seconds) // 60) if seconds.size else 30


def _day_grid(index: pd.DatetimeIndex, values, interval: int):
    """Values on a (day, time of day) grid; returns (grid, first day, number of days)."""
    days = index.normalize()
    first = days[0]
    day_position = ((days - first) / pd.Timedelta(days=1)).to_numpy().astype(int)
    slot = ((index - days) / pd.Timedelta(minutes=interval)).to_numpy().astype(int)
    per_day = 1440 // interval
    n_days = int(day_position[-1]) + 1
    grid = np.full((n_days, per_day), np.nan)
    grid[day_position, np.clip(slot, 0, per_day - 1)] = np.asarray(values, dtype=float)
    return grid, first, n_days


def _hour_of_day(index: pd.DatetimeIndex, interval: int) -> np.ndarray:
    """Hour of the middle of each interval [h]."""
    return ((index - index.normalize()) / pd.Timedelta(hours=1)).to_numpy() + interval / 120.0


def _day_of_year(index: pd.DatetimeIndex, interval: int) -> np.ndarray:
    """Fractional day of year at the middle of each interval, 0 at 1 January 00:00 [days]."""
    start = pd.to_datetime(pd.DataFrame({"year": index.year, "month": 1, "day": 1}))
    offset = (index - pd.DatetimeIndex(start)) / pd.Timedelta(days=1)
    return np.asarray(offset, dtype=float) + interval / 2880.0


def _temperature_column(timeseries: pd.DataFrame, config: Config) -> str:
    driver = config.respiration_driver
    for name in (f"{driver}_filled", driver):
        if name in timeseries.columns:
            return name
    raise FluxpartError(f"the timeseries table has no column {driver!r} or {driver + '_filled'!r}"
                        " (the respiration driver of the run)")


def _year_colours(drawing, years):
    colormap = drawing.mpl.colormaps["cividis"]
    positions = np.linspace(0.0, 0.8, len(years)) if len(years) > 1 else [0.0]
    return {year: colormap(p) for year, p in zip(years, positions, strict=True)}


# --------------------------------------------------------------------------- figures


def _figure_heatmaps(drawing, result, interval) -> _Figure:
    series = result.timeseries
    panels = [("nee_measured", "Measured NEE (after screening and the u* filter)", "nee"),
              ("nee_filled", "Gap-filled NEE", "nee"),
              ("gpp_nighttime", "GPP, nighttime method", "viridis"),
              ("reco_nighttime", "Reco, nighttime method (Lloyd–Taylor)", "cividis")]
    figure = drawing.figure(10.0, 11.5)
    axes = figure.subplots(len(panels), 1, sharex=True)
    nee_norm = drawing.nee_norm(series["nee_measured"], series["nee_filled"])
    nee_map = drawing.nee_colormap()
    for axis, (column, title, scale) in zip(axes, panels, strict=True):
        grid, first, n_days = _day_grid(series.index, series[column].to_numpy(), interval)
        start = drawing.dates.date2num(first.to_pydatetime())
        extent = (start, start + n_days, 0.0, 24.0)
        if scale == "nee":
            colormap, norm = nee_map, nee_norm
        else:
            finite = grid[np.isfinite(grid)]
            high = float(np.percentile(finite, 99.5)) if finite.size else 1.0
            colormap = drawing.mpl.colormaps[scale].with_extremes(bad="#ffffff")
            norm = drawing.colors.Normalize(vmin=0.0, vmax=max(high, 1e-3))
        image = axis.imshow(grid.T, origin="lower", aspect="auto", extent=extent,
                            cmap=colormap, norm=norm, interpolation="nearest")
        axis.grid(False)
        axis.set_title(title, loc="left")
        axis.set_ylabel("Time of day [h]")
        axis.set_yticks([0, 6, 12, 18, 24])
        bar = figure.colorbar(image, ax=axis, extend="both", pad=0.01, fraction=0.04)
        bar.set_label(f"[{_FLUX_UNIT}]")
    drawing.date_axis(axes[-1])
    axes[-1].set_xlabel("Date (day of year; local standard time)")
    caption = ("Heat maps of the fluxes by day (horizontal) and time of day (vertical), "
               f"{_FLUX_UNIT}. NEE scale: dark blue is strong uptake, pale orange is release; "
               "lightness rises steadily with NEE and the hue changes at zero, so the scale "
               "also reads in grey. White cells in the measured panel are records removed by "
               "screening or the u* filter, or missing. GPP uses viridis, Reco cividis. "
               "Colour limits are the 0.5th and 99.5th percentiles.")
    return _Figure("heatmaps.png", drawing.png(figure), "Fluxes by day and time of day", caption)


def _cumulative_bands(result, interval):
    """Per year: (day of year, cumulative NEE [g C m-2], bands: list of (low, high, label))."""
    series = result.timeseries
    annual = result.annual
    per_record = float(flux_to_carbon(1.0, interval))
    doy = _day_of_year(series.index, interval)
    years = series.index.year.to_numpy()
    scenario_columns = [c for c in annual.columns if re.fullmatch(r"nee_ustar_p[\d.]+", c)]
    has_random = "nee_random_error" in series.columns
    out = {}
    for year in np.unique(years):
        rows = years == year
        carbon = series["nee_filled"].to_numpy()[rows] * per_record
        cumulative = np.nancumsum(carbon)
        bands = []
        if has_random:
            sigma = series["nee_random_error"].to_numpy()[rows] * per_record
            spread = 1.96 * np.sqrt(np.nancumsum(sigma**2))
            bands.append((cumulative - spread, cumulative + spread, "random"))
        if scenario_columns and int(year) in annual.index:
            row = annual.loc[int(year)]
            totals = np.array([row[c] for c in scenario_columns] + [row["nee"]], dtype=float)
            totals = totals[np.isfinite(totals)]
            if totals.size:
                fraction = np.arange(1, rows.sum() + 1) / float(rows.sum())
                central = float(row["nee"])
                low = cumulative + (totals.min() - central) * fraction
                high = cumulative + (totals.max() - central) * fraction
                bands.append((low, high, "ustar"))
        out[int(year)] = (doy[rows], cumulative, bands)
    return out, scenario_columns, has_random


def _figure_cumulative(drawing, result, interval) -> _Figure:
    curves, scenario_columns, has_random = _cumulative_bands(result, interval)
    figure = drawing.figure(9.0, 5.0)
    axis = figure.subplots()
    colours = _year_colours(drawing, list(curves))
    hatches = {"random": None, "ustar": "////"}
    for year, (doy, cumulative, bands) in curves.items():
        colour = colours[year]
        for low, high, kind in bands:
            label = (f"{year}: 95 % random-error interval" if kind == "random"
                     else f"{year}: u* threshold scenario range")
            axis.fill_between(doy, low, high, color=colour, alpha=0.22 if kind == "random"
                              else 0.12, hatch=hatches[kind], edgecolor=colour, linewidth=0.0,
                              label=label)
            if kind == "ustar":
                axis.plot(doy, low, color=colour, linestyle=":", linewidth=0.9)
                axis.plot(doy, high, color=colour, linestyle=":", linewidth=0.9)
        axis.plot(doy, cumulative, color=colour, linewidth=1.8, label=f"{year}: gap-filled NEE")
    axis.axhline(0.0, color="#555555", linewidth=0.8)
    axis.set_xlim(0, 366)
    axis.set_xlabel("Day of year")
    axis.set_ylabel(f"Cumulative NEE [{_CARBON_UNIT}]")
    axis.set_title("Cumulative NEE (below zero: net uptake since 1 January)", loc="left")
    axis.legend(loc="best")
    parts = ["Cumulative sum of gap-filled NEE over each calendar year, "
             f"{_CARBON_UNIT}; negative values are net uptake."]
    if has_random:
        parts.append("The solid band is the 95 % interval of the random measurement error "
                     "(±1.96 times the square root of the cumulative sum of the per-record "
                     "error variances, records taken as independent; Hollinger & Richardson "
                     "2005, Richardson et al. 2006).")
    if scenario_columns:
        names = ", ".join(c.replace("nee_ustar_", "") for c in scenario_columns)
        parts.append("The hatched band is the range of the annual NEE over the u* threshold "
                     f"scenarios (bootstrap percentiles {names} and the central threshold), "
                     "spread linearly in time over the year: it shows the size of the u* "
                     "threshold's share of the uncertainty at year end, not how it builds up "
                     "during the year.")
    if not has_random and not scenario_columns:
        parts.append("No uncertainty band: the run had no u* scenarios and no per-record "
                     "random error.")
    if not has_random:
        parts.append("The random measurement error is not included in the band.")
    caption = " ".join(parts)
    return _Figure("cumulative_nee.png", drawing.png(figure), "Cumulative NEE and its "
                   "uncertainty", caption)


def _figure_monthly(drawing, result) -> _Figure:
    monthly = result.monthly
    months = pd.DatetimeIndex(monthly.index)
    figure = drawing.figure(9.0, 4.8)
    axis = figure.subplots()
    x = months + pd.Timedelta(days=14)
    styles = [("gpp_nighttime", "GPP, nighttime method", _GREEN, "-", "o"),
              ("gpp_daytime", "GPP, daytime method", _GREEN, "--", "s"),
              ("reco_nighttime", "Reco, nighttime method", _VERMILLION, "-", "^"),
              ("reco_daytime", "Reco, daytime method", _VERMILLION, "--", "D")]
    for column, label, colour, line, marker in styles:
        if column in monthly.columns:
            axis.plot(x, monthly[column].to_numpy(dtype=float), color=colour, linestyle=line,
                      marker=marker, markersize=5, markerfacecolor="white" if line == "--"
                      else colour, linewidth=1.5, label=label)
    drawing.date_axis(axis)
    axis.set_xlabel("Month")
    axis.set_ylabel(f"Monthly sum [{_CARBON_UNIT}]")
    axis.set_title("Monthly GPP and Reco by both partitioning methods", loc="left")
    axis.legend(loc="upper left", ncols=2)
    caption = (f"Monthly sums of GPP and Reco, {_CARBON_UNIT} per month: nighttime method "
               "(Reichstein et al. 2005; Lloyd & Taylor 1994), solid lines with filled markers; "
               "daytime light-response method (Lasslop et al. 2010), dashed lines with open "
               "markers. Where the two methods differ strongly, the partitioning of that "
               "month is uncertain.")
    return _Figure("monthly_gpp_reco.png", drawing.png(figure), "Monthly GPP and Reco", caption)


def _figure_diurnal(drawing, result, interval) -> _Figure:
    series = result.timeseries
    hour = _hour_of_day(series.index, interval)
    month = series.index.month.to_numpy()
    figure = drawing.figure(11.0, 8.0)
    axes = figure.subplots(3, 4, sharex=True, sharey=True).ravel()
    lines = [("nee_filled", "NEE (gap-filled)", _BLACK, "-"),
             ("gpp_nighttime", "GPP (nighttime method)", _GREEN, "--"),
             ("reco_nighttime", "Reco (nighttime method)", _VERMILLION, ":")]
    names = ["January", "February", "March", "April", "May", "June", "July", "August",
             "September", "October", "November", "December"]
    for number, axis in enumerate(axes, start=1):
        rows = month == number
        axis.set_title(names[number - 1], loc="left")
        if not rows.any():
            axis.text(0.5, 0.5, "no records", transform=axis.transAxes, ha="center",
                      va="center", color="#444444")
            continue
        for column, label, colour, style in lines:
            means = pd.Series(series[column].to_numpy()[rows]).groupby(hour[rows]).mean()
            axis.plot(means.index.to_numpy(), means.to_numpy(), color=colour, linestyle=style,
                      linewidth=1.6, label=label)
        axis.axhline(0.0, color="#888888", linewidth=0.6)
    for axis in axes[8:]:
        axis.set_xlabel("Time of day [h]")
        axis.set_xticks([0, 6, 12, 18, 24])
    for axis in axes[::4]:
        axis.set_ylabel(f"[{_FLUX_UNIT}]")
    axes[0].set_xlim(0, 24)
    handles, labels = axes[int(np.argmax([a.has_data() for a in axes]))].get_legend_handles_labels()
    figure.legend(handles, labels, loc="outside lower center", ncols=3)
    caption = (f"Mean diurnal course per calendar month (all years pooled), {_FLUX_UNIT}: "
               "gap-filled NEE (solid black), GPP (dashed green) and Reco (dotted vermillion) "
               "of the nighttime method; local standard time, each point at the middle of its "
               "interval.")
    return _Figure("diurnal_by_month.png", drawing.png(figure), "Mean diurnal course per month",
                   caption)


def _evenly_spaced(count, wanted):
    if count <= wanted:
        return np.arange(count)
    return np.unique(np.round(np.linspace(0, count - 1, wanted)).astype(int))


def _figure_night_respiration(drawing, result, interval) -> _Figure:
    series = result.timeseries
    temperature_column = _temperature_column(series, result.config)
    night = series["is_night"].to_numpy(dtype=bool) & np.isfinite(series["nee_measured"])
    years = np.unique(series.index.year)
    e0_annual = result.parameters.get("nighttime_e0_annual", pd.DataFrame())
    rref_windows = result.parameters.get("nighttime_rref", pd.DataFrame())
    figure = drawing.figure(5.0 * min(len(years), 3) + 1.0, 4.6 * -(-len(years) // 3))
    axes = _panels(figure, len(years), 3)
    colormap = drawing.mpl.colormaps["viridis"]
    norm = drawing.colors.Normalize(vmin=0.0, vmax=366.0)
    temperature = series[temperature_column].to_numpy(dtype=float)
    nee = series["nee_measured"].to_numpy(dtype=float)
    doy = _day_of_year(series.index, interval)
    scatter = None
    for axis, year in zip(axes, years, strict=True):
        rows = night & (series.index.year == year)
        axis.set_title(f"{year}", loc="left")
        if not rows.any():
            _no_data(axis, "no measured night records")
            continue
        scatter = axis.scatter(temperature[rows], nee[rows], c=doy[rows], cmap=colormap,
                               norm=norm, s=4, alpha=0.5, linewidths=0, rasterized=False)
        e0 = (float(e0_annual.loc[year, "e0"]) if year in e0_annual.index else np.nan)
        windows = (rref_windows[pd.DatetimeIndex(rref_windows["window_centre"]).year == year]
                   if len(rref_windows) else rref_windows)
        windows = windows[np.isfinite(windows["rref"])] if len(windows) else windows
        times = series.index[rows]
        for position in _evenly_spaced(len(windows), 6):
            window = windows.iloc[position]
            inside = (times >= window["window_start"]) & (times < window["window_end"])
            span = temperature[rows][inside]
            span = span[np.isfinite(span)]
            if span.size < 2:
                continue
            grid = np.linspace(span.min(), span.max(), 50)
            curve = lloyd_taylor(grid, window["rref"], window["e0"])
            centre = pd.Timestamp(window["window_centre"])
            colour = colormap(norm(centre.day_of_year - 0.5))
            axis.plot(grid, curve, color="#000000", linewidth=3.0)
            axis.plot(grid, curve, color=colour, linewidth=1.8)
        if np.isfinite(e0) and len(windows):
            finite = temperature[rows][np.isfinite(temperature[rows])]
            grid = np.linspace(np.percentile(finite, 1), np.percentile(finite, 99), 80)
            rref = float(np.median(windows["rref"]))
            axis.plot(grid, lloyd_taylor(grid, rref, e0), color="#000000", linestyle="--",
                      linewidth=1.6, label=f"E0 = {e0:.1f} K, median Rref = {rref:.2f} "
                      f"{_FLUX_UNIT}")
            axis.legend(loc="upper left")
        axis.set_xlabel(f"{_temperature_label(temperature_column)} [°C]")
        axis.set_ylabel(f"Night NEE [{_FLUX_UNIT}]")
    if scatter is not None:
        bar = figure.colorbar(scatter, ax=axes, pad=0.01, fraction=0.03)
        bar.set_label("Day of year")
    caption = (f"Measured night NEE ({_FLUX_UNIT}) against {_temperature_label(temperature_column)}"
               " [°C], points coloured by day of year. Solid curves: Lloyd–Taylor respiration "
               "(Lloyd & Taylor 1994, eq. 11) with the Rref of up to six evenly spaced "
               f"{result.config.rref_window_days:g}-day windows and the year's E0, each drawn over "
               "the temperature range of its window and coloured by its centre day. Dashed: the "
               "year's E0 with the median Rref of the windows (Reichstein et al. 2005).")
    return _Figure("night_respiration.png", drawing.png(figure), "Night respiration and the "
                   "Lloyd–Taylor fits", caption)


def _temperature_label(column: str) -> str:
    return "Soil temperature" if column.startswith("tsoil") else "Air temperature"


def _ustar_class_means(series: pd.DataFrame, classes: int) -> dict:
    """Night NEE by u* class per year: mean u* [m s-1], mean and standard error of NEE."""
    reason = series["rejection_reason"].to_numpy()
    usable = (series["is_night"].to_numpy(dtype=bool) & np.isin(reason, (0, 5))
              & np.isfinite(series["nee"]) & np.isfinite(series["ustar"]))
    out = {}
    for year in np.unique(series.index.year):
        rows = usable & (series.index.year == year)
        ustar = series["ustar"].to_numpy()[rows]
        nee = series["nee"].to_numpy()[rows]
        if ustar.size < 2 * classes:
            continue
        edges = np.quantile(ustar, np.linspace(0.0, 1.0, classes + 1))
        # classes (e[i-1], e[i]], the lowest closed: equal record counts
        group = np.clip(np.searchsorted(edges, ustar, side="left") - 1, 0, classes - 1)
        frame = pd.DataFrame({"group": group, "ustar": ustar, "nee": nee}).groupby("group")
        stats = frame.agg(ustar=("ustar", "mean"), nee=("nee", "mean"), sd=("nee", "std"),
                          n=("nee", "size"))
        stats["se"] = stats["sd"] / np.sqrt(stats["n"])
        out[int(year)] = stats
    return out


def _figure_ustar(drawing, result) -> _Figure:
    series = result.timeseries
    classes = result.config.ustar_classes
    means = _ustar_class_means(series, classes)
    table = result.ustar
    draws = result.parameters.get("ustar_bootstrap", pd.DataFrame())
    years = sorted(set(int(y) for y in np.unique(series.index.year)))
    colours = _year_colours(drawing, years)
    figure = drawing.figure(11.0, 4.6)
    left, right = figure.subplots(1, 2)
    annual_rows = table[table["period"] == "year"].set_index("year") if len(table) else table
    for year in years:
        colour = colours[year]
        if year in means:
            stats = means[year]
            left.errorbar(stats["ustar"], stats["nee"], yerr=stats["se"], color=colour,
                          marker="o", markersize=4, linewidth=1.2, capsize=2,
                          label=f"{year}: class means ± 1 s.e.")
        if year in annual_rows.index:
            threshold = float(annual_rows.loc[year, "threshold"])
            left.axvline(threshold, color=colour, linestyle="--", linewidth=1.4,
                         label=f"{year}: threshold {threshold:.3f} m s-1")
            if {"threshold_p05", "threshold_p95"} <= set(annual_rows.columns):
                low = float(annual_rows.loc[year, "threshold_p05"])
                high = float(annual_rows.loc[year, "threshold_p95"])
                if np.isfinite(low) and np.isfinite(high):
                    left.axvspan(low, high, color=colour, alpha=0.15, linewidth=0)
    if not means:
        _no_data(left, "too few night records for u* classes")
    else:
        left.set_xlabel("u* (class mean) [m s-1]")
        left.set_ylabel(f"Night NEE (class mean) [{_FLUX_UNIT}]")
        left.legend(loc="lower right")
    left.set_title(f"Night NEE in {classes} u* classes", loc="left")
    annual_draws = (draws[draws["period"] == "year"] if len(draws) and "period" in draws.columns
                    else pd.DataFrame())
    values = annual_draws["threshold"].to_numpy(dtype=float) if len(annual_draws) else np.array([])
    values = values[np.isfinite(values)]
    if values.size:
        edges = np.histogram_bin_edges(values, bins=min(25, max(5, values.size // 4)))
        for year in years:
            chosen = annual_draws.loc[annual_draws["year"] == year, "threshold"].to_numpy(float)
            chosen = chosen[np.isfinite(chosen)]
            if chosen.size:
                right.hist(chosen, bins=edges, histtype="stepfilled", alpha=0.35,
                           color=colours[year], edgecolor=colours[year], linewidth=1.2,
                           label=f"{year}: {chosen.size} draws")
            if year in annual_rows.index:
                right.axvline(float(annual_rows.loc[year, "threshold"]), color=colours[year],
                              linestyle="--", linewidth=1.4)
        right.set_xlabel("u* threshold [m s-1]")
        right.set_ylabel("Bootstrap draws [count]")
        right.legend(loc="upper right")
    else:
        _no_data(right, "no bootstrap distribution\n(fixed threshold or no draws)")
    right.set_title("Bootstrap distribution of the annual threshold", loc="left")
    caption = ("Left: mean night NEE in classes of equal record count of u*, from the night "
               "records that passed every screen except the u* filter, pooled over the year "
               "(the detector itself works within seasons and temperature classes, Reichstein "
               "et al. 2005; Papale et al. 2006); error bars are one standard error; dashed "
               "lines mark the applied annual threshold and the shading its bootstrap 5–95 % "
               "range. Right: the annual threshold of each bootstrap resample of the night "
               "data, with the applied threshold dashed.")
    return _Figure("ustar_threshold.png", drawing.png(figure), "u* threshold diagnostics",
                   caption)


def _light_windows(parameters: pd.DataFrame, wanted: int = 4) -> pd.DataFrame:
    """Pick up to `wanted` accepted windows spread over the record, the best-filled of each part."""
    if not len(parameters):
        return parameters
    accepted = parameters[parameters["accepted"].astype(bool)
                          & np.isfinite(parameters[["alpha", "beta0", "k", "rref", "e0"]]).all(
                              axis=1)]
    accepted = accepted.sort_values("window_centre", kind="stable")
    if not len(accepted):
        return accepted
    picks = []
    for part in np.array_split(np.arange(len(accepted)), min(wanted, len(accepted))):
        block = accepted.iloc[part]
        picks.append(block.index[int(np.argmax(block["points"].to_numpy()))])
    return accepted.loc[picks]


def _figure_light_response(drawing, result) -> _Figure:
    series = result.timeseries
    windows = _light_windows(result.parameters.get("daytime", pd.DataFrame()))
    temperature_column = _temperature_column(series, result.config)
    rg_column = "rg_filled" if "rg_filled" in series.columns else "rg"
    vpd_column = "vpd_filled" if "vpd_filled" in series.columns else "vpd"
    figure = drawing.figure(10.0, 8.0)
    count = max(len(windows), 1)
    axes = _panels(figure, count, 2)
    colormap = drawing.mpl.colormaps["cividis"]
    day = ~series["is_night"].to_numpy(dtype=bool) & np.isfinite(series["nee_measured"])
    vpd_all = series[vpd_column].to_numpy(dtype=float)[day]
    vpd_high = float(np.nanpercentile(vpd_all, 99)) if np.isfinite(vpd_all).any() else 1.0
    norm = drawing.colors.Normalize(vmin=0.0, vmax=max(vpd_high, 1.0))
    scatter = None
    if not len(windows):
        _no_data(axes[0], "no accepted light-response windows")
    for axis, (_, window) in zip(axes, windows.iterrows(), strict=False):
        inside = day & (series.index >= window["window_start"]) & (
            series.index < window["window_end"])
        rg = series[rg_column].to_numpy(dtype=float)[inside]
        vpd = series[vpd_column].to_numpy(dtype=float)[inside]
        temperature = series[temperature_column].to_numpy(dtype=float)[inside]
        nee = series["nee_measured"].to_numpy(dtype=float)[inside]
        scatter = axis.scatter(rg, nee, c=vpd, cmap=colormap, norm=norm, s=14,
                               edgecolors="#333333", linewidths=0.3)
        grid = np.linspace(0.0, max(float(np.nanmax(rg)) if rg.size else 1.0, 1.0), 100)
        vpd_typical = float(np.nanmedian(vpd)) if np.isfinite(vpd).any() else 0.0
        t_typical = float(np.nanmedian(temperature)) if np.isfinite(temperature).any() else 10.0
        model = (lloyd_taylor(np.full_like(grid, t_typical), window["rref"], window["e0"])
                 - light_response(grid, np.full_like(grid, vpd_typical), window["alpha"],
                                  window["beta0"], window["k"]))
        axis.plot(grid, model, color="#000000", linewidth=1.8,
                  label=f"fit at VPD {vpd_typical:.1f} hPa, T {t_typical:.1f} °C")
        start = pd.Timestamp(window["window_start"])
        end = pd.Timestamp(window["window_end"]) - pd.Timedelta(minutes=1)
        axis.set_title(f"{start:%Y-%m-%d} to {end:%Y-%m-%d} ({int(window['points'])} records)",
                       loc="left")
        axis.text(0.98, 0.97, f"α = {window['alpha']:.4f} µmol J-1\nβ0 = {window['beta0']:.1f} "
                  f"{_FLUX_UNIT}\nk = {window['k']:.3f} hPa-1\nRref = {window['rref']:.2f} "
                  f"{_FLUX_UNIT}", transform=axis.transAxes, ha="right", va="top", fontsize=7.5,
                  bbox={"facecolor": "white", "edgecolor": "#bbbbbb", "alpha": 0.85})
        axis.set_xlabel("Global radiation Rg [W m-2]")
        axis.set_ylabel(f"Daytime NEE [{_FLUX_UNIT}]")
        axis.legend(loc="lower left")
    if scatter is not None:
        bar = figure.colorbar(scatter, ax=axes, pad=0.01, fraction=0.03)
        bar.set_label("VPD [hPa]")
    caption = ("Measured daytime NEE against global radiation in up to four accepted "
               f"{result.config.daytime_window_days:g}-day light-response windows spread over the "
               "record (the best-filled window of each part), points coloured by VPD. The "
               "curve is the fitted model NEE = −αβRg/(αRg + β) + Rref·LT(T), β = β0·exp(−k(VPD "
               f"− {LASSLOP_VPD0_HPA:g} hPa)) above {LASSLOP_VPD0_HPA:g} hPa (Lasslop et al. "
               "2010), drawn at the window's median "
               "VPD and temperature; points at other VPD and temperature scatter about it.")
    return _Figure("light_response.png", drawing.png(figure), "Light-response fits", caption)


# ------------------------------------------------------------------------------ page


def _e(value) -> str:
    return html.escape(str(value), quote=True)


def _decimals(unit: str, column: str, dtype) -> int:
    if pd.api.types.is_integer_dtype(dtype):
        return 0
    if unit == _CARBON_UNIT or unit == "K":
        return 1
    if unit == "m s-1" or unit == "1":
        return 3
    if unit == _FLUX_UNIT:
        return 2
    return 3


def _cell(value, decimals: int, attributes: dict) -> str:
    attrs = "".join(f' data-{key}="{_e(val)}"' for key, val in attributes.items())
    if isinstance(value, (bool, np.bool_)):
        return f'<td{attrs} data-value="{int(value)}">{"yes" if value else "no"}</td>'
    if value is None or (isinstance(value, (float, np.floating)) and not np.isfinite(value)):
        return f'<td{attrs} class="missing">n/a</td>'
    if isinstance(value, (int, np.integer)):
        return f'<td{attrs} data-decimals="0" class="number">{int(value)}</td>'
    if isinstance(value, (float, np.floating)):
        return (f'<td{attrs} data-decimals="{decimals}" class="number">'
                f"{float(value):.{decimals}f}</td>")
    return f"<td{attrs}>{_e(value)}</td>"


def _field_metadata(path: Path) -> dict[str, tuple[str, str]]:
    """Column -> (unit, description) from a table's Arrow field metadata."""
    import pyarrow.parquet as pq

    schema = pq.read_schema(path)
    out = {}
    for field in schema:
        meta = field.metadata or {}
        out[field.name] = (meta.get(b"unit", b"").decode(), meta.get(b"description", b"").decode())
    return out


def _is_reportable(series: pd.Series) -> bool:
    return pd.api.types.is_numeric_dtype(series) or pd.api.types.is_bool_dtype(series)


def _annual_groups(annual: pd.DataFrame) -> dict[str, list[str]]:
    columns = [c for c in annual.columns if _is_reportable(annual[c])]
    budget = [c for c in _BUDGET_COLUMNS if c in columns]
    coverage = [c for c in columns if _COVERAGE_PATTERN.fullmatch(c) and c not in budget]
    uncertainty = [c for c in columns if c not in budget and c not in coverage]
    return {"budget": budget, "uncertainty": uncertainty, "coverage": coverage}


def _annual_table(annual: pd.DataFrame, columns, metadata, table_id: str) -> str:
    years = [int(y) for y in annual.index]
    head = "".join(f'<th scope="col">{_e(y)}</th>' for y in years)
    rows = []
    for column in columns:
        unit, description = metadata.get(column, ("", ""))
        decimals = _decimals(unit, column, annual[column].dtype)
        cells = "".join(_cell(annual.loc[year, column], decimals,
                              {"column": column, "year": year}) for year in years)
        rows.append(f'<tr><th scope="row"><code>{_e(column)}</code></th><td class="unit">'
                    f"{_e(unit if unit != '1' else '–')}</td><td class=\"description\">"
                    f"{_e(description)}</td>{cells}</tr>")
    return (f'<table id="{_e(table_id)}"><thead><tr><th scope="col">Column</th>'
            f'<th scope="col">Unit</th><th scope="col">Meaning</th>{head}</tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table>")


def _frame_table(flat: pd.DataFrame, metadata, table_id: str, key: str) -> str:
    """A table with one row per row of `flat`, keyed by its first column (attribute `key`)."""
    head = "".join(
        f'<th scope="col">{_e(c)}'
        + (f'<br><span class="unit">[{_e(metadata.get(c, ("", ""))[0])}]</span>'
           if metadata.get(c, ("", ""))[0] not in ("", "1") else "") + "</th>"
        for c in flat.columns)
    rows = []
    for _, row in flat.iterrows():
        label = _label(row[flat.columns[0]], key)
        cells = []
        for column in flat.columns:
            value = row[column]
            if column == flat.columns[0]:
                value = label
            elif isinstance(value, pd.Timestamp):
                value = value.strftime("%Y-%m-%d %H:%M") if (value.hour or value.minute) \
                    else value.strftime("%Y-%m-%d")
            unit = metadata.get(column, ("", ""))[0]
            cells.append(_cell(value, _decimals(unit, column, flat[column].dtype),
                               {"column": column, key: label}))
        rows.append(f"<tr>{''.join(cells)}</tr>")
    return (f'<table id="{_e(table_id)}"><thead><tr>{head}</tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table>")


def _label(value, key: str):
    if isinstance(value, pd.Timestamp):
        return value.strftime("%Y-%m") if key == "month" else value.strftime("%Y-%m-%d")
    return value


def _config_notes() -> dict[str, str]:
    """Setting name -> its description in the Config docstring (where it cites its source)."""
    text = inspect.cleandoc(Config.__doc__ or "")
    section = text.split("Attributes\n----------\n", 1)[-1]
    notes, names = {}, []
    for line in section.splitlines():
        if line and not line.startswith(" ") and " : " in line:
            names = [n.strip() for n in line.split(" : ", 1)[0].split(",")]
            for name in names:
                notes[name] = ""
        elif line.startswith(" ") and names:
            for name in names:
                notes[name] = (notes[name] + " " + line.strip()).strip()
    return {name: _plain_text(note) for name, note in notes.items()}


def _plain_text(text: str) -> str:
    """Drop reStructuredText markup (roles, literals) from a docstring line."""
    text = re.sub(r":\w+:`~?([^`]+)`", r"\1", text)
    return text.replace("``", "").replace("`", "")


def _setting_value(value) -> str:
    if value is None:
        return "none"
    if isinstance(value, (list, tuple)):
        return ", ".join(_setting_value(v) for v in value) or "(empty)"
    if isinstance(value, bool):
        return "yes" if value else "no"
    return str(value)


def _methods(config: dict, has_random: bool) -> tuple[str, list[str]]:
    cited = ["papale2006", "reichstein2005", "lloyd1994", "lasslop2010", "kopp2011"]
    method = config.get("ustar_method", "moving_point")
    if method == "moving_point":
        ustar = ("the moving point test on night data by season and temperature class "
                 "(Reichstein et al. 2005; Papale et al. 2006), with a bootstrap of the night "
                 "data for its distribution")
    elif method == "change_point":
        ustar = ("change-point detection (Barr et al. 2013), with a bootstrap of the night data "
                 "for its distribution")
        cited.append("barr2013")
    else:
        ustar = f"a fixed threshold of {_setting_value(config.get('ustar_threshold'))} m s-1"
    items = [
        "Solar geometry and potential radiation from local standard time and longitude "
        f"(solar constant {SOLAR_CONSTANT:g} W m-2, Kopp & Lean 2011); night where Rg is below "
        f"{_setting_value(config.get('night_rg_threshold'))} W m-2.",
        "Screening: plausible ranges, the site's own flag, and despiking of the double-"
        f"differenced series in {_setting_value(config.get('despike_block_days'))}-day blocks "
        f"with z = {_setting_value(config.get('despike_z'))} (Papale et al. 2006).",
        f"u* threshold: {ustar}. Night records below the threshold are removed.",
        "Gap filling of NEE and the drivers by marginal distribution sampling (Reichstein et "
        "al. 2005, appendix): similar Rg, Tair and VPD within widening time windows, then the "
        "mean diurnal course; fill quality classes A, B, C.",
        "Nighttime partitioning: Lloyd–Taylor respiration (Lloyd & Taylor 1994) with E0 from "
        f"short {_setting_value(config.get('e0_window_days'))}-day windows of night data and "
        f"Rref in {_setting_value(config.get('rref_window_days'))}-day windows (Reichstein et "
        "al. 2005); GPP = Reco − NEE.",
        "Daytime partitioning: rectangular light response with VPD limitation of the "
        f"saturated assimilation, fitted in {_setting_value(config.get('daytime_window_days'))}"
        "-day windows with E0 from the nighttime method (Lasslop et al. 2010).",
        "Uncertainty: the annual sums are recomputed with the u* threshold at bootstrap "
        f"percentiles {_setting_value(config.get('ustar_scenarios'))}; the two partitioning "
        "methods are compared against the agreement margin "
        f"{_setting_value(config.get('agreement_margin'))}.",
        f"Carbon units: 1 µmol CO2 m-2 s-1 = {CARBON_MOLAR_MASS}e-6 g C m-2 s-1 (IUPAC "
        "standard atomic weight of carbon).",
    ]
    if has_random:
        items.append("Random measurement error of each record, closer to a Laplace than a "
                     "normal distribution (Hollinger & Richardson 2005; Richardson et al. 2006).")
        cited += ["hollinger2005", "richardson2006"]
    cited.append("okabe2008")
    body = "<ol>" + "".join(f"<li>{_e(item)}</li>" for item in items) + "</ol>"
    return body, cited


_CSS = """
body { font-family: "DejaVu Sans", Verdana, Arial, sans-serif; color: #1a1a1a;
       max-width: 1100px; margin: 1.5em auto; padding: 0 1em; line-height: 1.45; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; }
h2 { font-size: 1.25em; border-bottom: 2px solid #2c4a7a; padding-bottom: 0.15em;
     margin-top: 2em; }
h3 { font-size: 1.05em; margin-top: 1.4em; }
table { border-collapse: collapse; margin: 0.6em 0 1.2em; font-size: 0.85em; }
.scroll { overflow-x: auto; max-width: 100%; }
tbody th { text-align: left; font-weight: 600; }
tbody td:first-child { white-space: nowrap; }
th, td { border: 1px solid #c8c8c8; padding: 0.2em 0.5em; vertical-align: top; }
thead th { background: #e8edf5; }
td.number { text-align: right; font-variant-numeric: tabular-nums; }
td.missing { color: #777777; text-align: center; }
td.unit, span.unit { color: #444444; white-space: nowrap; }
td.description { color: #333333; max-width: 28em; }
code { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: 0.95em; }
.caution { border: 2px solid #8a4b00; background: #fff4e0; padding: 0.7em 1em; margin: 1em 0; }
.warning { border-left: 5px solid #8a4b00; background: #fbf3e8; padding: 0.4em 0.8em;
           margin: 0.4em 0; }
figure { margin: 1.5em 0; }
figure img { max-width: 100%; height: auto; border: 1px solid #dddddd; }
figcaption { font-size: 0.9em; color: #333333; margin-top: 0.4em; }
.meta { color: #444444; font-size: 0.9em; }
.hash { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: 0.8em;
        word-break: break-all; }
"""


def _site_table(manifest: dict, result, interval: int) -> str:
    site = manifest.get("site", {})
    index = result.timeseries.index
    rows = [("Name", site.get("name", result.site.name)),
            ("Latitude [degrees north]",
             f"{float(site.get('latitude', result.site.latitude)):.4f}"),
            ("Longitude [degrees east]",
             f"{float(site.get('longitude', result.site.longitude)):.4f}"),
            ("UTC offset of local standard time [h]",
             f"{float(site.get('utc_offset', result.site.utc_offset)):g}"),
            ("First record (start)", f"{index[0]:%Y-%m-%d %H:%M}"),
            ("Last record (start)", f"{index[-1]:%Y-%m-%d %H:%M}"),
            ("Records", f"{len(index)}"),
            ("Record length [min]", f"{interval}")]
    keys = ["name", "latitude", "longitude", "utc_offset", "first", "last", "records",
            "interval"]
    body = "".join(f'<tr><th scope="row">{_e(label)}</th><td data-site="{key}">{_e(value)}</td>'
                   "</tr>" for key, (label, value) in zip(keys, rows, strict=True))
    return f'<table id="site"><tbody>{body}</tbody></table>'


def _screening_table(counts: pd.Series, total: int) -> str:
    rows = []
    for reason, records in counts.items():
        share = records / total if total else np.nan
        rows.append(f'<tr><th scope="row"><code>{_e(reason)}</code></th>'
                    + _cell(int(records), 0, {"column": "records", "reason": reason})
                    + _cell(float(share), 3, {"column": "share", "reason": reason}) + "</tr>")
    return ('<table id="screening"><thead><tr><th scope="col">Reason (first that applied)</th>'
            '<th scope="col">Records</th><th scope="col">Share of records</th></tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table>")


def _provenance(manifest: dict) -> str:
    parts = []
    provenance = manifest.get("provenance", {})
    for key in ("input", "site_config"):
        entry = provenance.get(key)
        if isinstance(entry, dict):
            parts.append(f"<tr><th scope=\"row\">{_e(key.replace('_', ' '))}</th><td>"
                         f"{_e(entry.get('path', ''))}<br><span class=\"hash\">SHA-256 "
                         f"{_e(entry.get('sha256', ''))}</span></td></tr>")
    if "demo" in provenance:
        parts.append(f'<tr><th scope="row">demo</th><td>invented demo data: '
                     f"{_e(provenance['demo'])}</td></tr>")
    parts.append(f'<tr><th scope="row">seed</th><td>{_e(manifest.get("seed", ""))}</td></tr>')
    versions = manifest.get("versions", {})
    parts.append('<tr><th scope="row">versions</th><td>' + _e(", ".join(
        f"{name} {version}" for name, version in versions.items())) + "</td></tr>")
    tables = "".join(f"<tr><td><code>{_e(entry.get('file', name))}</code></td><td class=\"number\">"
                     f"{_e(entry.get('rows', ''))}</td><td class=\"hash\">"
                     f"{_e(entry.get('sha256', ''))}</td></tr>"
                     for name, entry in manifest.get("tables", {}).items())
    return (f'<table id="provenance"><tbody>{"".join(parts)}</tbody></table>'
            '<table id="table-hashes"><thead><tr><th scope="col">Table</th><th scope="col">Rows'
            f'</th><th scope="col">SHA-256</th></tr></thead><tbody>{tables}</tbody></table>')


def _page(manifest: dict, result, directory: Path, figures, interval: int) -> str:
    annual_path = directory / manifest["tables"]["annual"]["file"]
    monthly_path = directory / manifest["tables"]["monthly"]["file"]
    annual_meta = _field_metadata(annual_path)
    monthly_meta = _field_metadata(monthly_path)
    groups = _annual_groups(result.annual)
    has_random = "nee_random_error" in result.timeseries.columns
    site_name = manifest.get("site", {}).get("name", result.site.name)
    caution = manifest.get("caution", CAUTION)
    cautions = [CAUTION] if caution == CAUTION else [CAUTION, caution]
    cautions += [
        "NEE < 0 is net uptake by the ecosystem; GPP and Reco are reported positive. All "
        "budgets are in grams of carbon per square metre (g C m-2), not of CO2 (multiply by "
        f"{CO2_MOLAR_MASS}/{CARBON_MOLAR_MASS} for g CO2 m-2).",
        "The uncertainty shown covers the parts the run computed (see the uncertainty table); "
        "systematic errors of the measurement itself (energy-balance closure, advection, "
        "storage, footprint) are not included.",
        "Years marked incomplete are sums over the records present, not annual totals.",
    ]
    warnings = manifest.get("warnings", list(result.warnings))
    warning_html = ("".join(f'<p class="warning">{_e(w)}</p>' for w in warnings) if warnings
                    else "<p>No warnings were recorded for this run.</p>")
    figure_html = "".join(
        f'<figure id="figure-{_e(f.name.removesuffix(".png"))}"><h3>{_e(f.title)}</h3>'
        f'<img src="data:image/png;base64,{base64.b64encode(f.png).decode("ascii")}" '
        f'alt="{_e(f.title)}"><figcaption>{_e(f.caption)}</figcaption></figure>'
        for f in figures)
    month_columns = [c for c in result.monthly.columns
                     if _COVERAGE_PATTERN.fullmatch(c) and _is_reportable(result.monthly[c])]
    monthly = result.monthly[month_columns]
    ustar_meta = _field_metadata(directory / manifest["tables"]["ustar"]["file"])
    e0_annual = result.parameters.get("nighttime_e0_annual")
    e0_html = ""
    if e0_annual is not None and len(e0_annual):
        e0_meta = _field_metadata(directory / manifest["tables"]["parameters_nighttime_e0_annual"]
                                  ["file"])
        e0_html = ("<h3>Lloyd–Taylor temperature sensitivity per year</h3>"
                   + _frame_table(e0_annual.reset_index(), e0_meta, "e0-annual", "year"))
    daytime = result.parameters.get("daytime")
    daytime_html = ""
    if daytime is not None and len(daytime):
        accepted = int(daytime["accepted"].astype(bool).sum())
        daytime_html = (f"<p>Light-response windows accepted: {accepted} of {len(daytime)}.</p>")
    notes = _config_notes()
    config = manifest.get("config", {})
    settings = "".join(f'<tr><th scope="row"><code>{_e(key)}</code></th>'
                       f'<td data-setting="{_e(key)}">{_e(_setting_value(value))}</td>'
                       f'<td class="description">{_e(notes.get(key, ""))}</td></tr>'
                       for key, value in sorted(config.items()))
    methods, cited = _methods(config, has_random)
    references = "".join(f"<li>{_e(_REFERENCES[key])}</li>" for key in cited)
    page = f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>fluxpart report: {_e(site_name)}</title>
<style>{_CSS}</style>
</head>
<body>
<header>
<h1>Carbon budget report: <span id="site-name">{_e(site_name)}</span></h1>
<p class="meta">Written by fluxpart {_e(manifest.get("versions", {}).get("fluxpart", ""))} from
the result folder <code>{_e(directory.name)}</code> (format {_e(manifest.get("format", ""))}).</p>
<div class="caution" id="caution-top"><strong>Caution.</strong> {_e(CAUTION)}</div>
</header>
<main>
<section id="section-site"><h2>Site and record</h2>
{_site_table(manifest, result, interval)}</section>
<section id="section-budget"><h2>Annual budget</h2>
<p>Sums over each calendar year of the records present; NEE &lt; 0 is net uptake.</p>
{_annual_table(result.annual, groups["budget"], annual_meta, "annual-budget")}
<h3>Uncertainty of the annual budget</h3>
<p>The u* threshold scenarios rerun gap filling and both partitionings with the threshold at
bootstrap percentiles; the method difference compares the daytime with the nighttime
partitioning.</p>
{_annual_table(result.annual, groups["uncertainty"], annual_meta, "annual-uncertainty")}
</section>
<section id="section-figures"><h2>Figures</h2>{figure_html}</section>
<section id="section-audit"><h2>Audit trail and coverage</h2>
<h3>Screening of NEE records</h3>
{_screening_table(result.screening_counts, len(result.timeseries))}
<h3>Coverage and fill quality per year</h3>
{_annual_table(result.annual, groups["coverage"], annual_meta, "annual-coverage")}
<h3>Coverage and fill quality per month</h3>
{_frame_table(monthly.reset_index(), monthly_meta, "monthly-coverage", "month")}
<h3>u* thresholds</h3>
{_frame_table(result.ustar.reset_index(drop=True), ustar_meta, "ustar", "row")}
{e0_html}{daytime_html}
<h3>Inputs, versions and table hashes</h3>
{_provenance(manifest)}
</section>
<section id="section-methods"><h2>Methods and settings</h2>
{methods}
<h3>Settings of this run</h3>
<p>"(m)" in a note marks a published value recalled from memory, still to be checked against
the paper.</p>
<table id="settings"><thead><tr><th scope="col">Setting</th><th scope="col">Value</th>
<th scope="col">Meaning and source</th></tr></thead><tbody>{settings}</tbody></table>
<h3>References</h3>
<ol id="references">{references}</ol>
</section>
<section id="section-warnings"><h2>Warnings</h2>{warning_html}</section>
<section id="section-cautions"><h2>Cautions</h2>
{"".join(f'<p class="caution">{_e(text)}</p>' for text in cautions)}
</section>
</main>
</body>
</html>
"""
    # Wide tables scroll inside the page; every value in them is escaped, so the only
    # "<table" and "</table>" in the page are our own.
    return (page.replace("<table ", '<div class="scroll"><table ')
            .replace("</table>", "</table></div>"))


# ------------------------------------------------------------------------------ entry points


def build_report(directory, out=None, *, progress=None) -> Path:
    """Draw the figures of a result folder and write a self-contained ``report.html``.

    Parameters
    ----------
    directory : path-like
        Result folder written by :meth:`fluxpart.Result.write` (``fluxpart run`` or
        ``fluxpart demo``).
    out : path-like, optional
        Folder for the PNG figures and ``report.html``; ``DIR/report/`` by default.
    progress : callable, optional
        Called with no argument after each figure and after the page (for example
        :meth:`fluxpart.progress.Progress.advance`); ``len(FIGURES) + 1`` calls.

    Returns
    -------
    pathlib.Path
        Path of the written ``report.html``.

    Raises
    ------
    InputFileError
        If `directory` is not a result folder or a table is missing.
    FluxpartError
        If matplotlib (the ``report`` extra) is not installed.

    Notes
    -----
    The page embeds each figure as a base64 data URI, carries its CSS inline and
    loads nothing from elsewhere. Every value from the folder is HTML-escaped.
    Each annual value sits in a cell ``<td data-column="nee" data-year="2021"
    data-decimals="1">`` whose text is the value rounded to `data-decimals`
    places. PNG files are written without timestamps, so the same folder and
    library versions give the same bytes.
    """
    drawing = _Drawing()
    directory = Path(directory)
    manifest = read_manifest(directory)
    result = load(directory)
    out = directory / "report" if out is None else Path(out)
    interval = _interval_minutes(result.timeseries.index)
    tick = progress if progress is not None else (lambda: None)
    painters = (
        lambda: _figure_heatmaps(drawing, result, interval),
        lambda: _figure_cumulative(drawing, result, interval),
        lambda: _figure_monthly(drawing, result),
        lambda: _figure_diurnal(drawing, result, interval),
        lambda: _figure_night_respiration(drawing, result, interval),
        lambda: _figure_ustar(drawing, result),
        lambda: _figure_light_response(drawing, result),
    )
    figures = []
    with drawing.mpl.rc_context():
        drawing.mpl.rcdefaults()
        drawing.mpl.rcParams.update(_RC)
        for paint in painters:
            figure = paint()
            atomic_write_bytes(out / figure.name, figure.png)
            figures.append(figure)
            tick()
    page = _page(manifest, result, directory, figures, interval)
    path = out / "report.html"
    atomic_write_bytes(path, page.encode("utf-8"))
    tick()
    return path


def command_report(args) -> int:
    """Run ``fluxpart report DIR [--out OUT] [--quiet]``; return the exit status.

    Parameters
    ----------
    args : argparse.Namespace
        ``directory`` (the result folder), ``out`` (folder for the page, or None for
        ``DIR/report/``) and ``quiet`` (no progress line).

    Returns
    -------
    int
        0 on success; errors are raised as :class:`~fluxpart.errors.FluxpartError`
        and turned into exit status 2 by :func:`fluxpart.cli.main`.
    """
    from .progress import Progress, progress_enabled

    enabled = progress_enabled(bool(getattr(args, "quiet", False)))
    with Progress(len(FIGURES) + 1, "fluxpart report", enabled=enabled) as progress:
        path = build_report(args.directory, getattr(args, "out", None),
                            progress=progress.advance)
    print(f"Wrote {path} (figures beside it)")
    print(f"Caution: {CAUTION}")
    return 0
