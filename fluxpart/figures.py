"""Figures of the report page, drawn only from what a result folder holds.

Each painter takes a :class:`Written` (the tables and manifest of one result
folder, read by :mod:`fluxpart.report`) and returns a :class:`Figure`: a
compressed PNG, a title and a one-sentence caption that says what to look for.
Nothing here re-runs a method: every curve, band and mark is a column or a
parameter that the run wrote. Columns that older result folders lack (daily
1-sigma columns, the clock check, per-window status strings) are drawn when
present and named as absent otherwise.

matplotlib (the ``report`` extra) is used on the Agg canvas without pyplot and
without a layout engine: every figure has fixed margins, which keeps drawing
fast (no tight or constrained layout passes). Figures are written as 8-bit
palette PNG files (zlib level 3) without timestamp or software tag, so the same
folder gives the same bytes.

Speed (issue 17): the report is ten figures, so each has a budget of about a tenth
of the command, and matplotlib's cost is mostly per artist. Figures use few axes
(the clock check draws one axes per row of months), at most 4-6 ticks on value
axes and none on the inner panels of a column, every axis' ticks drawn as one
marker line, one grid collection and one text per label instead of five artists
per tick (:meth:`Drawing.light_ticks`), texts shaped and rendered once into
bitmaps shared by all figures (matplotlib 3.11 renders every text glyph by glyph
at each draw; see :func:`_text_cache_canvas`), images
coloured once into RGBA bytes, curves denser than the pixels thinned
deterministically (:func:`_thinned`: every k-th point and the last), and the
garbage collector paused while drawing.

Colour scales: NEE is drawn on a diverging scale (dark blue strong uptake,
near white zero, dark red-brown strong release) and every missing cell is a
grey hatch that no value maps to. Lines follow the Okabe & Ito (2008)
colour-blind-safe palette with distinct line styles, so they also read in grey.
"""

from __future__ import annotations

import gc
import io
import re
import sys
import textwrap
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .absent_tables import absent_main, absent_parts
from .constants import KELVIN_OFFSET, LLOYD_TAYLOR_TREF_KELVIN
from .errors import LOADER_MEMORY_WORDS, FluxpartError
from .respiration_facts import respiration_facts
from .responses import LASSLOP_VPD0_HPA, light_response, lloyd_taylor
from .units import CARBON_UNIT, FLUX_UNIT, flux_to_carbon

__all__ = ["FIGURES", "Figure", "Written", "draw_figures", "fill_category", "period_masks",
           "unfitted_methods"]

#: File names of the figures, in page order.
FIGURES = (
    "daily_fluxes.png",
    "cumulative_nee.png",
    "fill_quality.png",
    "heatmaps.png",
    "clock_check.png",
    "monthly_gpp_reco.png",
    "diurnal_by_month.png",
    "night_respiration.png",
    "ustar_threshold.png",
    "light_response.png",
)

_DPI = 100
_STEPS = (1, 2, 2.5, 5, 10)  # tick steps of matplotlib's automatic locator
_FLUX_UNIT = FLUX_UNIT
#: Rref with its reference temperature, as the tables describe it: a respiration rate
#: read without its temperature says nothing (review54)
_RREF = f"Rref at {LLOYD_TAYLOR_TREF_KELVIN - KELVIN_OFFSET:.0f} °C"
_CARBON_UNIT = CARBON_UNIT
_MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
           "September", "October", "November", "December")

# Okabe & Ito (2008) colour-blind-safe palette.
_GREEN = "#009E73"
_VERMILLION = "#D55E00"
_BLUE = "#0072B2"
_ORANGE = "#E69F00"
_SKY = "#56B4E9"
_PURPLE = "#CC79A7"
_BLACK = "#000000"
_MISSING_FACE = "#bdbdbd"
_MISSING_HATCH = "#7a7a7a"

#: Fill-quality categories in drawing order with their colours (Okabe & Ito 2008).
#: "measured" is a pale bluish green (Okabe & Ito's #009E73 at a fifth on white), not the
#: light grey it was: grey is what no value maps to (a record missing from the file, the
#: grey hatch), and the two greys read as one (round leftovers61).
FILL_CATEGORIES = (
    ("measured", "#ccebe3"),
    ("A", _SKY),
    ("B", _ORANGE),
    ("C", _VERMILLION),
    ("interpolated", _PURPLE),
    ("unfilled", "#000000"),
)
_QUALITY_CODES = {0: "measured", 1: "A", 2: "B", 3: "C", -1: "unfilled", 4: "interpolated"}
#: The fill classes as the legend names them: a bare "A", "B", "C" said nothing without
#: the caption (review54)
_FILL_LEGEND = {"A": "A: filled, most reliable", "B": "B: filled", "C": "C: filled, least reliable"}
#: The legend entry of the grey hatch of the fill-quality figure (records absent from the file).
_NO_RECORD_LEGEND = "no record in the file (top panel)"

_RC = {
    "font.family": "DejaVu Sans",
    "font.size": 9.0,
    "axes.titlesize": 9.5,
    "axes.labelsize": 9.0,
    "axes.grid": True,
    "grid.color": "#d6d6d6",
    "grid.linewidth": 0.5,
    "legend.fontsize": 8.0,
    "legend.frameon": False,
    "image.interpolation": "nearest",
    "hatch.linewidth": 0.6,
    # unhinted glyphs: 40 % fewer instructions per text than FreeType's auto-hinter (text
    # is most of the drawing time), smooth at 100 dpi
    "text.hinting": "no_hinting",
    # a fixed title height: matplotlib skips the costly search for tick labels under titles
    "axes.titley": 1.0,
    "axes.titlepad": 4.0,
}


@dataclass(frozen=True)
class Figure:
    """One drawn figure: file name, PNG bytes, title and caption (plain text)."""

    name: str
    png: bytes
    title: str
    caption: str


@dataclass
class Written:
    """What a result folder holds, as the report reads it (no method is re-run).

    Attributes
    ----------
    manifest : dict
        Parsed ``manifest.json``.
    tables : dict of str to pandas.DataFrame
        Every table the manifest lists, by its manifest name.
    config : dict
        The ``config`` mapping of the manifest (settings of the run).
    fields : dict of str to dict, optional
        Per table name: column -> (unit as displayed, description), as the tables were
        read; empty where the report reads them from the files.
    """

    manifest: dict
    tables: dict
    config: dict = field(default_factory=dict)
    fields: dict = field(default_factory=dict)

    def table(self, name) -> pd.DataFrame:
        return self.tables.get(name, pd.DataFrame())

    @property
    def timeseries(self) -> pd.DataFrame:
        return self.tables["timeseries"]

    @property
    def annual(self) -> pd.DataFrame:
        return self.tables["annual"]

    def setting(self, name, default=None):
        return self.config.get(name, default)


# --------------------------------------------------------------------------- helpers


def _matplotlib(*, setter_docs=True):
    """Import matplotlib's object-oriented parts (:func:`_import_matplotlib`) quietly.

    matplotlib keeps its font cache in a folder under the home folder
    (``~/.cache/matplotlib``, or ``MPLCONFIGDIR``); where that cannot be written (a
    container or a service account with a read-only or missing home) it uses a
    temporary folder instead and says so in two WARNING lines on standard error
    ("mkdir -p failed ...", "Matplotlib created a temporary cache directory ..."),
    beside the command's own lines, on every ``report``. The figures are the same
    either way, so its log is held to errors while it is imported.

    The figures are drawn on the Agg canvas without pyplot, so no backend is used; yet
    matplotlib checks ``MPLBACKEND`` when it is imported, and a value it refuses (a
    notebook's ``module://matplotlib_inline.backend_inline`` inherited by ``!fluxpart
    report`` where that package is missing, a typing slip) ended ``report`` in a
    ValueError traceback. The variable is set aside while matplotlib is imported and
    put back after (the page and figures are the same).

    References
    ----------
    matplotlib documentation, "Location of the configuration and cache folders"
    (``MPLCONFIGDIR``; the temporary folder where it is not writable) and "Backends"
    (``MPLBACKEND`` read at import) (m).
    """
    import logging
    import os

    log = logging.getLogger("matplotlib")
    level = log.level
    if level < logging.ERROR:
        log.setLevel(logging.ERROR)
    backend = os.environ.pop("MPLBACKEND", None)
    try:
        return _import_matplotlib(setter_docs=setter_docs)
    finally:
        log.setLevel(level)
        if backend is not None:
            os.environ["MPLBACKEND"] = backend


def _import_matplotlib(*, setter_docs=True):
    """Import matplotlib's object-oriented parts, or explain how to install them.

    With ``setter_docs=False`` and matplotlib not yet imported, matplotlib is imported
    without the keyword signature and property list it writes into the ``set`` method
    of every artist class (``Artist._update_set_signature_and_docstring`` and
    ``matplotlib.artist.kwdoc`` inspect every setter of every class: about 40 % of
    importing matplotlib). For the ``report`` command only, a process that shows no
    docstring or signature and ends after drawing: ``set(**kwargs)`` works as before,
    only ``help()`` of it would say less.
    """
    if not setter_docs and "matplotlib.figure" not in sys.modules:
        try:
            from matplotlib import artist
        except ImportError:
            artist = None
        kwdoc = getattr(artist, "kwdoc", None)
        # the class attribute itself (a classmethod), to be put back as it was
        update = vars(getattr(artist, "Artist", object)).get(
            "_update_set_signature_and_docstring")
        if kwdoc is not None and update is not None:

            def mark_only(cls):
                # what matplotlib's __init_subclass__ checks to give subclasses their set()
                cls.set._autogenerated_signature = True

            artist.kwdoc = lambda *args, **kwargs: ""
            artist.Artist._update_set_signature_and_docstring = classmethod(mark_only)
            try:
                return _matplotlib()
            finally:
                artist.kwdoc = kwdoc
                artist.Artist._update_set_signature_and_docstring = update
    try:
        import matplotlib
        from matplotlib import colors, dates, ticker
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure as MplFigure
    except ImportError as error:
        import importlib.util

        from .install_hints import install_command

        if any(words in str(error).lower() for words in LOADER_MEMORY_WORDS):
            # a part's compiled library not mapped under a memory limit (ulimit -v 300 MB):
            # the command line's one line about memory, without the reinstall hint that
            # sent the user to reinstall what was installed (round faults37)
            raise
        if importlib.util.find_spec("matplotlib") is not None:
            # installed, but a part would not load (a file removed or of another Python):
            # "not installed, pip install" sent the user to install what was
            raise FluxpartError(
                f"matplotlib is installed but could not be loaded ({error}); reinstall the "
                f"report extra: {install_command('report', reinstall=True)}") from None
        raise FluxpartError(
            "the report needs matplotlib, which is not installed; install the report extra "
            f"with: {install_command('report')}") from None
    return matplotlib, colors, dates, ticker, _text_cache_canvas(FigureCanvasAgg), MplFigure


#: Rendered texts and text extents shared by every figure: string, font files, size,
#: dpi, hinting and antialiasing -> bitmap and offsets, or -> (width, height, descent).
_TEXT_BITMAPS: dict = {}
_TEXT_EXTENTS: dict = {}
_FONT_METRICS: dict = {}
_TEXT_CACHE_LIMIT = 4096
_CACHED_CANVAS = []


