"""Robustness of file reading against files as users hand them over (fresh-eyes campaign).

Outside facts: the byte-order mark Windows editors put before UTF-8 text (Unicode
U+FEFF, Python's ``codecs.BOM_UTF8``), and the files written by the standard
library's ``gzip``, ``zipfile`` and ``bz2`` modules. Contract (README "Command
line"): a user error is one ``error:`` line naming the file or setting, exit 2.
"""

import bz2
import codecs
import gzip
import zipfile
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxpart.cli import main
from fluxpart.demo import write_example


@pytest.fixture(scope="module")
def example(tmp_path_factory):
    return write_example(tmp_path_factory.mktemp("robust_files"))


def _configure(example, config, input_line):
    """Write the example's site config to `config` with its [input] path line replaced by
    `input_line` (a path, or a path and further [input] settings)."""
    config.write_text(example.read_text(encoding="utf-8").replace(
        'path = "quillmoor_grassland.csv"', input_line), encoding="utf-8")


def _with_records(example, folder, name, records):
    """The example's site config beside `records` (the CSV text) saved as `name`."""
    (folder / name).write_text(records)
    config = folder / f"{Path(name).stem}.toml"
    _configure(example, config, f'path = "{name}"')
    return config


def _one_error(capsys):
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: "), err
    return err[0]


def test_site_config_with_byte_order_mark_is_read(example, tmp_path, capsys):
    """A UTF-8 config saved with a BOM reads like the same config without one."""
    text = example.read_text(encoding="utf-8").replace(
        'path = "quillmoor_grassland.csv"', f'path = "{example.with_suffix(".csv")}"')
    plain = tmp_path / "plain.toml"
    plain.write_text(text, encoding="utf-8")
    marked = tmp_path / "marked.toml"
    marked.write_bytes(codecs.BOM_UTF8 + text.encode("utf-8"))
    from fluxpart.io import read_site_config

    assert read_site_config(marked).site == read_site_config(plain).site


def test_site_config_not_utf8_names_file_and_line(example, tmp_path, capsys):
    bad = tmp_path / "latin.toml"
    bad.write_bytes("# air temperature in °C\n".encode("latin-1")
                    + example.read_bytes())
    assert main(["check", str(bad)]) == 2
    line = _one_error(capsys)
    assert "latin.toml" in line and "UTF-8" in line and "line 1" in line


@pytest.mark.parametrize("kind", ["zip"])
def test_compressed_input_is_named_not_blamed_on_encoding(example, tmp_path, capsys, kind):
    """A zip archive of several files is named as such; changing [input] encoding could
    not help. (gzip- and bzip2-compressed files are read since round layouts18, a zip of
    one file since layouts36: see ``test_robustness_layouts36.py``.)"""
    data = example.with_suffix(".csv").read_bytes()
    packed = tmp_path / f"tower.{kind}"
    if kind == "gzip":
        packed.write_bytes(gzip.compress(data))
    elif kind == "bzip2":
        packed.write_bytes(bz2.compress(data))
    else:
        with zipfile.ZipFile(packed, "w", compression=zipfile.ZIP_DEFLATED) as archive:
            archive.writestr("tower.csv", data)
            archive.writestr("tower_copy.csv", data)
    config = tmp_path / "site.toml"
    _configure(example, config, f'path = "{packed.name}"')
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "[input] path" in line and packed.name in line
    assert "encoding" not in line


def test_fahrenheit_unit_and_hint():
    """°F: 212 °F = 100 °C, 32 °F = 0 °C, -40 °F = -40 °C (definition of the scale; NIST
    SP 811 (m)); a file in °F read as °C is refused with the °F unit named."""
    import numpy as np

    from fluxpart.unit_checks import implausible_message
    from fluxpart.variables import to_canonical

    assert np.allclose(to_canonical([212.0, 32.0, -40.0], "tair", "degF"), [100.0, 0.0, -40.0])
    # a mid-latitude year of air temperature, -5..30 °C, written in °F
    celsius = 12.5 + 17.5 * np.sin(np.linspace(0, 2 * np.pi, 17520))
    fahrenheit = celsius * 9 / 5 + 32
    message = implausible_message("tair", fahrenheit, fahrenheit, None, "air_temp", (-9999,))
    assert message is not None and "tair = \"°F\"" in message


