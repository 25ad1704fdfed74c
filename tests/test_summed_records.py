"""NEE summed, not averaged, where the record turns to hourly intervals (round mistakes51)."""
import numpy as np
import pandas as pd

from fluxpart.summed_records import summed_stretch


def _record(hourly):
    """Invented half-hourly NEE of 60 days [µmol m-2 s-1] (a diurnal course of uptake by
    day, release by night, noise), the last 30 days written hourly by `hourly`; returns the
    regular record's NEE, its starts and the file's starts."""
    rng = np.random.default_rng(3)
    index = pd.date_range("2021-06-01", periods=60 * 48, freq="30min")
    hours = (index.hour + index.minute / 60).to_numpy()
    nee = 3.0 - 12.0 * np.clip(np.sin(np.pi * (hours - 6) / 12), 0, None) \
        + rng.normal(0, 1.0, len(index))
    later = index >= pd.Timestamp("2021-07-01")
    pairs = nee[later].reshape(-1, 2)
    written = pd.Series(np.nan, index=index)
    written[~later] = nee[~later]
    written[index[later][1::2]] = hourly(pairs, axis=1)
    starts = index[~later].append(index[later][1::2])
    return written.to_numpy(), index, starts


def test_an_hour_summed_is_named_and_an_hour_averaged_is_not():
    """NEE is a rate (Aubinet et al. 2012, ch. 1 (m)): an hour's value is the mean of its
    two half-hours; their sum is twice it. Known-truth recovery on invented data: the sum
    from 1 July is named with its factor, the mean is not, nor a record without a change."""
    nee, index, starts = _record(np.sum)
    text = summed_stretch(nee, index, starts, 30, "co2")
    assert text is not None and "'co2'" in text
    factors = [float(part.split()[-1]) for part in text.split(" times (")[:-1]]
    assert len(factors) == 2 and all(1.6 < f < 2.4 for f in factors), text
    assert "2021-07-01" in text and "NEE's release and of its uptake in" in text
    one_sign = summed_stretch(np.abs(nee), index, starts, 30)     # no uptake: one sign asked
    assert one_sign is not None and "NEE's release in" in one_sign, one_sign
    nee, index, starts = _record(np.mean)
    assert summed_stretch(nee, index, starts, 30) is None
    assert summed_stretch(nee, index, index, 30) is None



def test_hourly_means_at_leaf_out_are_not_named_as_sums():
    """Leaf-out of a deciduous canopy doubles the day's uptake or more within a fortnight
    while the night's release hardly moves (a fact of the trade: a beech stand's midday NEE
    goes from a few to -15 or -20 umol m-2 s-1 in two to three weeks of May (m)). An
    honest change to hourly means there is no sum: |NEE| doubles, its release does not.
    Invented data (known truth). Named on main 59d1475 ("grows 2.19 times")."""
    rng = np.random.default_rng(5)
    index = pd.date_range("2021-04-16", periods=60 * 48, freq="30min")
    days = ((index - index[0]) / pd.Timedelta(days=1)).to_numpy()
    hours = (index.hour + index.minute / 60).to_numpy()
    leaves = 1.0 + np.clip((days - 27) / 10, 0, 1)            # uptake x2 from 13 May
    nee = 3.0 - 9.0 * leaves * np.clip(np.sin(np.pi * (hours - 6) / 12), 0, None) \
        + rng.normal(0, 0.5, len(index))
    later = index >= pd.Timestamp("2021-05-16")
    written = pd.Series(np.nan, index=index)
    written[~later] = nee[~later]
    written[index[later][1::2]] = nee[later].reshape(-1, 2).mean(axis=1)
    starts = index[~later].append(index[later][1::2])
    assert summed_stretch(written.to_numpy(), index, starts, 30, "co2") is None


def test_a_crop_growing_across_a_change_to_hourly_means_is_not_named():
    """A maize canopy doubles its largest uptake in a fortnight or two; a logger turned to
    hourly MEANS in that fortnight sees |NEE| grow across the change as much as beside it
    (falsealarm53: an invented maize, 1.77 across the change on 14 June, 1.41 a fortnight
    beside it). The season's growth (season_trend) is taken out; the same record written
    as hourly SUMS still doubles beyond it and is named."""
    rng = np.random.default_rng(5)
    index = pd.date_range("2022-05-17", periods=56 * 48, freq="30min")
    hours = (index.hour + index.minute / 60).to_numpy()
    days = ((index - index[0]) / pd.Timedelta(days=1)).to_numpy()
    capacity = 2.0 * 1.8 ** (days / 14)                   # x1.8 a fortnight
    nee = 3.0 - capacity * np.clip(np.sin(np.pi * (hours - 6) / 12), 0, None) \
        + rng.normal(0, 0.5, len(index))
    later = index >= pd.Timestamp("2022-06-14")
    pairs = nee[later].reshape(-1, 2)
    starts = index[~later].append(index[later][1::2])
    for hourly, named in ((np.mean, False), (np.sum, True)):
        written = pd.Series(np.nan, index=index)
        written[~later] = nee[~later]
        written[index[later][1::2]] = hourly(pairs, axis=1)
        text = summed_stretch(written.to_numpy(), index, starts, 30)
        assert (text is not None) is named


def test_a_sum_after_a_cold_fortnight_is_still_named():
    """A cold fortnight a month before the change lowers the night's release by a third
    (a weather spell, no season's growth): the release's 'season' then reads 1.30 times a
    fortnight, and taking that out of a sum's release growth (1.73: the noise of two
    half-hours adds as its square root, so a sum's 99th percentile is under twice) left
    1.33, below 2 / 1.4, and the sum went unnamed (review68: 182 of 601 sums on trial 27's
    site-years). A season is counted from the rule's own tolerance, ``UNIT_FIT``, on.
    Known-truth recovery on invented data: the sum named, the mean not."""
    rng = np.random.default_rng(11)
    index = pd.date_range("2021-06-01", periods=60 * 48, freq="30min")
    days = ((index - index[0]) / pd.Timedelta(days=1)).to_numpy()
    hours = (index.hour + index.minute / 60).to_numpy()
    release = 3.0 * np.where(days < 15, 0.65, 1.0)                 # the cold fortnight
    nee = release - 12.0 * np.clip(np.sin(np.pi * (hours - 6) / 12), 0, None) \
        + rng.normal(0, 1.0, len(index))
    later = index >= pd.Timestamp("2021-07-01")
    starts = index[~later].append(index[later][1::2])
    for hourly, named in ((np.mean, False), (np.sum, True)):
        written = pd.Series(np.nan, index=index)
        written[~later] = nee[~later]
        written[index[later][1::2]] = hourly(nee[later].reshape(-1, 2), axis=1)
        text = summed_stretch(written.to_numpy(), index, starts, 30)
        assert (text is not None) is named, text
