"""Processing settings: :class:`Config`, a frozen dataclass of every method setting.

Each field defaults to the published setting of its method, or to a documented
choice of ours where the paper leaves it open. A site config's ``[processing]``
table overrides fields by name; unknown names are an error that suggests the
nearest valid one.
"""

from __future__ import annotations

import datetime
import difflib
import inspect
import json
import math
from dataclasses import asdict, dataclass, fields
from typing import NamedTuple

from ._validate import read_site_config_toml
from .errors import ConfigError

__all__ = ["ADDED_SETTINGS", "AddedSetting", "Config", "UnknownSettingError",
           "absent_added_settings", "implied_settings", "keyword_checked",
           "refuse_misplaced_processing", "setting_text", "suggest_key"]


@dataclass(frozen=True)
class Config:
    """Every setting of the fluxpart pipeline.

    Attributes
    ----------
    seed : int
        Seed of the random draws of the u* bootstrap and the Monte Carlo of the
        random error; part of the result's identity. The artificial gaps that score
        the gap filling are placed by a seed drawn from the measured NEE itself
        (:func:`fluxpart.uncertainty.artificial_gap_seed`, since 0.13.0), so the
        seed cannot choose the gap-filling part of the stated interval.
    night_rg_threshold : float
        Records with global radiation below this are night [W m-2]. 10 W m-2 is
        common practice (m) (Reichstein et al. 2005 use 10 W m-2 (m)); where Rg is
        missing, night is where potential radiation is zero.
    despike_z : float
        Despiking: a record is a spike where its double difference departs from the
        block median by more than ``z MAD / 0.6745``; 4, Papale et al. (2006) (m).
    despike_block_days : float
        Length of the despiking blocks [days]; 13, Papale et al. (2006).
    rg_margin, rg_relative_margin : float
        Rg is rejected where it exceeds potential radiation by more than
        ``max(rg_margin, rg_relative_margin x potential)`` [W m-2], [1]; 50 W m-2
        and 0.2, our choice (clouds' edges can raise Rg above clear-sky values, never
        far above the top of the atmosphere).
    ustar_method : str
        How the u* threshold is found: ``"moving_point"`` (default; Reichstein et al.
        2005, Papale et al. 2006), ``"change_point"`` (Barr et al. 2013) or
        ``"fixed"`` (use `ustar_threshold` for every year).
    ustar_threshold : float
        Fixed friction-velocity threshold [m s-1] for ``ustar_method = "fixed"`` and
        the flagged fall-back for years where no threshold can be detected in any year
        of the record (since 0.17.0 a year without one takes the nearest year's detected
        threshold first: the threshold belongs to the tower and its canopy,
        :func:`fluxpart.ustar.nearest_detected_year`; since 0.20.0, where no season of any
        year gives one, each year's night records pooled as one season first,
        :func:`fluxpart.ustar.detect_threshold`). 0.2 m s-1 is our choice, a value
        typical of the thresholds reported for forests and grasslands (m). A site config with
        ``ustar_method = "fixed"`` must give it (refused without, since 0.24.0): the
        default is the fall-back, not a site's value.
    ustar_temperature_classes : int
        Moving point test: night data of a season split into this many temperature
        classes of equal size; 6, Reichstein et al. (2005) (m).
    ustar_classes : int
        u* classes of equal size within each temperature class; 20, Reichstein et
        al. (2005) (m).
    ustar_plateau_share : float
        The threshold is the first u* class whose mean night NEE reaches this share
        of the mean of the classes it is compared with: those above it within the
        top share of the u* classes that ``ustar_plateau_reference`` gives (0.25 by
        default; all classes above it with 1, the published test); 0.99, Reichstein
        et al. (2005) (m).
    ustar_correlation_limit : float
        Temperature classes are used only where |r(u*, T)| is below this; 0.4,
        Papale et al. (2006) (m).
    ustar_min_resolution : float
        Moving point test: a temperature class counts only where its plateau flux
        (mean night NEE of its upper half of u* classes) spans at least this many
        standard errors of one u* class mean [1]; a season where none does is split
        into fewer temperature classes. 4, our rule: a class that lost half its flux
        then lies two standard errors below the plateau. Noisier classes read the
        threshold low (by a median of 34 % at under one standard error, 10 % at three
        to four, 3 % at four to six, on generated known-truth site-years). 0 turns the check off (the published test).
    ustar_annual : str
        Moving point test, the year's threshold: ``"median"`` (default) of all counted
        temperature classes of the year, the aggregate of Barr et al. (2013) (m), or
        ``"maximum"`` of the seasonal thresholds, Papale et al. (2006) (m). The maximum
        of four noisy seasonal values reads high where every season is well resolved
        (up to +21 % on generated site-years); the median assumes one threshold per
        year, which is what the pipeline applies.
    ustar_distinct_seasons : str
        What a year whose seasons' u* thresholds clearly differ is filtered with:
        two seasons' bootstrap medians apart by more than their bootstrap standard
        errors allow at 1 % over every pair of seasons of the record (Bonferroni;
        since 0.39.0, before: their 5–95 % ranges apart) and the higher season more
        than 20 % above the year's, or the higher more than 20 % above the lower,
        judged alike, and above the year's at all (:mod:`fluxpart.ustar_seasonal`,
        whose docstring gives the level's reason). ``"own_threshold"``
        (default since 0.11.0): each season at the larger of its own threshold and
        the year's, the run with the year's threshold on every night joining the u*
        part of the uncertainty. ``"uncertainty_only"`` (0.8.1–0.10.0): the year's
        threshold on every night, the seasonal run joining the u* part. Why: nights
        of a season whose canopy needs more turbulence (a deciduous forest in leaf)
        that lie between the two thresholds lost flux, and kept as measured they
        also serve as donors of the night gaps. Thresholds per season follow Papale
        et al. (2006) and Barr et al. (2013) (m); the floor at the year's threshold
        is our choice (a threshold read too high costs data, one read too low biases
        the budget). Figures: DEVELOPERS.md, 0.11.0; no generated site-year with one
        planted threshold qualifies, so nothing changes there.
    ustar_plateau_reference : float
        Moving point test: a u* class is compared with the mean night NEE of the
        classes above it within the top share of the u* classes given here [1], in
        (0, 1]. 0.25, our rule: compared with all classes above (1, the published
        test), a class far below a threshold that lies high in the night u*
        distribution meets a plateau diluted by classes that still lose flux, and
        the threshold read low (median −18 % on demo years with 70–80 % of night
        records below it; −11 % with 0.25). See :func:`fluxpart.ustar.moving_point_threshold`.
    ustar_min_threshold : float or None
        Floor of a detected threshold [m s-1]. ``None`` (default): by the site's
        canopy (``[site] canopy``), 0.1 m s-1 for a tall canopy and 0.01 m s-1 for a
        short one, the floors used with the moving point test (Papale et al. 2006
        (m)): short crops and grass hold little CO2 below the sensor and often have
        thresholds under 0.1 m s-1, which a 0.1 floor would hide.
    ustar_bootstrap_draws : int
        Bootstrap resamples of the night data for the threshold's distribution; 100,
        Papale et al. (2006) (m). 0 skips the bootstrap and the scenarios.
    ustar_scenarios : tuple of int
        Bootstrap percentiles of the threshold with which gap filling and both
        partitionings are rerun, giving the threshold's share of the uncertainty;
        (16, 50, 84): half their spread is a 1-sigma-equivalent range (the 15.9 and
        84.1 percentiles of a normal distribution), so it can be combined with other
        1-sigma parts. Each must be one of 5, 16, 50, 84, 95, in increasing order;
        empty for none.
    night_donor_margin : str
        Which kept night records may fill a night gap. ``"threshold_spread"``
        (default; not in 0.33.0): not those whose u* lies between a run's threshold t
        and t + σ, σ the threshold's 1-sigma from its bootstrap percentiles
        (``ustar_scenarios``: half the 16–84 range; Papale et al. 2006). Such a record
        lies within one standard deviation of the threshold's own estimate, so it may
        still carry part of the flux loss the u* filter removes, and a donor copies its
        value into every gap it fills. It stays measured, in every sum and table as
        measured (fill method 0); the same rule holds in every u* run and in the fills
        that score the gap-filling error on artificial gaps, so that the stated error
        describes the fill used (:mod:`fluxpart.night_donors`). Without a bootstrap (a
        fixed threshold, ``ustar_bootstrap_draws = 0``, fewer than two scenarios) no
        record is withheld. ``"none"``: every kept record is a donor, as up to 0.33.0.
        Measured against ``"none"`` (DEVELOPERS.md, 0.34.0
        changelog): NEE median |error| 3.67 / 5.17 / 5.23 → 3.79 / 4.88 / 4.95
        g C m-2 and worst 14.2 / 33.3 / 40.2 → 13.2 / 32.8 / 39.7 on the calibration,
        generalisation and other-physics sets (RMS smaller on all three), NEE coverage
        97.1 / 92.9 / 97.6 → 98.6 / 92.9 / 95.2 % (161 of 168 either way); on known-truth
        trials 6–19 NEE covered 129 → 134 of 163 site-years, the partitioned fluxes as before.
        The night fills' low bias from the loss is reduced, not removed.
    ustar_kept_trend : str
        ``"off"`` (default): the detected u* threshold is used as found. ``"raise"`` (an
        option since 0.35.0): each year's kept night records are tested for the
        u* filter's premise (in darkness: twilight uptake left out), that night NEE no
        longer rises with u* above the threshold once temperature is held (Goulden et
        al. 1996; Papale et al. 2006), by a
        one-sided stratified Kendall test over u* class means within temperature classes
        (Hirsch et al. 1982; 5 %); where it rejects, the year's thresholds (central,
        seasons, bootstrap percentiles) are raised past the lowest u* class until it no
        longer rejects or half the kept night records would be filtered
        (:mod:`fluxpart.ustar_trend`). ``threshold_detected`` keeps the detector's value,
        the year's ``reason`` says what the test found (the raise and its p-value, not raised
        with its p-value, or too few night records to test). Measured, not the default
        (DEVELOPERS.md, 0.35.0 changelog).
    storage_release : str
        What to do where the morning release of CO2 stored on calm nights is seen in
        the measured NEE (:func:`fluxpart.storage_check.morning_release`: the
        mornings after calm nights exceed those after turbulent nights by at least 3
        standard errors and 10 g C m-2 a year). ``"exclude"`` (default, new in
        0.15.0): in such a budget year the day records of the 3 h after each calm
        night are excluded like the calm night itself (rejection reason
        ``morning_release``), gap-filled, and the u* runs are done again; where the
        mornings after nights with any record below the threshold then still exceed
        those after nights with none, by the same rule, they are excluded too. The u*
        filter replaces a calm night by modelled respiration; where the flux lacks
        the storage term (Finnigan 2006, Agric. For. Meteorol. 136:108–113) the CO2
        held below the sensor that night leaves in the morning and counts a second
        time (mass conservation, a physical argument). On the second independent
        trial's four tall sites without storage (invented data, DEVELOPERS.md) the
        annual NEE error fell from +49 / +54 / +88 / +197 to +10 / +19 / +15 / +54
        g C m-2. ``"warn"``: only the warning, the result of 0.14.0.
    gapfill_donors : str
        Which measured records may fill an NEE gap. ``"separate_day_night"``
        (default): night gaps only from night records and day gaps only from day
        records (Falge et al. 2001, Agric. For. Meteorol. 107:43–69, fill day and
        night separately), except that a day gap's mean diurnal course (same time of
        day ±1 h) takes records of both classes, with its time-of-day offsets
        weighed alike (since 0.14.0: the symmetric window, cut to its day records,
        kept only the brighter half at sunrise and sunset and filled outages with
        too much uptake; outage benchmark mean NEE error −5.0 → −3.3 g C m-2);
        ``"similar_conditions_only"``: any record within the
        similarity tolerances, the single rule of Reichstein et al. (2005), under
        which twilight records with photosynthesis fill night gaps and bias annual
        NEE low (median −17.0 g C m-2 on demo seeds 0–5, `bench_gapfill.py --accuracy`).
        ``"dark_first"`` (new in 0.27.0): as ``"separate_day_night"``, and a night gap
        with the sun below the horizon is filled from night records with the sun below
        the horizon wherever a pass of quality A or B finds enough of them, since the
        night class (Rg below ``night_rg_threshold``) holds twilight records whose
        canopy takes up CO2 in the little light there is (a physical argument; Falge
        et al. 2001 separate day and night donors for the same reason). On nine
        independent trials (107 invented site-years) it moved annual NEE by a median
        of +1.0 g C m-2 (up to +7.3 where twilight records were 6–10 % of the night
        donors), the mean error −5.9 → −4.9; on the three generated benchmarks by
        +0.2 to +0.5, where the mean error was already positive (DEVELOPERS.md,
        0.27.0 changelog): not the default.
    gapfill_rg_window : str
        The radiation window of the NEE gap-filling similarity steps.
        ``"centred"`` (default, new in 0.8.0): with separate day and night donors,
        a day gap's Rg tolerance shrinks to ``min(rg_tolerance, max(Rg -
        night_rg_threshold, night_rg_threshold))``, which keeps its window centred
        on its own Rg: day records have Rg of at least the night threshold, so
        the fixed ±50 W m-2 window of a dawn or dusk gap reaches only upwards and
        takes donors at about twice its light, on the steepest part of the light
        response (a physical argument; measured on 12 generated site-years: day
        gaps at Rg 10–100 W m-2 filled 1.5 g C m-2 a year too negative). ``"fixed"``:
        ±`rg_tolerance` everywhere, the window of Reichstein et al. (2005).
    gapfill_estimate : str
        The fill of an NEE gap in the similarity steps. ``"local_linear"`` (default,
        new in 0.21.0): the donors' mean moved by the flux's slope on the step's
        condition drivers (Rg, Tair and VPD; Rg in the radiation step, plus Tair and
        VPD as regressors within its ±7-day windows; with the clearness index where
        `gapfill_clearness_tolerance` is on), fitted on the same window's records
        within 3 tolerances of the gap, times the donors' mean offset from the gap,
        shrunk by its reliability (:func:`fluxpart.gapfill.local_linear_correction`).
        A mean of donors is biased where a gap sits at the edge of their conditions
        (gaps on the hottest afternoons, a heat wave, the warm end of a spring
        fortnight); a local-linear estimate removes that first-order bias (Fan &
        Gijbels 1996 (m)). Measured on the 168 generated site-years of the three
        benchmarks: RMS annual NEE error 5.95 → 5.94, 8.62 → 8.46 and 9.52 → 9.10 g C
        m-2, mean signed error −0.41 → −0.27, −0.55 → −0.23, −1.06 → −0.73; the
        ninth trial's site with an analyser failing on hot afternoons −35.1 / −21.8 →
        −15.9 / −4.3 g C m-2 a year. Since 0.22.0 the night fills are also moved by
        the flux's slope on soil temperature where the record has it (not a donor
        condition): calm, clear nights, which the u* filter removes, cool the air and
        not the soil, so their donors of the same air temperature respire less (six
        independent trials, 77 site-years: NEE covered 60 → 63, within 15 g C m-2
        54 → 58; :func:`fluxpart.gapfill.fill_marginal`, Notes). ``"donor_mean"``: the
        donors' mean, as Reichstein et al. (2005).
    gapfill_night_light : str
        ``"tested"`` (new in 0.29.0): the night NEE fills of the
        local-linear estimate are also moved by the flux's slope on the preceding 24 h
        mean Rg, in the calendar years whose own measured, u*-filtered nights show
        night NEE rising with the preceding day's light at the same air and soil
        temperature (a one-sided test at 1 %, :mod:`fluxpart.preceding_light`). The
        u* filter removes calm nights, which follow sunny days, and where night
        respiration carries the day's assimilation (growth respiration, recent
        photosynthate; Högberg et al. 2001 (m)) their fills from turbulent nights
        run low. The test, not a threshold of ours, decides where: an always-on
        regressor worsened the generated benchmarks, whose nights lack the coupling
        (DEVELOPERS.md, 0.27.0 changelog: the seventeenth trial). Measured
        (DEVELOPERS.md, 0.29.0 changelog): the generated benchmarks' 52 site-years
        unchanged (RMS NEE error 4.98, 7.64 → 7.63, 6.38 g C m-2; the test passed in one
        of their 52 central fills, a false call that moved NEE by 0.19), independent
        trials' summed |NEE error| 783 → 753 g C m-2 over 63 site-years, NEE covered in
        50 → 53 (trials 6, 16 and 17, two draws of the last two; the seventeenth's rain
        forest −17.4 / −33.8 → −9.7 / −27.0). Which years
        passed is in the result's ``provenance["night_fill_light"]``. On all 168
        site-years of the three generated benchmarks (release 0.29.0): 16 changed (their
        annual NEE in 5, only intervals in 11); RMS NEE error 5.82 / 8.48 / 9.26 → 5.84 / 8.50 / 9.33 g C m-2,
        no coverage changed. ``"off"``: no
        such regressor. Only the local-linear estimate with separate night donors moves
        a night fill by a regressor: with ``gapfill_estimate = "donor_mean"`` or
        ``gapfill_donors = "similar_conditions_only"`` nothing is tested and
        ``night_fill_light`` is empty (since 0.29.0).
    gapfill_min_donors : int
        Fewest records a gap-filling pass must average to fill an NEE gap; 3, our
        choice: one record's random error or an undetected spike must not set a
        fill alone, and the fill's spread needs more than one record.
    gapfill_interpolation_hours : float
        Driver gaps (Tair, VPD, Tsoil) up to this long [hours] are filled by linear
        interpolation (quality ``"interpolated"``); 0 turns it off. 3 h, our choice:
        these drivers change smoothly over hours (issue 11: 0.8–0.9 K RMSE against
        3.1–3.5 K for radiation-similarity fills).
    gapfill_clearness_tolerance : float
        NEE gap filling: where above 0, the all-driver and radiation steps also
        require a similar clearness index, Rg over top-of-atmosphere radiation,
        within ± this [1] (new in 0.14.0, an option). 0 (default): off, the
        published conditions of Reichstein et al. (2005). At the same Rg an overcast
        hour (diffuse light, used more efficiently by canopies; Gu et al. 2002 (m))
        takes up more CO2 than a clear hour with a low sun, and where gaps fall in
        overcast hours (rain on an open-path analyser) their fills take up too
        little; 0.15, about a quarter of the index's range between overcast and clear
        sky (Erbs et al. 1982 (m)), removed a third of that bias on two independent
        trials that plant it, but made the fills noisier on our generated site-years,
        which plant no diffuse-light effect (figures in DEVELOPERS.md, 0.14.0), so
        it is not the default. See :func:`fluxpart.gapfill.clearness_index`.
    gapfill_max_window_days : float
        Largest half-width of any gap-filling window [days]; 140, Reichstein,
        gap-filling flow chart, workshop slides 2004 (the driver steps widen to
        ±140 days). A gap no window up to this fills takes the last resort of
        :mod:`fluxpart.gapfill` (the diurnal course widened to the whole record; for a
        night gap, then the night records of any hour; since 0.19.0), so that a few
        unfillable records no longer make a year's NEE NaN.
    rg_tolerance : float
        Marginal distribution sampling: similar global radiation within ± this
        [W m-2]; Reichstein et al. (2005), appendix: 50 W m-2.
    tair_tolerance : float
        Similar air temperature within ± this [°C]; Reichstein et al. (2005): 2.5 °C.
    vpd_tolerance : float
        Similar vapour pressure deficit within ± this [hPa]; Reichstein et al. (2005): 5 hPa.
    respiration_driver : str
        Temperature that drives Lloyd–Taylor respiration: ``"tair"``, ``"tsoil"``
        or ``"auto"`` (the one whose nighttime Lloyd–Taylor fit explains the
        measured, u*-filtered night NEE better: soil temperature where its BIC is
        lower by more than 2, "positive evidence" after Kass & Raftery 1995, air
        temperature otherwise and where there is no ``tsoil`` column; see
        :mod:`fluxpart.partition.temperature_choice`). Without a ``tsoil`` column
        (since 0.11.0), air temperature delayed by 1–6 h where its BIC, with one
        parameter more, is lower by more than 6 (strong evidence): soil respiration
        lags the air by hours (diel hysteresis, Phillips et al. 2011 (m)). The
        choice and the criterion values are in ``provenance["respiration_driver"]``.
        Default ``"auto"``: Lloyd & Taylor (1994) fitted soil respiration to soil
        temperature, while some ecosystems' respiration follows air temperature,
        and at night NEE is Reco, so the night data decide (on 8 generated
        site-years it picked the planted temperature every time). Whatever the
        choice, a ``tsoil`` column also moves the night NEE gap fills (a regressor of
        the local-linear fill since 0.22.0, `gapfill_estimate`): ``"tair"`` does not
        leave the soil column unused.
    air_delay_damping : str
        How a delayed air temperature standing in for a missing soil temperature
        (``respiration_driver = "auto"`` without ``tsoil``) is built: ``"off"``
        (default), the air temperature delayed as measured; ``"conduction"``, its
        daily course (the anomaly from its centred 24-h mean) damped by
        exp(−2π lag / 24 h) before the delay, as heat conduction damps a daily wave
        it delays by that lag (the damped-wave solution of the heat equation: lag
        z/D rad, amplitude exp(−z/D); Campbell & Norman 1998, ch. 8): a 6-h lag
        keeps 0.21 of the daily range. The candidates are fitted and judged by the
        same BIC on the damped series, which every run, the u* scenarios and the
        uncertainty then use; ``provenance["respiration_driver"]`` records
        ``delay_damping`` and ``delay_daily_amplitude``. Inputs with soil temperature
        are unaffected. Off by default, measured (round dampdelay) on the 28 budget years
        without a soil column of ``tests/benchmarks/trial_thirtythird.py`` (its fen) and
        ``trial_thirtythird_no_probe.py`` (six sites, each probe removed), draws 0 and 1:
        the errors fall (median |error| of daytime Reco 7.8 → 5.4 %, of nighttime Reco
        3.2 → 2.7 %; worst daytime GPP 9.8 → 5.8 %), but the 95 % intervals of the four
        partitioned sums cover the truth in 72 of 112 against 92: with the delayed series
        damped the daytime records stop contradicting it, the temperature-driver part of
        the interval falls to 0, and the remaining error of a stand-in for the soil is in
        no part of the interval.
    respiration_form : str
        Form of the nighttime method's central Reco: ``"average"`` (default, since
        0.10.0) weights the Lloyd–Taylor fit and a refit with a constant Q10 by the
        probability the measured night NEE gives each (their BIC weight; Bayesian
        model averaging, Hoeting et al. 1999 (m); Burnham & Anderson 2002), so a
        respiration that keeps one Q10 over a wide range of temperature is not
        extrapolated low into the warm season; ``"lloyd_taylor"``: the published
        form alone. Either way the spread of the two forms is a stated part of the
        uncertainty; the weight is in ``provenance["respiration_form"]``. See
        :func:`fluxpart.partition.respiration_form.average_forms`.
    driver_day_prior : str
        Weight of the other respiration temperature in the part of the uncertainty
        that comes from DAYTIME records (where air and soil temperature part most).
        The two nighttime fits are fitted to the same nights and agree there, so the
        night data say little about how a respiration split between soil and canopy
        carries into the day (:func:`fluxpart.uncertainty.driver_day_weight`). Each
        choice changes the stated uncertainty only, never a central value.
        ``"mixture"`` (the default since 0.38.0): at least 1/2 where the night
        records show a mixture of the two temperatures (the other temperature's
        mixture share, :func:`fluxpart.driver_mixture.mixture_share`, with a 95 %
        interval from nights resampled with replacement that excludes 0,
        :func:`fluxpart.driver_mixture.mixture_shown`), the night data's weight
        elsewhere (:func:`fluxpart.uncertainty.mixture_day_weight`): the nights cannot
        tell how a canopy part on air temperature carries into the day, and the
        daytime records' own evidence, which compares two single-temperature models,
        pointed to the soil temperature in use in 4 of 8 trial site-years with 28–47 %
        of Reco on air temperature. Measured (DEVELOPERS.md, 0.38.0 changelog): trial 31
        nighttime GPP / Reco covered 7 / 8 → 8 / 9 of 11 (draw 0) and 5 / 5 → 11 / 11
        (draw 1), daytime 6 / 3 → 7 / 7 and 3 / 3 → 8 / 6; trial 29 (draw 0) daytime
        9 / 8 → 10 / 9 of 10; on 168 generated site-years with one temperature it
        widened 3 intervals (one ×5.8), coverage unchanged, mean widths +1.2 to
        +6.6 %. ``"night"``: the night data's weight, as for the night records (the
        default from 0.33.0, which added the setting, to 0.37.0; a result that does not
        name the setting was computed so, :data:`ADDED_SETTINGS`). ``"equal"`` (an option
        since 0.33.0): at least
        1/2, the equal prior of model averaging (Burnham & Anderson 2002, ch. 4 (m)),
        unless the daytime records favour the temperature in use significantly
        (:func:`fluxpart.partition.temperature_choice.daytime_evidence` above 1.96): on
        168 generated site-years with one respiration temperature it widened the
        partitioned fluxes' intervals by 21–31 % on average (several-fold on some)
        without changing their coverage; on a known-truth trial with soil and canopy
        parts it raised nighttime Reco coverage from 24 to 26 of 27 (DEVELOPERS.md,
        0.33.0 changelog). ``"share"`` (an option added after release 0.39.0): as
        ``"mixture"``, and at least the other temperature's mixture share s itself, so
        the daytime part is at least √s of the daytime difference (the share as the
        weight of a two-point model average, :func:`fluxpart.driver_mixture.
        share_day_weight`); measured (DEVELOPERS.md, the changelog after 0.39.0) on two
        known-truth trials with a canopy part on air temperature and on generated sites
        with one temperature, and left off.
    driver_share_spread : str
        ``"off"`` (default): the temperature-driver part's weight is at least s², s the
        other temperature's share in the night's best mixture of the two fits
        (:func:`fluxpart.driver_mixture.mixture_share`); ``"bootstrap"``: at least
        s² + v, v the share's sampling variance over resampled nights
        (:func:`fluxpart.driver_mixture.mixture_share_draws`; an option since 0.38.0,
        written into a result's settings only where set). Changes the stated
        uncertainty only, never a central value; measured and left off by default
        (DEVELOPERS.md, 0.38.0 changelog: the share is biased low rather than uncertain
        where a canopy part respires on air temperature).
    daytime_temperature : str
        The temperature of the daytime method's Reco term
        (:mod:`fluxpart.daytime_temperature`). ``"driver"`` (default, as 0.38.0 and
        before): the run's respiration temperature. ``"air"``: air temperature where
        the run drives Reco by soil temperature, as Lasslop et al. (2010) fit the
        daytime method (a canopy part of Reco follows the air, which warms above the
        soil by day; the night records cannot show it); ``"average"``: there the
        average of the daytime fits on soil and on air temperature with equal weights
        (the equal prior of model averaging, as ``driver_day_prior`` takes for the
        daytime records); ``"mixture"``: that average only where the nights also show a
        mixture of the two temperatures (the test of ``driver_day_prior = "mixture"``).
        The nighttime method never changes. Changes the daytime GPP and Reco (central
        values and intervals) of such runs; an option added after 0.38.0, written into
        a result's settings only where set. Measured (DEVELOPERS.md, the changelog after
        0.38.0): on a known-truth trial with a canopy part on air temperature
        ``"average"`` halved the daytime errors (median |error| of Reco 60 → 32 g C m-2,
        22 site-years) and ``"mixture"`` raised the daytime coverage from 15 / 13 to
        16 / 16 of 22, but on generated sites whose respiration follows the soil alone
        ``"average"`` and ``"air"`` raised the daytime errors (median 2.0 → 3.2 and
        4.6 % of Reco) and ``"mixture"`` the daytime errors of the two such sites it
        changed, so all are off. A value that changes nothing in a run (one on air temperature,
        no daytime fit on air, no mixture shown) is named in a warning.
    mixture_test : str
        The test by which the nights show a mixture of air and soil temperature
        (``driver_day_prior = "mixture"``, ``daytime_temperature = "mixture"``;
        :func:`fluxpart.driver_mixture.critical_value`). ``"two_sided"`` (default, as 0.38.0):
        the other temperature's share has a two-sided 95 % interval above 0;
        ``"one_sided"``: the share exceeds 0 at the one-sided 5 % level (1.645 standard
        errors; a share lies in [0, 1], so the alternative to "no mixture" is one-sided).
        An option added after release 0.39.0, written into a result's settings only
        where set. Measured (DEVELOPERS.md, the changelog after 0.39.0): on two known-truth
        trials with a canopy part on air temperature it raised the daytime coverage a
        little (far from 95 %); on generated sites with one temperature it widened few
        intervals; off by default.
    e0_window_days : float
        Length of the short windows in which E0 is fitted [days]; 15 days,
        Reichstein et al. (2005) (m).
    e0_window_step_days : float
        Step between E0 windows [days]; 5 days (m).
    e0_min_points : int
        Fewest measured night records in an E0 window for a fit; 6 (m).
    e0_min_temperature_range : float
        Smallest temperature range in an E0 window [K]; 5 K, Reichstein et al. (2005).
    e0_bounds : tuple of float
        Accepted E0 range [K]; 30–450 K, Reichstein et al. (2005) (m).
    e0_max_relative_error : float
        Largest accepted standard error of E0 relative to E0 [1]; 0.5, our choice.
    e0_method : str
        How each year's E0 is estimated. ``"joint"`` (default): one E0 fitted to
        all of the year's measured night NEE at once, with a free Rref in each
        consecutive ``e0_window_days`` window, by least absolute deviations (the
        maximum likelihood under the Laplace-distributed random error of flux
        measurements, Hollinger & Richardson 2005), so only the short-term
        temperature variation within windows informs it (Reichstein et al.
        2005's aim) while every window counts by its information; a year whose
        joint fit is at an ``e0_bounds`` limit or above ``e0_max_relative_error``
        falls back to the windows. ``"best_windows"``: the mean of the
        ``e0_best_windows`` windows with the smallest standard error (Reichstein
        et al. 2005). Why the default changed: a flatter fit has a smaller
        standard error, so that choice biases E0 low, and its three windows
        carry the noise of a few weeks (on 35 generated site-years, the central
        u* run's inputs: median E0 error −3 K joint vs +7 K, median |error|
        15 vs 26 K, worst 110 vs 226 K; annual nighttime Reco beyond ±5 % in 1
        instead of 4 site-years, together with ``rref_min_points`` = 6; see
        :func:`fluxpart.partition.nighttime.fit_e0_joint`).
    e0_best_windows : int
        How many accepted windows with the smallest standard error are averaged
        into the year's E0 when ``e0_method = "best_windows"`` or the joint fit
        is not accepted; 3, Reichstein et al. (2005) (m).
    e0_fallback : float or None
        E0 to use, flagged, when no window is acceptable [K]. ``None`` (default)
        makes such a year take the E0 of the nearest year of the record that has one
        (flagged ``"nearest_year"``, warned naming both years; only where the run would
        otherwise stop for want of it: :func:`fluxpart.partition.nighttime.annual_e0`),
        and where no year has one the nighttime method fails with an
        :class:`~fluxpart.errors.InsufficientDataError` (the run goes on with the daytime
        method alone where that one fits: :mod:`fluxpart.method_failure`).
        The daytime method takes its own E0 from the night windows around its windows,
        pooled over the year, else pooled over all years (``e0_source`` ``"year"``,
        ``"all_years"``); where neither pool is acceptable it uses this value, and with
        ``None`` the median of the nighttime method's E0 over all records (one value for
        the record, not each year's) instead of failing, flagged ``"fallback"`` in its
        parameter table and warned about with each calendar year's nighttime E0 (the two
        methods then share E0, so their difference no longer tests it).
    rref_window_days : float
        Window for the reference respiration with E0 fixed [days]; 4 days,
        Reichstein et al. (2005).
    rref_min_points : int
        Fewest measured night records in an Rref window; 6 (was 2), the same as
        ``e0_min_points``: Rref from fewer records is mostly noise, and such
        windows sit at the edges of long gaps and high-latitude summers, where
        they anchor the interpolation (on generated 66° N site-years they moved
        annual Reco by +13 % and −8 %; our choice, measured).
    rref_low_light_rg : float
        Rg [W m-2] below which the Rref windows of a run of 15 days or more with
        fewer than ``rref_min_points`` night records each (weeks of midnight sun)
        fit Rref to their measured NEE with a straight light response,
        ``NEE = Rref f(T) - a Rg``, instead of taking Rref interpolated across the
        run (shorter runs are interpolated); 0 switches this off. Default 100 W m-2 (about 200 µmol m-2 s-1 of PAR, at
        about 2 µmol of PAR photons per joule of global radiation; common practice):
        canopy photosynthesis rises linearly with light at low light (common
        practice), and at high latitude the low sun of the night hours gives such
        records every day. See :func:`fluxpart.partition.nighttime.fit_rref_windows`.
    night_fit_records : str
        Which night records the nighttime method's E0 and Rref fits use:
        ``"all_night"`` (default), every record with Rg below ``night_rg_threshold``;
        ``"sun_down"``, those with the sun below the horizon for the whole interval, in
        each 4-day Rref window with ``rref_min_points`` such measured records, and every
        night record in the other windows (weeks of midnight sun). Below 10 W m-2 with
        the sun up, diffuse skylight holds up to ~20 µmol m-2 s-1 of PPFD (m), above the
        light compensation point of many canopies, so such records can hold uptake;
        with the sun down the sky gives below ~8 µmol m-2 s-1 (about 400 lx at sunset
        (m)). Gap filling's night class and the u* filter keep the Rg mask. See
        :mod:`fluxpart.partition.dark_nights`. Not the default, measured (DEVELOPERS.md,
        0.34.0 changelog): on trial 26 (draw 0) nighttime GPP / Reco median |error| 1.4 / 2.0
        → 0.4 / 0.5 %, covered 8 / 6 → 8 / 7 of 8; trials 6–19 (163 site-years) covered
        143 / 134 → 146 / 142, NEE unchanged; on the generated sets median signed
        nighttime error nearer zero (e.g. Reco other physics −0.74 → −0.44 %) but median
        |error| larger on the calibration set (GPP / Reco 4.5 / 8.1 → 6.9 / 10.3 g C m-2,
        worst 39.6 / 37.7 → 51.6 / 49.7: fewer, colder records), and one polar site-year
        that runs with the default stopped without an acceptable E0 for a year (set
        ``e0_fallback`` there).
    daytime_window_days : float
        Light-response fitting window [days]; 4, Lasslop et al. (2010).
    daytime_window_step_days : float
        Step between daytime windows [days]; 2, Lasslop et al. (2010).
    daytime_min_points : int
        Fewest measured daytime records for a window fit; 10, our choice.
    daytime_k_min_points : int
        Fewest records above VPD0 = 10 hPa in a window for the VPD coefficient k to
        be fitted; otherwise k is fixed at 0; 5, our choice.
    daytime_beta0_max : float
        Upper bound of the light-saturated assimilation beta0 [µmol m-2 s-1]; 250,
        Lasslop et al. (2010) (m). A window whose fit reaches it is refitted with Rref
        fixed at the window's night Rref (see ``daytime_consistency_z``).
    daytime_e0_window_days : tuple of float
        Widths [days] of the night windows, centred on each daytime window, tried in
        turn for that window's own E0 estimate from night NEE; (4, 8, 16): the window
        itself first (Lasslop et al. 2010 estimate E0 from night data around the
        window (m)), widened up to about the 15 days of Reichstein et al. (2005) where
        the narrower one holds fewer than ``e0_min_points`` records or less than
        ``e0_min_temperature_range`` of temperature (one Rref per 4-day block in the
        wider ones). The E0 applied is the inverse-variance mean of the year's window
        estimates, accepted inside ``e0_bounds`` within ``e0_max_relative_error``.
        Since 0.5.0; before, only windows whose own estimate passed the relative-error
        test counted, and that test keeps the windows whose noise steepened the curve
        (on generated site-years their median E0 was 215–440 K where 134–181 K was
        planted, raising daytime GPP and Reco by up to 18 %). Nothing is taken from
        the nighttime method's E0.
    daytime_consistency_z : float
        A daytime fit whose Rref differs from the window's night Rref (least squares
        of the window's night NEE with its E0) by more than this many combined
        standard errors, or that sits at a bound (Rref 0, alpha 0 or 0.22, beta0 at
        ``daytime_beta0_max``), is refitted with Rref fixed at the night Rref; 1.96
        (95 %, two-sided; common practice). Our rule: the light response at Rg = 0
        is respiration, which night records measure directly. ``inf`` keeps only
        the bound rules.
    daytime_rref_max_relative_error : float
        A daytime fit whose Rref has a standard error above this share of the
        window's night Rref is refitted with Rref fixed at the night Rref, like the
        rules above [1]; 0.5 (our choice, since 0.5.0): the fit's 95 % interval then
        runs from about zero to twice the respiration the night measures, so the
        daytime data do not resolve it, and such fits err high (Rref trades against
        alpha above the bound 0): on the calibration benchmark the mean daytime Reco
        error went from +2.4 % to 0.0 % and the worst dry-season savanna from +13 to
        +6 %. ``inf`` switches the rule off.
    daytime_night_min_points : int
        Fewest night records of a daytime window for its night Rref; 5, our choice.
        Windows that need the refit but lack them are rejected and take their
        parameters from the neighbouring windows.
    daytime_weighting : str
        ``"random_error"`` (default): weight the daytime fits by 1/σ², σ from the
        random-error model of NEE (the ``random_error_*`` pairing settings)
        evaluated at the first, unweighted fit's modelled NEE, as Lasslop et al.
        (2010) weight by the flux uncertainty (m); the fit falls back to unweighted
        (column ``weighted`` of the daytime parameter table) where too few pairs
        give a model. ``"none"``: unweighted.
    daytime_night_in_fit : bool
        Also fit each window's measured night NEE (as Rg = 0 records) in the daytime
        light-response fit; false (default): the published method fits daytime data
        only (Lasslop et al. 2010 (m)) and keeps the two partitionings independent
        except for the night-Rref refit above. True lets the night data pull the
        intercept that a rectangular hyperbola overestimates when the true light
        response bends more sharply, at the price of sharing the night data's
        biases (u* filtering) with the nighttime method (figures in DEVELOPERS.md).
    daytime_curvature : str or float
        Curvature of the daytime light response [1], 0 ≤ value < 1. ``0``
        (default): the rectangular hyperbola of Lasslop et al. (2010), the
        published method. A larger number fixes a sharper bend (the
        non-rectangular hyperbola, Johnson & Thornley 1984 (m)); ``"fit"`` profiles
        one curvature per run over 0, 0.1, ..., 0.9 on the window fits of the
        central u* run (summed weighted cost of all windows, refined by a parabola
        through the best grid value and its neighbours) and uses it in every window
        and u* scenario. Canopies often bend more sharply than a rectangular
        hyperbola (Gilmanov et al. 2003 (m)), which then raises the fitted
        intercept (daytime Reco and GPP high); but on our generated site-years the
        profile also absorbs temperature limitation of photosynthesis and reversed
        the bias at evergreen and southern sites, and the daytime intervals held
        the truth less often (figures in DEVELOPERS.md), so the published shape
        stays the default. ``"average"``: both, the rectangular and the profiled
        light response fitted on the central u* run, their daytime GPP and Reco
        averaged with equal weights and their spread about the average,
        ½·|ΣΔ|, a part of the daytime totals
        (``gpp_daytime_uncertainty_light_shape``,
        ``reco_daytime_uncertainty_light_shape``; the u* scenarios take the central
        run's shift; :mod:`fluxpart.partition.light_shape`). On 42 generated
        site-years (seeds 0–13 of the three sets) it took daytime GPP / Reco summed
        |error| from 755 / 979 to 633 / 815 g C m-2 (worst 91.5 / 162.2 → 61.2 / 88.6,
        mean z +0.66 / +0.52 → +0.38 / +0.12) with the daytime intervals as wide as
        before, covered in 42 / 41 of 42 (41 / 41 before; nighttime GPP 41 → 40, its
        interval narrower with the smaller day–night difference). On all 168
        generated site-years every coverage lies in 85–99 % but one (generalisation
        nighttime Reco 100 %; three with the default). On eleven trials of physics
        the methods do not assume (124 site-years) the daytime errors fall as well
        (summed |error| GPP / Reco 5142 / 6246 → 4840 / 5700 g C m-2), but the
        nighttime intervals, whose partitioning part follows the day–night
        difference, narrow and hold the truth less often (nighttime GPP / Reco
        covered in 110 / 99 → 101 / 94 of 124, daytime 106 / 102 → 104 / 102): not
        the default (figures in DEVELOPERS.md, 0.32.0 changelog).
    random_error_draws : int
        Monte Carlo realisations of the random error of NEE summed per year; 500,
        our choice (the standard deviation of the sum is then known to about 3 %).
    random_error_rg_tolerance, random_error_tair_tolerance, random_error_vpd_tolerance : float
        Records 24 h apart form a pair for the random-error estimate where Rg, Tair
        and VPD differ by less than these [W m-2], [°C], [hPa]; 35 W m-2 (about the
        75 µmol m-2 s-1 of PPFD of Richardson et al. 2006 (m)), 3 °C (Richardson et al.
        2006 (m)) and 5 hPa (our choice, standing in for their wind-speed criterion).
    agreement_margin : float
        Largest relative difference between daytime and nighttime annual GPP (and
        Reco), ``|day - night| / mean``, before the result warns that the methods
        disagree [1]; 0.15, our choice: across sites Lasslop et al. (2010) report a
        median absolute day-night difference of annual GPP of 47 g C m-2 yr-1
        (abstract), some 5 % of a typical 1000 g C m-2 yr-1, so 15 % flags a clear
        disagreement.
    clock_check : str
        What a clock or site-geometry problem found by :mod:`fluxpart.clock` (measured
        Rg shifted against the sun by a record or more, daylight-saving stamps, a
        latitude of the wrong sign) does: ``"refuse"`` (default) stops the run with
        the problem and the setting to change; ``"warn"`` runs and lists it among
        the result's warnings; ``"off"`` skips the check. Default ``"refuse"``, our
        choice: a clock an hour off moves annual NEE by tens of g C m-2 without any
        other sign (issue 12).
    year_start : str
        First day of the budget year as ``"MM-DD"``; default ``"01-01"`` (calendar
        years). ``"07-01"`` or ``"09-01"`` give budget years that keep a
        southern-hemisphere summer or a growing season together (common practice).
        The ``annual`` table keeps ``year`` (the calendar year in which the budget
        year starts) and gives ``period_start`` / ``period_end``. 29 February is
        refused (not in every year). u* thresholds and the annual E0 stay per
        calendar year of data.
    events : tuple of str
        Dates (``"YYYY-MM-DD"``) or date-times (``"YYYY-MM-DD HH:MM"``) in the record's
        local standard time at which the ecosystem changed abruptly: a harvest, a cut,
        a fire, a thinning, ploughing (new in 0.22.0). NEE gaps are filled from the
        records on their own side of every event only (:func:`fluxpart.gapfill.
        fill_marginal`, ``breaks``), in the central fill, the u* scenario runs and the
        artificial gaps of the gap-filling uncertainty alike, so that an outage across
        a harvest is not filled from the canopy before it, nor the days before it from
        bare ground. A record starting at an event's time lies after it. Default: none.
        A gap with too few measured records in its own piece to be filled (two events
        hours apart within an outage, an event near the record's end) is filled from the
        neighbouring piece, and warned about, rather than left unfilled (which would
        leave the year's NEE sum NaN). The partitionings' windows are cut at events
        too (since 0.23.0): no nighttime E0 or Rref window and no
        daytime light-response window (nor the night windows of its E0) takes records
        from both sides of an event, and a record's Rref, or light-response curves,
        come from the windows of its own piece only (:mod:`fluxpart.partition.pieces`),
        so the days after a harvest do not take the respiration and light response of
        the canopy before it. A piece without a window of its own (events hours or a
        day apart) takes the windows beside it and is warned about. The annual E0
        stays one per calendar year. A TOML date (``events = [2021-07-20]``) is read
        as that date. Written into a result's settings only where some are declared.

    Notes
    -----
    Every numeric setting has an allowed range (``_RANGES`` in this module), each
    with its argument, which the error repeats: a bound refuses what no site or
    method can mean (a typo, a unit slip, 1e9), not an unusual choice, and every
    default lies well inside. For example a u* threshold or floor above 2 m s-1
    (reported thresholds lie below about 1 m s-1, common practice (m)), tolerances
    wider than the range they compare (Rg 200 W m-2, Tair 10 °C, VPD 20 hPa), a
    window longer than a season, a count of records above every record of its
    window at 30 min, a share or correlation above 1, ``e0_bounds`` above 1000 K
    (a Q10 of about 15 at 10 °C) or fewer than 20 Monte Carlo draws (the standard
    deviation itself then uncertain by more than 16 %). Errors show the value as
    written in TOML and say what is allowed.
    """

    seed: int = 0
    night_rg_threshold: float = 10.0
    despike_z: float = 4.0
    despike_block_days: float = 13.0
    rg_margin: float = 50.0
    rg_relative_margin: float = 0.2
    ustar_method: str = "moving_point"
    ustar_threshold: float = 0.2
    ustar_temperature_classes: int = 6
    ustar_classes: int = 20
    ustar_plateau_share: float = 0.99
    ustar_correlation_limit: float = 0.4
    ustar_min_resolution: float = 4.0
    ustar_annual: str = "median"
    ustar_distinct_seasons: str = "own_threshold"
    ustar_plateau_reference: float = 0.25
    ustar_min_threshold: float | None = None
    ustar_bootstrap_draws: int = 100
    ustar_scenarios: tuple[int, ...] = (16, 50, 84)
    night_donor_margin: str = "threshold_spread"
    ustar_kept_trend: str = "off"
    storage_release: str = "exclude"
    gapfill_donors: str = "separate_day_night"
    gapfill_rg_window: str = "centred"
    gapfill_estimate: str = "local_linear"
    gapfill_night_light: str = "tested"
    gapfill_min_donors: int = 3
    gapfill_interpolation_hours: float = 3.0
    gapfill_clearness_tolerance: float = 0.0
    gapfill_max_window_days: float = 140.0
    rg_tolerance: float = 50.0
    tair_tolerance: float = 2.5
    vpd_tolerance: float = 5.0
    respiration_driver: str = "auto"
    air_delay_damping: str = "off"
    respiration_form: str = "average"
    driver_day_prior: str = "mixture"
    driver_share_spread: str = "off"
    daytime_temperature: str = "driver"
    mixture_test: str = "two_sided"
    e0_window_days: float = 15.0
    e0_window_step_days: float = 5.0
    e0_min_points: int = 6
    e0_min_temperature_range: float = 5.0
    e0_bounds: tuple[float, float] = (30.0, 450.0)
    e0_max_relative_error: float = 0.5
    e0_best_windows: int = 3
    e0_fallback: float | None = None
    e0_method: str = "joint"
    rref_window_days: float = 4.0
    rref_min_points: int = 6
    rref_low_light_rg: float = 100.0
    night_fit_records: str = "all_night"
    daytime_window_days: float = 4.0
    daytime_window_step_days: float = 2.0
    daytime_min_points: int = 10
    daytime_k_min_points: int = 5
    daytime_beta0_max: float = 250.0
    daytime_e0_window_days: tuple[float, ...] = (4.0, 8.0, 16.0)
    daytime_consistency_z: float = 1.96
    daytime_rref_max_relative_error: float = 0.5
    daytime_night_min_points: int = 5
    daytime_weighting: str = "random_error"
    daytime_night_in_fit: bool = False
    daytime_curvature: str | float = 0.0
    random_error_draws: int = 500
    random_error_rg_tolerance: float = 35.0
    random_error_tair_tolerance: float = 3.0
    random_error_vpd_tolerance: float = 5.0
    agreement_margin: float = 0.15
    clock_check: str = "refuse"
    year_start: str = "01-01"
    events: tuple[str, ...] = ()

    def __post_init__(self):
        _check(self)

    @classmethod
    def field_names(cls) -> tuple[str, ...]:
        """Return the names of all settings."""
        return tuple(f.name for f in fields(cls))

    @classmethod
    def from_mapping(cls, mapping: dict, where: str = "[processing]") -> Config:
        """Build a Config from a mapping of overrides, rejecting unknown keys.

        Raises
        ------
        ConfigError
            For an unknown key (with the nearest valid key suggested) or a bad value.
        """
        names = cls.field_names()
        for key in mapping:
            if key not in names:
                hint = (_key_hint(key, names) if where == "[processing]"
                        else suggest_key(key, names))
                raise ConfigError(f"{where} {key}: unknown setting{hint}")
        floats = {f.name for f in fields(cls) if f.type in ("float", "float | None")}
        values = {}
        for key, value in mapping.items():
            if isinstance(value, list):
                value = tuple(value)
            if key in floats and isinstance(value, int) and not isinstance(value, bool):
                value = float(value)
            values[key] = value
        return cls(**values)

    @classmethod
    def from_toml(cls, path, recorded_threshold: float | None = None) -> Config:
        """Read the ``[processing]`` table of a site config; defaults where absent.

        ``ustar_method = "fixed"`` without ``ustar_threshold`` is refused (since
        0.24.0), unless `recorded_threshold` [m s-1] is given: the threshold a result
        computed before then recorded in its manifest, taken by ``fluxpart verify``
        to rerun that result as it was computed.
        """
        document = read_site_config_toml(path)
        processing = document.get("processing", {})
        if not isinstance(processing, dict):
            raise ConfigError("[processing] must be a table of settings")
        refuse_misplaced_processing(processing)
        if processing.get("ustar_method") == "fixed" and "ustar_threshold" not in processing \
                and recorded_threshold is not None:
            processing = {**processing, "ustar_threshold": recorded_threshold}
        if processing.get("ustar_method") == "fixed" and "ustar_threshold" not in processing:
            # the default is the fall-back of years without a detected threshold, typical
            # of towers in general: a fixed threshold is the site's own value
            raise ConfigError('[processing] ustar_method = "fixed" needs ustar_threshold, the '
                              "site's own u* threshold [m s-1]; without it the run would take "
                              f"{cls.ustar_threshold} m s-1, a value typical of towers in "
                              "general, not this site's")
        return cls.from_mapping(processing)

    def to_dict(self) -> dict:
        """Return all settings as plain JSON-compatible values.

        ``events`` (new in 0.22.0) is written only where some are declared: without
        them a run is that of 0.21.0, so the settings of a result written before stay
        the settings of its rerun (``fluxpart verify``, and ``batch``'s test of a site
        result being current, compare them key by key). So is each setting of
        :data:`_WRITTEN_AWAY_FROM_DEFAULT` only where it is not at the default that runs
        as the releases before it did (review65: ``night_fit_records``, new after 0.33.0,
        made every 0.33.0 result "NOT reproduced" and every batch site "settings
        changed" on its key alone).
        """
        out = asdict(self)
        out["e0_bounds"] = list(self.e0_bounds)
        out["daytime_e0_window_days"] = list(self.daytime_e0_window_days)
        out["ustar_scenarios"] = list(self.ustar_scenarios)
        out["events"] = list(self.events)
        if not self.events:
            del out["events"]
        defaults = {item.name: item.default for item in fields(self)}
        for name in _WRITTEN_AWAY_FROM_DEFAULT:
            if out[name] == defaults[name]:
                del out[name]
        return out


