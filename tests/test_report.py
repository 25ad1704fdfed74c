"""The report: figures and a self-contained page for a result folder (fluxpart report).

One demo site-year is processed (20 bootstrap draws, to keep it quick), written and
reported once per module; the tests read the page and figures back. The page's
numbers are checked against annual.parquet read with pyarrow, the PNG files with
matplotlib's own decoder, and the page's rendering with a real headless browser.
"""

import base64
import dataclasses
import html
import re
import shutil
import subprocess
import sys
import zlib
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow.parquet as pq
import pytest

import fluxpart
from fluxpart import demo
from fluxpart.cli import main
from fluxpart.errors import FluxpartError, InputFileError
from fluxpart.manifest import CAUTION, read_manifest
from fluxpart.report import FIGURES, _cumulative_bands, _ustar_class_means, build_report

matplotlib_image = pytest.importorskip("matplotlib.image")

HOSTILE_NAME = 'Quillmoor <script>alert(1)</script> & "Co" (fictional)'
HOSTILE_WARNING = "2021 check <b>bold</b> & <img src=x onerror=alert(2)>"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    """A written demo result (hostile site name and warning) and its report page."""
    frame, _ = demo.site_year(seed=0)
    result = fluxpart.process(frame, demo.site(), fluxpart.Config(ustar_bootstrap_draws=20),
                              provenance={"demo": {"seed": 0, "variant": "c3"}})
    site = dataclasses.replace(result.site, name=HOSTILE_NAME)
    result = dataclasses.replace(result, site=site,
                                 warnings=(*result.warnings, HOSTILE_WARNING))
    directory = tmp_path_factory.mktemp("result") / "demo-2021"
    result.write(directory)
    out = directory.parent / "page"
    page = build_report(directory, out)
    return {"directory": directory, "out": out, "page": page, "result": result,
            "text": page.read_text(encoding="utf-8")}


