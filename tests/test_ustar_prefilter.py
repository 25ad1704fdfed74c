"""Night NEE already filtered by a u* threshold (round mistakes42)."""
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import stats

from fluxpart.ustar_prefilter import MAX_SHARE_BELOW, MIN_RECORDS_BELOW, nee_filtered_by_ustar

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "quillmoor_grassland.csv"


def test_a_run_of_calm_nights_without_nee_is_no_chance():
    """Where a tenth of the nights above the cut hold NEE, the chance that 100 records
    below it hold none under the same rate is below 1e-4 (the binomial probability of 0
    successes, scipy.stats.binom), and a share of 5 % below cannot pass for a tenth."""
    assert stats.binom.pmf(0, MIN_RECORDS_BELOW, 0.1) < 1e-4
    assert stats.binom.cdf(int(MAX_SHARE_BELOW * 400), 400, 0.1) < 0.01


def test_quality_losses_at_low_ustar_are_quiet_and_a_ustar_filter_is_named():
    """Known-truth recovery on invented nights: quality tests that reject calm records
    more often (kept 0.15 + 0.7 (1 - exp(-u*/0.15)), most lost in calm air but never all,
    common practice) are not named; the same nights filtered below u* = 0.25 m s-1 are,
    with the cut and the columns."""
    rng = np.random.default_rng(7)
    ustar = rng.lognormal(np.log(0.2), 0.6, 6000)
    kept = rng.random(ustar.size) < 0.15 + 0.7 * (1.0 - np.exp(-ustar / 0.15))
    nee = np.where(kept, rng.normal(3.0, 1.0, ustar.size), np.nan)
    night = np.ones(ustar.size, dtype=bool)
    assert nee_filtered_by_ustar(nee, ustar, night) is None
    filtered = np.where(ustar < 0.25, np.nan, nee)
    text = nee_filtered_by_ustar(filtered, ustar, night,
                                 {"nee": "co2_flux", "ustar": "u_fric", "nee_flag": "qc"})
    assert text is not None and "below 0.25 m s-1" in text
    assert "'co2_flux'" in text and "'u_fric'" in text and "'qc'" in text
    # the day records are not judged: a filter of the nights alone
    assert nee_filtered_by_ustar(filtered, ustar, np.zeros(ustar.size, dtype=bool)) is None
    # a second year of another program's export, filtered, joined to a first that is not:
    # the whole record passes, the year alone is named
    both = np.concatenate([nee, filtered])
    twice = np.concatenate([ustar, ustar])
    assert nee_filtered_by_ustar(both, twice, np.ones(both.size, dtype=bool)) is None
    years = pd.DatetimeIndex(np.where(np.arange(both.size) < ustar.size,
                                            pd.Timestamp("2021-06-01"),
                                            pd.Timestamp("2022-06-01")))
    text = nee_filtered_by_ustar(both, twice, np.ones(both.size, dtype=bool), index=years)
    assert "night records in 2022 with u*" in text and "below 0.25 m s-1" in text


def test_an_outage_holding_the_calm_nights_is_no_filter():
    """Known-truth recovery on invented hourly nights: an analyser off for a month of
    calm nights (a winter inversion) leaves the calmest records without NEE, yet as one
    run of records missing on end, by day too; with the stamps given it is not named."""
    rng = np.random.default_rng(11)
    n = 24 * 200
    index = pd.date_range("2021-01-01", periods=n, freq="h")
    ustar = rng.lognormal(np.log(0.25), 0.25, n)
    winter = np.arange(n) < 24 * 30
    ustar[winter] *= 0.2                                    # the calm month
    nee = np.where(rng.random(n) < 0.6, 2.0, np.nan)
    nee[winter] = np.nan                                    # the analyser off
    night = np.ones(n, dtype=bool)
    assert nee_filtered_by_ustar(nee, ustar, night) is not None   # without the stamps
    assert nee_filtered_by_ustar(nee, ustar, night, index=index) is None


def test_the_example_as_written_is_quiet_and_filtered_below_its_threshold_is_named():
    """The invented Quillmoor grassland as written, and with night NEE removed below
    0.2 m s-1, near its detected threshold of 0.156 (night: Rg below the default 10 W m-2)."""
    frame = pd.read_csv(EXAMPLE).replace(-9999, np.nan)
    night = (frame["solar_down"] < 10.0).to_numpy()
    nee = frame["co2_exchange"].to_numpy(dtype=float)
    ustar = frame["friction_velocity"].to_numpy(dtype=float)
    assert nee_filtered_by_ustar(nee, ustar, night) is None
    with np.errstate(invalid="ignore"):
        filtered = np.where(night & (ustar < 0.2), np.nan, nee)
    assert "below 0.2 m s-1" in nee_filtered_by_ustar(filtered, ustar, night)


def test_ustar_written_0_where_the_sonic_was_lost_is_no_filter():
    """Invented nights: a sonic lost in a tenth of the records, its u* written as 0 and its
    NEE missing (the flux needs the sonic). u* is the fourth root of (u'w'^2 + v'w'^2)
    (Stull 1988 (m)), above 0 in any measured record, so those zeros are a code: not
    named as a u* filter at the lowest u* measured, while a filter at 0.25 m s-1 on the
    same record still is."""
    rng = np.random.default_rng(5)
    ustar = rng.lognormal(np.log(0.2), 0.6, 6000)
    kept = rng.random(ustar.size) < 0.15 + 0.7 * (1.0 - np.exp(-ustar / 0.15))
    nee = np.where(kept, rng.normal(3.0, 1.0, ustar.size), np.nan)
    lost = rng.random(ustar.size) < 0.1
    nee[lost], ustar[lost] = np.nan, 0.0
    night = np.ones(ustar.size, dtype=bool)
    assert nee_filtered_by_ustar(nee, ustar, night) is None
    text = nee_filtered_by_ustar(np.where(ustar < 0.25, np.nan, nee), ustar, night)
    assert text is not None and "below 0.25" in text    # the cut: 0.25 to 3 digits
