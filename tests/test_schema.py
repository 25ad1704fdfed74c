"""The column catalogue: UDUNITS-2 units, descriptions, labelled codes (issue 15)."""

import ast
import re
from pathlib import Path

import numpy as np
import pyarrow.parquet as pq
import pytest

from fluxpart import schema, screening
from fluxpart.schema import as_labels, describe, units_for_table
from fluxpart.units import display_unit, udunits

cf_units = pytest.importorskip("cf_units")

_CARBON_COLUMNS = ("nee", "gpp_nighttime", "reco_daytime", "nee_ustar_p16", "nee_ci95_low",
                   "gpp_nighttime_uncertainty_total", "abs_nee_filled")


def _all_catalogue_entries():
    """Every (table, column) the catalogue knows by name, plus samples of each pattern."""
    entries = [("timeseries", c) for c in schema._TIMESERIES]
    entries += [("timeseries", c) for c in ("nee", "rg", "tair", "vpd", "ustar", "tsoil", "rh",
                                            "nee_flag", "tair_filled", "vpd_fill_quality",
                                            "rg_out_of_range", "gpp_daytime_random_error")]
    entries += [("annual", c) for c in [*schema._BUDGET, *schema.UNCERTAINTY_COLUMNS]]
    entries += [("annual", c) for c in ("gpp_daytime", "reco_nighttime", "nee_ustar_p84",
                                        "gpp_daytime_ustar_spread", "reco_daytime_ci95_high",
                                        "gpp_method_difference", "reco_relative_difference",
                                        "methods_agree")]
    entries += [("audit", c) for c in schema.AUDIT_COLUMNS]
    entries += [("screening", c) for c in schema._SCREENING]
    entries += [("parameters_daytime", c) for c in [*schema._PARAMETERS,
                                                    *schema.RANDOM_ERROR_MODEL_COLUMNS]]
    return entries


def test_every_catalogue_unit_parses_with_udunits():
    """Every unit the catalogue writes is valid UDUNITS-2 (cf_units 3.x, `cf_units.Unit(u)`)."""
    for table, column in _all_catalogue_entries():
        unit, description = describe(table, column)
        assert description, (table, column)
        if unit:
            parsed = cf_units.Unit(unit)
            assert not parsed.is_unknown(), (table, column, unit)


def test_carbon_and_co2_units_name_their_substance_in_the_description():
    """g m-2 columns say "carbon", t ha-1 columns say "CO2": the unit cannot carry it."""
    for table, column in _all_catalogue_entries():
        unit, description = describe(table, column)
        if unit == "g m-2":
            assert "carbon" in description, (table, column)
        if unit == "t ha-1":
            assert "CO2" in description, (table, column)
    for column in _CARBON_COLUMNS:
        table = "audit" if column.startswith("abs_") else "annual"
        assert describe(table, column)[0] == "g m-2"


def test_display_units_would_be_misread_by_udunits():
    """Why the substance left the unit: UDUNITS-2 reads "g C m-2" as gram·coulomb per m².

    cf_units 3.x: `Unit("g C m-2").is_convertible("g m-2")` is False (C = coulomb), and
    "t CO2 ha-1" does not parse; their metadata forms are mass per area.
    """
    assert not cf_units.Unit("g C m-2").is_convertible(cf_units.Unit("g m-2"))
    with pytest.raises(ValueError):
        cf_units.Unit("t CO2 ha-1")
    assert cf_units.Unit(udunits("g C m-2")).is_convertible(cf_units.Unit("kg m-2"))
    assert cf_units.Unit(udunits("t CO2 ha-1")).is_convertible(cf_units.Unit("kg m-2"))
    assert display_unit(udunits("g C m-2")) == "g C m-2"