class _Cells(HTMLParser):
    """Collect every element's attributes, the annual cells and the text of #site-name."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.elements = []
        self.cells = {}
        self._cell = None
        self._site_depth = 0
        self.site_name = ""

    def handle_starttag(self, tag, attrs):
        attributes = dict(attrs)
        self.elements.append((tag, attributes))
        if tag == "td" and "data-year" in attributes and "data-column" in attributes:
            key = (attributes["data-column"], int(attributes["data-year"]))
            assert key not in self.cells, f"cell {key} appears twice"
            self._cell = key
            self.cells[key] = {"attributes": attributes, "text": ""}
        if tag == "span" and attributes.get("id") == "site-name":
            self._site_depth = 1
        elif self._site_depth:
            self._site_depth += 1

    def handle_endtag(self, tag):
        if tag == "td":
            self._cell = None
        if self._site_depth:
            self._site_depth -= 1

    def handle_data(self, data):
        if self._cell is not None:
            self.cells[self._cell]["text"] += data
        if self._site_depth:
            self.site_name += data


def _parse(text) -> _Cells:
    parser = _Cells()
    parser.feed(text)
    parser.close()
    return parser


def _pixels(data: bytes) -> np.ndarray:
    """Decode PNG bytes with matplotlib (Pillow underneath) into an RGB(A) array."""
    import io

    return matplotlib_image.imread(io.BytesIO(data), format="png")


def _assert_not_blank(pixels: np.ndarray, what: str):
    flat = pixels[..., :3].reshape(-1, 3)
    assert float(flat.var()) > 0.0, f"{what} is blank (no pixel variance)"
    rgb = np.round(flat * 255).astype(np.uint32)
    colours = np.unique((rgb[:, 0] << 16) | (rgb[:, 1] << 8) | rgb[:, 2])
    assert len(colours) > 16, f"{what} has only {len(colours)} colours"


def _chunks(data: bytes):
    """PNG chunk types in file order (PNG specification, ISO/IEC 15948, section 5.3)."""
    position, types = len(PNG_SIGNATURE), []
    while position < len(data):
        length = int.from_bytes(data[position:position + 4], "big")
        kind = data[position + 4:position + 8]
        body = data[position + 8:position + 8 + length]
        crc = int.from_bytes(data[position + 8 + length:position + 12 + length], "big")
        assert zlib.crc32(kind + body) == crc, f"bad CRC in chunk {kind!r}"
        types.append((kind, body))
        position += 12 + length
    return types


def test_annual_numbers_on_the_page_equal_the_parquet_table(folder):
    """Every numeric annual column is on the page, equal to annual.parquet within its rounding."""
    # Reference: the Parquet file read with pyarrow, not through fluxpart.
    annual = pq.read_table(folder["directory"] / "annual.parquet").to_pandas().set_index("year")
    cells = _parse(folder["text"]).cells
    checked = 0
    for column in annual.columns:
        series = annual[column]
        if not pd.api.types.is_numeric_dtype(series) or pd.api.types.is_bool_dtype(series):
            continue
        for year, value in series.items():
            cell = cells[(column, int(year))]
            if not np.isfinite(value):
                assert cell["text"] == "n/a"
                continue
            decimals = int(cell["attributes"]["data-decimals"])
            printed = float(cell["text"])
            # the page rounds to `decimals` places: half a unit of the last digit, plus
            # float slack
            assert abs(printed - value) <= 0.5 * 10.0 ** -decimals + 1e-9, (column, year)
            checked += 1
    assert checked >= 30
    assert float(cells[("nee", 2021)]["text"]) == pytest.approx(annual.loc[2021, "nee"], abs=0.05)


def test_boolean_annual_columns_read_yes_or_no(folder):
    """Flags such as `complete` and `methods_agree` appear as yes/no with their value."""
    annual = pd.read_parquet(folder["directory"] / "annual.parquet").set_index("year")
    cells = _parse(folder["text"]).cells
    for column in ("complete", "methods_agree"):
        cell = cells[(column, 2021)]
        assert cell["text"] == ("yes" if annual.loc[2021, column] else "no")
        assert cell["attributes"]["data-value"] == str(int(annual.loc[2021, column]))


def test_units_on_the_page_come_from_the_field_metadata(folder):
    """The unit beside each annual row is the unit stored in the Parquet field metadata."""
    schema = pq.read_schema(folder["directory"] / "annual.parquet")
    units = {f.name: (f.metadata or {}).get(b"unit", b"").decode() for f in schema}
    rows = re.findall(r'<th scope="row"><code>([a-z0-9_]+)</code></th><td class="unit">([^<]*)'
                      r"</td>", folder["text"])
    page_units = {name: html.unescape(unit) for name, unit in rows}
    assert page_units["nee"] == units["nee"] == "g C m-2"
    assert page_units["ustar_threshold"] == units["ustar_threshold"] == "m s-1"
    for name, unit in page_units.items():
        if name in units:
            assert unit == (units[name] if units[name] != "1" else "–"), name


def test_every_figure_is_a_valid_non_blank_png(folder):
    """Each figure file is a PNG that matplotlib decodes, not blank, and embedded in the page."""
    embedded = re.findall(r'src="data:image/png;base64,([A-Za-z0-9+/=]+)"', folder["text"])
    assert len(embedded) == len(FIGURES)
    for name, encoded in zip(FIGURES, embedded, strict=True):
        data = (folder["out"] / name).read_bytes()
        assert data.startswith(PNG_SIGNATURE), name
        pixels = _pixels(data)
        assert pixels.shape[0] > 300 and pixels.shape[1] > 500, name
        _assert_not_blank(pixels, name)
        assert base64.b64decode(encoded) == data, f"{name} embedded differs from the file"


def test_figures_carry_no_timestamp_or_software_tag(folder):
    """No tIME chunk and no text chunk: the PNG bytes depend only on the drawing."""
    for name in FIGURES:
        kinds = [kind for kind, _ in _chunks((folder["out"] / name).read_bytes())]
        assert kinds[0] == b"IHDR" and kinds[-1] == b"IEND", name
        assert not {b"tIME", b"tEXt", b"iTXt", b"zTXt"} & set(kinds), (name, kinds)


def test_the_cli_report_is_byte_identical_and_goes_to_dir_report(folder, capsys):
    """`fluxpart report DIR --quiet` writes DIR/report/, byte-identical to the first build."""
    assert main(["report", str(folder["directory"]), "--quiet"]) == 0
    printed = capsys.readouterr()
    again = folder["directory"] / "report"
    assert "report.html" in printed.out and printed.err == ""
    for name in (*FIGURES, "report.html"):
        assert (again / name).read_bytes() == (folder["out"] / name).read_bytes(), name


def test_the_page_loads_nothing_from_elsewhere(folder):
    """No script, no stylesheet link, no src/href to another host; images are data URIs."""
    text = folder["text"]
    elements = _parse(text).elements
    tags = {tag for tag, _ in elements}
    assert "script" not in tags and "link" not in tags and "iframe" not in tags
    for tag, attributes in elements:
        for key in ("src", "href", "srcset", "poster", "data"):
            value = attributes.get(key)
            if value is not None:
                assert value.startswith(("data:", "#")), (tag, key, value[:60])
    assert not re.search(r"""(src|href)\s*=\s*["']?\s*(https?:)?//""", text, re.IGNORECASE)
    assert "@import" not in text and "url(" not in text