class AddedSetting(NamedTuple):
    """A setting added after a release, and the value that behaves as before it.

    Attributes
    ----------
    name : str
        The :class:`Config` field.
    release : str
        The release that added it.
    earlier : object
        The value with which this code computes what the releases before `release`
        did (byte-identical tables).
    """

    name: str
    release: str
    earlier: object


#: Settings added after a release, whose absence from a result's recorded settings
#: means the writing release's behaviour: ``fluxpart verify`` reruns such a result
#: with `earlier` (a rerun with the new default recomputes another result). A new
#: setting whose default changes numbers is added here; one whose default keeps the
#: earlier behaviour is written into the manifest only when it is not the default
#: (``night_fit_records``, as ``events``: :meth:`Config.to_dict`) and needs no entry.
ADDED_SETTINGS = (
    AddedSetting("night_donor_margin", "0.34.0", "none"),
    # Added in 0.33.0 with the default "night" (written into every result since); its
    # default became "mixture" in 0.38.0, so a folder that does not name it (0.32.0 or
    # before) computed as "night" (review87).
    AddedSetting("driver_day_prior", "0.33.0", "night"),
)


def refuse_misplaced_processing(processing: dict) -> None:
    """Refuse a ``[site]`` or ``[input]`` key written under ``[processing]`` (canopy,
    time_zone, missing, utc_offset, ...), naming the table it belongs to.

    Called by the reading of ``[site]`` and ``[input]`` as well (round mistakes56): a
    required key (``utc_offset``, ``time_marks``) moved to ``[processing]`` was otherwise
    refused as missing from its own table, without a word of where it was written.

    Parameters
    ----------
    processing : dict
        The site config's ``[processing]`` table as read (anything else is left to the
        caller's own refusal).

    Raises
    ------
    ConfigError
        Naming the key, its value and the table it belongs under.
    """
    if not isinstance(processing, dict):
        return
    from .io import table_of_key

    for key in processing:
        owner = table_of_key(key)
        if owner in ("site", "input"):      # canopy, time_zone, missing, ...
            raise ConfigError(f"[processing] {key} = {setting_text(processing[key])}: "
                              f"{key} belongs under [{owner}], not [processing]: move it "
                              "there")


