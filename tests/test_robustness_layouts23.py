"""Layouts of the layouts23 round: month files whose units line writes another unit for
one month (a logger program changed its output unit part way through the record).

Outside facts, each named beside its check: 1 kW m-2 = 1000 W m-2 and 1 % = 0.01 (SI
prefixes and the definition of per cent); a logger writes its units once per column in a
line under the header (common practice). Everything else is invented known truth: the
records as written.
"""

import numpy as np
import pandas as pd
import pytest
from test_robustness_layouts18 import _tower

from fluxpart.errors import ImplausibleValueError
from fluxpart.io import read_table
from fluxpart.site import Site
from fluxpart.unit_labels import relabelled_files, relabelled_months_message
from fluxpart.variables import same_unit_key

SITE = Site(name="invented", latitude=49.3, longitude=10.2, utc_offset=1.0)
MAPPING = {"nee": "co2_flux", "ustar": "us", "rg": "sw", "tair": "t_air", "vpd": "vpd", "rh": "rh"}
UNITS = {"co2_flux": "umol m-2 s-1", "us": "m s-1", "sw": "W m-2", "t_air": "degC", "vpd": "hPa",
         "rh": "%"}


def _month_files(tmp_path, column=None, factor=1.0, label=None, month=7):
    """Three month files (June to August) with a units line; in `month` the values of
    `column` are multiplied by `factor` and its units cell reads `label`."""
    starts, records = _tower(periods=48 * 92, seed=23)
    records["rh"] = np.round(np.clip(90 - 3 * records["vpd"], 5, 100), 1)
    ends = starts + pd.Timedelta(minutes=30)
    months = (ends - pd.Timedelta(minutes=1)).month
    paths = []
    for number in (6, 7, 8):
        part = records[np.asarray(months == number)].copy()
        units = dict(UNITS)
        if number == month and column is not None:
            part[column] = np.round(part[column] * factor, 6)
            units[column] = label or units[column]
        lines = [",".join(part.columns), ",".join(["yyyy-mm-dd HH:MM"]
                                                   + [units[c] for c in part.columns[1:]])]
        lines += part.astype(str).agg(",".join, axis=1).tolist()
        path = tmp_path / f"tower_2021-{number:02d}.csv"
        path.write_text("\n".join(lines) + "\n")
        paths.append(path)
    return records, paths


def _read(paths, **kwargs):
    return read_table(paths, columns=MAPPING, time_column="stamp",
                      time_format="%Y-%m-%d %H:%M", time_marks="end", rows_after_header=1,
                      units={"vpd": "hPa"}, site=SITE, **kwargs)


@pytest.mark.parametrize(("column", "factor", "label", "name"), [
    ("sw", 0.001, "kW m-2", "rg"),      # 1 kW m-2 = 1000 W m-2 (SI prefix k)
    ("rh", 0.01, "fraction", "rh"),     # 1 % = 0.01 (definition of per cent)
])
def test_month_file_labelled_and_valued_in_another_unit_is_refused(
        tmp_path, column, factor, label, name):
    """Known truth: July's file writes Rg in kW m-2 (or RH as a fraction) and says so on
    its units line. Read before with two warnings in the declared unit, July's Rg a
    thousandth of the truth (RH a hundredth), which moves GPP and the daytime fills. The
    label and the values of that month agree, so both readings are named and the record
    is refused; listed in accept_units, it is read as declared with a warning."""
    _, paths = _month_files(tmp_path, column, factor, label)
    with pytest.raises(ImplausibleValueError) as caught:
        _read(paths)
    message = str(caught.value)
    assert f"column '{column}' ({name}): the units line of 1 input file(s)" in message
    assert f"tower_2021-07.csv' ({label!r})" in message
    assert "(2021-07)" in message and "read as declared" in message
    assert "read as labelled" in message and f"list {name} in [input] accept_units" in message
    assert "tower_2021-06.csv" not in message
    frame, report = _read(paths, accept_units=[name])
    canonical = {"rg": "rg", "rh": "rh"}[name]
    july = frame.loc["2021-07-05":"2021-07-25", canonical]
    june = frame.loc["2021-06-05":"2021-06-25", canonical]
    assert july.max() < june.max() * factor * 2      # kept as declared, as the user said
    assert any("accept_units" in w for w in report.warnings)


def test_label_without_values_or_values_without_label_keep_the_warning(tmp_path):
    """A units line that writes kW m-2 over values in W m-2 (a stale label) and values in
    kW m-2 under a W m-2 label each give one piece of evidence only: read as declared
    with a warning, as before (the values alone are judged by the month checks)."""
    records, paths = _month_files(tmp_path, "sw", 1.0, "kW m-2")
    frame, report = _read(paths)
    assert any("labelled 'kW m-2'" in w for w in report.warnings)
    assert np.allclose(frame["rg"].dropna().to_numpy(), records["sw"].to_numpy())
    _, paths = _month_files(tmp_path, "sw", 0.001, "W m-2")
    _, report = _read(paths)
    assert any("may have changed within the record" in w for w in report.warnings)


def test_relabelled_files_and_message_pieces():
    """Pure pieces: "kW m-2" is another unit of rg than W m-2 (SI prefix k); "Avg" is a
    statistic, not a unit; months outside the relabelled files give no refusal."""
    read_key = same_unit_key("rg", "W m-2")
    labels = [("a.csv", ("W/m^2",)), ("b.csv", ("kW m-2",)), ("c.csv", ("Avg",))]
    assert relabelled_files("rg", labels, read_key) == {"b.csv": "kW m-2"}
    starts = pd.date_range("2021-06-01", periods=4, freq="31D")
    sources = np.array(["a.csv", "b.csv", "b.csv", "c.csv"], dtype=object)
    warning = ("column 'sw' (rg): in 1 month(s) ({}) the values alone look like kW m-2, "
               "while the whole record does not")
    inside = starts[1].strftime("%Y-%m")
    outside = starts[3].strftime("%Y-%m")
    assert relabelled_months_message("rg", "sw", warning.format(inside), "W m-2",
                                     {"b.csv": "kW m-2"}, starts, sources)
    assert relabelled_months_message("rg", "sw", warning.format(outside), "W m-2",
                                     {"b.csv": "kW m-2"}, starts, sources) is None
    assert relabelled_months_message("rg", "sw", warning.format(inside), "W m-2", {},
                                     starts, sources) is None
