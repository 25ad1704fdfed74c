"""The flux's quality flag column left unmapped (``fluxpart.flag_labels``, round
mistakes60).

A record the tower's own quality tests reject keeps its value in the flux column, its
flag beside it (Foken & Wichura 1996 (m); common practice); unmapped, the rejected
records are read as good. INVENTED records (1-8 June 2021 of a fictional site,
``test_robustness_layouts26._records``).
"""
from __future__ import annotations

from test_robustness_layouts26 import MAPPING, _read, _records, _write

from fluxpart.flag_labels import unmapped_flag_column


def test_flag_columns_of_the_co2_flux_are_named():
    for name in ("qc_flux_co2", "co2_flux_qc", "FLAG_NEE", "qc_col", "quality_flag"):
        text = unmapped_flag_column("co2_flux" if name != "qc_col" else "nee_col",
                                    ["stamp", "co2_flux", "nee_col", name], ["stamp"])
        assert text is not None and repr(name) in text, name
        assert f"nee_flag = {name!r}" in text


def test_flags_of_other_quantities_or_mapped_flags_are_not_named():
    for name in ("qc_h2o", "LE_qc", "H_flag", "ustar_flag", "flag_tair", "qc_ch4_flux",
                 "co2_storage_qc", "rain", "co2_signal_strength"):
        assert unmapped_flag_column("co2_flux", ["co2_flux", name], []) is None, name
    # a mapped (taken) flag column is used, not named
    assert unmapped_flag_column("co2_flux", ["co2_flux", "qc_co2"], ["qc_co2"]) is None


def test_the_reader_warns_where_the_flag_is_not_mapped(tmp_path):
    ends, values = _records()
    path = tmp_path / "flux.csv"
    _write(path, [f"{e:%Y-%m-%d %H:%M}" for e in ends], values)
    lines = path.read_text().splitlines()
    path.write_text("\n".join([lines[0] + ",qc_flux_co2"]
                              + [line + f",{k % 3}" for k, line in enumerate(lines[1:])])
                    + "\n")
    _, report = _read(path)
    assert any(w.startswith("nee_flag: the file holds a quality flag column ('qc_flux_co2')")
               for w in report.warnings), report.warnings
    _, mapped = _read(path, columns=MAPPING | {"nee_flag": "qc_flux_co2"},
                      flag_accept=[0, 1])
    assert not any("no mapping reads" in w for w in mapped.warnings), mapped.warnings