def absent_added_settings(recorded) -> tuple[AddedSetting, ...]:
    """The :data:`ADDED_SETTINGS` that the recorded settings `recorded` (a manifest's
    ``config`` mapping) do not name: those a release before them wrote. Empty where
    `recorded` is no mapping (nothing is known of its release)."""
    if not isinstance(recorded, dict):
        return ()
    return tuple(added for added in ADDED_SETTINGS if added.name not in recorded)


def implied_settings(recorded) -> dict[str, tuple[object, str]]:
    """The settings a result's recorded settings `recorded` (a manifest's ``config``
    mapping) do not name, with the value that computed the result and why it is implied.

    A setting of :data:`ADDED_SETTINGS` that a release before it wrote no record of
    computed as its ``earlier`` value; ``events`` and each setting of
    :data:`_WRITTEN_AWAY_FROM_DEFAULT` are written only away from their default
    (:meth:`Config.to_dict`), which their absence therefore means. The ``report`` shows
    them so (leftovers55: a 0.33.0 folder's settings table lacked
    ``night_donor_margin``, and every default run's ``night_fit_records``), as
    :func:`fluxpart.load` and ``verify`` take them.

    Returns
    -------
    dict
        Setting name -> (value, reason); empty where `recorded` is no mapping (nothing
        is known of its release).
    """
    if not isinstance(recorded, dict):
        return {}
    implied = {added.name: (added.earlier, f"not in the folder's recorded settings: added "
                            f"in {added.release}; the release that wrote the folder computed "
                            f"as {setting_text(added.earlier)}")
               for added in absent_added_settings(recorded)}
    defaults = {item.name: item.default for item in fields(Config)}
    for name in ("events", *_WRITTEN_AWAY_FROM_DEFAULT):
        if name not in recorded:
            implied[name] = (defaults[name], "not in the folder's recorded settings: "
                             "written only away from its default, which computed the result")
    return implied


