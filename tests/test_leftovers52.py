"""Leftovers of session 51 (round leftovers52): ``diff`` of a rerun with other library
versions or code; the scaled MAD in one place.

Outside facts, each named beside its check: ``numpy.nextafter`` moves a value to the
adjacent double (IEEE 754); ``scipy.stats.median_abs_deviation(..., scale="normal")``
(SciPy, a general-purpose reference library) is the MAD scaled to a normal standard
deviation. The result folders are the session's invented bundle.
"""
import numpy as np
import pytest
from scipy import stats
from test_leftovers51 import copied_rerun
from test_verify import _set_value

from fluxpart.cli import main
from fluxpart.diff import diff_folders


def _other_release(manifest):
    """The manifest as another numpy release and a changed package record them."""
    manifest["versions"]["numpy"] = "0.0.1"
    manifest["code"]["sha256"] = "0" * 64


@pytest.fixture
def rerun(pristine_bundle, tmp_path):
    """The session bundle's folder and a copy whose manifest records other versions and code."""
    return copied_rerun(pristine_bundle, tmp_path, _other_release)


def test_versions_and_code_alone_are_no_difference_of_the_result(rerun, capsys):
    """Tables bit-identical, only a library version and the code fingerprint differ: exit 1
    "differ: 2 recorded item(s)" before, where verify lists both and fails neither (its
    module docstring); now "same result", exit 0, both listed with their values under a
    heading of their own."""
    first, second = rerun
    report = diff_folders(first, second)
    assert not report.result_items and len(report.run_facts) == 2
    assert main(["diff", str(first), str(second)]) == 0
    out = capsys.readouterr().out
    assert "same result:" in out and "only library versions and the code differ" in out
    lines = out.splitlines()
    heading = lines.index("versions and code (facts of the run, not of the result):")
    listed = " ".join(lines[heading + 1:heading + 3])
    assert "version numpy" in listed and "second 0.0.1" in listed
    assert "code fingerprint" in listed


def test_versions_beside_values_within_rounding_or_beyond(rerun, capsys):
    """Values moved to the adjacent double (IEEE 754) beside another release: "equal within
    rounding", exit 0 (verify's "reproduced within floating-point rounding"); a value
    beyond rounding differs (exit 1), the versions and code listed apart."""
    first, second = rerun
    _set_value(second, "daily", "nee", lambda v: float(np.nextafter(v, np.inf)))
    assert main(["diff", str(first), str(second)]) == 0
    out = capsys.readouterr().out
    assert "equal within rounding:" in out
    assert "library versions and the code differ (listed below)" in out
    _set_value(second, "daily", "nee", lambda v: v * 1.001)
    assert main(["diff", str(first), str(second)]) == 1
    out = capsys.readouterr().out
    assert "differ: 1 recorded item(s)" in out
    assert "library versions and the code differ in 2 fact(s) of the run, listed apart" in out


def test_scaled_mad_is_scipys_normal_scaled_mad():
    """The helper against SciPy's ``median_abs_deviation(scale="normal")``, whose constant
    is 1/Φ⁻¹(3/4) = 1.482602...: equal to 4 parts in 10^6 (1.4826 is that constant to five
    significant digits; Rousseeuw & Croux 1993), on normal, skewed and heavy-tailed
    samples, odd and even sizes; a given centre is used in place of the median."""
    from fluxpart.robust_scale import MAD_TO_SIGMA, scaled_mad

    assert MAD_TO_SIGMA == pytest.approx(1.0 / stats.norm.ppf(0.75), rel=4e-6)
    rng = np.random.default_rng(52)
    for sample in (rng.normal(3.0, 2.0, 401), rng.lognormal(0.0, 1.0, 400),
                   rng.standard_t(2, 1000), np.array([1.0, 2.0, 2.0, 9.0])):
        expected = stats.median_abs_deviation(sample, scale="normal")
        assert scaled_mad(sample) == pytest.approx(expected, rel=4e-6)
    sample = rng.normal(0.0, 1.0, 200)
    shifted = stats.median_abs_deviation(sample - 0.5, center=lambda x, axis: 0.0,
                                         scale="normal")
    assert scaled_mad(sample, centre=0.5) == pytest.approx(shifted, rel=4e-6)
    assert scaled_mad(np.array([4.0, 4.0, 4.0])) == 0.0


def test_the_scaled_mad_constant_is_written_in_one_module():
    """1.4826 was written inline in five modules (round leftovers52); each now calls
    :func:`fluxpart.robust_scale.scaled_mad`. Checked with ast, the standard library's
    parser: no other module of the package holds the number as a constant."""
    import ast
    from pathlib import Path

    import fluxpart

    root = Path(fluxpart.__file__).parent
    found = [f"{path.relative_to(root)}:{node.lineno}"
             for path in sorted(root.rglob("*.py")) if path.name != "robust_scale.py"
             for node in ast.walk(ast.parse(path.read_text(encoding="utf-8")))
             if isinstance(node, ast.Constant) and node.value == 1.4826]
    assert not found, found