def test_hostile_site_name_and_warning_show_as_text(folder):
    """A site name with a script tag is escaped and reads back as the same text."""
    text = folder["text"]
    assert "<script>alert(1)</script>" not in text
    assert html.escape(HOSTILE_NAME) in text
    assert "<img src=x" not in text and "<b>bold</b>" not in text
    assert html.escape(HOSTILE_WARNING) in text
    assert _parse(text).site_name == HOSTILE_NAME


def test_page_carries_the_site_caution_and_settings(folder):
    """Site location, the standard caution and every setting of the manifest are on the page."""
    text = folder["text"]
    manifest = read_manifest(folder["directory"])
    assert html.escape(CAUTION) in text
    assert 'data-site="latitude">49.3000<' in text and 'data-site="longitude">10.2000<' in text
    for key, value in manifest["config"].items():
        shown = re.search(rf'data-setting="{key}">([^<]*)<', text)
        assert shown, key
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            assert float(shown.group(1)) == pytest.approx(value), key
    for paper in ("Global Change Biology 11:1424–1439", "Functional Ecology 8:315–323",
                  "Global Change Biology 16:187–208", "Biogeosciences 3:571–583"):
        assert paper in text
    for entry in manifest["tables"].values():
        assert entry["sha256"] in text


def test_the_page_renders_in_a_headless_browser(folder, tmp_path):
    """Chromium opens the page offline and paints a screenshot that is not blank."""
    browser = shutil.which("chromium") or ("/usr/bin/chromium"
                                           if Path("/usr/bin/chromium").exists() else None)
    if browser is None:
        pytest.skip("chromium is not installed (Debian: apt-get install chromium)")
    shot = tmp_path / "page.png"
    command = [browser, "--headless", "--no-sandbox", "--disable-gpu",
               "--disable-background-networking", "--disable-component-update",
               "--no-first-run", "--disable-sync", "--disable-quic",
               f"--user-data-dir={tmp_path / 'profile'}", f"--screenshot={shot}",
               "--window-size=1200,2000", folder["page"].resolve().as_uri()]
    try:
        subprocess.run(command, capture_output=True, timeout=90, check=False)
    except (OSError, subprocess.TimeoutExpired) as error:
        pytest.skip(f"chromium could not be run here: {error}")
    assert shot.exists(), "chromium wrote no screenshot"
    data = shot.read_bytes()
    assert data.startswith(PNG_SIGNATURE)
    pixels = _pixels(data)
    assert pixels.shape[:2] == (2000, 1200)
    _assert_not_blank(pixels, "screenshot")
    dark = (pixels[..., :3].mean(axis=-1) < 0.5).mean()
    assert dark > 0.005, "the screenshot shows almost no text or figure"