class UnknownSettingError(ConfigError, TypeError):
    """A keyword of ``Config(...)`` that is no setting: a :class:`ConfigError` naming it
    with the nearest setting, and a :class:`TypeError` as Python's own refusal of an
    unexpected keyword argument is (so code catching either still does)."""


def keyword_checked(cls, label: str) -> None:
    """Wrap a dataclass's ``__init__`` so that an unknown keyword is named with a hint.

    ``Config(ustar_methd="fixed")`` or ``Site(lat=47.1, ...)`` stopped with Python's "got
    an unexpected keyword argument", which a site config's ``[processing]`` or ``[site]``
    answers with the setting meant (round mistakes37; `Site` since 0.28.0).

    Parameters
    ----------
    cls : type
        A dataclass (:class:`Config`, :class:`fluxpart.site.Site`); its ``__init__`` is
        replaced in place.
    label : str
        The name the message gives the call (``"Config"``, ``"Site"``).
    """
    dataclass_init = cls.__init__

    def __init__(self, *args, **kwargs):
        names = [f.name for f in fields(cls)]
        for key in kwargs:
            if key not in names:
                raise UnknownSettingError(f"{label}({key}=...): unknown setting"
                                          f"{_key_hint(key, names)}")
        dataclass_init(self, *args, **kwargs)

    __init__.__doc__ = dataclass_init.__doc__
    __init__.__signature__ = inspect.signature(dataclass_init)
    __init__.__wrapped__ = dataclass_init
    cls.__init__ = __init__