@pytest.mark.parametrize("codes", ["[-9999, inf]", "[-9999, -inf, \"NA\"]", "[-9999, 1e400]"])
def test_infinite_missing_code_blanks_nothing(example, tmp_path, codes):
    """An infinite missing code (TOML inf, or 1e400 which overflows to it) is a no-op:
    infinities are read as missing anyway; before, its infinite tolerance blanked every
    cell of every column."""
    from fluxpart.io import read_config

    text = example.read_text(encoding="utf-8").replace(
        'path = "quillmoor_grassland.csv"', f'path = "{example.with_suffix(".csv")}"')
    plain = tmp_path / "plain.toml"
    plain.write_text(text, encoding="utf-8")
    coded = tmp_path / "coded.toml"
    coded.write_text(text.replace("missing = [-9999]", f"missing = {codes}"), encoding="utf-8")
    expected, _ = read_config(plain)
    frame, _ = read_config(coded)
    assert frame["nee"].notna().sum() == expected["nee"].notna().sum() > 0
    assert frame.equals(expected)


def test_header_padded_with_spaces_reads_like_plain(example, tmp_path):
    """A file written as 'a, b, c' (a space after each comma, as hand-made and spreadsheet
    exports often are) gives the same frame as the plain file."""
    from fluxpart.io import read_config

    padded = _with_records(example, tmp_path, "padded.csv",
                           example.with_suffix(".csv").read_text().replace(",", ", "))
    expected, _ = read_config(example)
    frame, _ = read_config(padded)
    assert frame.equals(expected)


def test_text_site_flag_hint_does_not_suggest_missing(example, tmp_path, capsys):
    """A text flag ('bad') must not be met with 'add it to [input] missing': a missing
    flag rejects nothing (README, nee_flag), so the bad records would be kept."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    column = lines[0].split(",").index("qc_co2")
    for row in range(200, 300):
        cells = lines[row].split(",")
        cells[column] = "bad"
        lines[row] = ",".join(cells)
    config = _with_records(example, tmp_path, "flags.csv", "\n".join(lines) + "\n")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "'qc_co2' (nee_flag)" in line and "flag_accept" in line
    assert "add it to [input] missing" not in line


@pytest.mark.parametrize(("character", "name"), [("\t", "tabs"), (";", "semicolons")])
def test_delimiter_hint_is_toml_that_works(example, tmp_path, capsys, character, name):
    """A tab- or semicolon-separated file read with the default comma: the error's
    `delimiter = ...` is valid TOML that reads the file (fresh-eyes campaign: the hint was
    '\\t' in single quotes, which TOML keeps as a backslash and a t, and listed the header
    as a Python repr). TOML 1.0: basic strings in double quotes process escapes, literal
    strings in single quotes do not."""
    import re
    import tomllib

    from fluxpart.io import read_config

    data = tmp_path / "tower.csv"
    data.write_text(example.with_suffix(".csv").read_text().replace(",", character))
    text = example.read_text(encoding="utf-8").replace(
        'path = "quillmoor_grassland.csv"', f'path = "{data.name}"')
    config = tmp_path / "site.toml"
    config.write_text(text, encoding="utf-8")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert f"header is one cell holding {name}" in line and "\\t'" not in line
    setting = re.search(r"set \[input\] (delimiter = \S+)$", line)[1]
    assert tomllib.loads(setting)["delimiter"] == character
    config.write_text(text.replace("[input]\n", f"[input]\n{setting}\n", 1), encoding="utf-8")
    frame, _ = read_config(config)
    plain, _ = read_config(example)
    assert frame.equals(plain)


def test_delimiter_closing_every_data_line_reads_like_plain(example, tmp_path, capsys):
    """Data lines ending in a delimiter under a header without one (a common spreadsheet
    export) read like the plain file; before, the parser took the first field as a row
    index, shifted every value one column right and blamed the stamps. Extra fields that
    hold values are refused naming the first such line."""
    from fluxpart.io import read_config

    lines = example.with_suffix(".csv").read_text().splitlines()
    config = _with_records(example, tmp_path, "closed.csv",
                           "\n".join([lines[0]] + [line + "," for line in lines[1:]]) + "\n")
    frame, _ = read_config(config)
    plain, _ = read_config(example)
    assert frame.equals(plain)

    config = _with_records(example, tmp_path, "extra.csv",
                           "\n".join([lines[0]] + [line + "," for line in lines[1:40]]
                                     + [line + ",7" for line in lines[40:]]) + "\n")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "extra.csv" in line and "line 41 has 10 fields where the header has 9" in line


def test_windows_backslash_path_gets_the_forward_slash_hint(example, tmp_path, capsys):
    """`path = 'data\\tower.csv'` (a config written on Windows) names a file called
    'data\\tower.csv' on POSIX systems, where the backslash is an ordinary character of a
    file name (POSIX.1 path resolution); the error says to write '/'."""
    (tmp_path / "data").mkdir()
    (tmp_path / "data" / "tower.csv").write_bytes(example.with_suffix(".csv").read_bytes())
    config = tmp_path / "site.toml"
    _configure(example, config, "path = 'data\\tower.csv'")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "[input] path" in line and "forward slashes" in line
    config.write_text(config.read_text(encoding="utf-8").replace(
        "path = 'data\\tower.csv'", 'path = "data/tower.csv"'), encoding="utf-8")
    assert main(["check", str(config)]) == 0
    # a glob written so (review round twelve: "matches no file" without the hint)
    _configure(example, config, "path = 'data\\tow*.csv'")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "matches no file" in line and "forward slashes" in line


def _decimal_comma_example(example, tmp_path, name, solar):
    """The example as a semicolon file with decimal commas; `solar` rewrites the Rg cells."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    column = lines[0].split(",").index("solar_down")
    rows = [lines[0].replace(",", ";")]
    for line in lines[1:]:
        cells = line.split(",")
        rows.append(";".join([cells[0]] + [solar(cell) if i == column else cell.replace(".", ",")
                                           for i, cell in enumerate(cells) if i > 0]))
    data = tmp_path / name
    data.write_text("\n".join(rows) + "\n")
    config = tmp_path / f"{Path(name).stem}.toml"
    _configure(example, config, f'path = "{name}"\ndelimiter = ";"\ndecimal = ","')
    return config


