"""Regular expressions of stamp_places compiled where first used (round speed20, issue 17).

Reference: Python's own ``re.compile`` (the standard library documentation): every lazy
pattern finds what the compiled pattern of the same expression finds.
"""
import re
import subprocess
import sys

from fluxpart import stamp_places


def _lazy_patterns():
    return {name: value for name, value in vars(stamp_places).items()
            if isinstance(value, stamp_places._LazyPattern)}


def test_import_compiles_no_pattern_and_a_simple_file_few():
    """A fresh interpreter that imports the module has compiled none of its patterns."""
    code = ("import fluxpart.stamp_places as s; "
            "print(sum(v._compiled is not None for v in vars(s).values() "
            "if isinstance(v, s._LazyPattern)), "
            "sum(isinstance(v, s._LazyPattern) for v in vars(s).values()))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.split()
    assert out[0] == "0" and int(out[1]) >= 20


def test_lazy_patterns_find_what_re_compile_finds():
    texts = ["Timestamps (UTC+2)", "time zone: Europe/Berlin", "period ending timestamps",
             "Mittelwerte der vorangegangenen 30 Minuten", "fin de la période",
             "stamp_end CET", "Date/time: GMT", "interval start", "clock = UTC-05:00",
             "utc_offset = +1", "nothing to see", "début de l'intervalle"]
    patterns = _lazy_patterns()
    assert len(patterns) >= 20
    matched = set()
    for name, lazy in patterns.items():
        compiled = re.compile(*lazy._arguments)
        for text in texts + [t.lower() for t in texts]:
            got, expected = lazy.search(text), compiled.search(text)
            assert (got is None) == (expected is None), (name, text)
            if got is not None:
                matched.add(name)
                assert got.span() == expected.span() and got.groups() == expected.groups()
        assert lazy.pattern == compiled.pattern and lazy.flags == compiled.flags
    assert len(matched) >= 8          # the texts exercise many of the patterns
