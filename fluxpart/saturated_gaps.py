"""Daytime NEE gaps in saturated air filled from drier air: a check of the fill's premise.

An open-path analyser loses its records in fog, drizzle and rain (a wet window), so the
daytime gaps of such a tower gather in saturated air, while most measured daytime records
are drier. The similar-driver fill (marginal distribution sampling, Reichstein et al. 2005)
takes a gap's NEE from records within ``vpd_tolerance`` of its VPD, so a saturated gap is
filled mostly from records of 1 to 5 hPa. Where the ecosystem exchanges CO2 otherwise in
saturated air (wet leaves photosynthesise less while a water film covers the stomata,
Letts and Mulligan 2005 (m); a soil that holds its CO2 while rain fills the pores), those
fills are biased, and the interval does not hold it: its artificial gaps sit on measured
records, mostly dry ones. On invented sites this cost −68 to −91 g C m-2 a year at a cloud
forest (trial_twelfth.py) and −16 g C m-2 of day fills at a foggy heath (trial_sixteenth.py).

:func:`saturated_gap_contrast` measures, per budget year, how the measured daytime records
in saturated air differ from those of the drier air the fill admits, at the same light and
air temperature in the same month, and how far that would move the year's NEE if the
saturated gaps' fills came from the drier records; :func:`saturated_gap_warnings` words the
years where the difference is significant and the bias it implies reaches the sigma of the
year's stated NEE interval. The check reads only what the fill reads (Rg, Tair, VPD, NEE);
nothing in a record tells wet leaves from dry ones, so the size it gives is an estimate
from the few measured saturated records (on the two invented sites it read 60-75 % of the
saturated fills' true error), not a correction.
"""

from __future__ import annotations

from statistics import NormalDist

import numpy as np
import pandas as pd

from . import units

__all__ = ["MIN_BIAS_SIGMAS", "MIN_SATURATED_GAPS", "MIN_STRATUM_RECORDS", "MIN_Z",
           "SATURATED_VPD", "run_warnings", "saturated_gap_contrast",
           "saturated_gap_warnings"]

#: VPD [hPa] below which a record's air counts as saturated (fog, drizzle, dew: leaves
#: wet). A humidity sensor's accuracy is about ±2 % RH (m), ±0.5 hPa of VPD at 20 °C and
#: ±0.8 hPa at 30 °C (saturation vapour pressure 23.4 and 42.4 hPa, Alduchov and
#: Eskridge 1996 (m)): below 1 hPa the air cannot be told from saturated.
SATURATED_VPD = 1.0

#: Fewest daytime NEE gaps in saturated air in a budget year for it to be checked (a day
#: of half hours; fewer move a budget by less than a g C m-2 at these contrasts).
MIN_SATURATED_GAPS = 48

#: Fewest measured records each side of a stratum (saturated; drier within the VPD
#: window) needs to enter the contrast: with fewer there is no variance to weigh it by.
MIN_STRATUM_RECORDS = 3

#: The contrast must stand this many standard errors from zero: a two-sided p of 0.0027
#: per budget year under independent errors (the normal distribution), the bar of the
#: morning-release check (:data:`fluxpart.storage_check.MIN_Z`). Records of one fog or
#: rain spell are serially correlated, which the standard error ignores; the false alarms
#: this leaves are measured on invented sites (DEVELOPERS.md, round outliers48).
MIN_Z = 3.0

#: ... and the bias it implies must reach this many standard deviations of the year's
#: stated NEE interval (its half-width / 1.96): a bias of one sigma lowers a normal 95 %
#: interval's coverage to 83 %, so the interval's claim no longer holds.
MIN_BIAS_SIGMAS = 1.0

_COLUMNS = ["day_gaps", "saturated_gaps", "gap_share", "measured_share", "strata_share",
            "contrast", "contrast_se", "z", "potential_bias"]


def _side_sums(columns: dict, keys: list, side: str) -> pd.DataFrame:
    """The per-stratum sums of :func:`saturated_gap_contrast` of one side under flat names:
    each column's own group kernel on the side's own grouping, as an aggregation by a dict
    of the columns takes them, without its table of labelled results."""
    grouped = pd.DataFrame(columns).groupby(keys)
    return pd.DataFrame({f"{side}_n": grouped["nee"].size(),
                         f"{side}_nee": grouped["nee"].sum(),
                         f"{side}_var": grouped["nee"].var(),
                         f"{side}_rg": grouped["rg"].sum(),
                         f"{side}_rg2": grouped["rg2"].sum(),
                         f"{side}_rg_nee": grouped["rg_nee"].sum()})


