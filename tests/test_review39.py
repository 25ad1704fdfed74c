"""Fresh-eyes review of 0.27.0 as the three users (round review39).

Each test fails on the code before its fix (c3d171c). Known truths come from outside the
project: the sun's course from pvlib (NREL SPA, via tests/clock_sites.py), the molar
masses of CO2 and C (IUPAC conventional atomic weights, 12.011 and 15.999 (m)), Python's
own number formatting, and invented data with a planted answer.
"""

import dataclasses
import html
import re
import warnings

import pandas as pd
import pytest
from clock_sites import synthetic_rg

import fluxpart
from fluxpart.clock import check_clock

#: t CO2 ha-1 per g C m-2: 44.009 / 12.011 (IUPAC conventional atomic weights (m): C 12.011,
#: O 15.999) x 1e4 m2 ha-1 x 1e-6 t g-1
T_PER_G = (12.011 + 2 * 15.999) / 12.011 * 1e4 * 1e-6


@pytest.mark.parametrize("longitude, interval", [(7.5, 60), (7.2, 60), (3.75, 30)])
def test_a_stamp_error_near_the_flipped_longitude_names_the_stamps_not_only_the_sign(
        longitude, interval):
    """End stamps declared as starts put Rg one record late. The sun crosses the meridian
    4 min later per degree west (360° in 24 h), so at a longitude near 7.5° (60 min) or
    3.75° (30 min) a longitude of the wrong sign shifts noon by the same amount (8 min per
    degree). Before review39 the clock check then named only "[site] longitude = -7.5 (the
    configured 7.5 has the wrong sign)": a user who followed it got a run that passed the
    check with both the stamps and the longitude wrong. The stamp convention, which the
    data equally support, is now named first and the sign last."""
    rg = synthetic_rg(46.0, longitude, 1.0, interval_minutes=interval,
                      clock_shift_minutes=float(interval), seed=4)
    verdict = check_clock(rg.index, rg.to_numpy(), 46.0, longitude, 1.0, interval,
                          time_marks="start", shift_applied_minutes=0.0)
    assert verdict.status == "shifted"
    problem = verdict.problems[0]
    fix = problem.split("likely fix: ", 1)[1]
    assert '[input] time_marks = "end"' in fix
    assert f"[site] longitude = {-longitude:g}" in fix
    assert fix.index("time_marks") < fix.index("[site] longitude")


def test_a_longitude_of_the_wrong_sign_alone_is_still_named_alone():
    """A site at 10.2° E configured at 10.2° W: noon expected 81.6 min late (8 min per
    degree), no stamp convention or time zone gives 81.6 min, so the sign alone is named,
    as before."""
    rg = synthetic_rg(49.3, 10.2, 1.0, interval_minutes=30, seed=5)
    verdict = check_clock(rg.index, rg.to_numpy(), 49.3, -10.2, 1.0, 30,
                          time_marks="end", shift_applied_minutes=30.0)
    fix = verdict.problems[0].split("likely fix: ", 1)[1]
    assert fix.startswith("[site] longitude = 10.2 (the configured -10.2 has the wrong sign)")
    assert "time_marks" not in fix and "utc_offset =" not in fix


@pytest.fixture(scope="module")
def demo_result(demo_draws20_run):
    """The invented demo site-year processed once (a net sink; the session's run)."""
    return demo_draws20_run


def _as_source(result):
    """The same result with an invented net release: NEE +106.8 g C m-2, its 95 % interval
    86.4 to 127.2 and the tonnes the pipeline writes for it (-NEE x 44.009/12.011 x 0.01),
    a planted answer to read back."""
    annual = result.annual.copy()
    year = annual.index[0]
    annual.loc[year, ["nee", "nee_ci95_low", "nee_ci95_high"]] = [106.8, 86.4, 127.2]
    annual.loc[year, "net_uptake_t_co2_per_ha"] = -106.8 * T_PER_G
    # _computed=None: a planted answer written as if computed (Result.write refuses a table
    # exchanged by replace since round mistakes39)
    return dataclasses.replace(result, annual=annual, _computed=None)


def _spans(text):
    """data-summary spans of the report page: key -> (data-value, printed text)."""
    return {key: (float(value), html.unescape(printed).replace("\u2212", "-"))
            for key, value, printed in re.findall(
                r'data-summary="([^"]+)" data-year="[^"]+" data-decimals="\d+" '
                r'data-value="([^"]*)">([^<]*)<', text)}