keyword_checked(Config, "Config")


def _key_hint(key: str, names) -> str:
    """The hint for an unknown setting: the spelling of a slip, else what its words mean
    (:func:`fluxpart.key_hints.meaning_hint`), else the nearest spelling."""
    from .key_hints import SLIP_LIKENESS, meaning_hint

    slip = difflib.get_close_matches(key, list(names), n=1, cutoff=SLIP_LIKENESS)
    if not slip and key.lower() not in {name.lower() for name in names}:
        meant = meaning_hint(key)
        if meant:
            return meant
    return suggest_key(key, names)


def suggest_key(key: str, valid, what: str = "settings") -> str:
    """Return a ``"; did you mean 'x'?"`` hint for the nearest valid key, or a list.

    The same key in other letter case (``NEE`` for ``nee``) is the nearest of all.
    """
    valid = list(valid)
    same = [v for v in valid if v.lower() == key.lower()]
    close = same or difflib.get_close_matches(key, valid, n=1, cutoff=0.5)
    if close:
        return f"; did you mean {close[0]!r}?" + (" (names are case-sensitive)" if same else "")
    return f"; valid {what}: {', '.join(sorted(valid))}"


#: Settings added after 0.33.0, written into a result's settings (:meth:`Config.to_dict`)
#: only away from their default, with which a run is that of the release before them.
_WRITTEN_AWAY_FROM_DEFAULT = ("night_fit_records", "ustar_kept_trend", "driver_share_spread",
                              "daytime_temperature", "mixture_test", "air_delay_damping")