def _assert_grouped_rg_read(config, example, digits):
    """Since layouts37 thousands separators that cannot be a decimal mark are read: the
    frame is the example's with Rg of 1000 W m-2 or more x 1.2 as written, the cells named."""
    from fluxpart.io import read_site_config

    frame, report = read_site_config(config).read()
    plain, _ = read_site_config(example).read()
    scaled = plain["rg"].to_numpy() * 1.2
    written = np.array([float(f"{v:.{digits}f}") if v >= 1000 else np.nan for v in scaled])
    expected = plain.copy()
    expected["rg"] = np.where(scaled >= 1000, written, plain["rg"].to_numpy())
    pd.testing.assert_frame_equal(frame, expected)
    assert any("'solar_down' (rg)" in w and "thousands separators where they cannot be a "
               "decimal mark" in w for w in report.warnings)


@pytest.mark.parametrize(("written", "decimals"), [("{:,.1f}", True), ("{:,.0f}", False)])
def test_thousands_separator_beside_decimal_comma_is_read(example, tmp_path, written,
                                                          decimals):
    """Rg written by a spreadsheet with digit grouping in a decimal-comma file ("1.034,1" or
    "1.034" for 1034 W m-2). "1.034" was read as 1.034 W m-2 without a word (the '.' taken
    as a decimal point), "1.034,1" refused with the hint to list it as a missing code;
    then both were refused naming the separator; since layouts37 both are read (the
    column writes its other decimals with commas, so its points cannot be decimal marks).
    The convention: a decimal-comma locale groups thousands with '.', as German
    spreadsheets write them (common practice)."""
    def solar(cell):
        value = float(cell) * 1.2
        if cell == "-9999" or abs(value) < 1000:
            return cell.replace(".", ",")
        text = written.format(value)                 # "1,034.1" in the C locale
        return text.replace(",", "_").replace(".", ",").replace("_", ".")

    config = _decimal_comma_example(example, tmp_path, f"grouped{decimals}.csv", solar)
    _assert_grouped_rg_read(config, example, 1 if decimals else 0)


def test_grouped_whole_numbers_beside_decimal_comma_columns_are_refused(example, tmp_path,
                                                                        capsys):
    """Rg formatted as whole numbers with digit grouping ("0", "12", "1.034") in a file
    whose other columns hold decimal commas: the column has no comma of its own, and every
    1034 W m-2 was read as 1.034 without a word (review round twelve, with PPFD up to
    2100). The convention: a decimal-comma locale groups thousands with '.', as German
    spreadsheets write them (common practice)."""
    def solar(cell):
        value = round(float(cell) * 1.2)
        return cell if cell == "-9999" else f"{value:,d}".replace(",", ".")

    config = _decimal_comma_example(example, tmp_path, "whole.csv", solar)
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "'solar_down' (rg)" in line and "thousands separator" in line