def test_cumulative_band_follows_the_sum_of_independent_errors(folder):
    """Random-error band at year end = 1.96 sqrt(sum sigma^2), the u* band the scenario range."""
    result = folder["result"]
    sigma = np.full(len(result.timeseries), 0.8)
    with_error = dataclasses.replace(result, timeseries=result.timeseries.assign(
        nee_random_error=sigma))
    curves, scenario_columns, has_random = _cumulative_bands(with_error, 30)
    doy, cumulative, bands = curves[2021]
    assert has_random and scenario_columns
    # 1 µmol m-2 s-1 over 30 min = 1800 s x 12.011e-6 g C (IUPAC atomic weight of C);
    # the variance of a sum of independent errors is the sum of their variances
    # (common practice).
    per_record = 1800 * 12.011e-6
    expected = 1.96 * per_record * 0.8 * np.sqrt(len(sigma))
    low, high, kind = bands[0]
    assert kind == "random"
    assert (high[-1] - cumulative[-1]) == pytest.approx(expected, rel=1e-12)
    low, high, kind = bands[1]
    annual = result.annual.loc[2021]
    totals = [annual[c] for c in scenario_columns] + [annual["nee"]]
    assert kind == "ustar"
    assert low[-1] == pytest.approx(min(totals)) and high[-1] == pytest.approx(max(totals))
    assert cumulative[-1] == pytest.approx(annual["nee"], abs=1e-6)
    assert doy[0] == pytest.approx(15 / 1440) and 0 < doy[-1] < 365


def test_ustar_class_means_match_pandas_quantile_classes(folder):
    """Night NEE by u* class equals the means over pandas.qcut classes of the same records."""
    series = folder["result"].timeseries
    stats = _ustar_class_means(series, 20)[2021]
    usable = (series["is_night"] & series["rejection_reason"].isin([0, 5])
              & series["nee"].notna() & series["ustar"].notna())
    night = series.loc[usable, ["ustar", "nee"]]
    # Reference: pandas.qcut into 20 classes of equal count (pandas 3, general library).
    classes = pd.qcut(night["ustar"], 20, labels=False)
    reference = night.groupby(classes)["nee"].mean()
    assert len(stats) == 20
    assert np.allclose(stats["nee"].to_numpy(), reference.to_numpy(), rtol=0, atol=1e-9)
    assert np.all(np.diff(stats["ustar"].to_numpy()) > 0)


def test_missing_matplotlib_names_the_report_extra(folder, monkeypatch, tmp_path):
    """Without matplotlib the report stops with one error naming the install command."""
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    with pytest.raises(FluxpartError, match=re.escape('pip install "fluxpart[report]"')):
        build_report(folder["directory"], tmp_path / "never")
    assert not (tmp_path / "never").exists()


def test_importing_the_report_module_does_not_import_matplotlib():
    """`import fluxpart.report` works without loading matplotlib (the core has no extra)."""
    code = "import sys, fluxpart.report; print('matplotlib' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, check=True)
    assert done.stdout.strip() == "False"


def test_a_folder_without_manifest_is_a_clear_error(tmp_path, capsys):
    """A folder that is not a result names manifest.json; the CLI exits with status 2."""
    with pytest.raises(InputFileError, match="manifest.json"):
        build_report(tmp_path)
    assert main(["report", str(tmp_path), "--quiet"]) == 2
    assert "not a fluxpart result folder" in capsys.readouterr().err