def test_the_report_calls_a_net_source_a_release_not_a_negative_uptake(demo_result, tmp_path):
    """The summary of a year in which the ecosystem released carbon read "The ecosystem
    released net 107 g C m-2 ...: NEE 106.8 (95 % interval 86.4 to 127.2), a net uptake of
    -3.91 t CO2 ha-1 (95 % interval -4.66 to -3.17)": a credit-like number whose only
    sign of a source is a minus. Now "a net release of 3.91 t CO2 ha-1 (95 % interval
    3.17 to 4.66)", the tonnes of CO2 of the NEE sum and its interval's ends (44.009 /
    12.011 x 0.01 t ha-1 per g m-2, IUPAC weights (m)); a sink keeps "a net uptake"."""
    from fluxpart.report import build_report

    directory = tmp_path / "source"
    _as_source(demo_result).write(directory)
    text = build_report(directory, tmp_path / "page").read_text(encoding="utf-8")
    headline = re.search(r'<p class="headline">(.*?)</p>', text, re.S).group(1)
    plain = " ".join(html.unescape(re.sub(r"<[^>]+>", "", headline)).split())
    assert "a net release of 3.91 t CO2 ha-1 (95 % interval 3.17 to 4.66)" in plain
    assert "net uptake" not in plain
    spans = _spans(headline)
    assert spans["net_release_t_co2_per_ha"][0] == pytest.approx(106.8 * T_PER_G, rel=1e-12)
    assert spans["release_ci95_low"][0] == pytest.approx(86.4 * T_PER_G, rel=1e-12)
    assert spans["release_ci95_high"][0] == pytest.approx(127.2 * T_PER_G, rel=1e-12)
    # a sink is unchanged: its uptake, positive
    sink = tmp_path / "sink"
    demo_result.write(sink)
    page = build_report(sink, tmp_path / "sink-page").read_text(encoding="utf-8")
    headline = re.search(r'<p class="headline">(.*?)</p>', page, re.S).group(1)
    assert "a net uptake of" in headline and "net release" not in headline


def test_run_prints_the_95_interval_of_the_tonnes_beside_their_sigma():
    """`run` printed the net uptake in t CO2 ha-1 with 1 sigma only, while the g C table
    above it and the report give the stated 95 % interval: an auditor took ± 2 sigma or
    the sigma as the interval. Now the interval's ends are printed too, the NEE interval's
    ends in tonnes of CO2 (44.009 / 12.011 x 0.01, IUPAC weights (m); the high NEE end is
    the low uptake). Invented numbers."""
    from fluxpart.cli import _format_annual

    annual = pd.DataFrame({
        "nee": [106.8], "complete": [True], "records": [8760], "records_expected": [8760],
        "records_unfilled": [0], "net_uptake_t_co2_per_ha": [-106.8 * T_PER_G],
        "net_uptake_t_co2_per_ha_uncertainty": [10.4 * T_PER_G],
        "nee_ci95_low": [86.4], "nee_ci95_high": [127.2], "ustar_threshold": [0.315]},
        index=pd.Index([2013], name="year"))
    lines = _format_annual(annual).splitlines()
    low, high = -127.2 * T_PER_G, -86.4 * T_PER_G
    # a negative uptake is named a release in words (review49: "-6.04" read as uptake)
    assert (f"  2013: {-106.8 * T_PER_G:.2f} ± {10.4 * T_PER_G:.2f} (a net release; 1 sigma; "
            f"95 % interval "
            f"{low:.2f} to {high:.2f}; u* threshold 0.315 m s-1)") in lines
    assert f"{low:.2f} to {high:.2f}" == "-4.66 to -3.17"


def test_export_prints_the_caution_beside_the_tonnes_it_writes(demo_result, tmp_path, capsys):
    """`fluxpart export` writes the annual t CO2 ha-1 and the 95 % intervals (annual.csv,
    the NetCDF) but printed no caution, where run, demo, report, verify, diff and batch
    print it: the files carry it, the terminal did not."""
    from fluxpart.cli import main
    from fluxpart.manifest import CAUTION

    directory = tmp_path / "result"
    demo_result.write(directory)
    assert main(["export", str(directory), "--csv", str(tmp_path / "csv")]) == 0
    out = capsys.readouterr().out.splitlines()
    assert "net_uptake_t_co2_per_ha" in (tmp_path / "csv" / "annual.csv").read_text().split(
        "\n")[0]
    assert out[-1] == f"Caution: {CAUTION}"
    assert "crediting methodology" in out[-1] and "accredited verification" in out[-1]


