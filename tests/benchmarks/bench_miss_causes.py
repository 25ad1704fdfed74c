"""Miss attribution: a generated site-year rerun with one planted mechanism switched off.

Not collected by pytest; prints figures and asserts nothing. A site-year of the calibration
set (``cal:SEED``, :mod:`fluxpart.scenarios`) or the generalisation set (``gen:SEED``,
``bench_generalisation.py``) or the other-physics set (``oth:SEED``,
``bench_other_physics.py``; its own physics parameters replaced) is drawn, then simulated twice with the same random numbers:
as drawn, and with some of its parameters replaced (``--set NAME=VALUE``). Both are processed
with default settings; the annual errors of NEE [g C m-2] and of GPP and Reco by both
methods [%] are printed side by side. Where a miss disappears with a mechanism switched off,
that mechanism carries it (round accuracy47). Mechanisms used there:

- ``t_half=-40``: photosynthesis no longer limited by cold (the generator's logistic
  temperature factor is 1 at every temperature a site-year reaches);
- ``curvature=0``: the light response becomes the rectangular hyperbola the daytime
  method fits (Lasslop et al. 2010); at ``oth:SEED`` too (round trace53);
- ``oth:SEED`` with ``t_width=1e9``: the saturated rate's temperature optimum flat;
  ``vpd_slope=0``: no VPD limit of the saturated rate (round trace53).

Usage (about 2 x 3 s per site-year)::

    .venv/bin/python tests/benchmarks/bench_miss_causes.py cal:53,gen:34 --set t_half=-40

References
----------
Lasslop, G. et al. (2010). Global Change Biology 16, 187–208.
doi:10.1111/j.1365-2486.2009.02041.x
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import bench_generalisation  # noqa: E402  (this folder)
import bench_other_physics  # noqa: E402  (this folder)
from bench_calibration import FLUXES  # noqa: E402

import fluxpart  # noqa: E402
from fluxpart import scenarios  # noqa: E402


def drawn(item: str) -> scenarios.Scenario:
    """The scenario named ``cal:SEED`` or ``gen:SEED``."""
    kind, _, seed = item.partition(":")
    if kind == "cal":
        return scenarios.draw(int(seed))
    if kind == "gen":
        return bench_generalisation.draw(int(seed))[1]
    raise SystemExit(f"error: site-year {item!r}: expected cal:SEED, gen:SEED or oth:SEED")


def annual_errors(site_year: scenarios.SiteYear) -> dict:
    """Annual NEE error [g C m-2] and GPP / Reco errors [%] of `site_year` under defaults."""
    annual = fluxpart.process(site_year.frame, site_year.site).annual.loc[
        site_year.scenario.year]
    errors = {}
    for column, truth_name in FLUXES.items():
        truth = float(site_year.annual_truth[truth_name])
        error = float(annual[column]) - truth
        errors[column] = error if column == "nee" else 100.0 * error / abs(truth)
    return errors


def site_years(item: str, replaced: dict) -> tuple:
    """The site-year `item` as drawn and with the parameters `replaced`."""
    kind, _, seed = item.partition(":")
    if kind == "oth":
        known = bench_other_physics.physics_of(int(seed))
        unknown = sorted(set(replaced) - set(known))
        if unknown:
            raise SystemExit(f"error: --set {unknown[0]}: not a parameter of {item}")
        return (bench_other_physics.generate(int(seed)),
                bench_other_physics.generate(int(seed), replaced))
    scenario = drawn(item)
    unknown = sorted(set(replaced) - set(scenario.parameters))
    if unknown:
        raise SystemExit(f"error: --set {unknown[0]}: not a parameter of {item}")
    return scenarios.generate(scenario), scenarios.generate(scenarios.Scenario(
        seed=scenario.seed, archetype=scenario.archetype, year=scenario.year,
        interval_minutes=scenario.interval_minutes, site=scenario.site,
        parameters={**scenario.parameters, **replaced}))


def changes(settings: list[str]) -> dict:
    """``NAME=VALUE`` pairs as parameters (numbers where they parse)."""
    out = {}
    for setting in settings:
        name, _, value = setting.partition("=")
        try:
            out[name] = float(value)
        except ValueError:
            out[name] = value
    return out


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("items", help="comma-separated cal:SEED / gen:SEED / oth:SEED")
    parser.add_argument("--set", action="append", default=[], dest="settings",
                        metavar="NAME=VALUE", help="a planted parameter replaced")
    args = parser.parse_args(argv)
    replaced = changes(args.settings)
    for item in args.items.split(","):
        before, after = site_years(item, replaced)
        scenario = before.scenario
        before, after = annual_errors(before), annual_errors(after)
        print(f"{item:8s} {scenario.archetype:22s} " + "  ".join(
            f"{column} {before[column]:+6.1f} -> {after[column]:+6.1f}"
            + ("" if column == "nee" else " %") for column in FLUXES), flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
