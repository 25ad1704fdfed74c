"""The manifest's and report's statement of how the intervals were checked (review33).

``uncertainty.CALIBRATION_CHECK`` goes into every result's manifest
(``provenance.uncertainty.checked``) and onto the report page, where an auditor reads it as
the coverage of the release that wrote the result. Until review33 it named fluxpart 0.16.0
and that release's figures (daytime Reco 87 % against 0.25.0's 93 %) nine releases on. The
figures measured for a release are those the README's cautions state (taken from the
benchmark runs recorded in DEVELOPERS.md, outside the code); these tests hold the two
together and make a release restate the statement.
"""

import re
from pathlib import Path

import fluxpart
from fluxpart import uncertainty

_README = Path(__file__).resolve().parents[1] / "README.md"
#: The three generated sets the statement and the README's cautions both give, by the
#: words that open each one's sentence in both.
_SETS = ("70 generated", "56 site-years", "42 site-years")


def _coverages(text: str, opening: str) -> list[int]:
    """The whole-percent coverages in `text` from `opening` to the next ';' (NEE, nighttime
    GPP and Reco, daytime GPP and Reco)."""
    text = " ".join(text.split())
    start = text.index("on " + opening)
    segment = text[start:text.index(";", start)]
    # "the stated 95 % intervals" is the level, not a coverage
    return [int(value) for value in re.findall(r"(\d+(?:\.\d+)?) %(?! interval)", segment)
            if "." not in value]


def _readme_cautions() -> str:
    text = _README.read_text(encoding="utf-8")
    return text[text.index("## Cautions"):]


def test_the_statement_names_the_release_that_writes_it():
    """The manifest records the statement beside the writing release's version
    (``versions``); a statement of another release is read as this one's."""
    assert uncertainty.CALIBRATION_CHECK.startswith(f"fluxpart {fluxpart.__version__} ")


def test_the_statement_gives_the_coverage_the_readme_cautions_give():
    """Each set's five coverages (NEE, nighttime GPP and Reco, daytime GPP and Reco) equal
    the README's cautions' (DEVELOPERS.md calibration benchmark, 0.24.0 = 0.25.0)."""
    readme = _readme_cautions()
    for opening in _SETS:
        stated = _coverages(uncertainty.CALIBRATION_CHECK, opening)
        assert len(stated) == 5, (opening, stated)
        assert stated == _coverages(readme, opening), opening


def test_the_statement_gives_the_months_and_the_independent_trials_as_the_readme():
    """The monthly NEE coverage (README: "97.6 % of months") and the independent trials'
    NEE coverage (README: "62 of 77 site-years (81 %") are the README's."""
    readme = " ".join(_readme_cautions().split())
    months = re.search(r"(\d+\.\d) % of days and (\d+\.\d) % of months", readme).group(2)
    assert f"{months} % of 420 generated months" in uncertainty.CALIBRATION_CHECK
    trials = re.search(r"NEE was covered in (\d+) of (\d+) site-years \((\d+) %", readme)
    assert f"on {trials.group(2)} site-years of six independent trials" in \
        uncertainty.CALIBRATION_CHECK
    assert f"NEE in {trials.group(3)} %" in uncertainty.CALIBRATION_CHECK
    # and the README's own arithmetic: 62 of 77 is 81 % to the whole percent
    assert round(100 * int(trials.group(1)) / int(trials.group(2))) == int(trials.group(3))


def test_the_statement_gives_the_later_trials_as_the_readme():
    """The trials after the eleventh (README's cautions: "A twelfth trial (12
    site-years) covered NEE in 7", ...) are in the statement with their summed NEE
    coverage and the lowest and highest trial (review43: the report's statement stopped
    at the eleventh, where an auditor read 83 % without the trial at 7 of 12)."""
    readme = " ".join(_readme_cautions().split())
    later = readme[readme.index("A twelfth trial"):]
    trials = [(int(years), int(covered)) for years, covered in
              re.findall(r"(\d+) site-years[^)]*\) covered NEE in (\d+)", later)]
    count = {11: "eleven", 12: "twelve", 13: "thirteen", 14: "fourteen", 15: "fifteen",
             16: "sixteen", 17: "seventeen", 18: "eighteen",
             19: "nineteen", 20: "twenty", 21: "twenty-one", 22: "twenty-two"}
    assert len(trials) in count, trials
    years, covered = sum(y for y, _ in trials), sum(c for _, c in trials)
    lowest = min(trials, key=lambda trial: trial[1] / trial[0])
    highest = max(trials, key=lambda trial: (trial[1] / trial[0], trial[0]))
    assert (f"on {years} site-years of {count[len(trials)]} later trials"
            in uncertainty.CALIBRATION_CHECK)
    assert f"NEE in {round(100 * covered / years)} % ({lowest[1]} of {lowest[0]} to " \
        f"{highest[1]} of {highest[0]} per trial)" in uncertainty.CALIBRATION_CHECK

def test_the_contributor_guide_labels_one_block_of_figures_current_naming_this_release():
    """DEVELOPERS.md's calibration section labelled two blocks "Current figures" (0.24.0's
    and 0.21.0's) and neither named 0.25.0, whose changelog says every figure is 0.24.0's
    (review33). One block is current, and its label names the running release."""
    text = (Path(__file__).resolve().parents[1] / "DEVELOPERS.md").read_text(encoding="utf-8")
    labels = [" ".join(text[i:i + 200].split()) for i in
              [m.start() for m in re.finditer(r"\*\*Current figures", text)]]
    assert len(labels) == 1, labels
    label = labels[0][:labels[0].index("**", 2) + 2]
    assert fluxpart.__version__ in label, label
