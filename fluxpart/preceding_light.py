"""The preceding day's light as a regressor of the night NEE fills, where the nights show it.

Night respiration carries part of the day's assimilation: growth respiration and the
respiration of recent photosynthate, which reaches the roots and the soil within a day
(Högberg et al. 2001 (m); Tang, Baldocchi & Xu 2005 (m)). The u* filter removes calm
nights, and calm, clear nights follow sunny days, so the filtered nights follow sunnier
days than the turbulent nights at the same temperature that fill them: where night
respiration carries the day's assimilation the fills run low (DEVELOPERS.md, the
seventeenth trial). Where it does not, a regressor on the preceding day's light only
adds noise to the fills. So the site's own measured nights decide, year by year:

- :func:`preceding_day_rg`: the mean global radiation of the 24 h before each record;
- :func:`light_dependence`: per calendar year, a one-sided test of the measured nights'
  NEE on the preceding day's light beyond its seasonal course, at the same air and soil
  temperature;
- :func:`tested_regressor`: the preceding day's light where the year's test passed, NaN
  elsewhere (a regressor missing at a record has no leverage on the night fills of
  :func:`fluxpart.gapfill.fill_marginal`).

References
----------
Högberg, P., Nordgren, A., Buchmann, N., et al. (2001). Large-scale forest girdling shows
that current photosynthesis drives soil respiration. Nature 411, 789–792 (m).

Tang, J., Baldocchi, D. D., Xu, L. (2005). Tree photosynthesis modulates soil
respiration on a diurnal time scale. Global Change Biology 11, 1298–1304 (m).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from .gapfill import NIGHT_LIGHT_COLUMN

__all__ = ["BLOCK_DAYS", "COLUMN", "MIN_BLOCK_NIGHTS", "MIN_NIGHTS", "MIN_SHARE", "TEST_LEVEL",
           "evening_days", "gated_conditions", "light_dependence", "preceding_day_rg",
           "test_records", "tested_regressor"]

#: The regressor's column in the NEE fill's conditions (:func:`fluxpart.gapfill.fill_marginal`).
COLUMN = NIGHT_LIGHT_COLUMN

#: One-sided level of the year's test. 1 %: at the 150–350 measured nights of a year the
#: Schwarz (1978) criterion's penalty of ln(n) for the one slope more is a t of 2.2–2.4,
#: a one-sided p of about 0.01, the model choice this project makes elsewhere by BIC
#: (the respiration temperature); one-sided because growth respiration can only raise
#: night NEE after more light, while the causes of the other sign (soil drying in sunny
#: spells, cold-air drainage on clear nights) are not respiration of the day's uptake and
#: must not move the fills through this regressor. A false call costs the fills noise
#: (an always-on regressor worsened the generated benchmarks' RMS NEE error by 3–4 %);
#: a missed one leaves the fills as without the regressor.
TEST_LEVEL = 0.01

#: Length of the blocks of a year [days] within which the nights' NEE has its own level,
#: trend and temperature slopes: a month, short enough that a linear temperature response
#: and a linear seasonal drift (leaf-out, senescence) hold within it, long enough to hold
#: 10–25 measured nights after the u* filter.
BLOCK_DAYS = 30

#: Fewest measured nights of a block to enter the test (with its four coefficients fewer
#: nights leave almost no residual), and of a year to be tested.
MIN_BLOCK_NIGHTS = 8
MIN_NIGHTS = 60

#: Share of the preceding 24 h's records with Rg needed for their mean (a gap of up to
#: six hours in a day shifts the mean little; longer ones leave the record without it).
MIN_SHARE = 0.75

#: Half-width [days] of the centred running mean of daily light whose anomaly the test
#: regresses on: the weather of a day against its fortnight.
_ANOMALY_HALF_DAYS = 7


def preceding_day_rg(rg, records_per_day: int) -> np.ndarray:
    """The mean global radiation of the 24 h before each record [W m-2].

    Parameters
    ----------
    rg : array_like
        Global radiation of each record of a regular time axis [W m-2], NaN where
        unavailable.
    records_per_day : int
        Records per day (48 for 30-min records).

    Returns
    -------
    numpy.ndarray
        Per record, the mean of the `records_per_day` records before it (the record itself
        excluded) [W m-2]; NaN for the first day and where fewer than :data:`MIN_SHARE` of
        them have Rg.
    """
    rg = np.asarray(rg, dtype=float)
    present = ~np.isnan(rg)
    total = np.concatenate([[0.0], np.cumsum(np.where(present, rg, 0.0))])
    count = np.concatenate([[0], np.cumsum(present)])
    out = np.full(rg.size, np.nan)
    k = int(records_per_day)
    if rg.size <= k:
        return out
    window_total = total[k:-1] - total[:-k - 1]
    window_count = count[k:-1] - count[:-k - 1]
    enough = window_count >= MIN_SHARE * k
    out[k:] = np.where(enough, window_total / np.maximum(window_count, 1), np.nan)
    return out


def light_dependence(nee, is_night, light, temperatures, index) -> pd.DataFrame:
    """Per calendar year, the one-sided test of measured night NEE on the preceding day's light.

    Parameters
    ----------
    nee : array_like
        NEE after screening and the u* filter [µmol m-2 s-1], NaN where missing.
    is_night : array_like of bool
        The night mask.
    light : array_like
        The preceding day's mean Rg of each record (:func:`preceding_day_rg`) [W m-2].
    temperatures : list of array_like
        Air temperature and, where measured, soil temperature of each record [°C].
    index : pandas.DatetimeIndex
        Record starts (local standard time).

    Returns
    -------
    pandas.DataFrame
        Indexed by year (of the night's evening): ``nights`` tested, ``slope`` of the
        nights' mean NEE on the light's anomaly [µmol m-2 s-1 per 100 W m-2], ``t`` (its
        t statistic, serial correlation allowed for), ``p`` (one-sided) and ``passed``
        (p below :data:`TEST_LEVEL`). Years with fewer than :data:`MIN_NIGHTS` nights in
        blocks of enough nights are absent.

    Notes
    -----
    The measured night records are averaged night by night (the evening and the morning
    after it), since the records of a night share its weather and their errors are not
    independent. Each night's mean NEE is regressed, within blocks of
    :data:`BLOCK_DAYS` days of the year, on an intercept, the day of the year and the
    nights' mean air (and soil) temperature, each block with coefficients of its own,
    and on one slope for the year: the anomaly of the preceding day's light from its
    centred running mean over ±7 days. The anomaly is the day's weather against its
    fortnight, so a seasonal course of respiration that follows the season's light
    (leaf-out under the lengthening days) does not pass for a response to the day's
    light. The slope's standard error is widened for the serial correlation of the
    nights' residuals and the light's anomaly (a spell of sunny days): by
    ``(1 + r_e r_x) / (1 - r_e r_x)`` for lag-1 correlations ``r_e``, ``r_x`` whose
    product is positive (Bartlett 1935 (m); Bretherton et al. 1999 (m)). The p value is
    of Student's t with the residual degrees of freedom shrunk alike.

    References
    ----------
    Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics 6,
    461–464.

    Bretherton, C. S., Widmann, M., Dymnikov, V. P., Wallace, J. M., Bladé, I. (1999).
    The effective number of spatial degrees of freedom of a time-varying field. Journal
    of Climate 12, 1990–2009 (m).
    """
    return _dependence_table(_night_means(nee, is_night, light, temperatures,
                                          evening_days(index)))


def _dependence_table(nights) -> pd.DataFrame:
    """:func:`light_dependence`'s table of the nights of :func:`_night_means`."""
    return _table_of_tests(_year_tests(nights))


def _year_tests(nights) -> dict:
    """Per tested year of the nights of :func:`_night_means`, :func:`_year_test`'s
    (nights, slope, t, p), in the order of the years."""
    rows = {}
    for year in np.unique(nights["year"]):
        inside = nights["year"] == year
        tested = _year_test({name: values[inside] for name, values in nights.items()})
        if tested is not None:
            rows[int(year)] = tested
    return rows


def _passed_years(rows) -> np.ndarray:
    """The years of :func:`_year_tests`' `rows` whose p lies below :data:`TEST_LEVEL`
    (int64): the table's ``passed`` years, without the table."""
    return np.array([year for year, (_, _, _, p) in rows.items() if p < TEST_LEVEL],
                    dtype=np.int64)


def _table_of_tests(rows) -> pd.DataFrame:
    """:func:`light_dependence`'s table of :func:`_year_tests`' `rows`."""
    if not rows:    # no year tested: the empty frame, its dtypes, as ever
        table = pd.DataFrame.from_dict(rows, orient="index",
                                       columns=["nights", "slope", "t", "p"])
        table.index.name = "year"
        table["nights"] = table["nights"].astype(np.int64)
        table["passed"] = table["p"] < TEST_LEVEL
        return table
    # one table built from its columns (a fill tests its nights on every call)
    nights_tested, slope, t, p = (np.array(column) for column in zip(*rows.values(),
                                                                     strict=True))
    return pd.DataFrame({"nights": nights_tested.astype(np.int64), "slope": slope, "t": t,
                         "p": p, "passed": p < TEST_LEVEL},
                        index=pd.Index(np.array(list(rows), dtype=np.int64), name="year"))


def tested_regressor(light, index, tests) -> np.ndarray:
    """The preceding day's light in the years whose test passed, NaN elsewhere [W m-2].

    Parameters
    ----------
    light : array_like
        The preceding day's mean Rg of each record (:func:`preceding_day_rg`) [W m-2].
    index : pandas.DatetimeIndex
        Record starts (local standard time).
    tests : pandas.DataFrame
        :func:`light_dependence`'s table.

    Returns
    -------
    numpy.ndarray
        `light` in the passed years (of the night's evening, as tested), NaN elsewhere.
    """
    passed = tests.index[tests["passed"].to_numpy(dtype=bool)].to_numpy()
    return _passed_years_only(light, evening_days(index), passed)


def _passed_years_only(light, evening, passed) -> np.ndarray:
    """:func:`tested_regressor` of the records' evenings (:func:`evening_days`) and the
    years whose test passed (`passed`)."""
    first, day = evening
    # whether each evening day's year passed, then each record's: the years' look-up over
    # the days, not the records (the same selection; ~4 ms a call on ten site-years)
    days = np.arange(int(day.max()) + 1 if day.size else 0)
    return np.where(np.isin(_calendar_year(first + days), passed)[day],
                    np.asarray(light, dtype=float), np.nan)


_DAY_NS = 86_400 * 10**9
_HALF_DAY_NS = _DAY_NS // 2


def evening_days(index) -> tuple:
    """The evening of each record's night, as days from the first record's.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Record stamps on the local clock (a time zone, if any, is dropped first).

    Returns
    -------
    first : numpy.datetime64
        The first record's evening date (``datetime64[D]``); NaT where `index` is empty.
    day : numpy.ndarray of int64
        Each record's evening as days after `first`: the date of the record's night's
        evening on the stamps' local clock (records before noon: the day before).

    Notes
    -----
    NumPy day arithmetic: a fill tests its nights on every call, and pandas' date fields
    cost ~1 ms a site-year each time. A caller filling the same record many times (the
    artificial gaps' rounds) computes it once and passes it to :func:`gated_conditions`.
    """
    if getattr(index, "tz", None) is not None:
        index = index.tz_localize(None)         # the local clock, as pandas' normalize
    stamps = np.asarray(index.to_numpy(), dtype="datetime64[ns]")
    if not stamps.size:
        return np.datetime64("NaT", "D"), np.zeros(0, dtype=np.int64)
    # days since 1970 floored, so a record before noon falls on the day before: the days
    # of NumPy's datetime64[D] cast, in integers (a fifth of its cost, on every fill)
    evening = (stamps.view(np.int64) - _HALF_DAY_NS) // _DAY_NS
    return np.datetime64(int(evening[0]), "D"), evening - evening[0]


def _calendar_year(dates) -> np.ndarray:
    """The calendar year of each ``datetime64[D]`` date."""
    return dates.astype("datetime64[Y]").astype(np.int64) + 1970


def _day_of_year(dates) -> np.ndarray:
    """The day of the year (1 on 1 January) of each ``datetime64[D]`` date."""
    return (dates - dates.astype("datetime64[Y]").astype("datetime64[D]")).astype(np.int64) + 1


def _night_means(nee, is_night, light, temperatures, evening) -> dict:
    """Per night with a measured record, in order: ``year``, ``doy`` (of its evening),
    ``nee`` and ``t0``, ``t1``, ... (the means over its measured records with every
    driver) and ``anomaly`` (its light's anomaly from the fortnight's), as arrays;
    `evening`: the records' evenings (:func:`evening_days`)."""
    nee = np.asarray(nee, dtype=float)
    light = np.asarray(light, dtype=float)
    night = np.asarray(is_night, dtype=bool)
    drivers = [np.asarray(t, dtype=float) for t in temperatures]
    usable = night & ~np.isnan(nee) & ~np.isnan(light)
    for t in drivers:
        usable &= ~np.isnan(t)
    if not usable.any():
        return {name: np.empty(0) for name in ("year", "doy", "nee", "anomaly",
                                               *(f"t{j}" for j in range(len(drivers))))}
    first, day = evening
    # the light of a night: the mean of its night records' preceding 24 h, and the
    # fortnight's running mean of that daily series
    night_light = _daily_means(light, day, night & ~np.isnan(light))
    anomaly = night_light - _centred_mean(night_light, _ANOMALY_HALF_DAYS)
    # the usable records' days and counts once for NEE and every temperature
    usable_days = day[usable]
    count = np.bincount(usable_days, minlength=night_light.size)
    days = np.flatnonzero(count)
    days = days[~np.isnan(anomaly[days])]
    dates = first + days

    def means(values):
        return _daily_means(values, day, usable, usable_days, count)[days]

    return {"year": _calendar_year(dates), "doy": _day_of_year(dates),
            "nee": means(nee), "anomaly": anomaly[days],
            **{f"t{j}": means(t) for j, t in enumerate(drivers)}}


def _daily_means(values, day, usable, usable_days=None, count=None) -> np.ndarray:
    """Mean of `values` over the `usable` records of each day number (NaN without any);
    `usable_days` (``day[usable]``) and `count` (their records per day), where known."""
    n_days = int(day[-1]) + 1 if day.size else 0
    if usable_days is None:
        usable_days = day[usable]
        count = np.bincount(usable_days, minlength=n_days)
    total = np.bincount(usable_days, weights=values[usable], minlength=n_days)
    with np.errstate(invalid="ignore", divide="ignore"):
        return total / count


def _centred_mean(values, half_width) -> np.ndarray:
    """Centred running mean over ±`half_width` entries, NaN left out (NaN where all are)."""
    present = ~np.isnan(values)
    total = np.concatenate([[0.0], np.cumsum(np.where(present, values, 0.0))])
    count = np.concatenate([[0], np.cumsum(present)])
    positions = np.arange(values.size)
    high = np.minimum(positions + half_width + 1, values.size)
    low = np.maximum(positions - half_width, 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return (total[high] - total[low]) / (count[high] - count[low])


def _year_test(nights):
    """(nights, slope per 100 W m-2, t, one-sided p) of one year's nights, or None.

    The block columns are block-diagonal, so the slope is that of the nights' NEE on the
    anomaly after both are regressed on each block's own columns (Frisch–Waugh–Lovell).
    """
    block = np.minimum((nights["doy"] - 1) // BLOCK_DAYS, 365 // BLOCK_DAYS - 1)
    blocks, sizes = np.unique(block, return_counts=True)
    kept = np.isin(block, blocks[sizes >= MIN_BLOCK_NIGHTS])
    if kept.sum() < MIN_NIGHTS:
        return None
    temperatures = sorted(name for name in nights if name.startswith("t"))
    y = nights["nee"][kept]
    anomaly = nights["anomaly"][kept] / 100.0
    local = np.column_stack([np.ones(y.size), nights["doy"][kept].astype(float),
                             *(nights[name][kept] for name in temperatures)])
    block = block[kept]
    y_left, x_left, rank = np.empty_like(y), np.empty_like(y), 0
    for b in np.unique(block):
        inside = block == b
        columns = local[inside]
        columns[:, 1:] -= columns[:, 1:].mean(axis=0)
        both = np.column_stack([y[inside], anomaly[inside]])
        fitted, _, block_rank, _ = np.linalg.lstsq(columns, both, rcond=None)
        y_left[inside], x_left[inside] = (both - columns @ fitted).T
        rank += block_rank
    spread = float(x_left @ x_left)
    dof = y.size - rank - 1
    if dof < 10 or spread <= 0.0:
        return None
    slope = float(x_left @ y_left) / spread
    residual = y_left - slope * x_left
    serial = _lag_one(residual) * _lag_one(x_left)
    inflation = (1 + serial) / (1 - serial) if serial > 0 else 1.0
    variance = float(residual @ residual) / dof / spread * inflation
    t = slope / np.sqrt(variance)
    return int(y.size), slope, float(t), _student_upper(t, dof / inflation)


def _student_upper(t: float, dof: float) -> float:
    """One-sided upper p of Student's t with `dof` degrees of freedom: the normal tail of
    ``z = t (1 - 1/(4 dof)) / sqrt(1 + t² / (2 dof))`` (Abramowitz & Stegun 1964, 26.7.8
    (m)), close to the exact tail for the tens to hundreds of degrees of a year's nights."""
    dof = max(dof, 1.0)
    z = t * (1 - 1 / (4 * dof)) / math.sqrt(1 + t * t / (2 * dof))
    return 0.5 * math.erfc(z / math.sqrt(2))


def _lag_one(x) -> float:
    """Lag-1 autocorrelation of consecutive entries (nights, in order) of `x`."""
    x = x - x.mean()
    denominator = float(x @ x)
    return float(x[1:] @ x[:-1]) / denominator if denominator > 0 else 0.0


def gated_conditions(conditions, nee, is_night, index, with_table=True,
                     evening=None) -> tuple:
    """The NEE fill's conditions with the preceding day's light kept only where tested.

    Parameters
    ----------
    conditions : pandas.DataFrame
        The drivers the NEE fill compares (``tair`` [°C], optionally ``tsoil`` [°C]) and
        :data:`COLUMN`, the preceding day's mean Rg [W m-2] (:func:`preceding_day_rg`).
    nee : numpy.ndarray
        The fill's measured NEE (after screening and the u* filter) [µmol m-2 s-1].
    is_night : numpy.ndarray of bool
        The night mask.
    index : pandas.DatetimeIndex
        Record starts (local standard time).
    with_table : bool, optional
        Build the tests' table (default); False: None in its place (the same
        conditions, without the table's construction).
    evening : tuple, optional
        The records' evenings, :func:`evening_days` of `index`, where a caller that fills
        the same record many times (the artificial gaps' rounds) computed them once
        (default: computed here).

    Returns
    -------
    tuple
        The conditions: `conditions` as given where it has no :data:`COLUMN`; else with
        :data:`COLUMN` NaN outside the years whose test passed, and without the column
        where no year passed (the fill is then exactly that without the regressor). And
        the tests: :func:`light_dependence`'s table, or None without :data:`COLUMN` or
        with `with_table` False.
    """
    if COLUMN not in conditions.columns:
        return conditions, None
    temperatures = [conditions[name].to_numpy(dtype=float) for name in ("tair", "tsoil")
                    if name in conditions.columns]
    light = conditions[COLUMN].to_numpy(dtype=float)
    # the records' evenings once for the test and the regressor (or once for every fill
    # of a caller's rounds: they depend on the stamps alone, round speed59)
    evening = evening_days(index) if evening is None else evening
    rows = _year_tests(_night_means(nee, is_night, light, temperatures, evening))
    # the table only for a caller that reads it (a fill scored on artificial gaps does not,
    # on each of its rounds)
    tests = _table_of_tests(rows) if with_table else None
    passed = _passed_years(rows)
    # no year passed (most fills of a site without the effect): NaN everywhere, decided
    # without the years of the records' evenings
    regressor = _passed_years_only(light, evening, passed) if passed.size else None
    if regressor is None or np.isnan(regressor).all():
        # the other columns by position: a quarter of the cost of `drop` (its label
        # lookups), paid on every fill of the artificial gaps (round speed49)
        kept = [position for position, name in enumerate(conditions.columns) if name != COLUMN]
        return conditions.take(kept, axis=1), tests
    return conditions.assign(**{COLUMN: regressor}), tests


def test_records(tests) -> list:
    """:func:`light_dependence`'s table as plain records for the run's provenance.

    Parameters
    ----------
    tests : pandas.DataFrame or None
        The table, or None where the regressor was off.

    Returns
    -------
    list of dict
        Per tested year: ``year``, ``nights``, ``slope`` [µmol m-2 s-1 per 100 W m-2],
        ``t``, ``p`` (one-sided) and ``passed``; empty for None.
    """
    if tests is None:
        return []
    return [{"year": int(year), "nights": int(row.nights), "slope": round(float(row.slope), 4),
             "t": round(float(row.t), 3), "p": float(f"{row.p:.3g}"), "passed": bool(row.passed)}
            for year, row in tests.iterrows()]