def test_metadata_units_convert_as_the_display_units_mean():
    """UDUNITS-2 conversions of the metadata units (cf_units `Unit.convert`).

    1 umol m-2 s-1 = 1e-6 mol m-2 s-1; 1 t ha-1 = 100 g m-2; 20 degC = 293.15 K (SI
    Brochure, 9th ed.); 1 hPa = 100 Pa.
    """
    convert = [("umol m-2 s-1", "mol m-2 s-1", 1.0, 1e-6), ("t ha-1", "g m-2", 1.0, 100.0),
               ("degC", "K", 20.0, 293.15), ("hPa", "Pa", 1.0, 100.0)]
    for source, target, value, expected in convert:
        got = cf_units.Unit(source).convert(value, cf_units.Unit(target))
        assert got == pytest.approx(expected, rel=1e-12), (source, target)
    assert udunits("µmol m-2 s-1") == "umol m-2 s-1" and udunits("°C") == "degC"


def test_schema_imports_no_stage_module():
    """The catalogue is self-contained: schema.py imports only units and variables."""
    tree = ast.parse(Path(schema.__file__).read_text(encoding="utf-8"))
    relative = {node.module for node in ast.walk(tree)
                if isinstance(node, ast.ImportFrom) and node.level == 1}
    assert relative <= {"units", "variables"}, relative


def test_reason_labels_are_the_screening_reason_names():
    """The labelled rejection_reason uses the screening module's reason names, in code order."""
    assert tuple(screening.REASON_CODES.values()) == schema.REASON_LABELS
    assert list(screening.REASON_CODES) == list(range(len(schema.REASON_LABELS)))


def test_as_labels_keeps_every_category_whatever_occurs():
    """Codes become labels; the dictionary holds every label in a fixed order."""
    labels = {-1: "unfilled", 0: "measured", 1: "A", 2: "B", 3: "C"}
    out = as_labels(np.array([0, 3, -1, 0], dtype=np.int8), labels)
    assert list(out) == ["measured", "C", "unfilled", "measured"]
    assert list(out.categories) == ["measured", "A", "B", "C", "unfilled"]
    assert list(as_labels(np.array([], dtype=np.int8), labels).categories) == \
        list(out.categories)
    with pytest.raises(ValueError, match="7"):
        as_labels(np.array([0, 7]), labels)


def test_screening_and_fit_reasons_are_described_apart():
    """Regression (issue 15): the screening table's `reason` is not a fit rejection."""
    assert "screening outcome" in describe("screening", "reason")[1]
    assert "fit" in describe("parameters_daytime", "reason")[1]
    assert describe("screening", "records")[1]


def test_nighttime_gpp_description_warns_of_negative_values():
    """Issue 15: the sign and the negative night values of nighttime GPP are stated."""
    text = describe("timeseries", "gpp_nighttime")[1]
    assert "negative" in text and "positive = uptake" in text
    assert ">= 0" in describe("timeseries", "gpp_daytime")[1]


def test_every_budget_flux_states_the_one_sign_convention(written_demo):
    """Every NEE, GPP and Reco sum of the written daily, monthly and annual tables states
    README's one convention (modeller52: GPP said ">= 0" but not which way is uptake), and
    the numbers follow it: NEE = Reco - GPP (the trade's definition of the two components,
    with GPP and Reco as positive magnitudes), so the nighttime pair rebuilds each day's
    NEE, and a growing season's GPP is positive."""
    _, folder = written_demo
    signs = {"nee": "< 0 is net uptake", "gpp": "positive = uptake by photosynthesis",
             "reco": "positive = release to the atmosphere"}
    for table in ("daily", "monthly", "annual"):
        arrow = pq.read_table(Path(folder) / f"{table}.parquet")
        for column in ("nee", "gpp_nighttime", "gpp_daytime", "reco_nighttime",
                       "reco_daytime"):
            text = arrow.schema.field(column).metadata[b"description"].decode()
            assert signs[column.split("_")[0]] in text, (table, column)
        frame = arrow.to_pandas()
        rebuilt = frame["reco_nighttime"] - frame["gpp_nighttime"]
        np.testing.assert_allclose(rebuilt, frame["nee"], rtol=1e-9, atol=1e-9)
        assert (frame["gpp_daytime"].sum() > 0) and (frame["reco_daytime"] >= 0).all()


