"""Leftovers of session 52 (round leftovers55): the daily anomaly in one public module;
``diff`` of inputs whose bytes differ and of reader notes moved between releases; the
report's settings of a folder written before a setting was added.

Outside facts, each named beside its check: the mean of a sinusoid over any whole
period is zero (trigonometry), so a centred running mean over one day leaves a sine of
one day's period unchanged; ``tarfile`` (Python's standard library) writes a POSIX tar
archive. The result folders are the session's invented bundle.
"""
import ast
from pathlib import Path

import numpy as np

from fluxpart.daily_anomaly import daily_anomaly


def test_the_daily_anomaly_keeps_a_daily_sine_and_removes_a_level():
    """A sine of one day's period (48 records a day) plus a level of 7: the anomaly is
    the sine (its mean over any whole day is 0, trigonometry), NaN where fewer than half
    a day's records stand in the window; and one implementation, imported by both checks
    of the air temperature against the humidity probe."""
    per_day = 48
    k = np.arange(10 * per_day)
    sine = np.sin(2 * np.pi * k / per_day)
    anomaly = daily_anomaly(sine + 7.0, per_day)
    whole = slice(per_day // 2, sine.size - per_day // 2 + 1)   # windows of a whole day
    np.testing.assert_allclose(anomaly[whole], sine[whole], atol=1e-12)
    assert np.isfinite(anomaly).all()              # half a day stands even at the ends
    level = np.full(4 * per_day, 3.5)
    level[100] = np.nan
    np.testing.assert_array_equal(np.isnan(daily_anomaly(level, per_day)),
                                  np.arange(level.size) == 100)
    sparse = np.full(3 * per_day, np.nan)
    sparse[:per_day // 2 - 1] = 1.0                # fewer than half a day: not judged
    assert np.isnan(daily_anomaly(sparse, per_day)).all()
    root = Path(__file__).resolve().parent.parent / "fluxpart"
    defined = [path.name for path in sorted(root.rglob("*.py"))
               if any(isinstance(node, ast.FunctionDef) and node.name.endswith("daily_anomaly")
                      for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))))]
    assert defined == ["daily_anomaly.py"]