_CHOICES = {"respiration_driver": ("tair", "tsoil", "auto"),
            "air_delay_damping": ("off", "conduction"),
            "driver_day_prior": ("night", "equal", "mixture", "share"),
            "driver_share_spread": ("off", "bootstrap"),
            "daytime_temperature": ("driver", "air", "average", "mixture"),
            "mixture_test": ("two_sided", "one_sided"),
            "respiration_form": ("average", "lloyd_taylor"),
            "e0_method": ("joint", "best_windows"),
            "night_fit_records": ("all_night", "sun_down"),
            "gapfill_donors": ("separate_day_night", "dark_first", "similar_conditions_only"),
            "storage_release": ("exclude", "warn"),
            "night_donor_margin": ("threshold_spread", "none"),
            "ustar_kept_trend": ("off", "raise"),
            "gapfill_rg_window": ("centred", "fixed"),
            "gapfill_estimate": ("local_linear", "donor_mean"),
            "gapfill_night_light": ("tested", "off"),
            "daytime_weighting": ("random_error", "none"),
            "ustar_method": ("moving_point", "change_point", "fixed"),
            "ustar_annual": ("median", "maximum"),
            "ustar_distinct_seasons": ("own_threshold", "uncertainty_only"),
            "clock_check": ("refuse", "warn", "off")}