def saturated_gap_contrast(timeseries: pd.DataFrame, year_keys, interval_minutes,
                           rg_tolerance: float = 50.0, tair_tolerance: float = 2.5,
                           vpd_tolerance: float = 5.0) -> pd.DataFrame:
    """Per budget year, the measured daytime NEE of saturated air against that of the
    drier air the fill admits, at the same light and air temperature in the same month.

    Parameters
    ----------
    timeseries : pandas.DataFrame
        The run's records on a DatetimeIndex of interval starts: ``is_night`` (bool),
        ``nee_measured`` [µmol m-2 s-1] (NaN where a gap), ``rg_filled`` [W m-2],
        ``tair_filled`` [°C] and ``vpd_filled`` [hPa].
    year_keys : array_like of int
        Budget year of each record.
    interval_minutes : float
        Record length [min].
    rg_tolerance : float, optional
        The fill's Rg window [W m-2]; the light classes are twice as wide (the window's
        full width).
    tair_tolerance : float, optional
        The fill's air-temperature window [K]; the temperature classes are twice as wide.
    vpd_tolerance : float, optional
        The fill's VPD window [hPa]: the drier side of a stratum holds the records from
        :data:`SATURATED_VPD` up to it.

    Returns
    -------
    pandas.DataFrame
        Indexed by budget year (those with at least :data:`MIN_SATURATED_GAPS` daytime
        NEE gaps in saturated air): ``day_gaps`` and ``saturated_gaps`` (daytime records
        without measured NEE, all and with VPD below :data:`SATURATED_VPD`),
        ``gap_share`` and ``measured_share`` (the saturated share of the daytime gaps and
        of the measured daytime records), ``strata_share`` (of the saturated gaps, the
        share in strata with :data:`MIN_STRATUM_RECORDS` measured records each side),
        ``contrast`` [µmol m-2 s-1] (saturated minus drier measured NEE, averaged over the
        strata weighted by their saturated gaps), ``contrast_se``, ``z`` and
        ``potential_bias`` [g C m-2], ``-contrast`` summed over the saturated gaps: what
        the year's NEE would carry if their fills came wholly from the drier records.

    Notes
    -----
    A stratum is a calendar month, a light class ``floor(Rg / (2 rg_tolerance))`` and a
    temperature class ``floor(Tair / (2 tair_tolerance))``, the fill's windows (Reichstein
    et al. 2005) as classes. Its contrast is the difference of the two means adjusted to
    equal light by the drier records' NEE-Rg slope within the classes, pooled per month
    (the adjusted means of the analysis of covariance, Snedecor and Cochran 1989 (m)):
    ``(mean_wet - mean_dry) - slope (Rg_wet - Rg_dry)``. Its variance is the sum of the two
    means' variances (sample variances, ddof 1) plus ``(Rg_wet - Rg_dry)^2 var_dry /
    Sxx`` for the slope. The weighted mean over the strata and its standard error follow;
    records are treated as independent (see :data:`MIN_Z`).

    References
    ----------
    Reichstein, M., et al. (2005). On the separation of net ecosystem exchange into
    assimilation and ecosystem respiration: review and improved algorithm. Global Change
    Biology 11, 1424-1439. doi:10.1111/j.1365-2486.2005.001002.x (the fill's windows).

    Letts, M. G., and Mulligan, M. (2005). The impact of light quality and leaf wetness on
    photosynthesis in north-west Andean tropical montane cloud forest. Journal of
    Tropical Ecology 21, 549-557 (m).

    Snedecor, G. W., and Cochran, W. G. (1989). Statistical Methods, 8th ed. Iowa State
    University Press, chapter 18 (analysis of covariance) (m).
    """
    day = ~timeseries["is_night"].to_numpy(dtype=bool)
    nee = timeseries["nee_measured"].to_numpy(dtype=float)
    vpd = timeseries["vpd_filled"].to_numpy(dtype=float)
    rg = timeseries["rg_filled"].to_numpy(dtype=float)
    tair = timeseries["tair_filled"].to_numpy(dtype=float)
    measured = np.isfinite(nee)
    with np.errstate(invalid="ignore"):
        saturated = vpd < SATURATED_VPD
        drier = (vpd >= SATURATED_VPD) & (vpd < vpd_tolerance)
    keys = pd.DataFrame({"year": np.asarray(year_keys),
                         "month": pd.DatetimeIndex(timeseries.index).month,
                         "light": np.floor(rg / (2.0 * rg_tolerance)),
                         "warmth": np.floor(tair / (2.0 * tair_tolerance))})
    gaps = day & ~measured
    sat_gaps = gaps & saturated
    years = pd.Series(sat_gaps).groupby(keys["year"].to_numpy()).sum()
    years = years[years >= MIN_SATURATED_GAPS].index
    if len(years) == 0:
        return pd.DataFrame(columns=_COLUMNS, dtype=float)
    strata = ["year", "month", "light", "warmth"]
    columns = {"nee": nee, "rg": rg, "rg2": rg * rg, "rg_nee": rg * nee}

    def sums(mask, side):
        return _side_sums({k: v[mask] for k, v in columns.items()},
                          [keys[k].to_numpy()[mask] for k in strata], side)

    wet = sums(day & measured & saturated, "wet")
    dry = sums(day & measured & drier, "dry")
    weight = pd.Series(1.0, index=pd.MultiIndex.from_frame(keys[sat_gaps])).groupby(
        level=[0, 1, 2, 3]).size().rename("weight")
    joined = pd.concat([weight, wet, dry], axis=1, join="inner")
    joined = joined[(joined["wet_n"] >= MIN_STRATUM_RECORDS)
                    & (joined["dry_n"] >= MIN_STRATUM_RECORDS)]
    # the drier records' NEE-Rg slope within the light classes, pooled per month (ANCOVA)
    sxx = joined["dry_rg2"] - joined["dry_rg"] ** 2 / joined["dry_n"]
    sxy = joined["dry_rg_nee"] - joined["dry_rg"] * joined["dry_nee"] / joined["dry_n"]
    month_of = [joined.index.get_level_values(0), joined.index.get_level_values(1)]
    pooled_sxx = sxx.groupby(month_of).transform("sum")
    slope = (sxy.groupby(month_of).transform("sum") / pooled_sxx.where(pooled_sxx > 0)).fillna(0.0)
    light_offset = joined["wet_rg"] / joined["wet_n"] - joined["dry_rg"] / joined["dry_n"]
    difference = (joined["wet_nee"] / joined["wet_n"] - joined["dry_nee"] / joined["dry_n"]
                  - slope * light_offset)
    variance = (joined["wet_var"] / joined["wet_n"] + joined["dry_var"] / joined["dry_n"]
                + light_offset ** 2 * joined["dry_var"] / pooled_sxx.where(pooled_sxx > 0)
                ).fillna(joined["wet_var"] / joined["wet_n"] + joined["dry_var"] / joined["dry_n"])
    by_year = joined.index.get_level_values(0)
    weight_sum = joined["weight"].groupby(by_year).sum()
    contrast = (joined["weight"] * difference).groupby(by_year).sum() / weight_sum
    se = np.sqrt((joined["weight"] ** 2 * variance).groupby(by_year).sum()) / weight_sum
    year_of = keys["year"].to_numpy()
    rows = {}
    per_record = float(units.flux_to_carbon(1.0, interval_minutes))
    for year in years:
        in_year = year_of == year
        n_gaps, n_sat = int((gaps & in_year).sum()), int((sat_gaps & in_year).sum())
        measured_day = day & measured & in_year
        c = float(contrast.get(year, np.nan))
        s = float(se.get(year, np.nan))
        rows[year] = {
            "day_gaps": n_gaps, "saturated_gaps": n_sat, "gap_share": n_sat / n_gaps,
            "measured_share": float(saturated[measured_day].mean())
            if measured_day.any() else np.nan,
            "strata_share": float(weight_sum.get(year, 0.0)) / n_sat,
            "contrast": c, "contrast_se": s, "z": c / s if s > 0 else np.nan,
            "potential_bias": -c * n_sat * per_record}
    return pd.DataFrame.from_dict(rows, orient="index")[_COLUMNS]