def test_decimal_points_in_a_decimal_comma_file_still_read(example, tmp_path):
    """A column written with decimal points in a file declared decimal = "," (a mixed
    export) reads as before: a '.' counts as digit grouping only where the column also
    holds decimal commas."""
    from fluxpart.io import read_config

    config = _decimal_comma_example(example, tmp_path, "mixed.csv", lambda cell: cell)
    frame, _ = read_config(config)
    plain, _ = read_config(example)
    assert frame.equals(plain)


def test_thousands_separator_beside_decimal_point_is_read(example, tmp_path):
    """'1,034.1' in a semicolon file with decimal points (an English-locale spreadsheet)
    was named as digit grouping, not met with 'add it to [input] missing'; since
    layouts37 read (a comma before the decimal point cannot be a decimal mark)."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    column = lines[0].split(",").index("solar_down")
    rows = [lines[0].replace(",", ";")]
    for line in lines[1:]:
        cells = line.split(",")
        if cells[column] != "-9999" and float(cells[column]) * 1.2 >= 1000:
            cells[column] = f"{float(cells[column]) * 1.2:,.1f}"
        rows.append(";".join(cells))
    data = tmp_path / "points.csv"
    data.write_text("\n".join(rows) + "\n")
    config = tmp_path / "points.toml"
    _configure(example, config, 'path = "points.csv"\ndelimiter = ";"')
    _assert_grouped_rg_read(config, example, 1)


@pytest.mark.parametrize("separator", ["'", "\u202f", " "])
def test_thousands_separator_that_is_no_decimal_mark_is_read(example, tmp_path, separator):
    """'1'034.1' (Swiss spreadsheets) or '1 034.1' with a (narrow no-break) space: named as
    digit grouping until layouts37 ("add it to [input] missing" would blank every Rg of
    1000 W m-2 or more); now read, as such a separator is never a decimal mark. Outside
    fact: the apostrophe and the narrow no-break space (U+202F) as thousands separators of
    Swiss and French number formats (Unicode CLDR (m)); SI Brochure 5.4.4: digits grouped
    in threes by a space (m)."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    column = lines[0].split(",").index("solar_down")
    rows = [lines[0]]
    for line in lines[1:]:
        cells = line.split(",")
        if cells[column] != "-9999" and float(cells[column]) * 1.2 >= 1000:
            cells[column] = f"{float(cells[column]) * 1.2:,.1f}".replace(",", separator)
        rows.append(",".join(cells))
    config = _with_records(example, tmp_path, "grouped.csv", "\n".join(rows) + "\n")
    _assert_grouped_rg_read(config, example, 1)


def test_zero_bytes_of_a_cut_write_are_named_in_one_short_line(example, tmp_path, capsys):
    """A block of NUL bytes (a logger's write cut by a power failure) before a record: one
    line naming the file line, not the stamp repr with 200 '\\x00' escapes (~1 kB)."""
    lines = example.with_suffix(".csv").read_text().splitlines(keepends=True)
    data = "".join(lines[:500]) + "\x00" * 200 + "".join(lines[500:])
    config = _with_records(example, tmp_path, "cut.csv", data)
    assert main(["check", str(config)]) == 2
    error = _one_error(capsys)
    assert "line 501 holds zero bytes" in error and "200 in the file" in error
    assert "\\x00" not in error and len(error) < 400


def test_utf16_read_as_latin1_names_the_encoding(example, tmp_path, capsys):
    """[input] encoding = "latin-1" on a UTF-16 file: every other byte is zero; the line
    names UTF-16 instead of the zero bytes of a cut write."""
    text = example.with_suffix(".csv").read_text()
    (tmp_path / "wide.csv").write_bytes(text.encode("utf-16-le"))
    config = tmp_path / "wide.toml"
    _configure(example, config, 'path = "wide.csv"\nencoding = "latin-1"')
    assert main(["check", str(config)]) == 2
    assert 'encoding = "utf-16"' in _one_error(capsys)


def test_home_folder_tilde_in_the_input_path_is_named(example, tmp_path, capsys):
    """[input] path = "~/tower.csv": no shell reads the config, so '~' named a folder beside
    it and the error showed '<config folder>/~/tower.csv does not exist'."""
    config = tmp_path / "tilde.toml"
    for path in ("~/tower.csv", "~/logger/*.dat"):
        _configure(example, config, f'path = "{path}"')
        assert main(["check", str(config)]) == 2
        error = _one_error(capsys)
        assert f'[input] path = "{path}"' in error and "'~' is not expanded" in error
        assert str(Path(path).expanduser()) in error