def _text_cache_canvas(canvas_class):
    """An Agg canvas whose renderer draws every text as one bitmap, cached across figures.

    matplotlib 3.11 shapes and renders a text glyph by glyph at every draw, about
    3 ms a text on the project's machine: most of a figure's drawing time, and a
    report draws about 420 texts of which about 180 differ. This renderer renders a
    string once per font, size, dpi and hinting into one bitmap (FreeType through
    ``FT2Font.set_text`` and ``draw_glyphs_to_bitmap``, the way matplotlib drew text
    up to 3.10) and places it at whole pixels, so the bytes do not depend on what was
    drawn before. Math text and texts with font features or a language are drawn
    the usual way; without the FreeType calls this needs, the plain canvas is used.
    """
    if _CACHED_CANVAS:
        return _CACHED_CANVAS[0]
    import math

    from matplotlib import font_manager
    from matplotlib.backends import backend_agg

    needed = (hasattr(backend_agg.RendererAgg, "_prepare_font")
              and hasattr(backend_agg, "get_hinting_flag")
              and hasattr(font_manager.fontManager, "_find_fonts_by_props")
              and all(hasattr(font_manager.ft2font.FT2Font, name) for name in
                      ("set_text", "draw_glyphs_to_bitmap", "get_image", "get_bitmap_offset")))
    if not needed:
        _CACHED_CANVAS.append(canvas_class)
        return canvas_class

    def text_key(renderer, text, prop, antialiased=True):
        fonts = font_manager.fontManager._find_fonts_by_props(prop)
        return (text, tuple(str(f) for f in fonts), prop.get_size_in_points(), renderer.dpi,
                backend_agg.get_hinting_flag(), bool(antialiased))

    def remember(cache, key, value):
        if len(cache) >= _TEXT_CACHE_LIMIT:
            cache.clear()
        cache[key] = value
        return value

    def rendered(font, antialiased):
        """The bitmap of the text last set on `font`, its descent and offsets [px]."""
        font.draw_glyphs_to_bitmap(antialiased=antialiased)
        left, top = font.get_bitmap_offset()
        return (np.array(font.get_image(), dtype=np.uint8), font.get_descent() / 64.0,
                left / 64.0, top / 64.0)

    class CachedTextRenderer(backend_agg.RendererAgg):
        def _get_font_height_metrics(self, prop):
            # the font's ascent, descent and line gap as matplotlib's text layout reads
            # them from the font tables at every layout (Text._get_layout, 3.11),
            # read once per font, size and dpi; None: matplotlib measures instead
            fonts = font_manager.fontManager._find_fonts_by_props(prop)
            size = prop.get_size_in_points()
            key = (tuple(str(f) for f in fonts), size, self.dpi)
            metrics = _FONT_METRICS.get(key)
            if metrics is None:
                font = font_manager.get_font(fonts)
                metrics = (None, None, None)
                for name, gap, ascent, descent in (
                        ("OS/2", "sTypoLineGap", "sTypoAscender", "sTypoDescender"),
                        ("hhea", "lineGap", "ascent", "descent")):
                    table = font.get_sfnt_table(name)
                    if table is None:
                        continue
                    scale = 1 / font.get_sfnt_table("head")["unitsPerEm"] * size * self.dpi / 72
                    metrics = (table[ascent] * scale, -table[descent] * scale,
                               table[gap] * scale)
                    break
                remember(_FONT_METRICS, key, metrics)
            return metrics

        def get_text_width_height_descent(self, s, prop, ismath):
            if ismath:
                return super().get_text_width_height_descent(s, prop, ismath)
            key = text_key(self, s, prop)
            extent = _TEXT_EXTENTS.get(key)
            if extent is None:
                # as RendererAgg measures (3.11); shaping is most of a text's cost, so the
                # bitmap an antialiased draw of it needs is rendered from the same shaping
                font = self._prepare_font(prop)
                font.set_text(s, 0.0, flags=backend_agg.get_hinting_flag())
                width, height = font.get_width_height()
                extent = remember(_TEXT_EXTENTS, key, (width / 64.0, height / 64.0,
                                                       font.get_descent() / 64.0))
                if key not in _TEXT_BITMAPS:
                    remember(_TEXT_BITMAPS, key, rendered(font, True))
            return extent

        def draw_text(self, gc, x, y, s, prop, angle, ismath=False, mtext=None):
            if ismath or (mtext is not None and (
                    getattr(mtext, "get_fontfeatures", lambda: None)()
                    or getattr(mtext, "get_language", lambda: None)())):
                return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
            key = text_key(self, s, prop, gc.get_antialiased())
            entry = _TEXT_BITMAPS.get(key)
            if entry is None:
                font = self._prepare_font(prop)
                font.set_text(s, 0, flags=backend_agg.get_hinting_flag())
                entry = remember(_TEXT_BITMAPS, key, rendered(font, gc.get_antialiased()))
            image, descent, left, top = entry
            x = round(x + left + descent * math.sin(math.radians(angle)))
            y = round(y + top + descent * math.cos(math.radians(angle)))
            self._renderer.draw_text_image(image, x, y + 1, angle, gc)
            return None

    class CachedTextCanvas(canvas_class):
        def get_renderer(self):
            width, height = self.get_width_height(physical=True)
            key = width, height, self.figure.dpi
            if self._lastKey != key:
                self.renderer = CachedTextRenderer(width, height, self.figure.dpi)
                self._lastKey = key
            return self.renderer

    _CACHED_CANVAS.append(CachedTextCanvas)
    return CachedTextCanvas


def _outermost(labels, renderer):
    """Of the tick labels of one axis side, those that can reach farthest from the axis.

    Labels of one side share their font, alignment, rotation and anchor line, so
    unrotated one-line texts reach farthest when widest (labels beside a vertical
    axis) or tallest (beside a horizontal one); only those are measured in full.
    Rotated, multi-line or math labels are all returned.
    """
    if any(label.get_rotation() % 360 or "\n" in label.get_text() or "$" in label.get_text()
           for label in labels):
        return labels
    prop = labels[0].get_fontproperties()
    sizes = [renderer.get_text_width_height_descent(label.get_text(), prop, False)
             for label in labels]
    widest = max(width for width, _, _ in sizes)
    tallest = max(height + descent for _, height, descent in sizes)
    return [label for label, (width, height, descent) in zip(labels, sizes, strict=True)
            if width == widest or height + descent == tallest]


class Drawing:
    """matplotlib modules plus the helpers every figure uses."""

    def __init__(self):
        (self.mpl, self.colors, self.dates, self.ticker, self._canvas,
         self._figure) = _matplotlib()
        from matplotlib import collections, lines, text, transforms

        self._collections, self._lines, self._text = collections, lines, text
        self._transforms = transforms

    def figure(self, width, height, **margins):
        figure = self._figure(figsize=(width, height), dpi=_DPI)
        self._canvas(figure)
        options = {"left": 0.08, "right": 0.97, "bottom": 0.1, "top": 0.9}
        options.update(margins)
        figure.subplots_adjust(**options)
        return figure

    def png(self, figure) -> bytes:
        """Render to an 8-bit palette PNG (no text chunks): small, deterministic bytes."""
        canvas = figure.canvas
        self.light_ticks(figure, canvas.get_renderer())
        canvas.draw()
        return self.encode(canvas)

    @staticmethod
    def encode(canvas) -> bytes:
        """The drawn `canvas` as an 8-bit palette PNG without text chunks."""
        from PIL import Image

        image = Image.frombuffer("RGBA", canvas.get_width_height(), canvas.buffer_rgba(),
                                 "raw", "RGBA", 0, 1).convert("RGB")
        try:
            palette = image.quantize(colors=256, method=Image.Quantize.FASTOCTREE,
                                     dither=Image.Dither.NONE)
        except ValueError as error:
            # Pillow's C quantizer says only "quantization error" where it could not
            # allocate its tables, the mode being checked before (ulimit -v 360 MB in
            # report: a traceback, exit 1, faults36): the command's line about memory
            if "quantization error" not in str(error):
                raise
            raise MemoryError("Pillow could not quantize a figure") from error
        buffer = io.BytesIO()
        # zlib level 3: 40 % of the CPU of level 6 (33 vs 83 ms for the ten figures of a
        # demo year) for files 17 % larger (449 vs 383 KiB); level 9 took 532 ms, 351 KiB
        palette.save(buffer, format="PNG", compress_level=3)
        return buffer.getvalue()

    def light_ticks(self, figure, renderer):
        """Draw the major ticks of every axis as one artist per kind instead of five per tick.

        matplotlib builds every tick as five artists (two tick marks, a grid line, two
        labels), 1-2 ms a tick to build and draw here, and a default axes drew in twice
        the time of one drawn this way (23 vs 12 ms, ~12 ticks). This
        takes the ticks each axis would draw (its locator and formatter at the final
        view limits and axes positions, the ticks inside the view) and the look of its
        first tick, and draws the same marks as one marker line per side, the grid as
        one line collection and one text per label; the axis then draws no ticks of
        its own. Axis labels move out by the labels' extent and offset texts go where
        matplotlib puts them. Called once per figure, just before it is drawn.
        """
        shown = [axes for axes in figure.axes if axes.get_visible() and axes.axison]
        for axes in shown:  # the positions drawing gives (colour bars shrink for extends)
            locator = axes.get_axes_locator()
            axes.apply_aspect(locator(axes, renderer) if locator else None)
        # every axis' ticks first: shared axes share one locator, replaced below
        plans = [(axes, axis, self._tick_plan(axis)) for axes in shown
                 for axis in (axes.xaxis, axes.yaxis) if axis.get_visible()]
        for _, axis, _ in plans:
            axis.set_major_locator(self.ticker.NullLocator())
            axis.set_major_formatter(self.ticker.NullFormatter())
        for axes, axis, plan in plans:
            self._draw_ticks(axes, axis, renderer, *plan)
            if not (axis.label.get_visible() and axis.label.get_text()):
                axis.set_visible(False)   # nothing left for it to draw

    def _tick_plan(self, axis):
        """(locations, labels, offset text) of the major ticks `axis` would draw."""
        locations = np.asarray(axis.get_major_locator()(), dtype=float)
        formatter = axis.get_major_formatter()
        labels = formatter.format_ticks(locations)   # all locations, as matplotlib does
        offset = formatter.get_offset()
        if not locations.size:
            return locations, [], offset
        low, high = sorted(axis.get_view_interval())
        scale = axis.get_transform()
        low_t, high_t = scale.transform(np.array([low, high]))
        tolerance = (high_t - low_t) * 1e-10      # matplotlib's _interval_contains_close
        placed = scale.transform(locations)
        inside = (placed >= low_t - tolerance) & (placed <= high_t + tolerance)
        return (locations[inside],
                [label for label, keep in zip(labels, inside, strict=True) if keep], offset)

    def _draw_ticks(self, axes, axis, renderer, locations, labels, offset):
        """Add the tick marks, grid lines, labels and offset text of one axis to `axes`."""
        lines, text, collections = self._lines, self._text, self._collections
        prototype = axis.majorTicks[0]
        zorder = axis.get_zorder()
        along_x = axis.axis_name == "x"

        def place(values, across):
            fixed = np.full(len(values), float(across))
            return (values, fixed) if along_x else (fixed, values)

        grid, unclipped = prototype.gridline, []
        if locations.size and grid.get_visible():
            segments = np.stack([np.stack(place(locations, 0.0), axis=1),
                                 np.stack(place(locations, 1.0), axis=1)], axis=1)
            axes.add_artist(collections.LineCollection(   # clipped to the axes, as grids are
                segments, transform=grid.get_transform(), colors=[grid.get_color()],
                linewidths=grid.get_linewidth(), linestyles=grid.get_linestyle(),
                alpha=grid.get_alpha(), zorder=zorder))
        side_labels = {1: [], 2: []}
        for side, mark, label in ((1, prototype.tick1line, prototype.label1),
                                  (2, prototype.tick2line, prototype.label2)):
            if not locations.size:
                break
            if mark.get_visible() and mark.get_markersize() > 0:
                unclipped.append(lines.Line2D(
                    *place(locations, side - 1.0), transform=mark.get_transform(),
                    linestyle="none", marker=mark.get_marker(),
                    markersize=mark.get_markersize(), markeredgewidth=mark.get_markeredgewidth(),
                    color=mark.get_color(), zorder=zorder, clip_on=False))
            if label.get_visible():
                for value, words in zip(locations, labels, strict=True):
                    if words:
                        x, y = (value, side - 1.0) if along_x else (side - 1.0, value)
                        side_labels[side].append(text.Text(
                            float(x), float(y), words, transform=label.get_transform(),
                            fontproperties=label.get_fontproperties(), color=label.get_color(),
                            horizontalalignment=label.get_horizontalalignment(),
                            verticalalignment=label.get_verticalalignment(),
                            rotation=label.get_rotation(),
                            rotation_mode=label.get_rotation_mode(), zorder=zorder,
                            clip_on=False))
        unclipped += side_labels[1] + side_labels[2]
        if unclipped:
            # add_artist gives an artist without a clip path the axes' own, made anew for
            # each; these draw unclipped, so one shared path spares that work
            shared = self._transforms.TransformedPatchPath(axes.patch)
            for artist in unclipped:
                artist.set_clip_path(shared)
                axes.add_artist(artist)   # add_artist: the data limits stay as they are
        # the axis label and the offset text stand clear of the labels, as matplotlib
        # places them from the tick labels' extents
        position = axis.get_label_position()
        near = side_labels[1 if position in ("bottom", "left") else 2]
        boxes = []
        if near and ((axis.label.get_visible() and axis.label.get_text())
                     or (offset and position == "bottom")):
            boxes = [label.get_window_extent(renderer) for label in _outermost(near, renderer)]
        spine = axes.spines.get(position)
        edge = (spine if spine is not None and spine.get_visible() else axes).get_window_extent(
            renderer)
        depth = {"bottom": lambda b: edge.y0 - b.y0, "top": lambda b: b.y1 - edge.y1,
                 "left": lambda b: edge.x0 - b.x0, "right": lambda b: b.x1 - edge.x1}[position]
        axis.labelpad += max([0.0] + [depth(box) for box in boxes]) * 72.0 / axes.figure.dpi
        if offset:
            pad = axis.OFFSETTEXTPAD * axes.figure.dpi / 72.0
            source = axis.offsetText
            if along_x:
                bottoms = [box.y0 for box in (boxes if position == "bottom" else [])]
                y = min(bottoms + [axes.bbox.ymin]) - pad
            else:
                outline = axes.spines.get("outline")
                y = (outline.get_window_extent(renderer) if outline is not None
                     else axes.bbox).ymax + pad
            axes.add_artist(text.Text(
                source.get_position()[0], y, offset, transform=source.get_transform(),
                fontproperties=source.get_fontproperties(), color=source.get_color(),
                horizontalalignment=source.get_horizontalalignment(),
                verticalalignment=source.get_verticalalignment(), zorder=zorder,
                clip_on=False))

    def coloured_image(self, axis, grid, colormap, norm, extent):
        """Draw a (day, time of day) grid as an image coloured here, once.

        The same picture as ``imshow(grid.T, cmap=colormap, norm=norm)`` with nearest
        interpolation (a missing value takes the colour map's transparent "bad"
        colour), but matplotlib only scales RGBA bytes instead of normalising and
        colouring the data again at every draw.
        """
        rgba = colormap(norm(np.ma.masked_invalid(grid.T)), bytes=True)
        return axis.imshow(rgba, origin="lower", aspect="auto", extent=extent,
                           interpolation="nearest")

    def nee_colormap(self):
        """Diverging NEE scale: dark blue uptake, near-white zero, dark red-brown release."""
        scale = self.colors.LinearSegmentedColormap.from_list(
            "fluxpart_nee", ["#08306b", "#2171b5", "#9ecae1", "#f4f4f4", "#fdae6b", "#d94801",
                             "#67000d"])
        return scale.with_extremes(bad=(0.0, 0.0, 0.0, 0.0))

    def sequential(self, name):
        return self.mpl.colormaps[name].with_extremes(bad=(0.0, 0.0, 0.0, 0.0))

    def nee_norm(self, *arrays):
        values = np.concatenate([np.asarray(a, dtype=float).ravel() for a in arrays])
        values = values[np.isfinite(values)]
        if values.size == 0:
            return self.colors.TwoSlopeNorm(vcenter=0.0, vmin=-1.0, vmax=1.0)
        low = min(float(np.percentile(values, 0.5)), -1e-3)
        high = max(float(np.percentile(values, 99.5)), 1e-3)
        return self.colors.TwoSlopeNorm(vcenter=0.0, vmin=low, vmax=high)

    def fixed_ticks(self, axis, locations, labels=None):
        """Major ticks of `axis` (an ``Axis``) at `locations`, labelled `labels` if given.

        What ``Axis.set_ticks`` gives for locations inside the view limits, without
        building each tick's artists up front (:meth:`light_ticks` draws them).
        """
        axis.set_major_locator(self.ticker.FixedLocator(locations))
        if labels is not None:
            axis.set_major_formatter(self.ticker.FixedFormatter(labels))

    def few_ticks(self, axis, x=5, y=5):
        """At most about `x` and `y` ticks: every tick is a few artists to build and draw."""
        if x:
            axis.xaxis.set_major_locator(self.ticker.MaxNLocator(nbins=x, steps=_STEPS))
        if y:
            axis.yaxis.set_major_locator(self.ticker.MaxNLocator(nbins=y, steps=_STEPS))

    def date_guides(self, axes, bottom):
        """Give `axes` the x range of `bottom` and grid lines at its date ticks.

        Stands in for a shared date axis: the upper panels of a column then build no
        ticks of their own (each tick is a few artists to make and draw).
        """
        limits = bottom.get_xlim()
        ticks = [t for t in bottom.xaxis.get_major_locator()() if limits[0] <= t <= limits[1]]
        for axis in axes:
            axis.set_xlim(limits)
            axis.set_xticks([])
            if ticks and axis.get_visible():
                axis.vlines(ticks, 0.0, 1.0, transform=axis.get_xaxis_transform(),
                            color=self.mpl.rcParams["grid.color"],
                            linewidth=self.mpl.rcParams["grid.linewidth"], zorder=1.5)

    def date_axis(self, axis, ticks=8):
        locator = self.dates.AutoDateLocator(minticks=3, maxticks=ticks)
        axis.xaxis.set_major_locator(locator)
        axis.xaxis.set_major_formatter(self.dates.ConciseDateFormatter(locator))