def test_a_notebook_shows_the_measured_share_as_run_prints_it(demo_result):
    """Jupyter's view of a `Result` printed every column to one decimal, so a measured share
    of 0.553 read "0.6" (60 %) beside `run`'s 0.55. Now the share has two decimals, as
    Python's format spec gives it (f"{0.553:.2f}" = "0.55"); the sums keep 0.1 g C m-2."""
    share = demo_result.annual["share_measured"].iloc[0]
    cells = re.findall(r"<td>([^<]*)</td>", demo_result._repr_html_())
    assert f"{share:.2f}" in cells
    assert f"{demo_result.annual['nee'].iloc[0]:.1f}" in cells


def test_a_budget_year_heading_names_its_period_before_the_records_it_holds():
    """Under `year_start = "07-01"` a budget year is labelled by the calendar year it
    starts in (README), so the report's card of a record of January-June 2013 read "2012:
    01 Jan 2013 – 30 Jun 2013": a year label with dates of another year. The heading now
    names the budget year's own span first (1 July 2012 to 30 June 2013, the annual
    table's period_start and its exclusive period_end less one day: calendar arithmetic),
    then the records. Calendar-year budgets read as before. Invented stamps."""
    from fluxpart.report import _period_heading

    row = pd.Series({"period_start": pd.Timestamp("2012-07-01"),
                     "period_end": pd.Timestamp("2013-07-01")})
    heading = _period_heading(2012, pd.Timestamp("2013-01-01 00:00"),
                              pd.Timestamp("2013-06-30 23:00"), True, row)
    assert heading.startswith("Budget year 2012 (1 Jul 2012 – 30 Jun 2013): records "
                              "1 Jan 2013 – 30 Jun 2013, partial period")
    calendar = pd.Series({"period_start": pd.Timestamp("2013-01-01"),
                          "period_end": pd.Timestamp("2014-01-01")})
    assert _period_heading(2013, pd.Timestamp("2013-01-01"), pd.Timestamp("2013-12-31 23:00"),
                           False, calendar) == "2013: 1 Jan 2013 – 31 Dec 2013"


def test_a_latitude_of_the_wrong_sign_is_not_also_blamed_on_the_radiation_sensor():
    """A site at 45.8° N configured at 45.8° S: the clock check names the latitude's sign
    (the seasonal cycle of Rg fits the other hemisphere: the sun stands highest in June
    in the north, in December in the south, a fact of the trade). `check` also listed
    "input (rg zeros)" ("0 looks like the logger's code for a lost value") and "input
    (rg dim)" ("a sensor replaced or re-wired"), which judge Rg by the sun's height at
    the configured latitude: in 10 and 9 of 11 generated site-years with the sign
    flipped (seeds 0-11; one tropical site is not judged). Those findings now wait for
    the latitude, as the shading finding waits for a shifted clock. Known truth: the
    generated year is planted at its true latitude, and read there the Rg findings are
    absent too."""
    from fluxpart import scenarios
    from fluxpart.pipeline import check_record

    year = scenarios.generate(0)
    stages = ("input (rg zeros)", "input (rg dim)")
    wrong = dataclasses.replace(year.site, latitude=-year.site.latitude)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        verdict, findings = check_record(year.frame, wrong, fluxpart.Config())
        right_verdict, right = check_record(year.frame, year.site, fluxpart.Config())
    assert verdict.hemisphere == "mismatch" and verdict.status == "hemisphere"
    assert any("latitude likely has the wrong sign" in text for text in verdict.problems)
    assert not [f for f in findings if f.stage in stages]
    assert right_verdict.status == "consistent"
    assert not [f for f in right if f.stage in stages]


