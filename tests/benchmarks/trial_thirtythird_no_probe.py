"""Trial 33 with every site's soil probe removed from its file (round dampdelay).

Without soil temperature, ``respiration_driver = "auto"`` drives Reco with air temperature,
delayed where the night data favour a delay (:mod:`fluxpart.partition.temperature_choice`).
Trial 33 has one such site (B, a fen); this runs the trial's sites with
``has_tsoil = False``, each logger file written without its soil column while the truth is
unchanged (its respiration still follows the site's own soil or peat temperature), so the
delayed candidates are judged against a known driver in other climates and canopies. The
command line is trial 33's (``--runs``, ``--seed-offset``, ``--processing``, ...); e.g.
``--processing 'air_delay_damping = "conduction"'`` against none.

Usage: ``python tests/benchmarks/trial_thirtythird_no_probe.py --runs A,C,J,O``
"""

from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import trial_thirtythird as trial  # noqa: E402
from trial_scoring import trial_main  # noqa: E402


def main(argv=None):
    sites = {key: dataclasses.replace(site, has_tsoil=False) for key, site in trial.SITES.items()}
    return trial_main(argv, __doc__, "/tmp/fluxpart-trial33-noprobe", trial.VARIANTS, sites,
                      trial.simulate, trial.write_site, trial.score_rain_outage,
                      trial.print_rain_outage_row)


if __name__ == "__main__":
    sys.exit(main())