class _Range(NamedTuple):
    """Allowed values of one numeric setting and why (shown in the error)."""

    low: float
    high: float
    unit: str
    why: str
    low_open: bool = False      # the low end itself is not allowed
    whole: bool = False         # a whole number (a count)
    allow_inf: bool = False     # inf (beyond `high`) is a documented value ("off")


#: Records of one day at the shortest supported interval (30 min): a count of records
#: in an n-day window above 48 n can never be met, so every window would be refused.
_PER_DAY = 48

#: The range of every numeric setting, with its argument. Bounds refuse values no
#: site or method can mean (a typo, a unit slip, 1e9); the defaults lie well inside.
#: Where a bound depends on another setting (a count of records in a window, a step
#: within its window) it is checked in :func:`_check` after these.
_RANGES = {
    "night_rg_threshold": _Range(
        0.0, 50.0, "W m-2", "night thresholds in use are 5-20 W m-2 (common practice, (m)); "
        "above 50 W m-2 twilight records with photosynthesis would count as night",
        low_open=True),
    "despike_z": _Range(
        2.0, 20.0, "", "Papale et al. (2006) use 4, 5.5 and 7 (m); below 2 ordinary "
        "noise is cut as spikes (5 % of normal noise lies beyond 2 sigma), above 20 "
        "nothing is ever cut"),
    "despike_block_days": _Range(
        1.0, 92.0, "days", "a block needs a day of records for its median and MAD; beyond "
        "a season it mixes the noise of summer and winter"),
    "rg_margin": _Range(
        0.0, 500.0, "W m-2", "cloud edges raise Rg above clear-sky values by a few hundred "
        "W m-2 at most (m); a wider margin would pass a clock hours off"),
    "rg_relative_margin": _Range(
        0.0, 1.0, "", "measured Rg never reaches twice the top-of-atmosphere radiation, so "
        "a larger share checks nothing"),
    "ustar_threshold": _Range(
        0.0, 2.0, "m s-1", "reported u* thresholds lie below about 1 m s-1 (common practice, "
        "(m)); above 2 m s-1 nearly every night would be rejected"),
    "ustar_temperature_classes": _Range(
        1, 20, "", "a season's night records (about 1000-2000 at 30 min) in more than 20 "
        "temperature classes leave too few per u* class for a mean", whole=True),
    "ustar_classes": _Range(
        5, 50, "", "fewer than 5 classes cannot show a plateau above the threshold; more "
        "than 50 leave a handful of records per class (Reichstein et al. 2005 use 20 (m))",
        whole=True),
    "ustar_plateau_share": _Range(
        0.5, 1.0, "", "the threshold is where night NEE reaches its plateau (0.99, "
        "Reichstein et al. 2005 (m)); below a half, half the flux would still be lost there"),
    "ustar_correlation_limit": _Range(
        0.0, 1.0, "", "a correlation |r| is at most 1; 1 turns the check off",
        low_open=True),
    "ustar_min_resolution": _Range(
        0.0, 20.0, "standard errors", "0 turns the check off; beyond 20 no night flux "
        "resolves and every season falls to one temperature class"),
    "ustar_plateau_reference": _Range(
        0.0, 1.0, "", "a share of the u* classes; 1 compares with all classes above",
        low_open=True),
    "ustar_min_threshold": _Range(
        0.0, 2.0, "m s-1", "reported u* thresholds lie below about 1 m s-1 (common practice, "
        "(m)); a floor above 2 m s-1 would reject nearly every night"),
    "ustar_bootstrap_draws": _Range(
        0, 10000, "", "0 skips the bootstrap; below 10 draws the 16th and 84th percentiles "
        "are the extremes of the draws; beyond 10000 only run time grows", whole=True),
    "gapfill_min_donors": _Range(
        1, 14 * _PER_DAY, "records", "more than the 672 records of a 14-day window at "
        "30 min can never be met", whole=True),
    "gapfill_interpolation_hours": _Range(
        0.0, 6.0, "hours", "0 turns it off; a straight line across more than 6 h cuts "
        "through the daily maximum or minimum of temperature and VPD"),
    "gapfill_clearness_tolerance": _Range(
        0.0, 1.0, "", "0 turns it off; beyond 1 every record counts as similar (the index "
        "lies between 0 and about 1)"),
    "gapfill_max_window_days": _Range(
        0.0, 183.0, "days", "a window of +-183 days already spans the whole year"),
    "rg_tolerance": _Range(
        0.0, 200.0, "W m-2", "Reichstein et al. (2005) use 50 W m-2; beyond 200 W m-2, a "
        "fifth of clear-sky noon Rg, overcast and sunny records count as similar",
        low_open=True),
    "tair_tolerance": _Range(
        0.0, 10.0, "°C", "Reichstein et al. (2005) use 2.5 °C; beyond 10 °C, about a "
        "day's range (m), a cold morning and a warm afternoon count as similar",
        low_open=True),
    "vpd_tolerance": _Range(
        0.0, 20.0, "hPa", "Reichstein et al. (2005) use 5 hPa; beyond 20 hPa, a hot dry "
        "afternoon's VPD (m), every record counts as similar", low_open=True),
    "e0_window_days": _Range(
        1.0, 92.0, "days", "a window needs a night; beyond a season E0 reads the seasonal "
        "course that short windows avoid (Reichstein et al. 2005)"),
    "e0_window_step_days": _Range(
        0.0, 92.0, "days", "at most the window length, or records between windows are "
        "never used", low_open=True),
    "e0_min_points": _Range(
        3, 92 * _PER_DAY, "records", "E0 and Rref need 3 records for a residual",
        whole=True),
    "e0_min_temperature_range": _Range(
        0.0, 25.0, "K", "Reichstein et al. (2005) use 5 K; night temperatures seldom span "
        "more than 25 K in a few weeks (m), so a larger range refuses every window",
        low_open=True),
    "e0_max_relative_error": _Range(
        0.0, 1.0, "", "a standard error as large as E0 itself cannot tell E0 from zero",
        low_open=True),
    "e0_best_windows": _Range(
        1, 366, "windows", "at most one window a day in a year", whole=True),
    "rref_window_days": _Range(
        1.0, 31.0, "days", "a window needs a night; Rref follows the seasonal course of "
        "respiration (4 days, Reichstein et al. 2005), which a month-long window flattens"),
    "rref_min_points": _Range(
        1, 31 * _PER_DAY, "records", "Rref with E0 fixed needs one record", whole=True),
    "rref_low_light_rg": _Range(
        0.0, 300.0, "W m-2", "0 turns the low-light rule off; above about 300 W m-2 the light "
        "response of most canopies bends, so a straight line no longer extrapolates to "
        "respiration (common practice (m))"),
    "daytime_window_days": _Range(
        1.0, 31.0, "days", "a window needs a day; the light response changes with the "
        "season (4 days, Lasslop et al. 2010), which a month-long window flattens"),
    "daytime_window_step_days": _Range(
        0.0, 31.0, "days", "at most the window length, or records between windows are "
        "never fitted", low_open=True),
    "daytime_min_points": _Range(
        5, 31 * _PER_DAY, "records", "the light response has 4 free parameters (alpha, "
        "beta0, k, Rref), so a fit needs 5 records", whole=True),
    "daytime_k_min_points": _Range(
        1, 31 * _PER_DAY, "records", "a count of records", whole=True),
    "daytime_beta0_max": _Range(
        50.0, 1000.0, "µmol m-2 s-1", "Lasslop et al. (2010) use 250 (m); below 50 the "
        "bound would cap the light-saturated uptake of productive crops (C4 maize beyond "
        "60 (m)), above 1000 it bounds nothing"),
    "daytime_consistency_z": _Range(
        1.0, 10.0, "standard errors", "below 1 most windows whose respiration agrees "
        "with their night data within noise would be refitted; beyond 10 (a chance below "
        "1e-22) nothing is, so write inf to keep only the bound rules", allow_inf=True),
    "daytime_rref_max_relative_error": _Range(
        0.05, 10.0, "", "below 0.05 nearly every window would be refitted on the night "
        "Rref (the two methods would no longer be independent); beyond 10 nothing is, so "
        "write inf to switch the rule off", allow_inf=True),
    "daytime_night_min_points": _Range(
        1, 31 * _PER_DAY, "records", "a count of records", whole=True),
    "random_error_draws": _Range(
        20, 100000, "", "below 20 draws the standard deviation itself is uncertain by more "
        "than 16 % (1/sqrt(2 n)); beyond 100000 only run time grows", whole=True),
    "random_error_rg_tolerance": _Range(
        0.0, 200.0, "W m-2", "beyond 200 W m-2 overcast and sunny records would pair",
        low_open=True),
    "random_error_tair_tolerance": _Range(
        0.0, 10.0, "°C", "beyond 10 °C a cold and a warm record would pair", low_open=True),
    "random_error_vpd_tolerance": _Range(
        0.0, 20.0, "hPa", "beyond 20 hPa a humid and a dry record would pair",
        low_open=True),
    "agreement_margin": _Range(
        0.0, 1.0, "", "a difference as large as the mean (one method giving a third of the "
        "other) is a disagreement at any site", low_open=True),
}

#: E0 [K] above which no respiration is meant: 1000 K gives a Q10 of about 15 at 10 °C,
#: where soil and ecosystem respiration show Q10 of about 1.5-4 (Lloyd & Taylor 1994 (m)).
_E0_HIGHEST = 1000.0
_PERCENTILES = (5, 16, 50, 84, 95)