def saturated_gap_warnings(table: pd.DataFrame, nee_sigma,
                           vpd_tolerance: float = 5.0) -> list[str]:
    """One warning per budget year whose saturated daytime gaps' fills are likely biased
    beyond what the year's NEE interval holds.

    Parameters
    ----------
    table : pandas.DataFrame
        :func:`saturated_gap_contrast`.
    nee_sigma : pandas.Series
        The standard deviation of each budget year's NEE [g C m-2] (the stated 95 %
        interval's half-width / 1.96), indexed by budget year.
    vpd_tolerance : float, optional
        The fill's VPD window [hPa], to name it.

    Returns
    -------
    list of str
        The years whose ``|z|`` reaches :data:`MIN_Z` and whose ``|potential_bias|``
        reaches :data:`MIN_BIAS_SIGMAS` times their NEE sigma: what was measured, which
        way the NEE budget may be moved, and the coverage the interval keeps under such a
        bias.

    Notes
    -----
    The coverage of a normal 95 % interval under a bias ``b`` (in sigmas) is
    ``Phi(1.96 - b) - Phi(-1.96 - b)``.

    References
    ----------
    Reichstein et al. (2005) and Letts and Mulligan (2005), as in
    :func:`saturated_gap_contrast`.
    """
    sigma = pd.Series(nee_sigma, dtype=float).reindex(table.index)
    in_sigmas = table["potential_bias"].abs() / sigma
    found = table[(table["z"].abs() >= MIN_Z) & (in_sigmas >= MIN_BIAS_SIGMAS)]
    normal, quantile = NormalDist(), NormalDist().inv_cdf(0.975)
    out = []
    for year, row in found.iterrows():
        shift = float(in_sigmas[year])
        coverage = normal.cdf(quantile - shift) - normal.cdf(-quantile - shift)
        less = "less" if row["contrast"] > 0 else "more"
        why = ("likely wet leaves, which photosynthesise less" if row["contrast"] > 0 else
               "the state of saturated air differs from that of drier air at this site")
        low = "low (too much uptake)" if row["potential_bias"] < 0 else "high (too little uptake)"
        out.append(
            f"{year}: {int(row['saturated_gaps'])} of the {int(row['day_gaps'])} daytime NEE "
            f"gaps ({100 * row['gap_share']:.0f} %) fall in saturated air (VPD below "
            f"{SATURATED_VPD:g} hPa: fog, drizzle, rain, dew), against "
            f"{100 * row['measured_share']:.0f} % of the measured daytime records, and the "
            f"measured records in saturated air take up {abs(row['contrast']):.2f} µmol m-2 "
            f"s-1 {less} CO2 than those of {SATURATED_VPD:g}-{vpd_tolerance:g} hPa at the same "
            f"light and air temperature in the same month (z {row['z']:+.1f}; {why}). "
            "The fill takes a gap's NEE from records within "
            f"vpd_tolerance = {vpd_tolerance:g} hPa, mostly drier ones, so the year's NEE may "
            f"run {low} by about {abs(row['potential_bias']):.0f} g C m-2, "
            f"{shift:.1f} times the sigma of its 95 % interval, which would then hold the "
            f"truth about {100 * coverage:.0f} % of the time (its artificial gaps sit on "
            "measured, mostly dry records). An analyser that loses its records in fog or rain "
            "causes it; nothing in the file tells wet leaves from dry ones, so read the size "
            "as an estimate from the few measured saturated records, not a correction, and "
            "state it beside the year's NEE and its interval, which do not include it")
    return out