def test_daytime_gpp_description_says_where_it_is_zero(written_demo):
    """The description of `gpp_daytime` holds on the written records (round modeller27).

    Lasslop et al. (2010), Global Change Biology 16, 187-208, eq. 3 (m): the rectangular
    hyperbola alpha*beta*Rg/(alpha*Rg + beta) is 0 at Rg = 0 and > 0 for Rg > 0, so the
    term is 0 where the radiation is not above 0, not "at night": a radiometer's night
    offset or twilight gives small values (before: the text said "0 at night", and 4,442
    of the demo year's 8,806 night records had gpp_daytime > 0, 2.8 g C m-2).
    """
    folder = written_demo[1]
    table = pq.read_table(folder / "timeseries.parquet",
                          columns=["gpp_daytime", "rg_filled", "is_night"]).to_pandas()
    text = describe("timeseries", "gpp_daytime")[1]
    assert "0 where rg_filled <= 0" in text and ">= 0" in text
    assert (table["gpp_daytime"][table["rg_filled"] <= 0] == 0).all()
    assert (table["gpp_daytime"].dropna() >= 0).all()
    night_positive = (table["gpp_daytime"] > 0) & table["is_night"].astype(bool)
    assert night_positive.any()          # the demo's radiometer reads above 0 some nights
    assert "0 at night" not in text


def test_written_files_describe_every_column(written_demo):
    """Every column of every Parquet file of a result folder has a description and a
    UDUNITS-2 unit (or none), in the field and in the file metadata (issue 15)."""
    _, folder = written_demo
    files = sorted(Path(folder).glob("*.parquet"))
    assert {"timeseries.parquet", "annual.parquet", "screening.parquet"} <= \
        {f.name for f in files}
    for path in files:
        parquet = pq.ParquetFile(path)
        schema_ = parquet.schema_arrow
        assert "index" not in schema_.names, path.name
        for field in schema_:
            meta = field.metadata or {}
            unit, description = meta.get(b"unit", b"").decode(), meta.get(b"description",
                                                                          b"").decode()
            assert description, (path.name, field.name)
            if unit:
                assert not cf_units.Unit(unit).is_unknown(), (path.name, field.name, unit)
    screening_table = pq.read_schema(Path(folder) / "screening.parquet")
    assert "screening outcome" in screening_table.field("reason").metadata[b"description"].decode()


def test_written_codes_are_dictionary_encoded_labels(written_demo):
    """Fill quality and rejection reasons are dictionary-encoded strings in the file."""
    result, folder = written_demo
    table = pq.read_table(Path(folder) / "timeseries.parquet")
    for column in ("nee_fill_quality", "rejection_reason", "tair_fill_quality"):
        assert str(table.schema.field(column).type).startswith("dictionary<values=string")
    quality = set(table.column("nee_fill_quality").to_pylist())
    assert quality <= {"measured", "A", "B", "C", "unfilled"} and "measured" in quality
    reasons = set(table.column("rejection_reason").to_pylist())
    assert reasons <= set(schema.REASON_LABELS) and {"kept", "missing"} <= reasons
    # the labels agree with the audit counts made from the same records
    audit = result.audit.iloc[0]
    kept = sum(1 for value in table.column("rejection_reason").to_pylist() if value == "kept")
    assert kept == audit["screening_kept"]


def test_units_for_table_covers_a_real_annual_table(written_demo):
    """No column of the in-memory annual table is left undescribed."""
    result, _ = written_demo
    described = units_for_table("annual", result.annual.columns)
    assert not [c for c, (u, d) in described.items() if not d]
    assert all(re.fullmatch(r"[\w .\-/^]*", unit) for unit, _ in described.values())


def test_catalogue_covers_the_uncertainty_columns():
    """Every column the uncertainty module documents is in the catalogue with the UDUNITS-2
    form of its unit, and both name the same unquantified parts (a guard against drift
    until the module imports its descriptions from the catalogue)."""
    from fluxpart import uncertainty

    for name, (unit, _) in getattr(uncertainty, "ANNUAL_COLUMNS", {}).items():
        assert describe("annual", name)[0] == udunits(unit), name
        assert describe("annual", name)[1], name
    for name, (unit, _) in getattr(uncertainty, "MODEL_COLUMNS", {}).items():
        assert describe("parameters_random_error_model", name)[0] == udunits(unit), name
    if hasattr(uncertainty, "NOT_QUANTIFIED"):
        assert tuple(uncertainty.NOT_QUANTIFIED) == schema.NOT_QUANTIFIED
    for part in schema.NOT_QUANTIFIED:
        assert part in describe("annual", "nee_ci95_high")[1]


