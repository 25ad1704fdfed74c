"""How often the daytime records' word on the respiration temperature is right.

Where the night records choose one respiration temperature and the daytime method fits
the measured daytime NEE better with the other (:func:`fluxpart.partition.
temperature_choice.daytime_evidence`, beyond its 5 % level), a run warns (the note of
:func:`~fluxpart.partition.temperature_choice.conflict_note`). This benchmark counts, on
known-truth site-years, how often the note fires and how often the temperature the
daytime records favour would really have been better: the planted driver where one
temperature drives all of Reco (generated sets, trial 24), and, for every firing, a
second run with ``respiration_driver`` set to it, compared by the summed |error| of the
annual nighttime and daytime Reco against the truth.

Sets: ``fluxpart.scenarios`` seeds 0-39 (``--calibration``), ``bench_generalisation``
0-13, ``bench_other_physics`` 0-13, and the site files of ``trial_twentyfourth.py`` and
``trial_twentyfifth.py`` (draw 0; ``--trials``). About 3 s a site-year, twice where the
note fires; run at ``nice`` in the background::

    nice -n 5 .venv/bin/python tests/benchmarks/bench_driver_conflict.py --sets all

Prints one line per site-year where the note fires and a summary.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

#: The start of the note (:func:`fluxpart.partition.temperature_choice.conflict_note`)
NOTE = "respiration temperature: the night records favour"
#: The annual fluxes compared with the truth
FLUXES = ("reco_nighttime", "reco_daytime")


def _run(call):
    """(result or None, warning texts) of ``call()``."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            result = call()
        except Exception as error:  # noqa: BLE001 - a benchmark reports failures and goes on
            return None, [f"failed: {type(error).__name__}: {error}"[:160]]
    return result, [str(w.message) for w in caught]


def _favoured(note: str) -> str:
    """The temperature the note says the daytime records favour."""
    after = note.split("fits the measured daytime NEE better with ", 1)[1]
    return after.split(" ", 1)[0]


def _reco_error(result, truth_reco) -> float:
    """Summed |annual error| of nighttime and daytime Reco [g C m-2] over the budget
    years `truth_reco` (year -> true Reco [g C m-2]) holds."""
    annual = result.annual
    return float(sum(abs(float(annual.loc[year, flux]) - truth)
                     for year, truth in truth_reco.items() if year in annual.index
                     for flux in FLUXES))


def _case(label, planted, first, second, truth_reco) -> dict:
    """Run `first()`; where the note fires, `second(favoured)`; the row."""
    result, texts = _run(first)
    row = {"label": label, "planted": planted, "failed": result is None}
    notes = [t for t in texts if t.startswith(NOTE)]
    row["fires"] = bool(notes)
    if result is None or not notes:
        return row
    favoured = _favoured(notes[0])
    row["favoured"] = favoured
    row["chosen"] = result.provenance["respiration_driver"].get(
        "chosen", result.provenance["respiration_driver"].get("setting"))
    other, _ = _run(lambda: second(favoured))
    row["error_as_is"] = _reco_error(result, truth_reco(result))
    row["error_favoured"] = (np.nan if other is None
                             else _reco_error(other, truth_reco(result)))
    row["note"] = notes[0][:260]
    return row


def generated_cases(sets):
    """(label, planted, first, second, truth) of the generated site-years."""
    import dataclasses

    import bench_generalisation
    import bench_other_physics

    import fluxpart
    from fluxpart import scenarios

    makers = []
    if "calibration" in sets:
        makers += [(f"calibration {s}", lambda s=s: scenarios.generate(s)) for s in range(40)]
    if "generalisation" in sets:
        makers += [(f"generalisation {s}", lambda s=s: bench_generalisation.generate(s)[1])
                   for s in range(14)]
    if "other_physics" in sets:
        makers += [(f"other_physics {s}", lambda s=s: bench_other_physics.generate(s))
                   for s in range(14)]
    for label, make in makers:
        site_year = make()
        year = site_year.scenario.year
        truth = {year: float(site_year.annual_truth["reco"])}
        yield (f"{label} ({site_year.scenario.archetype})",
               site_year.scenario.parameters["driver"],
               lambda sy=site_year: fluxpart.process(sy.frame, sy.site),
               lambda favoured, sy=site_year: fluxpart.process(
                   sy.frame, sy.site, dataclasses.replace(fluxpart.Config(),
                                                          respiration_driver=favoured)),
               lambda result, truth=truth: truth)


def trial_cases(folder: Path):
    """(label, planted, first, second, truth) of the trials' site files (draw 0)."""
    import dataclasses

    import trial_twentyfifth
    import trial_twentyfourth

    import fluxpart

    for module, planted_of in ((trial_twentyfourth, lambda site: site.driver),
                               (trial_twentyfifth, lambda site: "mixed")):
        for site in module.SITES.values():
            data, truth = module.simulate(site)
            place = folder / f"{module.__name__}_{site.key}"
            place.mkdir(parents=True, exist_ok=True)
            toml = place / module.write_site(site, data, place)
            factor = site.step * 60 * 12.011e-6      # g C per µmol (m)

            def truth_reco(result, truth=truth, factor=factor):
                sums = {}
                for year, row in result.annual.iterrows():
                    inside = ((truth.index >= row["period_start"])
                              & (truth.index < row["period_end"]))
                    sums[year] = float(truth["reco"][inside].sum() * factor)
                return sums

            yield (f"{module.__name__[6:]} {site.key}", planted_of(site),
                   lambda toml=toml: fluxpart.process_site_config(toml),
                   lambda favoured, toml=toml: fluxpart.process_site_config(
                       toml, dataclasses.replace(fluxpart.Config.from_toml(toml),
                                                 respiration_driver=favoured)),
                   truth_reco)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sets", default="all",
                        help="comma list of calibration, generalisation, other_physics, "
                             "trials; or all")
    options = parser.parse_args(argv)
    sets = ({"calibration", "generalisation", "other_physics", "trials"}
            if options.sets == "all" else set(options.sets.split(",")))
    rows = []
    with tempfile.TemporaryDirectory() as folder:
        sources = [generated_cases(sets)] + ([trial_cases(Path(folder))] if "trials" in sets else [])
        for source in sources:
            for label, planted, first, second, truth in source:
                row = _case(label, planted, first, second, truth)
                rows.append(row)
                if row["fires"]:
                    print(f"{label}: planted {planted}, chosen {row['chosen']}, day favours "
                          f"{row['favoured']}; |Reco error| (night + day) as run "
                          f"{row['error_as_is']:.1f}, with {row['favoured']} "
                          f"{row['error_favoured']:.1f} g C m-2", flush=True)
                elif row["failed"]:
                    print(f"{label}: failed", flush=True)
    fired = [r for r in rows if r["fires"]]
    single = [r for r in fired if r["planted"] in ("tair", "tsoil")]
    right_planted = sum(r["favoured"] == r["planted"] for r in single)
    right_error = sum(r["error_favoured"] < r["error_as_is"] for r in fired)
    print(f"site runs {len(rows)} (failed {sum(r['failed'] for r in rows)}); the note fires "
          f"in {len(fired)}; the favoured temperature is the planted one in {right_planted} "
          f"of {len(single)} with one planted driver; the run with it has the smaller "
          f"|Reco error| in {right_error} of {len(fired)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