def run_warnings(timeseries: pd.DataFrame, annual: pd.DataFrame, year_keys, interval_minutes,
                 config) -> list[str]:
    """:func:`saturated_gap_warnings` of a run at its fill windows and NEE intervals.

    Parameters
    ----------
    timeseries, year_keys, interval_minutes
        As :func:`saturated_gap_contrast`.
    annual : pandas.DataFrame
        The run's annual table, indexed by budget year: ``nee_ci95_low`` and
        ``nee_ci95_high`` [g C m-2].
    config : fluxpart.Config
        The run's settings (``rg_tolerance`` [W m-2], ``tair_tolerance`` [K],
        ``vpd_tolerance`` [hPa]).

    Returns
    -------
    list of str
        As :func:`saturated_gap_warnings`.

    References
    ----------
    Reichstein et al. (2005), as in :func:`saturated_gap_contrast`.
    """
    table = saturated_gap_contrast(timeseries, year_keys, interval_minutes,
                                   config.rg_tolerance, config.tair_tolerance,
                                   config.vpd_tolerance)
    if table.empty or "nee_ci95_low" not in annual:
        return []
    sigma = (annual["nee_ci95_high"] - annual["nee_ci95_low"]) / (
        2 * NormalDist().inv_cdf(0.975))
    return saturated_gap_warnings(table, sigma, config.vpd_tolerance)