def test_each_total_names_every_part_it_adds(written_demo):
    """A partitioned flux's ``_uncertainty_total`` (and ``_sigma``) is the root sum of
    squares of its parts (fluxpart.uncertainty.period_uncertainty), the choice of
    respiration temperature and of respiration form among them; the descriptions named
    neither (review54: a reader summing the named parts of the demo's daytime GPP got
    less than the total). The parts the description names by column, with the u*,
    parameter and partitioning parts every partitioned flux has, give the total back."""
    annual = written_demo[0].annual
    for flux in ("gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
        text = describe("annual", f"{flux}_uncertainty_total")[1]
        # the period's sigma names the same parts, as parts of the annual table (polish50)
        total_after = text.split("(carbon; ")[1]
        parts = schema._TOTAL_PARTS[flux]
        assert total_after.startswith(parts + "); ")
        assert describe("daily", f"{flux}_sigma")[1].split("(carbon; ")[1].split(
            "; the errors of neighbouring periods")[0] == (
            f"combining the parts the annual table states per budget year ({parts}), which "
            f"are not written per period); {total_after[len(parts) + 3:]}")
        named = re.findall(r"\(((?:gpp|reco)\w*_uncertainty_\w+)\)", text)
        method = flux.split("_")[1]
        form = ("reco_uncertainty_respiration_form" if method == "nighttime"
                else "reco_daytime_uncertainty_respiration_form")
        # the daytime totals' light-shape part, written with daytime_curvature = average
        # only (not by the demo's run; review55: the descriptions did not name it)
        shape = [f"{flux}_uncertainty_light_shape"] if method == "daytime" else []
        assert named == ["reco_uncertainty_temperature_driver", form, *shape], (flux, named)
        assert not [c for c in shape if c in annual.columns]
        named = named[:2]
        parts = [f"{flux}_uncertainty_ustar", f"{flux}_uncertainty_parameters",
                 f"{flux.split('_')[0]}_uncertainty_partitioning", *named]
        if flux == "gpp_nighttime":
            parts += ["gpp_nighttime_uncertainty_random", "gpp_nighttime_uncertainty_gapfill"]
        total = annual[f"{flux}_uncertainty_total"].to_numpy(dtype=float)

        def root_sum_of_squares(columns):
            return np.sqrt(np.nansum(np.square(annual[columns].to_numpy(dtype=float)), axis=1))

        assert root_sum_of_squares(parts) == pytest.approx(total, rel=1e-12)
        # the demo's temperature part is not zero: the parts named before fall short
        assert (root_sum_of_squares([c for c in parts if c not in named]) < total).all()
    # the daytime parameter part is the windows' Rref only: no E0 claimed
    assert "E0's own error is not counted" in describe("annual",
                                                       "gpp_daytime_uncertainty_parameters")[1]


def test_period_sigmas_say_they_do_not_add_in_quadrature_and_nee_as_read_is_no_budget(
        written_demo):
    """Use mistakes (round mistakes48): a modeller who adds the daily sigmas in quadrature
    for an annual one, or sums the time series' ``nee`` (with its gaps). Errors shared
    between periods add linearly, not in quadrature (GUM, JCGM 100:2008, 5.2 (m)); on the
    demo year the days' root sum of squares falls short of the annual total for every
    flux, and the descriptions now say so and name the column to take."""
    result = written_demo[0]
    for flux in ("nee", "gpp_nighttime", "reco_nighttime", "gpp_daytime", "reco_daytime"):
        quadrature = float(np.sqrt((result.daily[f"{flux}_sigma"] ** 2).sum()))
        assert quadrature < result.annual[f"{flux}_uncertainty_total"].iloc[0]
        text = describe("daily", f"{flux}_sigma")[1]
        assert "root sum of squares of these sigmas understates a longer period's" in text
        assert f"(annual: {flux}_uncertainty_total)" in text
    assert "with its gaps: sums and means of it are not budgets (the gap-filled series is " \
        "nee_filled)" in describe("timeseries", "nee")[1]