def test_column_named_with_a_look_alike_character_says_so(example, tmp_path, capsys):
    """A mapped name typed with the Greek mu where the header has the micro sign is named
    with the code point that differs, not only "did you mean" a name shown alike.
    Outside fact: U+03BC is GREEK SMALL LETTER MU, U+00B5 MICRO SIGN (Unicode)."""
    records = example.with_suffix(".csv").read_text().replace(
        "co2_exchange", "fc_\u00b5mol", 1)
    config = _with_records(example, tmp_path, "tower.csv", records)
    config.write_text(config.read_text(encoding="utf-8").replace(
        'nee = "co2_exchange"', 'nee = "fc_\u03bcmol"'), encoding="utf-8")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "[input.columns] nee" in line and "U+03BC GREEK SMALL LETTER MU" in line
    assert "U+00B5 MICRO SIGN" in line
    suggested = line.split("in TOML write ")[1].split(")")[0]     # "fc_\u00B5mol"
    config.write_text(config.read_text(encoding="utf-8").replace(
        'nee = "fc_\u03bcmol"', f"nee = {suggested}"), encoding="utf-8")
    assert main(["check", str(config)]) == 0


@pytest.mark.parametrize("restart", ["title_header_units", "files_with_bom_joined"])
def test_header_repeated_mid_file_is_named_at_its_line(example, tmp_path, capsys, restart):
    """A logger restarting its program writes its title, header and units lines again
    into the same file; files saved with a byte-order mark (Unicode U+FEFF) and joined end
    to end repeat the header behind one. Both were named at the repeated header's line
    (before: the title line called a record cut short; the mark hid the repetition); since
    layouts37 the repeated block is skipped and named, every record read (the joined
    files' second copy of the records as exact duplicates, counted)."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    if restart == "title_header_units":
        block = ["Tamsworth heath TH-2", lines[0], "-,umol m-2 s-1,W m-2,C,kPa,m s-1,C,%,-"]
        text = "\n".join(block + lines[1:5000] + block + lines[5000:]) + "\n"
        repeated = 5004
        extra = "rows_before_header = 1\nrows_after_header = 1\n"
    else:
        text = "\ufeff" + "\n".join(lines[:5000]) + "\n\ufeff" + "\n".join(lines) + "\n"
        repeated, extra = 5001, ""
    data = tmp_path / "restart.csv"
    data.write_bytes(text.encode("utf-8"))
    config = tmp_path / "restart.toml"
    _configure(example, config, f'path = "restart.csv"\n{extra}')
    # read since layouts37: the same title, header and units lines are skipped and named;
    # the joined files' records written twice are exact duplicates, dropped and counted;
    # since readernotes51 the skipped block is a note (no record skipped), exit 0
    assert main(["check", str(config)]) == 0
    shown = capsys.readouterr().out
    if restart == "title_header_units":
        assert ("the header line with its title and units lines written again 1 time(s) "
                "among the records") in shown and "lines 5003-5005: skipped" in shown
    else:
        assert "written again 1 time(s) among the records" in shown
        assert f"on line {repeated}: skipped" in shown
        assert "4999 exact duplicate(s) within a file" in shown


def test_grouped_integers_in_a_decimal_point_column_are_read(example, tmp_path):
    """'1,034' (no decimals, quoted as csv writers quote it) in a column written with
    decimal points elsewhere is digit grouping: named as such until layouts37 (the
    decimal-comma hint would have led to reading 1034 W m-2 as 1.034); now read, as the
    column's own decimals show that its commas cannot be decimal marks."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    column = lines[0].split(",").index("solar_down")
    rows = [lines[0]]
    for line in lines[1:]:
        cells = line.split(",")
        if cells[column] != "-9999" and float(cells[column]) * 1.2 >= 1000:
            cells[column] = f'"{float(cells[column]) * 1.2:,.0f}"'
        rows.append(",".join(cells))
    config = _with_records(example, tmp_path, "grouped.csv", "\n".join(rows) + "\n")
    _assert_grouped_rg_read(config, example, 0)