@pytest.mark.parametrize("written, stamps, hint", [
    ("%d/%m/%Y %H:%M", ["2013-01-13 01:00", "2013-01-13 02:00"], '"%Y-%m-%d %H:%M"'),
    ("%Y-%m-%d %H:%M", ["13.01.2013 01:00", "13.01.2013 02:00"], '"%d.%m.%Y %H:%M"'),
    ("%d.%m.%Y %H:%M", ["201301130100", "201301130200"], '"%Y%m%d%H%M"'),
    ("%Y-%m-%d %H:%M", ["01/13/2013 01:00", "01/13/2013 02:00"], '"%m/%d/%Y %H:%M"'),
])
def test_a_time_format_of_another_layout_names_the_one_every_stamp_reads_under(
        tmp_path, written, stamps, hint):
    """A time_format written for another file (a config written from the README for
    ISO stamps, or the other way round) was refused with "8760 stamp(s) fail to parse"
    and no hint. Where every stamp parses under exactly one common layout (Python's
    strptime, via datetime.strptime of the standard library as the check), the refusal
    now names it. Invented records."""
    from datetime import datetime

    from fluxpart.errors import TimestampError
    from fluxpart.io import read_table

    fmt = hint.strip('"')
    assert all(datetime.strptime(stamp, fmt) for stamp in stamps)    # the outside reading
    path = tmp_path / "tower.csv"
    path.write_text("stamp,co2_flux,sw_down,t_air,vpd_air,u_fric\n" + "".join(
        f"{stamp},1.0,0.0,5.0,2.0,0.3\n" for stamp in stamps), encoding="utf-8")
    columns = {"nee": "co2_flux", "rg": "sw_down", "tair": "t_air", "vpd": "vpd_air",
               "ustar": "u_fric"}
    with pytest.raises(TimestampError) as refused:
        read_table(path, columns=columns, time_column="stamp", time_format=written,
                   time_marks="end")
    assert f"every stamp reads as time_format = {hint}" in str(refused.value)


def test_stamps_that_read_day_first_and_month_first_get_no_guess(tmp_path):
    """Stamps whose days are all at most 12 read both day-first and month-first: no
    layout is named (a guess would put every record in another month)."""
    from fluxpart.errors import TimestampError
    from fluxpart.io import read_table

    path = tmp_path / "tower.csv"
    path.write_text("stamp,co2_flux,sw_down,t_air,vpd_air,u_fric\n"
                    "02/03/2013 01:00,1.0,0.0,5.0,2.0,0.3\n"
                    "02/03/2013 02:00,1.0,0.0,5.0,2.0,0.3\n", encoding="utf-8")
    columns = {"nee": "co2_flux", "rg": "sw_down", "tair": "t_air", "vpd": "vpd_air",
               "ustar": "u_fric"}
    with pytest.raises(TimestampError) as refused:
        read_table(path, columns=columns, time_column="stamp",
                   time_format="%Y-%m-%d %H:%M", time_marks="end")
    assert "every stamp reads as" not in str(refused.value)


def test_diff_does_not_difference_a_year_label_over_two_periods():
    """`diff` of a result with calendar years against one with `year_start = "07-01"`
    compared row "2013" of both: calendar 2013 and the budget year from 1 July 2013,
    printing "nee 106.8 -> -31.5, change -138.3, relative -1.3" as if the setting had
    moved one year's NEE. A year whose period_start or period_end differ is now listed
    with both values and no change, and a note says why; a year of one period is
    differenced as before (second - first, plain arithmetic). Invented sums."""
    from pathlib import Path

    from fluxpart.diff import DiffReport, _annual_moves

    def table(start, end, nee):
        return pd.DataFrame({"period_start": [pd.Timestamp(start)],
                             "period_end": [pd.Timestamp(end)], "nee": [nee]},
                            index=pd.Index([2013], name="year"))

    moves, _, _ = _annual_moves(table("2013-01-01", "2014-01-01", 106.8),
                             table("2013-07-01", "2014-07-01", -31.5))
    assert moves.at[(2013, "nee"), "first"] == 106.8
    assert moves.at[(2013, "nee"), "second"] == -31.5
    assert pd.isna(moves.at[(2013, "nee"), "change"])
    assert pd.isna(moves.at[(2013, "nee"), "relative"])
    text = DiffReport(Path("a"), Path("b"), (("setting", "year_start", "01-01", "07-01"),),
                      moves, 0).format()
    assert "note: year(s) 2013 cover other periods in the two folders" in text
    same, _, _ = _annual_moves(table("2013-01-01", "2014-01-01", 106.8),
                            table("2013-01-01", "2014-01-01", 110.9))
    assert same.at[(2013, "nee"), "change"] == pytest.approx(110.9 - 106.8)
    assert "cover other periods" not in DiffReport(Path("a"), Path("b"), (), same, 0).format()
    # a budget year only one folder holds (year_start "07-01" of a calendar year: 2012
    # and 2013) prints "-" for the other's absent values, dates and flags too: "None"
    # read as a value the run wrote (review54)
    second = pd.concat([table("2012-07-01", "2013-07-01", -40.0).set_axis(
        pd.Index([2012], name="year")), table("2013-07-01", "2014-07-01", -31.5)]).assign(
        complete=False)
    moves, _, _ = _annual_moves(table("2013-01-01", "2014-01-01", 106.8).assign(complete=True),
                             second)
    text = DiffReport(Path("a"), Path("b"), (), moves, 0).format()
    assert "None" not in text and "NaT" not in text
    first_row = next(line for line in text.splitlines() if line.startswith("2012 "))
    assert first_row.split()[1:3] == ["period_start", "-"]
    assert moves.at[(2012, "complete"), "first"] is None      # the table keeps None