def _missing_background(axis, grid=None):
    """Grey hatch behind an image: cells without a value never look like data.

    With the image's `grid` given, the hatch is drawn only if a cell lacks a value
    (otherwise the image hides it and drawing it costs time for nothing).
    """
    axis.grid(False)
    if grid is not None and not np.isnan(grid).any():
        return
    axis.set_facecolor(_MISSING_FACE)
    axis.patch.set_hatch("////")
    axis.patch.set_edgecolor(_MISSING_HATCH)


def _no_data(axis, text):
    axis.text(0.5, 0.5, text, transform=axis.transAxes, ha="center", va="center",
              fontsize=10, color="#444444", wrap=True)
    axis.set_xticks([])
    axis.set_yticks([])
    axis.grid(False)


def _panels(figure, count, ncols, **options):
    """A grid of `count` axes (the spare ones hidden), returned as a flat list."""
    ncols = max(1, min(ncols, count))
    nrows = -(-count // ncols)
    grid = figure.subplots(nrows, ncols, squeeze=False, **options).ravel()
    for axis in grid[count:]:
        axis.set_visible(False)
    return list(grid[:count])


def interval_minutes(index: pd.DatetimeIndex) -> int:
    """Median spacing of the time axis [min] (30 when there is a single record)."""
    seconds = np.diff(index.to_numpy().astype("datetime64[s]").astype(np.int64))
    return int(np.median(seconds) // 60) if seconds.size else 30


def carbon_per_record(interval: int) -> float:
    """g C m-2 per record of 1 µmol CO2 m-2 s-1 over `interval` minutes.

    The conversion is the shared one of :func:`fluxpart.units.flux_to_carbon`.
    """
    return float(flux_to_carbon(1.0, interval))


def _day_grid(index: pd.DatetimeIndex, values, interval: int):
    """Values on a (day, time of day) grid; returns (grid, first day, number of days)."""
    days = index.normalize()
    first = days[0]
    day_position = ((days - first) / pd.Timedelta(days=1)).to_numpy().astype(int)
    slot = ((index - days) / pd.Timedelta(minutes=interval)).to_numpy().astype(int)
    per_day = max(1440 // interval, 1)
    n_days = int(day_position[-1]) + 1
    grid = np.full((n_days, per_day), np.nan)
    grid[day_position, np.clip(slot, 0, per_day - 1)] = np.asarray(values, dtype=float)
    return grid, first, n_days


def _hour_of_day(index: pd.DatetimeIndex, interval: int) -> np.ndarray:
    """Hour of the middle of each interval [h]."""
    return ((index - index.normalize()) / pd.Timedelta(hours=1)).to_numpy() + interval / 120.0


def day_text(moment, year: bool = True) -> str:
    """A date as the report and its figures write it, in one style: "1 Jan 2021".

    The day unpadded, the month's first three letters in English (not the locale's
    ``%b``), the year unless `year` is False. The figures wrote "1 January 2021" and the
    summary "01 Jan 2021" for the same day (review55).
    """
    moment = pd.Timestamp(moment)
    text = f"{moment.day} {_MONTHS[moment.month - 1][:3]}"
    return f"{text} {moment.year}" if year else text


def _date_span(start: pd.Timestamp, end: pd.Timestamp) -> str:
    return f"{day_text(start)} – {day_text(end)}"


def period_masks(written: Written) -> dict:
    """Per annual row: (label, first record, last record, record mask, partial?).

    The budget period of a row is ``period_start``..``period_end`` of the annual
    table where the run wrote them (budget years), else the calendar year. A
    period is partial when the table says it is not ``complete`` or, without
    that column, when its records do not reach both ends of the period.
    """
    index = written.timeseries.index
    annual = written.annual
    out = {}
    has_period = {"period_start", "period_end"} <= set(annual.columns)
    starts = (set(pd.to_datetime(annual["period_start"]).dropna()) if has_period else set())
    step = pd.Timedelta(minutes=interval_minutes(index))
    for label in annual.index:
        row = annual.loc[label]
        if has_period and pd.notna(row["period_start"]) and pd.notna(row["period_end"]):
            start = pd.Timestamp(row["period_start"])
            end = pd.Timestamp(row["period_end"])
            if end == end.normalize() and end not in starts:
                end_exclusive = end + pd.Timedelta(days=1)    # a last day, inclusive
            elif end == end.normalize():
                end_exclusive = end                           # the next period's start
            else:
                end_exclusive = end + pd.Timedelta(seconds=1)  # a last record stamp
            mask = (index >= start) & (index < end_exclusive)
            bounds = (start, end_exclusive)
        else:
            try:
                year = int(label)
            except (TypeError, ValueError):
                continue  # neither a calendar year nor a written period: nothing to cut
            mask = np.asarray(index.year == year)
            bounds = (pd.Timestamp(year=year, month=1, day=1),
                      pd.Timestamp(year=year + 1, month=1, day=1))
        mask = np.asarray(mask, dtype=bool)
        if not mask.any():
            continue
        first, last = index[mask][0], index[mask][-1]
        if "complete" in annual.columns and pd.notna(row["complete"]):
            partial = not bool(row["complete"])
        else:
            partial = first > bounds[0] or last + step < bounds[1]
        out[label] = (str(label), first, last, mask, partial)
    return out


def fill_category(values) -> np.ndarray:
    """Fill-quality labels from int codes (0, 1, 2, 3, -1) or strings ("A", "measured", ...)."""
    series = pd.Series(values)
    if isinstance(series.dtype, pd.CategoricalDtype):
        series = series.astype(series.cat.categories.dtype)
    if pd.api.types.is_numeric_dtype(series) and not pd.api.types.is_bool_dtype(series):
        codes = series.to_numpy(dtype=float)
        out = np.full(codes.shape, "unfilled", dtype=object)
        for code, name in _QUALITY_CODES.items():
            out[codes == code] = name
        return out
    # each distinct label once (a year has 17,520 records but a handful of labels);
    # missing values (code -1) are "unfilled"
    codes, labels = pd.factorize(series)
    known = {name.lower(): name for name, _ in FILL_CATEGORIES}
    names = [known.get(text.lower(), text) for text in (str(label).strip() for label in labels)]
    return np.array([*names, "unfilled"], dtype=object)[codes]


_PERIOD_COLOURS = (_BLUE, _VERMILLION, _GREEN, _BLACK, _PURPLE, _ORANGE, _SKY)


def _year_colours(drawing, labels):
    """One strong Okabe & Ito colour per period (cycled), never a pale one."""
    return {label: _PERIOD_COLOURS[i % len(_PERIOD_COLOURS)] for i, label in enumerate(labels)}


def _span_text(written: Written) -> str:
    periods = period_masks(written)
    if not periods:
        return ""
    first = min(p[1] for p in periods.values())
    last = max(p[2] for p in periods.values())
    return _date_span(first, last)


def _sigma_column(frame: pd.DataFrame, flux: str):
    for name in (f"{flux}_sigma", f"{flux}_uncertainty_sigma", f"{flux}_sd"):
        if name in frame.columns:
            return name
    return None


#: Fluxes whose truth cannot be negative: GPP (carbon taken up, written positive) and Reco
#: (carbon released). Their 95 % bands are clipped at zero in the figures.
_NON_NEGATIVE_PREFIXES = ("gpp", "reco")


def band_edges(values, sigma, column: str):
    """The lower and upper edge of a flux's drawn 95 % band, ±1.96 sigma.

    Parameters
    ----------
    values : array_like
        The flux as written (a daily or monthly sum) [g C m-2 per day or month].
    sigma : array_like
        Its written 1-sigma [same unit].
    column : str
        The flux's column name; GPP and Reco (``gpp_*``, ``reco_*``) cannot be
        negative, NEE can.

    Returns
    -------
    low, high : numpy.ndarray
        ``values ∓ 1.96 sigma`` (the normal 95 % quantile, Gaussian errors as the run's
        uncertainty states them); for GPP and Reco the lower edge is clipped at zero,
        since a flux that cannot be negative has no probability below it (a symmetric
        band drew a savanna's daytime Reco down to -5 g C m-2 d-1), but never above the
        value itself, so that an estimate below zero (GPP as Reco less a measured NEE
        above it) stays inside its band. The written 1-sigma columns are unchanged.

    References
    ----------
    JCGM 100:2008 (GUM), section G.1 and annex G.4 (m): the coverage factor 1.96 of a
    normal distribution's 95 % interval.
    """
    values = np.asarray(values, dtype=float)
    spread = 1.96 * np.asarray(sigma, dtype=float)
    low, high = values - spread, values + spread
    if column.split("_", 1)[0] in _NON_NEGATIVE_PREFIXES:
        low = np.maximum(low, np.minimum(values, 0.0))
    return low, high


def _respiration_driver(written) -> str:
    """The temperature the run used: the setting, or the choice recorded for ``"auto"``."""
    driver = written.setting("respiration_driver", "tair")
    if driver == "auto":
        record = written.manifest.get("provenance", {}).get("respiration_driver") or {}
        driver = record.get("chosen", "tair")
    return driver


def _temperature_column(series: pd.DataFrame, driver: str) -> str:
    for name in (f"{driver}_filled", driver):
        if name in series.columns:
            return name
    raise FluxpartError(f"the timeseries table has no column {driver!r} or {driver + '_filled'!r}"
                        " (the respiration driver of the run)")


def _temperature_label(column: str) -> str:
    return "Soil temperature" if column.startswith("tsoil") else "Air temperature"


# --------------------------------------------------------------------------- figures


def declared_events(written) -> pd.DatetimeIndex:
    """The declared events (``[processing] events``) that lie within the record.

    Parameters
    ----------
    written : Written
        The result folder as read for the report; the events come from its recorded
        settings (local standard time, as the time series).

    Returns
    -------
    pandas.DatetimeIndex
        Each event's moment, sorted, from the first record's start to the last's; an
        event outside the record cuts nothing (:func:`fluxpart.gapfill.event_notes`).
    """
    events = written.setting("events") or ()
    index = written.timeseries.index
    if isinstance(events, str):
        events = (events,)
    try:
        moments = pd.DatetimeIndex([pd.Timestamp(event) for event in events]).sort_values()
    except (TypeError, ValueError):                 # a hand-edited setting: draw none
        return pd.DatetimeIndex([])
    if not len(index):
        return moments[:0]
    return moments[(moments >= index[0]) & (moments <= index[-1])]


def figure_daily(drawing, written, interval) -> Figure:
    daily = written.table("daily")
    events = declared_events(written)
    figure = drawing.figure(10.0, 7.2, left=0.08, right=0.98, top=0.93, bottom=0.07,
                            hspace=0.28)
    axes = figure.subplots(3, 1)
    dates = pd.DatetimeIndex(daily.index) + pd.Timedelta(hours=12) if len(daily) else []
    banded = []
    panels = [
        (axes[0], [("nee", "NEE", _BLACK, "-")], "Daily NEE (below zero: net uptake)"),
        (axes[1], [("gpp_nighttime", "GPP, nighttime method", _GREEN, "-"),
                   ("gpp_daytime", "GPP, daytime method", _BLUE, "--")], "Daily GPP"),
        (axes[2], [("reco_nighttime", "Reco, nighttime method", _VERMILLION, "-"),
                   ("reco_daytime", "Reco, daytime method", _ORANGE, "--")], "Daily Reco"),
    ]
    for axis, lines, title in panels:
        drawn = False
        for column, label, colour, style in lines:
            if column not in daily.columns:
                continue
            values = daily[column].to_numpy(dtype=float)
            sigma = _sigma_column(daily, column)
            if sigma is not None:
                low, high = band_edges(values, daily[sigma].to_numpy(dtype=float), column)
                axis.fill_between(dates, low, high, color=colour, alpha=0.25, linewidth=0)
                banded.append(column)
            axis.plot(dates, values, color=colour, linestyle=style, linewidth=1.1, label=label)
            drawn = True
        if not drawn:
            _no_data(axis, "not in the daily table")
            continue
        axis.axhline(0.0, color="#777777", linewidth=0.6)
        # a harvest or fire the user declared explains a step in the fluxes (review49:
        # the figure showed the step without it)
        for number, moment in enumerate(events):
            axis.axvline(moment, color="#555555", linewidth=1.0, linestyle=":",
                         label="declared event" if number == 0 and axis is axes[0] else None)
        shaded = any(column in banded for column, *_ in lines)
        axis.set_title(title + ("; shaded: 95 % band" if shaded else ""), loc="left")
        axis.set_ylabel(f"[{_CARBON_UNIT} d-1]")
        axis.legend(loc="upper left", ncols=2)
        drawing.few_ticks(axis, x=0, y=5)
    if len(daily):
        drawing.date_axis(axes[-1], ticks=13)
        drawing.date_guides(axes[:-1], axes[-1])
    figure.suptitle(f"Daily sums, {_span_text(written)}", x=0.08, ha="left", fontsize=10.5)
    clipped = any(column.split("_", 1)[0] in _NON_NEGATIVE_PREFIXES for column in banded)
    band_text = ("shaded bands are ±1.96 times the daily 1-sigma written by the run"
                 + (", those of GPP and Reco clipped at zero, as neither flux can be "
                    "negative (an estimate below zero keeps its line inside the band)"
                    if clipped else "")
                 if banded else "the run wrote no daily 1-sigma columns, so no bands are drawn")
    moments = ", ".join(f"{e:%Y-%m-%d}" if e == e.normalize() else f"{e:%Y-%m-%d %H:%M}"
                        for e in events)
    # what the run did at them is the methods section's to say (older results did not cut
    # the partitioning windows)
    event_text = (f"; dotted vertical lines mark the declared events ({moments}: a harvest, "
                  "cut, fire or the like; the methods below say how the run treated them)"
                  if len(events) else "")
    caption = ("Look for the season of net uptake (NEE below zero) and for days where the two "
               f"partitioning methods part ways; {band_text}{event_text}.")
    return Figure("daily_fluxes.png", drawing.png(figure), "Daily NEE, GPP and Reco", caption)


def cumulative_bands(written, interval):
    """Per period: (dates, cumulative NEE [g C m-2], bands: list of (low, high, kind)).

    The random band is 1.96 sqrt(cumulative sum of sigma^2) of the per-record random
    error (records taken as independent); the u* band spreads the range of the
    annual u* scenario sums linearly over the period; the interval band does the
    same with the annual ``nee_ci95_low``/``nee_ci95_high`` where written.
    """
    series = written.timeseries
    annual = written.annual
    per_record = carbon_per_record(interval)
    scenario_columns = [c for c in annual.columns if re.fullmatch(r"nee_ustar_p[\d.]+", c)]
    has_random = "nee_random_error" in series.columns
    has_interval = {"nee_ci95_low", "nee_ci95_high"} <= set(annual.columns)
    out = {}
    for label, (_, _, _, mask, _) in period_masks(written).items():
        carbon = series["nee_filled"].to_numpy(dtype=float)[mask] * per_record
        cumulative = np.nancumsum(carbon)
        fraction = np.arange(1, mask.sum() + 1) / float(mask.sum())
        row = annual.loc[label]
        central = float(row["nee"])
        bands = []
        if has_interval and np.isfinite([row["nee_ci95_low"], row["nee_ci95_high"]]).all():
            bands.append((cumulative + (float(row["nee_ci95_low"]) - central) * fraction,
                          cumulative + (float(row["nee_ci95_high"]) - central) * fraction,
                          "interval"))
        if has_random:
            sigma = series["nee_random_error"].to_numpy(dtype=float)[mask] * per_record
            spread = 1.96 * np.sqrt(np.nancumsum(sigma**2))
            bands.append((cumulative - spread, cumulative + spread, "random"))
        if scenario_columns:
            totals = np.array([row[c] for c in scenario_columns] + [central], dtype=float)
            totals = totals[np.isfinite(totals)]
            if totals.size:
                bands.append((cumulative + (totals.min() - central) * fraction,
                              cumulative + (totals.max() - central) * fraction, "ustar"))
        out[label] = (series.index[mask], cumulative, bands)
    return out, scenario_columns, has_random


def _thinned(count: int, most: int = 2000) -> np.ndarray:
    """Positions of every k-th of `count` points and the last, k = ceil(count / most).

    Deterministic thinning for curves denser than a figure can show: 2000 points
    are about two per pixel column of a 1000-pixel-wide figure, so a smooth curve
    such as a cumulative sum looks the same, and the last point (the period's sum)
    is always drawn.
    """
    step = max(1, -(-count // most))
    return np.unique(np.append(np.arange(0, count, step), count - 1)) if count else \
        np.arange(0)


_BAND_STYLE = {
    "interval": ("95 % interval of the annual NEE (written), spread over time", 0.18, None),
    "random": ("95 % random-error band", 0.3, None),
    "ustar": ("u* threshold scenario range", 0.12, "////"),
}


def figure_cumulative(drawing, written, interval) -> Figure:
    curves, scenario_columns, has_random = cumulative_bands(written, interval)
    periods = period_masks(written)
    # one legend row per period below the axes, where no curve runs (a legend inside
    # covered a second budget year's curve)
    height = 4.6 + 0.22 * len(curves)
    figure = drawing.figure(10.0, height, left=0.08, right=0.98, top=1 - 0.46 / height,
                            bottom=(0.55 + 0.22 * len(curves)) / height)
    axis = figure.subplots()
    colours = _year_colours(drawing, list(curves))
    kinds = set()
    for label, (times, cumulative, bands) in curves.items():
        colour = colours[label]
        if any(kind == "interval" for _, _, kind in bands):
            # the written 95 % interval already holds the random and u* parts
            bands = [band for band in bands if band[2] == "interval"]
        keep = _thinned(len(times))
        times, cumulative = times[keep], cumulative[keep]
        bands = [(low[keep], high[keep], kind) for low, high, kind in bands]
        for low, high, kind in bands:
            text, alpha, hatch = _BAND_STYLE[kind]
            axis.fill_between(times, low, high, color=colour, alpha=alpha, hatch=hatch,
                              linewidth=0.0, label=f"{label}: {text}")
            kinds.add(kind)
        partial = " (partial period)" if periods[label][4] else ""
        axis.plot(times, cumulative, color=colour, linewidth=1.8,
                  label=f"{label}: gap-filled NEE{partial}")
    axis.axhline(0.0, color="#555555", linewidth=0.8)
    drawing.date_axis(axis, ticks=13)
    axis.set_ylabel(f"Cumulative NEE [{_CARBON_UNIT}]")
    drawing.few_ticks(axis, x=0, y=6)
    starts = sorted({p[1] for p in periods.values()})
    since = ""
    if len(periods) == 1:
        label, first, last, _, partial = next(iter(periods.values()))
        since = f"since {day_text(first)}"
        title = (f"Cumulative NEE {since} (below zero: net uptake)"
                 + (f"; partial period, ends {day_text(last)}" if partial else ""))
    else:
        title = ("Cumulative NEE per budget period, each from its own first record "
                 f"({', '.join(day_text(s) for s in starts)}; below zero: net uptake)")
    axis.set_title(title, loc="left")
    axis.legend(loc="upper left", bbox_to_anchor=(0.0, -0.06), ncols=2, fontsize=7.5,
                frameon=False)
    if "interval" in kinds:
        what = "the written 95 % interval of the annual NEE (shaded, drawn growing with time)"
    elif has_random:
        what = "the 95 % random-error band and the u* scenario range (hatched)"
    elif scenario_columns:
        what = "the u* scenario range (hatched)"
    else:
        what = "no band: the run wrote neither an interval nor u* scenarios"
    caption = (f"Read the end of each curve as the period's net balance in {_CARBON_UNIT} and "
               f"compare its distance from zero with {what}.")
    heading = ("Cumulative NEE " + since if len(periods) == 1
               else "Cumulative NEE per budget period")
    return Figure("cumulative_nee.png", drawing.png(figure), heading, caption)


def _gap_runs(categories: np.ndarray, index: pd.DatetimeIndex, interval: int):
    """Longest run of records without a measurement: (length [days], first stamp) or None."""
    missing = np.asarray(categories != "measured", dtype=np.int8)
    if not missing.any():
        return None
    edges = np.diff(np.concatenate([[0], missing, [0]]))
    starts = np.flatnonzero(edges == 1)
    ends = np.flatnonzero(edges == -1)
    longest = int(np.argmax(ends - starts))
    return (ends[longest] - starts[longest]) * interval / 1440.0, index[starts[longest]]


def figure_fill_quality(drawing, written, interval) -> Figure:
    series = written.timeseries
    names = [name for name, _ in FILL_CATEGORIES]
    colours = dict(FILL_CATEGORIES)
    if "nee_fill_quality" in series.columns:
        categories = fill_category(series["nee_fill_quality"].to_numpy())
    else:
        categories = np.where(np.isfinite(series["nee_measured"]), "measured",
                              np.where(np.isfinite(series["nee_filled"]), "C", "unfilled"))
    extra = sorted(set(categories) - set(names))
    names += extra
    for position, name in enumerate(extra):
        colours[name] = ("#F0E442", "#999933", "#882255")[position % 3]
    present = [name for name in names if (categories == name).any()]
    codes = pd.Categorical(categories, categories=names).codes.astype(float)
    figure = drawing.figure(10.0, 6.4, left=0.08, right=0.98, top=0.93, bottom=0.08,
                            hspace=0.12)
    top, bottom = figure.subplots(2, 1, height_ratios=[2.2, 1.0])
    grid, first, n_days = _day_grid(series.index, codes, interval)
    start = drawing.dates.date2num(first.to_pydatetime())
    colormap = drawing.colors.ListedColormap([colours[n] for n in names]).with_extremes(
        bad=(0.0, 0.0, 0.0, 0.0))
    norm = drawing.colors.BoundaryNorm(np.arange(len(names) + 1) - 0.5, len(names))
    _missing_background(top, grid)
    drawing.coloured_image(top, grid, colormap, norm, (start, start + n_days, 0.0, 24.0))
    bottom.set_xlim(start, start + n_days)
    top.set_ylabel("Time of day [h]")
    drawing.fixed_ticks(top.yaxis, [0, 6, 12, 18, 24])
    absent = bool(np.isnan(grid).any())
    top.set_title("NEE fill quality of every record" + (
        " (grey hatch: no record in the file)" if absent else ""), loc="left")
    # records per day and category: one bincount over (day, category) cells
    day_number = ((series.index.normalize() - first) / pd.Timedelta(days=1)).to_numpy()
    day_number = day_number.astype(np.int64)
    counts = np.bincount(day_number * len(names) + codes.astype(np.int64),
                         minlength=n_days * len(names)).reshape(n_days, len(names))
    with_records = counts.sum(axis=1) > 0
    share = counts[with_records] / counts[with_records].sum(axis=1, keepdims=True)
    x = start + np.flatnonzero(with_records) + 0.5
    bottom.stackplot(x, *[share[:, names.index(n)] for n in present],
                     colors=[colours[n] for n in present],
                     labels=[_FILL_LEGEND.get(n, n) for n in present], linewidth=0)
    bottom.set_ylim(0, 1)
    drawing.fixed_ticks(bottom.yaxis, [0.0, 0.5, 1.0])
    bottom.set_ylabel("Share of the day")
    bottom.set_title("Daily share by fill quality (of the records in the file)", loc="left")
    handles, labels = bottom.get_legend_handles_labels()
    if absent:
        # the hatch named beside the classes, drawn as the top panel draws it (round
        # leftovers61: the title's "grey hatch" and a light grey "measured" read as one)
        from matplotlib.patches import Patch

        handles.append(Patch(
            facecolor=_MISSING_FACE, edgecolor=_MISSING_HATCH, hatch="////",
            label=_NO_RECORD_LEGEND))
        labels.append(_NO_RECORD_LEGEND)
    # one row up to four entries; five or more (named, review54) take rows of three
    bottom.legend(handles, labels, loc="upper center", bbox_to_anchor=(0.5, -0.22),
                  ncols=len(labels) if len(labels) <= 4 else 3)
    drawing.date_axis(bottom, ticks=13)
    top.set_xlim(start, start + n_days)
    top.set_xticks([])
    figure.subplots_adjust(bottom=0.14)
    run = _gap_runs(categories, series.index, interval)
    longest = (f"the longest run without a measurement is {run[0]:.1f} days from "
               f"{run[1]:%Y-%m-%d %H:%M}" if run else "every record was measured")
    caption = ("Look for long bands of B, C (filled with decreasing confidence after A) and "
               "unfilled records and where they fall, since gaps at the peak of the season "
               f"weigh most on the budget; {longest}.")
    return Figure("fill_quality.png", drawing.png(figure), "Gaps and fill quality", caption)


def figure_heatmaps(drawing, written, interval) -> Figure:
    series = written.timeseries
    rows = [(("nee_measured", "Measured NEE (kept after screening and the u* filter)"),
             ("nee_filled", "Gap-filled NEE")),
            (("gpp_nighttime", "GPP, nighttime method"), ("gpp_daytime", "GPP, daytime method")),
            (("reco_nighttime", "Reco, nighttime method"),
             ("reco_daytime", "Reco, daytime method"))]
    figure = drawing.figure(11.0, 9.6, left=0.06, right=0.9, top=0.94, bottom=0.06,
                            hspace=0.3, wspace=0.1)
    # no shared axes: only the bottom row and the left column build ticks
    axes = figure.subplots(3, 2)
    nee_norm = drawing.nee_norm(*[series[c] for c in ("nee_measured", "nee_filled")
                                  if c in series.columns])
    for row_axes, pair, scale in zip(axes, rows, ("nee", "viridis", "cividis"), strict=True):
        present = [series[c].to_numpy(dtype=float) for c, _ in pair if c in series.columns]
        if scale == "nee":
            colormap, norm = drawing.nee_colormap(), nee_norm
        else:
            finite = np.concatenate(present) if present else np.array([])
            finite = finite[np.isfinite(finite)]
            high = float(np.percentile(finite, 99.5)) if finite.size else 1.0
            colormap = drawing.sequential(scale)
            norm = drawing.colors.Normalize(vmin=0.0, vmax=max(high, 1e-3))
        image = None
        for axis, (column, title) in zip(row_axes, pair, strict=True):
            axis.set_title(title, loc="left")
            if column not in series.columns:
                _no_data(axis, f"{column} not written")
                continue
            grid, first, n_days = _day_grid(series.index, series[column].to_numpy(), interval)
            start = drawing.dates.date2num(first.to_pydatetime())
            _missing_background(axis, grid)
            drawing.coloured_image(axis, grid, colormap, norm,
                                   (start, start + n_days, 0.0, 24.0))
            image = drawing.mpl.cm.ScalarMappable(norm=norm, cmap=colormap)
            axis.set_xlim(start, start + n_days)
            axis.set_ylim(0.0, 24.0)
        row_axes[0].set_ylabel("Time of day [h]")
        drawing.fixed_ticks(row_axes[0].yaxis, [0, 6, 12, 18, 24])
        row_axes[1].set_yticks([])
        if image is not None:
            box = row_axes[1].get_position()
            bar_axis = figure.add_axes((0.915, box.y0, 0.015, box.height))
            bar = figure.colorbar(image, cax=bar_axis, extend="both")
            bar.set_label(f"[{_FLUX_UNIT}]")
    for axis in axes[:-1].ravel():
        axis.set_xticks([])
    for axis in axes[-1]:
        drawing.date_axis(axis, ticks=7)
    figure.suptitle(f"Fluxes by day and time of day (local standard time), {_span_text(written)}",
                    x=0.06, ha="left", fontsize=10.5)
    caption = ("Compare the daytime method (right) with the nighttime method (left) for "
               "seasons or hours where they differ; NEE runs from dark blue (strong uptake) "
               "through near white (zero) to dark red (strong release), and grey hatching "
               "marks records without a value.")
    return Figure("heatmaps.png", drawing.png(figure), "Fluxes by day and time of day", caption)


def clock_result(manifest: dict):
    """(estimated shift [min] or None, verdict text or None) from the manifest's clock check."""
    clock = manifest.get("provenance", {}).get("clock")
    if clock is None:
        return None, None
    if not isinstance(clock, dict):
        return None, str(clock)
    shift = None
    for key in ("shift_minutes", "estimated_shift_minutes", "shift", "offset_minutes",
                "estimated_shift"):
        value = clock.get(key)
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            shift = float(value)
            break
    verdict = None
    for key in ("verdict", "status", "result", "message"):
        if clock.get(key) is not None:
            verdict = str(clock[key])
            break
    return shift, verdict


_CLOCK_WORDS = {
    "consistent": "Rg follows the sun the site settings predict",
    "shifted": "Rg is SHIFTED against the sun (clock or UTC offset)",
    "daylight_saving": "stamps look like DAYLIGHT-SAVING time in part of the year",
    "hemisphere": "the latitude's SIGN looks wrong",
    "latitude": "the LATITUDE looks wrong (another site's file?)",
    "cannot_judge": "the check could not judge this record",
}


def clock_sentence(manifest: dict) -> str:
    """The clock check of the run in one plain sentence (no check: says so)."""
    shift, verdict = clock_result(manifest)
    if shift is None and verdict is None:
        return "no clock check in this result folder"
    clock = manifest.get("provenance", {}).get("clock")
    clock = clock if isinstance(clock, dict) else {}
    parts = [_CLOCK_WORDS.get(verdict, verdict)] if verdict else []
    if shift is not None:
        spread = clock.get("spread_minutes")
        months = clock.get("months_used")
        # the spread is the scatter of the monthly shifts (scaled MAD), not an
        # uncertainty of the shift: "± 4" read as one (review55)
        notes = [f"median of {int(months)} months"] if isinstance(months, int) else []
        if isinstance(spread, (int, float)):
            notes.append(f"scatter across months {float(spread):.0f} min, not an uncertainty")
        parts.append(f"estimated shift {round(shift) + 0.0:+.0f} min"
                     + (f" ({'; '.join(notes)})" if notes else ""))
    problems = clock.get("problems") or []
    if problems:
        parts.append(str(problems[0]))
    return "; ".join(parts)


def _monthly_means(values, hour, month) -> dict:
    """Mean of `values` per month and time of day: month -> (hours [h], means).

    The same groups and means as ``Series(values).groupby(hour).mean()`` within
    each month (every time of day that has a record, NaN where none of its values
    is finite), from three bincounts instead of a groupby per month.
    """
    values = np.asarray(values, dtype=float)
    hours, hour_code = np.unique(hour, return_inverse=True)
    cells = 12 * len(hours)
    key = (np.asarray(month) - 1) * len(hours) + hour_code
    finite = np.isfinite(values)
    present = np.bincount(key, minlength=cells).reshape(12, -1) > 0
    counts = np.bincount(key[finite], minlength=cells).reshape(12, -1)
    sums = np.bincount(key[finite], weights=values[finite], minlength=cells).reshape(12, -1)
    with np.errstate(invalid="ignore", divide="ignore"):
        means = np.where(counts > 0, sums / np.maximum(counts, 1), np.nan)
    return {number: (hours[present[number - 1]], means[number - 1][present[number - 1]])
            for number in range(1, 13) if present[number - 1].any()}


def _centre_offset_minutes(measured, potential):
    """Radiation-weighted mean time of day of measured minus potential radiation [min].

    `measured` and `potential` are (hours, mean radiation) of one month. A
    descriptive check of the diurnal composites drawn (not the run's clock
    estimate): clouds that favour one half of the day move it by some minutes, a
    clock error moves it by the error in every month.
    """
    centres = []
    for hours, course in (measured, potential):
        weight = np.clip(np.asarray(course, dtype=float), 0.0, None)
        weight = np.where(np.isfinite(weight), weight, 0.0)
        if weight.sum() <= 0.0:
            return None
        centres.append(float(np.sum(hours * weight) / weight.sum()))
    return round(60.0 * (centres[0] - centres[1])) + 0.0  # + 0.0: no "-0"


#: Characters of the clock figure's title per line: 10.5 pt text across the 11 inches
#: from its left margin (about 0.55 of the point size per character (m), measured: 150
#: characters ran past the edge).
_CLOCK_TITLE_CHARACTERS = 125
#: Height a wrapped title's further line takes [inches]: 10.5 pt at a line spacing of 1.2
#: plus a margin.
_TITLE_LINE_INCHES = 0.2


def figure_clock(drawing, written, interval) -> Figure:
    series = written.timeseries
    hour = _hour_of_day(series.index, interval)
    month = series.index.month.to_numpy()
    months = [m for m in range(1, 13) if (month == m).any()]
    ncols = 6 if len(months) > 4 else len(months)
    nrows = -(-len(months) // ncols)
    # the verdict, its shift and a problem can be longer than the figure is wide: wrapped
    # on whole words, the panels moved down by the lines added (a title cut at the edge
    # lost its end, "not an un")
    sentence = clock_sentence(written.manifest)
    title = textwrap.wrap(f"Clock check: {sentence}", _CLOCK_TITLE_CHARACTERS)
    height = 1.15 + 1.9 * nrows + _TITLE_LINE_INCHES * (len(title) - 1)
    # one axes per row of months, each month a 0-24 h segment of it (a dozen axes cost
    # more than everything else drawn here); the segments keep the width of the panels
    figure = drawing.figure(11.0, height, left=0.06, right=0.99,
                            top=1 - (0.62 + _TITLE_LINE_INCHES * (len(title) - 1)) / height,
                            bottom=0.62 / height, hspace=0.42)
    rows = figure.subplots(nrows, 1, sharey=True, squeeze=False).ravel()
    has_potential = "potential_radiation" in series.columns
    rg = series["rg"].to_numpy(dtype=float) if "rg" in series.columns else np.full(len(hour), np.nan)
    rg_means = _monthly_means(rg, hour, month)
    potential_means = (_monthly_means(series["potential_radiation"], hour, month)
                       if has_potential else {})
    for row, axis in enumerate(rows):
        measured_x, measured_y, potential_x, potential_y = [], [], [], []
        for position, number in enumerate(months[row * ncols:(row + 1) * ncols]):
            measured = rg_means[number]
            measured_x += [position + measured[0] / 24.0, [np.nan]]
            measured_y += [measured[1], [np.nan]]
            axis.text(position + 0.01, 1.02, _MONTHS[number - 1], fontsize=8.5, ha="left",
                      va="bottom", transform=axis.get_xaxis_transform())
            if has_potential:
                reference = potential_means[number]
                potential_x += [position + reference[0] / 24.0, [np.nan]]
                potential_y += [reference[1], [np.nan]]
                offset = _centre_offset_minutes(measured, reference)
                if offset is not None:
                    axis.text(position + 0.02, 0.95, f"{offset:+.0f} min", fontsize=8,
                              ha="left", va="top", transform=axis.get_xaxis_transform(),
                              color=_VERMILLION if abs(offset) >= 30 else "#333333")
        axis.plot(np.concatenate(measured_x), np.concatenate(measured_y), color=_ORANGE,
                  linewidth=1.6, label="measured Rg")
        if has_potential:
            axis.plot(np.concatenate(potential_x), np.concatenate(potential_y),
                      color=_BLACK, linestyle="--", linewidth=1.1, label="potential radiation")
        # month boundaries dark, noon light
        axis.vlines(np.arange(1, ncols), 0.0, 1.0, color="#666666", linewidth=0.9,
                    transform=axis.get_xaxis_transform())
        axis.vlines(np.arange(ncols) + 0.5, 0.0, 1.0, color="#999999", linewidth=0.6,
                    transform=axis.get_xaxis_transform())
        axis.set_xlim(0, ncols)
        drawing.fixed_ticks(axis.xaxis, (np.arange(ncols)[:, None]
                                         + np.array([0.25, 0.5, 0.75])).ravel(),
                            ["6", "12", "18"] * ncols)
        axis.grid(False, axis="x")
        axis.tick_params(labelsize=7.5)
        axis.set_ylabel("[W m-2]")
        drawing.few_ticks(axis, x=0, y=4)
    rows[-1].set_xlabel("Time of day [h] within each month (local standard time)", fontsize=8,
                        loc="left")
    rows[-1].legend(loc="upper right", bbox_to_anchor=(1.0, -0.1), ncols=2, fontsize=7.5)
    figure.suptitle("\n".join(title), x=0.06, ha="left", fontsize=10.5)
    missing = "" if has_potential else " (no potential radiation column: measured Rg only)"
    caption = ("Measured Rg should rise and fall with the dashed potential radiation in every "
               "month; a curve shifted sideways by the same amount each month (the minutes in "
               "each month: radiation-weighted centre of measured minus potential, red from "
               f"30 min) points to a clock or time-zone error (run's estimate: {sentence})"
               f"{missing}.")
    return Figure("clock_check.png", drawing.png(figure), "Clock check: measured against "
                  "potential radiation", caption)


def figure_monthly(drawing, written) -> Figure:
    monthly = written.table("monthly")
    figure = drawing.figure(10.0, 4.4, left=0.08, right=0.98, top=0.9, bottom=0.2)
    axis = figure.subplots()
    x = pd.DatetimeIndex(monthly.index) + pd.Timedelta(days=14) if len(monthly) else []
    styles = [("gpp_nighttime", "GPP, nighttime method", _GREEN, "-", "o"),
              ("gpp_daytime", "GPP, daytime method", _BLUE, "--", "s"),
              ("reco_nighttime", "Reco, nighttime method", _VERMILLION, "-", "^"),
              ("reco_daytime", "Reco, daytime method", _ORANGE, "--", "D"),
              ("nee", "NEE", _BLACK, ":", "x")]
    bars = clipped = False
    for column, label, colour, line, marker in styles:
        if column not in monthly.columns:
            continue
        values = monthly[column].to_numpy(dtype=float)
        sigma = _sigma_column(monthly, column)
        error = None
        if sigma:
            low, high = band_edges(values, monthly[sigma].to_numpy(dtype=float), column)
            error = np.vstack([values - low, high - values])
        bars = bars or sigma is not None
        clipped = clipped or (sigma is not None
                              and column.split("_", 1)[0] in _NON_NEGATIVE_PREFIXES)
        axis.errorbar(x, values, yerr=error, color=colour, linestyle=line, marker=marker,
                      markersize=5, markerfacecolor="white" if line == "--" else colour,
                      linewidth=1.4, capsize=2, label=label)
    axis.axhline(0.0, color="#777777", linewidth=0.6)
    drawing.date_axis(axis, ticks=13)
    axis.set_ylabel(f"Monthly sum [{_CARBON_UNIT}]")
    drawing.few_ticks(axis, x=0, y=6)
    axis.set_title("Monthly sums by both partitioning methods", loc="left")
    # below the axes: inside, it covered the first summer's GPP peak (review43)
    axis.legend(loc="upper center", bbox_to_anchor=(0.5, -0.1), ncols=5, fontsize=8)
    bar_text = ("error bars are ±1.96 times the monthly 1-sigma written by the run"
                + (", those of GPP and Reco clipped at zero, as neither flux can be negative"
                   if clipped else "")
                if bars else "the run wrote no monthly 1-sigma, so no error bars")
    caption = ("Solid lines (nighttime method) and dashed lines (daytime method) should run "
               f"close together; a month where they split is uncertain in its partitioning; "
               f"{bar_text}.")
    return Figure("monthly_gpp_reco.png", drawing.png(figure), "Monthly GPP, Reco and NEE",
                  caption)


def _monthly_composite(series, column, hour, month, months):
    """Mean diurnal course per month laid side by side: (x, y) with NaN between months.

    x is the month's position (0, 1, ...) plus the hour of day / 24.
    """
    means = _monthly_means(series[column], hour, month)
    xs, ys = [], []
    for position, number in enumerate(months):
        hours, values = means[number]
        xs += [position + hours / 24.0, [np.nan]]
        ys += [values, [np.nan]]
    return np.concatenate(xs), np.concatenate(ys)


def figure_diurnal(drawing, written, interval) -> Figure:
    series = written.timeseries
    hour = _hour_of_day(series.index, interval)
    month = series.index.month.to_numpy()
    months = [m for m in range(1, 13) if (month == m).any()]
    figure = drawing.figure(11.0, 4.2, left=0.07, right=0.99, top=0.9, bottom=0.2)
    axis = figure.subplots()
    lines = [("nee_filled", "NEE (gap-filled)", _BLACK, "-"),
             ("gpp_nighttime", "GPP, nighttime method", _GREEN, "-"),
             ("gpp_daytime", "GPP, daytime method", _BLUE, "--"),
             ("reco_nighttime", "Reco, nighttime method", _VERMILLION, "-"),
             ("reco_daytime", "Reco, daytime method", _ORANGE, "--")]
    for column, label, colour, style in lines:
        if column in series.columns:
            x, y = _monthly_composite(series, column, hour, month, months)
            axis.plot(x, y, color=colour, linestyle=style, linewidth=1.2, label=label)
    for position in range(1, len(months)):
        axis.axvline(position, color="#888888", linewidth=0.8)
    axis.axhline(0.0, color="#888888", linewidth=0.6)
    axis.set_xlim(0, len(months))
    drawing.fixed_ticks(axis.xaxis, np.arange(len(months)) + 0.5,
                        [_MONTHS[m - 1][:3] for m in months])
    axis.tick_params(axis="x", length=0)
    axis.grid(False, axis="x")
    axis.set_ylabel(f"[{_FLUX_UNIT}]")
    drawing.few_ticks(axis, x=0, y=6)
    axis.set_title("Mean diurnal course per month, 0–24 h local standard time within each "
                   "month", loc="left")
    axis.legend(loc="upper center", bbox_to_anchor=(0.5, -0.1), ncols=5)
    caption = ("Within each month (0–24 h, all years pooled) the daytime GPP of the two "
               "methods should have the same shape, and night NEE should sit on the Reco "
               "curves; a month where they part is where the partitioning is least certain.")
    return Figure("diurnal_by_month.png", drawing.png(figure), "Mean diurnal course per month",
                  caption)


def _evenly_spaced(count, wanted):
    if count <= wanted:
        return np.arange(count)
    return np.unique(np.round(np.linspace(0, count - 1, wanted)).astype(int))


def _period_e0_curves(e0_annual, windows, times, temperature) -> list:
    """(year, E0 [K], median Rref [µmol m-2 s-1], temperature grid [°C]) per calendar year.

    The nighttime E0 is fitted per calendar year of data (``parameters_nighttime_e0_annual``);
    a period's night records (``times``, ``temperature``) are split by calendar year, and
    each year with an E0, Rref windows centred in it and temperatures gets its curve.
    """
    if not len(e0_annual) or "e0" not in e0_annual.columns or not len(windows):
        return []
    centres = pd.DatetimeIndex(windows["window_centre"]).year
    curves = []
    for year in sorted(set(times.year)):
        if year not in e0_annual.index or not np.isfinite(float(e0_annual.loc[year, "e0"])):
            continue
        inside = np.asarray(times.year == year) & np.isfinite(temperature)
        rref = windows["rref"].to_numpy(dtype=float)[np.asarray(centres == year)]
        if inside.sum() < 2 or not rref.size:
            continue
        finite = temperature[inside]
        grid = np.linspace(np.percentile(finite, 1), np.percentile(finite, 99), 60)
        curves.append((year, float(e0_annual.loc[year, "e0"]), float(np.median(rref)), grid))
    return curves


def unfitted_methods(written) -> list[str]:
    """The partitioning methods (``"nighttime"``, ``"daytime"``) a run could not fit.

    Such a method's GPP and Reco are NaN at every record of the written time series
    (:mod:`fluxpart.method_failure`); a folder without the columns names none.
    """
    series = written.timeseries
    out = []
    for method in ("nighttime", "daytime"):
        columns = [f"gpp_{method}", f"reco_{method}"]
        if set(columns) <= set(series.columns) and len(series) and not np.isfinite(
                series[columns].to_numpy(dtype=float)).any():
            out.append(method)
    return out


def _statement_figure(drawing, name, title, text) -> Figure:
    """A figure with nothing to draw: its one sentence instead of empty axes."""
    figure = drawing.figure(8.0, 2.0, left=0.02, right=0.98, top=0.9, bottom=0.1)
    _no_data(figure.add_subplot(1, 1, 1), text)
    return Figure(name, drawing.png(figure), title, text)


def _unfitted_figure(drawing, name, title, method) -> Figure:
    """A figure of one method that could not fit: the statement instead of empty axes."""
    return _statement_figure(drawing, name, title,
                             f"The {method} partitioning method could not fit this record: "
                             "its GPP and Reco are not given (the run's warnings name the "
                             "reason).")


def _with_tables(drawing, written, name, paint) -> Figure:
    """Figure `name` drawn by `paint()`, or its sentence where the result folder lacks
    the table it draws; a caption clause where it lacks a table drawn in part
    (:mod:`fluxpart.absent_tables`)."""
    absent = absent_main(name, written.tables)
    if absent is not None:
        return _statement_figure(drawing, name, *absent)
    figure = paint()
    clause = absent_parts(name, written.tables)
    if not clause:
        return figure
    return Figure(figure.name, figure.png, figure.title, f"{figure.caption} {clause}")


def _without(figure: Figure, unfitted) -> Figure:
    """`figure` with its caption saying which method could not fit (drawn without it)."""
    if not unfitted:
        return figure
    return Figure(figure.name, figure.png, figure.title, figure.caption + " " + " ".join(
        f"The {method} method could not fit this record: its curves and panels are empty."
        for method in unfitted))


def figure_night_respiration(drawing, written, interval) -> Figure:
    if "nighttime" in unfitted_methods(written):
        return _unfitted_figure(drawing, "night_respiration.png", "Night respiration and the "
                                "Lloyd–Taylor fits", "nighttime")
    series = written.timeseries
    driver = _respiration_driver(written)
    temperature_column = _temperature_column(series, driver)
    periods = period_masks(written)
    night = (series["is_night"].to_numpy(dtype=bool)
             & np.isfinite(series["nee_measured"].to_numpy(dtype=float)))
    e0_annual = written.table("parameters_nighttime_e0_annual")
    rref_windows = written.table("parameters_nighttime_rref")
    count = max(len(periods), 1)
    width, height = max(4.6 * min(count, 3) + 1.2, 8.0), 4.6 * -(-count // 3)
    figure = drawing.figure(width, height, left=0.7 / width, right=1 - 1.0 / width,
                            top=1 - 0.45 / height, bottom=0.6 / height, wspace=0.3,
                            hspace=0.4)
    axes = _panels(figure, count, 3)
    colormap = drawing.mpl.colormaps["viridis"]
    norm = drawing.colors.Normalize(vmin=0.0, vmax=366.0)
    temperature = series[temperature_column].to_numpy(dtype=float)
    nee = series["nee_measured"].to_numpy(dtype=float)
    doy = series.index.day_of_year.to_numpy(dtype=float)
    scatter = None
    for axis, (label, (_, first, last, mask, _)) in zip(axes, periods.items(), strict=False):
        rows = night & mask
        span = _date_span(first, last)
        # a calendar year's label is the span's own year: "2023: 1 Jan 2023 – ..." said
        # it twice (review55); a budget year's label stays before its span
        axis.set_title(span if str(label) == str(first.year) == str(last.year)
                       else f"{label}: {span}", loc="left")
        if not rows.any():
            _no_data(axis, "no measured night records")
            continue
        scatter = axis.scatter(temperature[rows], nee[rows], c=doy[rows], cmap=colormap,
                               norm=norm, s=3, alpha=0.5, linewidths=0)
        windows = rref_windows
        if len(windows) and "window_centre" in windows.columns:
            centres = pd.DatetimeIndex(windows["window_centre"])
            windows = windows[(centres >= first) & (centres <= last)
                              & np.isfinite(windows["rref"].to_numpy(dtype=float))]
        times = series.index[rows]
        for position in _evenly_spaced(len(windows), 6):
            window = windows.iloc[position]
            inside = (times >= window["window_start"]) & (times < window["window_end"])
            span = temperature[rows][inside]
            span = span[np.isfinite(span)]
            if span.size < 2:
                continue
            grid = np.linspace(span.min(), span.max(), 40)
            curve = lloyd_taylor(grid, window["rref"], window["e0"])
            colour = colormap(norm(pd.Timestamp(window["window_centre"]).day_of_year))
            axis.plot(grid, curve, color="#000000", linewidth=2.8)
            axis.plot(grid, curve, color=colour, linewidth=1.6)
        curves = _period_e0_curves(e0_annual, windows, times, temperature[rows])
        for (year, e0, rref, grid), style in zip(curves, ("--", ":", "-."), strict=False):
            # E0 is fitted per calendar year: a budget year across two shows both
            named = f"{year}: " if len(curves) > 1 else ""
            axis.plot(grid, lloyd_taylor(grid, rref, e0), color="#000000", linestyle=style,
                      linewidth=1.5, label=f"{named}E0 = {e0:.0f} K, median {_RREF} = "
                      f"{rref:.2f} {_FLUX_UNIT}")
        if curves:
            axis.legend(loc="upper left")
        axis.set_xlabel(f"{_temperature_label(temperature_column)} [°C]")
        axis.set_ylabel(f"Night NEE [{_FLUX_UNIT}]")
        drawing.few_ticks(axis, x=6, y=5)
    if scatter is not None:
        box = axes[-1].get_position()
        bar_axis = figure.add_axes((box.x1 + 0.15 / width, box.y0, 0.12 / width, box.height))
        figure.colorbar(scatter, cax=bar_axis).set_label("Day of year")
    return Figure("night_respiration.png", drawing.png(figure), "Night respiration and the "
                  "Lloyd–Taylor fits", night_respiration_caption(written))


def night_respiration_caption(written) -> str:
    """The caption of the night-respiration figure, naming the constant-Q10 form's weight.

    The figure draws the Lloyd–Taylor fits alone, while the central nighttime Reco of a run
    with ``respiration_form = "average"`` weights them against the method refitted on the
    same night records with a constant Q10, by the night data's BIC weight
    (``provenance.respiration_form``).
    Where that weight is 1 (a generated southern woodland whose respiration follows a
    constant Q10, review58) the caption said Reco "should rise along the Lloyd–Taylor
    curves", a curve the run's Reco does not use at all.

    Parameters
    ----------
    written : fluxpart.figures.Written
        The result folder's manifest and tables.

    Returns
    -------
    str
        One or two sentences.

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
    Functional Ecology 8(3):315-323.

    Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel Inference,
    2nd ed. Springer (the weights of two models by their information criterion).
    """
    caption = ("Night respiration should rise with temperature along the Lloyd–Taylor curves "
               "(Lloyd & Taylor 1994) fitted in short windows (solid, coloured by date) and "
               "with each calendar year's E0 (black, dashed; a budget year across two "
               "calendar years has a dotted second curve); a cloud far from the curves points "
               "to a poor fit or to advection at night.")
    share = respiration_facts(written.manifest.get("provenance")).get(
        "respiration_form_share_constant_q10", 0.0)
    if share >= 0.995:
        caption += (" This run's nighttime Reco is not these curves: it is the method refitted "
                    "on the same night records with a constant Q10 (not drawn), which the "
                    f"night data weight {share:.2f} against Lloyd–Taylor (manifest: "
                    "provenance.respiration_form); the curves show the form it was weighed "
                    "against.")
    elif share >= 0.005:
        caption += (f" This run's nighttime Reco weights these curves {1 - share:.2f} and "
                    "the method refitted on the same night records with a constant Q10 (not "
                    f"drawn) {share:.2f}, as the night data weigh the two forms (manifest: "
                    "provenance.respiration_form).")
    return caption


def ustar_class_means(series: pd.DataFrame, classes: int, periods: dict) -> dict:
    """Night NEE by u* class per period: mean u* [m s-1], mean and standard error of NEE."""
    reason = series["rejection_reason"].astype(object).to_numpy()
    # kept, or rejected only for low u*: labels in a result folder, codes in memory
    usable = (series["is_night"].to_numpy(dtype=bool)
              & np.isin(reason, ("kept", "low_ustar", 0, 5))
              & np.isfinite(series["nee"].to_numpy(dtype=float))
              & np.isfinite(series["ustar"].to_numpy(dtype=float)))
    out = {}
    for label, (_, _, _, mask, _) in periods.items():
        rows = usable & mask
        ustar = series["ustar"].to_numpy(dtype=float)[rows]
        nee = series["nee"].to_numpy(dtype=float)[rows]
        if ustar.size < 2 * classes:
            continue
        edges = np.quantile(ustar, np.linspace(0.0, 1.0, classes + 1))
        # classes (e[i-1], e[i]], the lowest closed: equal record counts
        group = np.clip(np.searchsorted(edges, ustar, side="left") - 1, 0, classes - 1)
        frame = pd.DataFrame({"group": group, "ustar": ustar, "nee": nee}).groupby("group")
        stats = frame.agg(ustar=("ustar", "mean"), nee=("nee", "mean"), sd=("nee", "std"),
                          n=("nee", "size"))
        stats["se"] = stats["sd"] / np.sqrt(stats["n"])
        out[label] = stats
    return out


def _ustar_years(written: Written, table: pd.DataFrame) -> dict:
    """Periods of the u* figure: the calendar years of the u* table, else the budget periods.

    The threshold is detected per calendar year of data, so its class means, threshold
    and bootstrap draws are drawn for the same calendar year, also where a budget year
    (``year_start``) spans two of them.
    """
    if not len(table) or not {"period", "year"} <= set(table.columns):
        return period_masks(written)
    index = written.timeseries.index
    out = {}
    for year in sorted(pd.unique(table.loc[table["period"] == "year", "year"])):
        mask = np.asarray(index.year == year, dtype=bool)
        if mask.any():
            out[year] = (str(year), index[mask][0], index[mask][-1], mask, False)
    return out or period_masks(written)


def figure_ustar(drawing, written) -> Figure:
    series = written.timeseries
    classes = int(written.setting("ustar_classes", 20))
    table = written.table("ustar")
    periods = _ustar_years(written, table)
    means = ustar_class_means(series, classes, periods)
    draws = written.table("parameters_ustar_bootstrap")
    labels = list(periods)
    colours = _year_colours(drawing, labels)
    figure = drawing.figure(11.0, 4.3, left=0.07, right=0.98, top=0.9, bottom=0.13, wspace=0.22)
    left, right = figure.subplots(1, 2)
    annual_rows = (table[table["period"] == "year"].drop_duplicates("year").set_index("year")
                   if len(table) and {"period", "year"} <= set(table.columns) else pd.DataFrame())
    for label in labels:
        colour = colours[label]
        if label in means:
            stats = means[label]
            left.errorbar(stats["ustar"], stats["nee"], yerr=stats["se"], color=colour,
                          marker="o", markersize=4, linewidth=1.2, capsize=2,
                          label=f"{label}: class means ± 1 s.e.")
        if label in annual_rows.index:
            threshold = float(annual_rows.loc[label, "threshold"])
            left.axvline(threshold, color=colour, linestyle="--", linewidth=1.4,
                         label=f"{label}: threshold {threshold:.3f} m s-1")
            if {"threshold_p05", "threshold_p95"} <= set(annual_rows.columns):
                low = float(annual_rows.loc[label, "threshold_p05"])
                high = float(annual_rows.loc[label, "threshold_p95"])
                if np.isfinite(low) and np.isfinite(high):
                    # named in the legend: an unlabelled band read as the threshold's
                    # own width (review54)
                    left.axvspan(low, high, color=colour, alpha=0.15, linewidth=0,
                                 label=f"{label}: bootstrap 5–95 % of the threshold")
    if not means:
        _no_data(left, "too few night records for u* classes")
    else:
        left.set_xlabel("u* (class mean) [m s-1]")
        left.set_ylabel(f"Night NEE (class mean) [{_FLUX_UNIT}]")
        drawing.few_ticks(left, x=5, y=5)
        left.legend(loc="lower right")
    left.set_title(f"Night NEE in {classes} u* classes", loc="left")
    annual_draws = (draws[draws["period"] == "year"]
                    if len(draws) and "period" in draws.columns else pd.DataFrame())
    values = (annual_draws["threshold"].to_numpy(dtype=float) if len(annual_draws)
              else np.array([]))
    values = values[np.isfinite(values)]
    if values.size:
        edges = np.histogram_bin_edges(values, bins=min(25, max(5, values.size // 4)))
        for label in labels:
            chosen = annual_draws.loc[annual_draws["year"] == label, "threshold"].to_numpy(
                dtype=float)
            chosen = chosen[np.isfinite(chosen)]
            if chosen.size:
                right.hist(chosen, bins=edges, histtype="stepfilled", alpha=0.35,
                           color=colours[label], edgecolor=colours[label], linewidth=1.2,
                           label=f"{label}: {chosen.size} draws")
            if label in annual_rows.index:
                right.axvline(float(annual_rows.loc[label, "threshold"]),
                              color=colours[label], linestyle="--", linewidth=1.4)
        right.set_xlabel("u* threshold [m s-1]")
        right.set_ylabel("Bootstrap draws [count]")
        drawing.few_ticks(right, x=5, y=0)
        # whole draws only: the automatic steps labelled the count axis 2.5, 7.5 (newuser57)
        right.yaxis.set_major_locator(drawing.ticker.MaxNLocator(nbins=5, integer=True))
        right.legend(loc="upper right")
    else:
        _no_data(right, "no bootstrap distribution\n(fixed threshold or no draws)")
    right.set_title("Bootstrap distribution of each calendar year's threshold", loc="left")
    caption = ("Night NEE should level off above the dashed threshold (left, shaded: its "
               "bootstrap 5–95 % range; one colour per "
               "calendar year of data, the period a threshold is detected for; the detector "
               "itself works by season and temperature class, Reichstein et al. 2005, Papale "
               "et al. 2006) and the bootstrap thresholds should cluster (right); a wide "
               "spread makes the u* part of the uncertainty large.")
    return Figure("ustar_threshold.png", drawing.png(figure), "u* threshold diagnostics",
                  caption)


#: The daytime method's phrases for its reasons about a window's respiration
#: (``parameters_daytime``'s ``reason`` and ``status``, which keep them: a table the run
#: wrote is not reworded) and the words a reader is shown instead, in the light-response
#: panels' titles and the page's window table. "rref differs from night rref" was shown
#: as written, a variable's name and no meaning (round leftovers61). Rref is the
#: respiration at the reference temperature of 10 °C (Lloyd & Taylor 1994 (m)); "the
#: night's" is the one the night records give for that window (Lasslop et al. 2010, who
#: fix it there where the day fit is not trusted (m)).
PLAIN_REASONS = (
    ("rref differs from night rref", "day respiration unlike the night's"),
    ("refit with night rref", "refitted with night respiration"),
    ("rref not resolved by the daytime data", "day records do not fix respiration"),
    ("rref at zero", "day respiration fitted at zero"),
)


def plain_reason(text: str) -> str:
    """A window's reason with the daytime method's phrases about Rref in plain words
    (:data:`PLAIN_REASONS`); any other text as it is."""
    for phrase, words in PLAIN_REASONS:
        text = text.replace(phrase, words)
    return text


def window_status(parameters: pd.DataFrame) -> pd.DataFrame:
    """Per light-response window: ``state`` (accepted, at bound, replaced, rejected), ``why``.

    Reads the run's ``status`` string where written ("accepted", "replaced: ...",
    "rejected: ..."), else the ``accepted`` flag and the ``reason`` text; a window
    whose reason names a bound is marked "at bound" even when accepted.
    """
    if not len(parameters):
        return pd.DataFrame({"state": pd.Series(dtype=object), "why": pd.Series(dtype=object)})
    reason = (parameters["reason"].astype("string").fillna("") if "reason" in parameters.columns
              else pd.Series("", index=parameters.index, dtype="string"))
    if "status" in parameters.columns:
        status = parameters["status"].astype("string").fillna("").str.strip()
        head = status.str.extract(r"^([A-Za-z ]+?)\s*(?:[:(,;-]\s*(.*))?$")
        state = head[0].fillna("").str.lower()
        why = head[1].fillna("")
        why = why.where(why != "", reason)
        why = why.where(why.str.lower() != "ok", "")
    else:
        accepted = (parameters["accepted"].astype(bool) if "accepted" in parameters.columns
                    else pd.Series(True, index=parameters.index))
        state = pd.Series(np.where(accepted, "accepted", "rejected"), index=parameters.index)
        why = reason.where(reason.str.lower() != "ok", "")
    at_bound = why.str.contains("bound", case=False, na=False) & (state == "accepted")
    state = state.where(~at_bound, "at bound")
    why = why.map(plain_reason, na_action="ignore")
    return pd.DataFrame({"state": state.astype(object), "why": why.astype(object)},
                        index=parameters.index)


_STATE_STYLE = {
    "accepted": ("o", _BLUE, "accepted"),
    "at bound": ("^", _VERMILLION, "accepted, a parameter at its bound"),
    "replaced": ("s", _ORANGE, "replaced"),
    "rejected": ("x", "#555555", "rejected"),
}


def window_tally(parameters: pd.DataFrame, states: pd.DataFrame, bound) -> str:
    """The light-response windows counted by state, the replaced ones at the β0 bound named.

    Parameters
    ----------
    parameters : pandas.DataFrame
        The daytime parameter table (``beta0`` [µmol m-2 s-1] per window).
    states : pandas.DataFrame
        :func:`window_status` of it.
    bound : float or None
        The run's ``daytime_beta0_max`` [µmol m-2 s-1], as the manifest records it.

    Returns
    -------
    str
        "97 accepted, 83 replaced (35 of them with β0 at its upper bound of 250 µmol m-2
        s-1 after the refit), 2 rejected"; '' where there are no windows. A window
        refitted with Rref fixed at its night respiration can sit at the bound again: its
        light-saturated uptake is then the bound's, not the data's (Lasslop et al. 2010
        bound β0 for this reason), and counting it among "replaced" alone hid 35 of the
        grassland example's 83 such windows (polish48).

    References
    ----------
    Lasslop, G., et al. (2010). Separation of net ecosystem exchange into assimilation
    and respiration using a light response curve approach. Global Change Biology 16,
    187-208 (m).
    """
    counts = states["state"].value_counts() if len(states) else pd.Series(dtype=int)
    bound = _bound_value(bound)
    parts = []
    # the drawn states in their order, then any other an older result's strings give
    for state in [*_STATE_STYLE, *(s for s in counts.index if s not in _STATE_STYLE)]:
        if state not in counts.index:
            continue
        part = f"{int(counts[state])} {state}"
        if state == "replaced" and bound is not None and "beta0" in parameters.columns:
            beta0 = parameters.loc[states["state"] == "replaced", "beta0"].to_numpy(dtype=float)
            at_bound = int(np.count_nonzero(beta0 >= bound * (1.0 - 1e-6)))
            if at_bound:
                part += (f" ({at_bound} of them with β0 at its upper bound of {bound:g} "
                         f"{_FLUX_UNIT} after the refit)")
        parts.append(part)
    return ", ".join(parts)


def _light_windows(parameters: pd.DataFrame, states: pd.DataFrame, wanted: int = 4):
    """Up to `wanted` windows with fitted values spread over the record, flagged ones first."""
    columns = ["alpha", "beta0", "k", "rref", "e0"]
    if not len(parameters) or not set(columns) <= set(parameters.columns):
        return parameters.iloc[:0]
    fitted = parameters[np.isfinite(parameters[columns].to_numpy(dtype=float)).all(axis=1)
                        & (states["state"] != "rejected")]
    fitted = fitted.sort_values("window_centre", kind="stable")
    if not len(fitted):
        return fitted
    picks = []
    for part in np.array_split(np.arange(len(fitted)), min(wanted, len(fitted))):
        block = fitted.iloc[part]
        flagged = states.loc[block.index, "state"] != "accepted"
        points = block["points"].to_numpy(dtype=float) if "points" in block else np.ones(len(block))
        score = points + np.where(flagged.to_numpy() & (len(picks) % 2 == 1), 1e6, 0.0)
        picks.append(block.index[int(np.argmax(score))])
    return fitted.loc[picks]


def _bound_value(bound) -> float | None:
    """The β0 bound [µmol m-2 s-1] as the manifest records it, as a float; None where none."""
    return float(bound) if isinstance(bound, (int, float)) and np.isfinite(bound) else None


def beta0_scale(beta0: np.ndarray, bound) -> tuple[float, float | None, bool]:
    """The top of the β0 timeline's axis, the bound of β0 and whether to draw it.

    Parameters
    ----------
    beta0 : numpy.ndarray
        β0 of each light-response window [µmol m-2 s-1] (NaN where none was fitted).
    bound : float or None
        The run's ``daytime_beta0_max`` [µmol m-2 s-1], as the manifest records it.

    Returns
    -------
    top : float
        The largest value the axis must show [µmol m-2 s-1]: the largest β0, or the
        bound where it is drawn.
    bound : float or None
        The bound as a float, None where the manifest records none.
    drawn : bool
        True where the bound lies within twice the largest β0, so that drawing it
        leaves the windows' β0 readable; a bound far above them (250 against the 2-20
        of a grassland) squeezed every window into the bottom tenth of the axis
        (before review49), and is named in the title instead.
    """
    bound = _bound_value(bound)
    fitted = beta0[np.isfinite(beta0)]
    largest = float(fitted.max()) if fitted.size and fitted.max() > 0 else None
    if largest is None:
        return (bound if bound is not None else 1.0), bound, bound is not None
    drawn = bound is not None and bound <= 2.0 * largest
    return (max(largest, bound) if drawn else largest), bound, drawn


def figure_light_response(drawing, written) -> Figure:
    if "daytime" in unfitted_methods(written):
        return _unfitted_figure(drawing, "light_response.png", "Light-response windows",
                                "daytime")
    series = written.timeseries
    parameters = written.table("parameters_daytime")
    states = window_status(parameters)
    windows = _light_windows(parameters, states)
    driver = _respiration_driver(written)
    temperature_column = _temperature_column(series, driver)
    rg_column = "rg_filled" if "rg_filled" in series.columns else "rg"
    vpd_column = "vpd_filled" if "vpd_filled" in series.columns else "vpd"
    figure = drawing.figure(11.0, 8.6, left=0.07, right=0.9, top=0.95, bottom=0.07,
                            hspace=0.45, wspace=0.22)
    grid_spec = figure.add_gridspec(3, 2, height_ratios=[1.0, 1.3, 1.3])
    timeline = figure.add_subplot(grid_spec[0, :])
    examples = [figure.add_subplot(grid_spec[1 + i // 2, i % 2]) for i in range(4)]
    if len(parameters) and {"window_centre", "beta0", "alpha"} <= set(parameters.columns):
        centres = pd.DatetimeIndex(parameters["window_centre"])
        twin = timeline.twinx()
        for state, (marker, colour, label) in _STATE_STYLE.items():
            rows = (states["state"] == state).to_numpy()
            if not rows.any():
                continue
            beta = parameters["beta0"].to_numpy(dtype=float)[rows]
            beta = np.where(np.isfinite(beta), beta, 0.0)
            timeline.scatter(centres[rows], beta, marker=marker, color=colour, s=22,
                             label=f"β0, {label} ({rows.sum()})", zorder=3)
        timeline.plot(centres, parameters["beta0"].to_numpy(dtype=float), color="#999999",
                      linewidth=0.6, zorder=1)
        twin.plot(centres, parameters["alpha"].to_numpy(dtype=float), color=_GREEN,
                  linewidth=1.0, linestyle=":", label="α")
        twin.set_ylabel("α [µmol J-1]", color=_GREEN)
        drawing.few_ticks(twin, x=0, y=4)
        twin.grid(False)
        top, bound, drawn = beta0_scale(parameters["beta0"].to_numpy(dtype=float),
                                        written.setting("daytime_beta0_max"))
        if drawn:
            timeline.axhline(bound, color=_VERMILLION, linewidth=0.8, linestyle="--",
                             label=f"β0 upper bound ({bound:g} {_FLUX_UNIT})")
        timeline.set_ylim(-0.05 * top, 1.45 * top)
        timeline.set_ylabel(f"β0 [{_FLUX_UNIT}]", fontsize=8)
        drawing.few_ticks(timeline, x=0, y=4)
        timeline.legend(loc="upper left", ncols=5 if drawn else 4, fontsize=7.5,
                        frameon=True, framealpha=0.9, edgecolor="#cccccc")
        drawing.date_axis(timeline, ticks=13)
        above = (f"; its upper bound, {bound:g} {_FLUX_UNIT}, lies above the axis"
                 if bound is not None and not drawn else "")
        timeline.set_title("Light-response windows: β0 per window (markers by status), "
                           f"α dotted{above}", loc="left")
    else:
        _no_data(timeline, "no light-response parameter table in this result folder")
    colormap = drawing.mpl.colormaps["cividis"]
    day = (~series["is_night"].to_numpy(dtype=bool)
           & np.isfinite(series["nee_measured"].to_numpy(dtype=float)))
    vpd_all = series[vpd_column].to_numpy(dtype=float)[day]
    vpd_high = float(np.nanpercentile(vpd_all, 99)) if np.isfinite(vpd_all).any() else 1.0
    norm = drawing.colors.Normalize(vmin=0.0, vmax=max(vpd_high, 1.0))
    scatter = None
    for axis in examples[len(windows):]:
        axis.set_visible(False)
    if not len(windows):
        examples[0].set_visible(True)
        _no_data(examples[0], "no fitted light-response windows")
    for axis, (position, window) in zip(examples, windows.iterrows(), strict=False):
        inside = day & (series.index >= window["window_start"]) & (
            series.index < window["window_end"])
        rg = series[rg_column].to_numpy(dtype=float)[inside]
        vpd = series[vpd_column].to_numpy(dtype=float)[inside]
        temperature = series[temperature_column].to_numpy(dtype=float)[inside]
        nee = series["nee_measured"].to_numpy(dtype=float)[inside]
        scatter = axis.scatter(rg, nee, c=vpd, cmap=colormap, norm=norm, s=12,
                               edgecolors="#333333", linewidths=0.3)
        grid = np.linspace(0.0, max(float(np.nanmax(rg)) if rg.size else 1.0, 1.0), 60)
        vpd_typical = float(np.nanmedian(vpd)) if np.isfinite(vpd).any() else 0.0
        t_typical = float(np.nanmedian(temperature)) if np.isfinite(temperature).any() else 10.0
        bend = float(window.get("curvature", 0.0))       # 0: the rectangular hyperbola
        model = (lloyd_taylor(np.full_like(grid, t_typical), window["rref"], window["e0"])
                 - light_response(grid, np.full_like(grid, vpd_typical), window["alpha"],
                                  window["beta0"], window["k"], curvature=bend))
        axis.plot(grid, model, color="#000000", linewidth=1.6)
        start = pd.Timestamp(window["window_start"])
        end = pd.Timestamp(window["window_end"]) - pd.Timedelta(minutes=1)
        state, why = states.loc[position, "state"], states.loc[position, "why"]
        flagged = state != "accepted"
        # the reason on a line of its own: in plain words it no longer fits beside the
        # dates (round leftovers61)
        why = textwrap.shorten(str(why), width=72, placeholder=" …")
        axis.set_title(f"{day_text(start, year=False)} – {day_text(end)}: {state}"
                       + (f"\n{why}" if why else ""),
                       loc="left", color=_VERMILLION if flagged else _BLACK, fontsize=8.5)
        if flagged:
            for spine in axis.spines.values():
                spine.set_edgecolor(_VERMILLION)
                spine.set_linewidth(1.6)
        # each parameter with its unit, as the page's window table gives them
        axis.text(0.98, 0.97, f"α = {window['alpha']:.4f} µmol J-1\n"
                  f"β0 = {window['beta0']:.1f} {_FLUX_UNIT}\nk = {window['k']:.3f} hPa-1\n"
                  f"{_RREF} = {window['rref']:.2f} {_FLUX_UNIT}"
                  + (f"\ncurvature = {bend:.2f}" if bend > 0 else ""), transform=axis.transAxes,
                  ha="right", va="top", fontsize=7.5,
                  bbox={"facecolor": "white", "edgecolor": "#bbbbbb", "alpha": 0.85})
        # what the line holds, in the axis label: a text inside the panel (a legend per
        # panel costs more than the panel) lay over the points of a bright window
        axis.set_xlabel(f"Global radiation Rg [W m-2]; black line: fit at VPD "
                        f"{vpd_typical:.1f} hPa, T {t_typical:.1f} °C", fontsize=8)
        axis.set_ylabel(f"NEE [{_FLUX_UNIT}]", fontsize=8)
        drawing.few_ticks(axis, x=5, y=5)
    if scatter is not None:
        box_top = examples[1].get_position()
        box_bottom = examples[3].get_position() if examples[3].get_visible() else box_top
        bar_axis = figure.add_axes((0.915, box_bottom.y0, 0.015, box_top.y1 - box_bottom.y0))
        figure.colorbar(scatter, cax=bar_axis).set_label("VPD [hPa]")
    tally = window_tally(parameters, states, written.setting("daytime_beta0_max"))
    # the example panels are framed in red for every window not plainly accepted (at a
    # bound or replaced): the caption said red frames meant a bound only (before review49)
    caption = ("Red triangles are windows whose fit sits at a parameter bound, orange squares "
               "windows refitted with Rref fixed at their night respiration, grey crosses "
               f"rejected ones ({tally or 'no windows'}); an example panel framed and titled "
               "in red shows a window that is not plainly accepted (at a bound or replaced), "
               "with the reason in its title; many flagged windows in the growing season "
               "make the daytime method's GPP less trustworthy there (model: Lasslop et al. "
               f"2010, VPD limit above {LASSLOP_VPD0_HPA:g} hPa: GPP = α β Rg / (α Rg + β), "
               "α the initial slope [µmol J-1], β the light-saturated uptake β0 "
               f"[µmol m-2 s-1], lowered by exp(−k (VPD − {LASSLOP_VPD0_HPA:g})) above "
               f"{LASSLOP_VPD0_HPA:g} hPa, k [hPa-1]; Rref the respiration at "
               f"{LLOYD_TAYLOR_TREF_KELVIN - KELVIN_OFFSET:g} °C [µmol m-2 s-1]).")
    return Figure("light_response.png", drawing.png(figure), "Light-response windows", caption)


# --------------------------------------------------------------------------- all


def draw_figures(written: Written, progress=None) -> list[Figure]:
    """Draw every figure of :data:`FIGURES` in page order (one `progress()` call each)."""
    drawing = Drawing()
    interval = interval_minutes(written.timeseries.index)
    tick = progress if progress is not None else (lambda: None)
    unfitted = unfitted_methods(written)
    painters = (
        lambda: _without(figure_daily(drawing, written, interval), unfitted),
        lambda: figure_cumulative(drawing, written, interval),
        lambda: figure_fill_quality(drawing, written, interval),
        lambda: _without(figure_heatmaps(drawing, written, interval), unfitted),
        lambda: figure_clock(drawing, written, interval),
        lambda: _without(figure_monthly(drawing, written), unfitted),
        lambda: _without(figure_diurnal(drawing, written, interval), unfitted),
        lambda: figure_night_respiration(drawing, written, interval),
        lambda: figure_ustar(drawing, written),
        lambda: figure_light_response(drawing, written),
    )
    painters = tuple(lambda name=name, paint=paint: _with_tables(drawing, written, name, paint)
                     for name, paint in zip(FIGURES, painters, strict=True))
    figures = []
    # The cyclic garbage collector pauses while the figures are drawn: matplotlib makes
    # some 10^5 short-lived objects per figure, and the collector's full passes over
    # every live object (the imported modules' included) cost 0.2-0.4 s of a 2 s report.
    # The figures' reference cycles are freed when it resumes (peak RSS ~25 MB higher).
    collecting = gc.isenabled()
    gc.disable()
    try:
        # matplotlib's defaults, whatever a matplotlibrc says (as rcdefaults() gives them,
        # without importing the style library it reads first), and the report's settings
        defaults = {k: v for k, v in drawing.mpl.rcParamsDefault.items() if k != "backend"}
        with drawing.mpl.rc_context({**defaults, **_RC}):
            for paint in painters:
                figures.append(paint())
                tick()
    finally:
        if collecting:
            gc.enable()
    return figures
