"""NEE with the wrong sign (uptake positive, e.g. NEP mapped as nee) is refused.

Facts of the trade the check rests on: without light there is no photosynthesis,
so night NEE is ecosystem respiration, a release (NEE > 0 by the sign convention of
the canonical table); under strong light photosynthesis draws NEE below its night
value, so warm, bright records reach further into uptake (NEE < 0) than into
release. Known-truth site-years from :mod:`fluxpart.scenarios` (invented sites)
serve as correct files; the hardest archetypes for this check are used: a dry
savanna (little uptake), a C4 crop (uptake only part of the year) and a
high-latitude fen (night respiration near zero).
"""

import pytest

from fluxpart import scenarios
from fluxpart.cli import main
from fluxpart.demo import write_example
from fluxpart.io import _potential
from fluxpart.unit_checks import mixup_messages

_NAMES = ("nee", "rg", "tair", "vpd", "ustar", "rh")


def _messages(year, sign):
    frame = year.frame
    minutes = int((frame.index[1] - frame.index[0]).total_seconds() // 60)
    converted = {name: frame[name].to_numpy(float) for name in _NAMES}
    converted["nee"] = sign * converted["nee"]
    potential = _potential(frame.index, year.site, minutes)
    return mixup_messages(converted, {}, {n: n for n in _NAMES}, minutes, potential)


@pytest.mark.parametrize("seed", [2, 3, 4])
def test_reversed_sign_refused_and_correct_sign_passes(seed):
    year = scenarios.generate(seed)
    refusals, warnings = _messages(year, +1.0)
    assert "nee" not in refusals
    assert not any("opposite sign" in w for w in warnings)
    refusals, _ = _messages(year, -1.0)
    assert "opposite sign" in refusals["nee"]


def test_cli_check_lists_and_run_refuses_reversed_sign(tmp_path, capsys):
    config = write_example(tmp_path)
    data = config.with_suffix(".csv")
    lines = data.read_text().splitlines()
    header = lines[0].split(",")
    column = header.index("co2_exchange")
    flipped = [lines[0]]
    for line in lines[1:]:
        cells = line.split(",")
        value = float(cells[column])
        cells[column] = cells[column] if value == -9999 else repr(-value)
        flipped.append(",".join(cells))
    data.write_text("\n".join(flipped) + "\n")
    assert main(["check", str(config)]) == 1
    assert "'co2_exchange' (nee)" in capsys.readouterr().out
    out = tmp_path / "out"
    assert main(["run", str(config), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: column 'co2_exchange' (nee)")
    assert "opposite sign" in err[0]
    assert not out.exists()
    # the documented way out: accept_units turns the refusal into a warning
    text = config.read_text().replace("[input.columns]",
                                      'accept_units = ["nee"]\n\n[input.columns]')
    config.write_text(text)
    from fluxpart.io import read_input, read_site_config

    frame, report = read_input(read_site_config(config))
    assert any("opposite sign" in warning for warning in report.warnings)
    # values kept as given: the first record of the demo file is 0.329, negated here
    assert frame["nee"].iloc[0] == pytest.approx(-0.329)