def test_an_interval_over_zero_is_said_to_tell_no_sink_from_a_source():
    """A year with eight unmeasured months (an invented upland grassland, review54):
    NEE -379.3 g C m-2 with its stated 95 % interval -1154.3 to +395.6 was headed "The
    ecosystem took up net 379 g C m-2" and printed as "13.90 ± 14.49 (1 sigma; 95 %
    interval -14.50 to 42.29 ...)", with nothing saying that the interval holds both a
    sink and a source. Now the page and `run` say so; an interval on one side of zero
    gets no such clause. Invented numbers; tonnes as 44.009 / 12.011 x 0.01 (m)."""
    from fluxpart import report
    from fluxpart.cli import _format_annual
    from fluxpart.figures import Written

    def annual(low, high):
        return pd.DataFrame({
            "nee": [-379.3], "complete": [True], "records": [17520],
            "records_expected": [17520], "records_unfilled": [0],
            "net_uptake_t_co2_per_ha": [379.3 * T_PER_G],
            "net_uptake_t_co2_per_ha_uncertainty": [395.4 * T_PER_G],
            "nee_ci95_low": [low], "nee_ci95_high": [high], "ustar_threshold": [0.149]},
            index=pd.Index([2023], name="year"))

    index = pd.date_range("2023-01-01", "2023-12-31 23:30", freq="30min")
    clause = "The interval holds zero: this record does not tell a net uptake from a net release."
    for (low, high), said in (((-1154.3, 395.6), True), ((-386.1, -372.5), False)):
        written = Written(manifest={}, tables={
            "timeseries": pd.DataFrame({"nee_filled": -1.0}, index=index),
            "annual": annual(low, high)})
        summary, _ = report._summary_card(written)
        headline = re.search(r'<p class="headline">(.*?)</p>', summary, re.S).group(1)
        plain = " ".join(html.unescape(re.sub(r"<[^>]+>", "", headline)).split())
        assert (clause in plain) is said, plain
        line = next(line for line in _format_annual(annual(low, high)).splitlines()
                    if line.startswith("  2023: "))
        assert ("holding zero: uptake or release not told apart" in line) is said, line
        if said:
            assert (f"95 % interval {-high * T_PER_G:.2f} to {-low * T_PER_G:.2f}, holding "
                    "zero") in line


def test_the_headline_says_beside_the_tonnes_of_uptake_that_they_are_not_carbon_stored():
    """The summary card's headline gave "a net uptake of 8.42 t CO2 ha-1" and the note
    that NEE leaves out harvest, manure, methane and water lay only in the small print
    below the card (newuser54). The tonnes of an uptake now carry the clause in the
    headline itself; a release, which no one reads as a removal, does not. Fact of the
    trade: NEE is the vertical CO2 exchange only, so the net ecosystem carbon balance
    adds the lateral fluxes (Chapin et al. 2006, Ecosystems 9, 1041 (m)). Invented
    numbers; tonnes as 44.009 / 12.011 x 0.01 (m)."""
    from fluxpart import report
    from fluxpart.figures import Written

    index = pd.date_range("2023-01-01", "2023-12-31 23:30", freq="30min")
    clause = "These tonnes are CO2 taken from the air above the canopy: not by themselves"
    for nee, said in ((-229.8, True), (106.8, False)):
        annual = pd.DataFrame({
            "nee": [nee], "complete": [True], "records": [17520],
            "records_expected": [17520], "records_unfilled": [0],
            "net_uptake_t_co2_per_ha": [-nee * T_PER_G],
            "nee_ci95_low": [nee - 13.0], "nee_ci95_high": [nee + 13.0],
            "ustar_threshold": [0.17]}, index=pd.Index([2023], name="year"))
        written = Written(manifest={}, tables={
            "timeseries": pd.DataFrame({"nee_filled": nee / 1e3}, index=index),
            "annual": annual})
        summary, _ = report._summary_card(written)
        headline = re.search(r'<p class="headline">(.*?)</p>', summary, re.S).group(1)
        plain = " ".join(html.unescape(re.sub(r"<[^>]+>", "", headline)).split())
        assert (clause in plain) is said, plain
        assert ("a net uptake of 8.42 t CO2 ha-1" in plain) is said, plain