def setting_text(value) -> str:
    """Show a setting's value as a user wrote it in TOML, not as a Python repr.

    Text in double quotes, true/false, numbers without a type wrapper, lists in
    brackets; NumPy scalars as the numbers they hold.

    Examples
    --------
    >>> setting_text("soil"), setting_text(True), setting_text((5, 42)), setting_text(1e9)
    ('"soil"', 'true', '[5, 42]', '1000000000.0')
    """
    value = _plain(value)
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        number = float(value)
        return "nan" if math.isnan(number) else ("inf" if number == math.inf else
                                                 "-inf" if number == -math.inf else repr(number))
    if isinstance(value, (list, tuple)) or type(value).__name__ == "ndarray":
        return "[" + ", ".join(setting_text(v) for v in value) + "]"
    if value is None:
        return "nothing"
    if isinstance(value, dict):
        return "a table {" + ", ".join(f"{k} = {setting_text(v)}" for k, v in value.items()) + "}"
    return str(value)


def _choices_text(choices) -> str:
    """``"a", "b" or "c"``."""
    quoted = [setting_text(c) for c in choices]
    return ", ".join(quoted[:-1]) + f" or {quoted[-1]}" if len(quoted) > 1 else quoted[0]


def _number_text(number: float) -> str:
    return f"{number:g}" if number != math.inf else "inf"


def _refuse(name: str, value, expected: str, problem: str = "") -> None:
    """Raise the one-line error: the setting, what was found, what is allowed."""
    found = setting_text(value)
    wants_number = expected.startswith(("a number", "a whole number", "0 (", "at most"))
    if problem:
        pass
    elif isinstance(value, str) and wants_number:
        problem = "is text"
        expected = expected.replace(";", ", written without quotes;", 1)
    elif isinstance(value, (int, float)) and not isinstance(value, bool) and wants_number:
        problem = ("is not a whole number" if expected.startswith(("a whole", "0 ("))
                   and not isinstance(value, int) else "is out of range")
    else:
        problem = "is not allowed"
    raise ConfigError(f"[processing] {name} = {found} {problem}: expected {expected}")


def _expected_range(rule: _Range) -> str:
    kind = "a whole number" if rule.whole else "a number"
    unit = f" {rule.unit}" if rule.unit else ""
    if rule.low_open:
        span = f"above {_number_text(rule.low)} and at most {_number_text(rule.high)}{unit}"
    else:
        span = f"from {_number_text(rule.low)} to {_number_text(rule.high)}{unit}"
    return f"{kind} {span}; {rule.why}"


def _check_range(name: str, value, rule: _Range) -> None:
    if rule.whole:
        ok = isinstance(value, int) and not isinstance(value, bool)
    else:
        ok = (isinstance(value, (int, float)) and not isinstance(value, bool)
              and not math.isnan(value) and (math.isfinite(value) or rule.allow_inf))
    if ok:
        ok = ((value > rule.low if rule.low_open else value >= rule.low)
              and (value <= rule.high or rule.allow_inf and value == math.inf))
    if not ok:
        _refuse(name, value, _expected_range(rule))


def _plain(value):
    """A NumPy scalar (np.float64, np.int64, np.bool_) as the Python value it holds."""
    if type(value).__module__ == "numpy" and getattr(value, "shape", None) == ():
        return value.item()
    return value


def _items(value) -> tuple:
    return value if isinstance(value, tuple) else (value,)


def _plain_numbers(config: Config) -> None:
    """Replace NumPy scalars by Python numbers, and lists of tuple settings by tuples.

    A Python caller may give np.float64, np.int64 or [16, 50, 84].

    NumPy is not imported here: ``import fluxpart`` and ``Config()`` stay light.
    """
    for field in fields(config):
        value = getattr(config, field.name)
        if isinstance(value, list) and isinstance(field.default, tuple):
            value = tuple(value)       # a Python caller's [16, 50, 84], as TOML arrays are
            object.__setattr__(config, field.name, value)
        plain = tuple(_plain(v) for v in value) if isinstance(value, tuple) else _plain(value)
        if [type(v) for v in _items(plain)] != [type(v) for v in _items(value)]:
            object.__setattr__(config, field.name, plain)


def _check(config: Config) -> None:
    _plain_numbers(config)
    seed = config.seed
    if not isinstance(seed, int) or isinstance(seed, bool) or seed < 0:
        _refuse("seed", seed, "a whole number >= 0; the seed of every random draw")
    from .budget_calendar import _month_day
    _month_day(config.year_start)  # ConfigError naming [processing] year_start
    object.__setattr__(config, "events", _events(config.events))
    for name, choices in _CHOICES.items():
        value = getattr(config, name)
        if not isinstance(value, str) or value not in choices:
            close = difflib.get_close_matches(value, choices, n=1, cutoff=0.6) \
                if isinstance(value, str) else []
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            _refuse(name, value, f"one of {_choices_text(choices)}{hint}")
    for name, rule in _RANGES.items():
        value = getattr(config, name)
        if name == "ustar_min_threshold" and value is None:
            continue
        if name == "ustar_bootstrap_draws" and value == 0 and not isinstance(value, bool):
            continue
        if name == "ustar_bootstrap_draws" and isinstance(value, int) and 0 < value < 10:
            _refuse(name, value, f"0 (no bootstrap) or a whole number from 10 to 10000; "
                    f"{rule.why}")
        _check_range(name, value, rule)
    for window, step in (("e0_window_days", "e0_window_step_days"),
                         ("daytime_window_days", "daytime_window_step_days")):
        if getattr(config, step) > getattr(config, window):
            _refuse(step, getattr(config, step),
                    f"at most {window} = {setting_text(getattr(config, window))} days: records "
                    "between windows would never be used")
    for count, window in (("e0_min_points", "e0_window_days"),
                          ("rref_min_points", "rref_window_days"),
                          ("daytime_min_points", "daytime_window_days"),
                          ("daytime_k_min_points", "daytime_window_days"),
                          ("daytime_night_min_points", "daytime_window_days")):
        days = getattr(config, window)
        most = int(_PER_DAY * days)
        if getattr(config, count) > most:
            _refuse(count, getattr(config, count),
                    f"at most {most}, every record of a {window} = {setting_text(days)} window "
                    "at 30 min; more can never be met, so every window would be refused")
    scenarios = config.ustar_scenarios
    if (isinstance(scenarios, tuple) and all(_is_number(p) for p in scenarios)
            and list(scenarios) != sorted(scenarios)):
        _refuse("ustar_scenarios", scenarios, "percentiles in increasing order, e.g. [16, 50, 84]")
    if (not isinstance(scenarios, tuple) or len(set(scenarios)) != len(scenarios)
            or any(not isinstance(p, int) or isinstance(p, bool) or p not in _PERCENTILES
                   for p in scenarios)):
        _refuse("ustar_scenarios", scenarios, "a list of distinct bootstrap percentiles from "
                f"{setting_text(_PERCENTILES)}, or [] for none")
    low_high = config.e0_bounds
    if (not isinstance(low_high, tuple) or len(low_high) != 2
            or not all(_is_number(v) for v in low_high)
            or not 0 < low_high[0] < low_high[1] <= _E0_HIGHEST):
        _refuse("e0_bounds", low_high, f"[low, high] in K with 0 < low < high <= "
                f"{_E0_HIGHEST:g}; E0 = {_E0_HIGHEST:g} K is a Q10 of about 15 at 10 °C, "
                "where respiration shows 1.5-4 (m)")
    curvature = config.daytime_curvature
    if not (curvature in ("fit", "average") or (_is_number(curvature) and 0 <= curvature < 1)):
        _refuse("daytime_curvature", curvature, "\"fit\", \"average\" or a number from 0 (the "
                "rectangular hyperbola) up to, not including, 1",
                problem="is out of range" if _is_number(curvature) else "")
    if not isinstance(config.daytime_night_in_fit, bool):
        _refuse("daytime_night_in_fit", config.daytime_night_in_fit, "true or false")
    widths = config.daytime_e0_window_days
    if (not isinstance(widths, tuple) or not widths
            or not all(_is_number(w) and 1 <= w <= 92 for w in widths)
            or list(widths) != sorted(set(widths))):
        _refuse("daytime_e0_window_days", widths, "a list of increasing widths from 1 to 92 "
                "days, e.g. [4, 8, 16]; a window needs a night, and beyond a season E0 reads "
                "the seasonal course")
    fallback = config.e0_fallback
    if fallback is not None and (not _is_number(fallback) or fallback <= 0):
        _refuse("e0_fallback", fallback, "a positive number of K inside e0_bounds, or leave it "
                "out", problem="is out of range" if _is_number(fallback) else "")
    if fallback is not None and isinstance(low_high, tuple) and not (
            low_high[0] <= fallback <= low_high[1]):
        _refuse("e0_fallback", fallback, f"a value inside e0_bounds = {setting_text(low_high)} "
                "K, the range a fitted E0 must lie in", problem="is out of range")


def _events(events) -> tuple:
    """``Config.events`` as sorted distinct ISO 8601 texts (``YYYY-MM-DD`` or
    ``YYYY-MM-DDTHH:MM``); ConfigError naming the setting for anything else."""
    items = events if isinstance(events, (tuple, list)) else (events,)
    out = []
    for item in items:
        moment = item
        if isinstance(item, str):
            try:
                moment = datetime.datetime.fromisoformat(item.strip())
            except ValueError:
                moment = None
        elif isinstance(item, datetime.date) and not isinstance(item, datetime.datetime):
            moment = datetime.datetime(item.year, item.month, item.day)
        if (not isinstance(moment, datetime.datetime) or moment.tzinfo is not None
                or moment.second or moment.microsecond):
            # of several events, the one refused (a list of a season's cuts is long)
            which = (f"is not allowed ({setting_text(item)})" if len(items) > 1
                     else "is not allowed")
            _refuse("events", events, "a list of dates \"YYYY-MM-DD\" or date-times "
                    "\"YYYY-MM-DD HH:MM\" in the record's local standard time (no UTC "
                    "offset), e.g. [\"2021-07-20\"] for a harvest on 20 July 2021",
                    problem=which)
        out.append(moment.strftime("%Y-%m-%d") if moment.time() == datetime.time()
                   else moment.strftime("%Y-%m-%dT%H:%M"))
    return tuple(sorted(set(out)))


def _is_number(value) -> bool:
    """A finite int or float (TOML's nan and inf are never a valid setting)."""
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value))