def test_typographic_minus_sign_reads_as_minus(example, tmp_path):
    """NEE and air temperature written with the minus sign U+2212 (a word processor's or a
    report's export) read as the same numbers as with the hyphen-minus (Unicode: U+2212
    MINUS SIGN)."""
    from fluxpart.io import read_site_config

    text = example.with_suffix(".csv").read_text()
    lines = text.splitlines()
    typographic = [lines[0]] + [",".join(cell if cell == "-9999" else cell.replace("-", "\u2212")
                                         for cell in line.split(",")) for line in lines[1:]]
    plain = read_site_config(example).read()[0]
    config = _with_records(example, tmp_path, "minus.csv", "\n".join(typographic) + "\n")
    frame = read_site_config(config).read()[0]
    assert "\u2212" in "\n".join(typographic)
    pd.testing.assert_frame_equal(frame, plain)


def test_single_space_delimiter_on_aligned_columns_names_whitespace(example, tmp_path, capsys):
    """Columns aligned with runs of spaces read with delimiter = " " (every space a field
    separator): the fix, delimiter = "whitespace", is named (was: a line with more
    fields than the header, "a delimiter inside a value?")."""
    rows = [line.split(",") for line in example.with_suffix(".csv").read_text().splitlines()]
    aligned = "\n".join("".join(cell.rjust(20) for cell in row) for row in rows) + "\n"
    config = _with_records(example, tmp_path, "aligned.txt", aligned)
    text = config.read_text(encoding="utf-8")
    config.write_text(text.replace('path = "aligned.txt"', 'path = "aligned.txt"\ndelimiter = " "'),
                      encoding="utf-8")
    assert main(["check", str(config)]) == 2
    assert 'delimiter = "whitespace"' in _one_error(capsys)
    config.write_text(text.replace('path = "aligned.txt"',
                                   'path = "aligned.txt"\ndelimiter = "whitespace"'),
                      encoding="utf-8")
    assert main(["check", str(config)]) == 0


def test_byte_order_mark_decides_over_a_declared_encoding(example, tmp_path):
    """Monthly files of a logger declared latin-1 (a degree sign in the units line), one
    of them saved by another tool as UTF-8 with a byte-order mark: its mark decides, so
    its header is not read as 'ï»¿stamp_end' (the mark's bytes EF BB BF in Latin-1).
    Outside facts: Python's codecs.BOM_UTF8 and the Latin-1 code of the degree sign, 0xB0."""
    from fluxpart.io import read_site_config

    lines = example.with_suffix(".csv").read_text().splitlines()
    units = ",".join(["-", "umol m-2 s-1", "W m-2", "°C", "kPa", "m s-1", "°C", "%", "-"])
    first = "\n".join([lines[0], units] + lines[1:9000]) + "\n"
    second = "\n".join([lines[0], units] + lines[9000:]) + "\n"
    (tmp_path / "th_1.csv").write_bytes(first.encode("latin-1"))
    (tmp_path / "th_2.csv").write_bytes(codecs.BOM_UTF8 + second.encode("utf-8"))
    assert "°C".encode("latin-1")[0] == 0xB0
    config = tmp_path / "months.toml"
    _configure(example, config, 'path = "th_*.csv"\nencoding = "latin-1"\nrows_after_header = 1')
    frame = read_site_config(config).read()[0]
    pd.testing.assert_frame_equal(frame, read_site_config(example).read()[0])


def test_layout_hint_for_one_of_several_files_says_the_setting_reads_them_all(example,
                                                                              tmp_path,
                                                                              capsys):
    """A logger program changed its delimiter mid-year: the second file's hint (set
    delimiter = ";") would misread the first; the error says one setting reads every file
    and names the file already read with it."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    (tmp_path / "th_1.csv").write_text("\n".join(lines[:9000]) + "\n")
    (tmp_path / "th_2.csv").write_text(
        "\n".join(line.replace(",", ";") for line in [lines[0]] + lines[9000:]) + "\n")
    config = tmp_path / "two.toml"
    _configure(example, config, 'path = "th_*.csv"')
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "th_2.csv" in line and 'delimiter = ";"' in line
    assert "th_1.csv' was read with the present delimiter" in line


def test_quote_in_a_skipped_title_or_units_line_is_not_read_on(example, tmp_path):
    """A units line whose last unit is the inch mark alone (", a snow depth column) lies in
    the rows the config skips: the records after it read as without it (the parser had
    read on from that opening quote to the end of the file: 'a header but no records')."""
    from fluxpart.io import read_site_config

    lines = example.with_suffix(".csv").read_text().splitlines()
    title = "Tamsworth heath TH-2, north mast"
    units = '-,umol m-2 s-1,W m-2,C,kPa,m s-1,C,%,-,"'
    config = _with_records(example, tmp_path, "quoted.csv", "\n".join(
        [title, lines[0] + ",snow"] + [units] + [line + ",0" for line in lines[1:]]) + "\n")
    config.write_text(config.read_text(encoding="utf-8").replace(
        'path = "quoted.csv"', 'path = "quoted.csv"\nrows_before_header = 1\n'
        'rows_after_header = 1'), encoding="utf-8")
    frame = read_site_config(config).read()[0]
    pd.testing.assert_frame_equal(frame, read_site_config(example).read()[0])


def test_time_column_without_a_name_is_named_as_such(example, tmp_path, capsys):
    """A table saved with its row index (the stamps) writes an empty first header cell:
    the error says that column has no name, instead of listing the parser's 'Unnamed: 0'
    alone."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    header = "," + lines[0].split(",", 1)[1]
    config = _with_records(example, tmp_path, "indexed.csv", "\n".join([header] + lines[1:]))
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert "time_column" in line and "column 1 has no name in the header" in line


def test_record_skipped_as_a_units_line_is_read_and_named(example, tmp_path, capsys):
    """Monthly files with a units line under the header, one of them without it: with
    rows_after_header = 1 its first record was skipped as the units line, unnoticed (one
    record of the year lost, check without a problem). It was then refused at its line;
    since 0.31.0 (a logger swap that adds or drops the units line) the file is read from
    its first record, every record kept, and check names the file as a problem."""
    from fluxpart.io import read_site_config

    lines = example.with_suffix(".csv").read_text().splitlines()
    units = "-,umol m-2 s-1,W m-2,C,kPa,m s-1,C,%,-"
    (tmp_path / "th_1.csv").write_text("\n".join([lines[0], units] + lines[1:9000]) + "\n")
    (tmp_path / "th_2.csv").write_text("\n".join([lines[0]] + lines[9000:]) + "\n")
    config = tmp_path / "months.toml"
    _configure(example, config, 'path = "th_*.csv"\nrows_after_header = 1')
    assert main(["check", str(config)]) == 1
    out = capsys.readouterr().out
    assert "th_2.csv" in out and "a units line written by one logger program" in out
    frame, _ = read_site_config(config).read()
    assert len(frame) == len(lines) - 1          # no record lost


def test_file_without_header_line_is_named_as_such(example, tmp_path, capsys):
    """A file without a header line (an array saved without names, names kept in another
    file) has its first record read as the names: the one error line says that most
    'names' are numbers and that a header line is needed, not only that the time column
    is missing (review round twelve). A file with its header keeps no such hint."""
    lines = example.with_suffix(".csv").read_text().splitlines()
    config = _with_records(example, tmp_path, "bare.csv", "\n".join(lines[1:]) + "\n")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    # every cell of the example's first record is a number (its stamps are 202101010030)
    assert "time_column" in line and "9 of these 9 names are numbers" in line
    assert "add one in a copy of the file" in line
    renamed = _with_records(example, tmp_path, "renamed.csv",
                            "\n".join([lines[0].replace("stamp_end", "stamp")] + lines[1:]))
    assert main(["check", str(renamed)]) == 2
    assert "names are numbers" not in _one_error(capsys)


def test_fortran_double_precision_exponent_is_read(example, tmp_path):
    """NEE written by a Fortran program's double-precision format ('-3.292000D-01'; the D
    edit descriptor writes D as the exponent letter, Fortran standard (m)) is read as the
    E it stands for, and noted (layouts44; named and refused since review round twelve)."""
    from fluxpart.io import read_site_config

    lines = example.with_suffix(".csv").read_text().splitlines()
    column = lines[0].split(",").index("co2_exchange")
    rows = [lines[0]]
    for line in lines[1:]:
        cells = line.split(",")
        if cells[column] != "-9999":
            cells[column] = f"{float(cells[column]):.6E}".replace("E", "D")
        rows.append(",".join(cells))
    config = _with_records(example, tmp_path, "fortran.csv", "\n".join(rows) + "\n")
    frame, report = read_site_config(config).read()
    pd.testing.assert_frame_equal(frame, read_site_config(example).read()[0])
    assert any("'co2_exchange' (nee)" in w and "exponent letter D" in w
               for w in report.warnings)


@pytest.mark.parametrize("declared", ["latin-1", "cp1252"])
def test_utf8_file_declared_single_byte_names_the_encoding(example, tmp_path, capsys,
                                                           declared):
    """A UTF-8 file ('air_temp_°C') with [input] encoding = "latin-1" has its header read
    as 'air_temp_Â°C' (UTF-8 writes ° as the two bytes C2 B0, which Latin-1 reads as 'Â'
    and '°': the Unicode and ISO 8859-1 code tables), so the mapped column is not found;
    the error now says the file is UTF-8 (review round twelve: it suggested the garbled
    name)."""
    text = example.with_suffix(".csv").read_text().replace("air_temp_c", "air_temp_°C", 1)
    (tmp_path / "deg.csv").write_bytes(text.encode("utf-8"))
    config = tmp_path / "deg.toml"
    _configure(example, config, f'path = "deg.csv"\nencoding = "{declared}"')
    config.write_text(config.read_text(encoding="utf-8").replace(
        'tair = "air_temp_c"', 'tair = "air_temp_°C"'), encoding="utf-8")
    assert main(["check", str(config)]) == 2
    line = _one_error(capsys)
    assert f"the header is UTF-8 text read as {declared}" in line
    assert "encoding = \"utf-8\"" in line
    config.write_text(config.read_text(encoding="utf-8").replace(
        f'encoding = "{declared}"', ""), encoding="utf-8")
    assert main(["check", str(config)]) == 0


def test_line_break_in_a_header_name_with_a_units_line_is_named(example, tmp_path, capsys):
    """A header cell holding a line break ('"air temp\\n(degC)"', a spreadsheet cell written
    on two lines; RFC 4180 lets a quoted field hold one) makes the header two lines long.
    Without rows_after_header the file reads like the plain one; with a units line under
    it the error named an unclosed quote, which the next line closes (review round
    twelve); it now names the line break. A quote inside an unquoted name ('depth 3"')
    is no such break."""
    from fluxpart.io import read_config

    lines = example.with_suffix(".csv").read_text().splitlines()
    broken = lines[0].replace("air_temp_c", '"air temp\n(degC)"')
    mapped = 'tair = "air temp\\n(degC)"'
    config = _with_records(example, tmp_path, "two.csv", "\n".join([broken] + lines[1:]))
    config.write_text(config.read_text(encoding="utf-8").replace('tair = "air_temp_c"',
                                                                 mapped), encoding="utf-8")
    assert read_config(config)[0].equals(read_config(example)[0])
    units = ",".join(["-"] * len(lines[0].split(",")))
    config = _with_records(example, tmp_path, "units.csv",
                           "\n".join([broken, units] + lines[1:]))
    config.write_text(config.read_text(encoding="utf-8").replace(
        'tair = "air_temp_c"', mapped).replace('path = "units.csv"',
                                               'path = "units.csv"\nrows_after_header = 1'),
        encoding="utf-8")
    assert main(["check", str(config)]) == 2
    assert "line break within a header cell" in _one_error(capsys)
    inches = lines[0].replace("soil_temp_5cm", 'soil_temp_2"')
    config = _with_records(example, tmp_path, "inch.csv", "\n".join([inches, units] + lines[1:]))
    config.write_text(config.read_text(encoding="utf-8").replace(
        'tsoil = "soil_temp_5cm"', "tsoil = 'soil_temp_2\"'").replace(
        'path = "inch.csv"', 'path = "inch.csv"\nrows_after_header = 1'), encoding="utf-8")
    assert read_config(config)[0].equals(read_config(example)[0])


def test_line_numbers_count_line_breaks_inside_quoted_values(example, tmp_path, capsys):
    """A note column whose quoted values hold line breaks ('"rain,\\nheavy"', RFC 4180)
    reads like the plain file, and an error after such notes names the file's own line
    (review round twelve: it named the record's count, two lines early after two notes)."""
    from fluxpart.io import read_config

    lines = example.with_suffix(".csv").read_text().splitlines()
    rows = [lines[0] + ",note"] + [line + (',"rain,\nheavy"' if i in (10, 20) else ",")
                                   for i, line in enumerate(lines[1:])]
    config = _with_records(example, tmp_path, "notes.csv", "\n".join(rows) + "\n")
    assert read_config(config)[0].equals(read_config(example)[0])
    column = lines[0].split(",").index("air_temp_c")
    cells = rows[100].split(",")
    cells[column] = "bad"
    rows[100] = ",".join(cells)
    physical = "\n".join(rows).splitlines()
    expected = next(n for n, line in enumerate(physical, 1) if ",bad," in line)
    assert expected == 103            # header, 99 records and two notes of two lines
    config = _with_records(example, tmp_path, "bad.csv", "\n".join(rows) + "\n")
    assert main(["check", str(config)]) == 2
    assert f"line {expected} of" in _one_error(capsys)
