"""Dark records that take up CO2: the nighttime partitioning's premise, month by month.

Both partitioning methods take NEE in the dark as ecosystem respiration (the nighttime
method fits its temperature response on it; the daytime method takes E0 from it), and
respiration is never negative. Where most dark records of a month take up CO2, that
premise fails: plants with crassulacean acid metabolism (CAM: agave, pineapple, opuntia)
open their stomata at night and fix CO2 then (Osmond 1978), and an open-path analyser
heated above the air in cold weather reports an apparent uptake (Burba et al. 2008).
The nighttime fit then fails (E0 out of bounds) or, worse, returns a respiration that is
not one. NEE gap filling does not rest on the premise; the NEE budget does not where
plants take the CO2 up, but a heated analyser's apparent uptake is in the measured NEE
itself, by day too, and biases the budget (an invented steppe whose self-heating correction
left 15 % of the heating term at -15 deg C: NEE -28 g C m-2 a year, the interval +-5;
trial_eighteenth.py), which the note says.

:func:`dark_uptake_months` tests each month with a one-sided sign test on the dark
records' measured NEE; :func:`uptake_note` words the months that fail;
:func:`named_in_failure` appends that note to a partitioning method's error, so that
the one ``error:`` line a user sees names the cause.
"""

from __future__ import annotations

from contextlib import contextmanager

import numpy as np
import pandas as pd

from .errors import InsufficientDataError

__all__ = ["DARK_SUN_ELEVATION", "MIN_DARK_RECORDS", "SIGN_TEST_Z", "STAGE",
           "dark_uptake_months", "named_in_failure", "uptake_note"]

#: Sun elevation [degrees] below which a record counts as dark: the end of civil
#: twilight, sun 6 degrees below the horizon (the astronomical definition (m)). Above it
#: the sky still lights a canopy enough for some photosynthesis, and the night mask of
#: the methods (Rg below 10 W m-2) includes such twilight records.
DARK_SUN_ELEVATION = -6.0

#: One-sided sign-test statistic above which a month's dark records take up CO2 in a
#: majority that chance does not explain. 4 standard deviations: one-sided p of about
#: 3e-5 per month (normal approximation of the binomial, e.g. Conover 1999 (m)), so over
#: the 120 months of a ten-year record a false call has a chance below 0.4 % even where
#: serial correlation of the random error halves the effective number of records
#: (z 4 is then about 2.8, p 0.003 per month, and it is needed only where respiration
#: is about zero, since respiration puts the median above zero).
SIGN_TEST_Z = 4.0

#: Fewest dark records with measured NEE for a month to be tested (a day's worth of
#: half hours; fewer records give a sign test too weak to call anything at z 4).
MIN_DARK_RECORDS = 48

#: The stage named in the preflight finding and looked for by :func:`named_in_failure`.
STAGE = "nighttime partitioning (uptake in the dark)"


def dark_uptake_months(index, nee, sun_elevation) -> pd.DataFrame:
    """Per calendar month, the sign test of the dark records' measured NEE against 0.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Interval starts of the records (local standard time).
    nee : array_like
        Measured (screened) NEE [µmol m-2 s-1]; NaN where missing or rejected.
    sun_elevation : array_like
        Sun elevation at each record's middle [degrees].

    Returns
    -------
    pandas.DataFrame
        One row per month with dark records, indexed by the month (a ``Period``):
        ``records`` (dark records with NEE), ``negative`` (of them below 0),
        ``median`` [µmol m-2 s-1] and ``z``, the one-sided sign-test statistic
        ``(negative - 0.5 - records / 2) / (sqrt(records) / 2)`` (normal approximation
        with continuity correction; a value 0 counts as not negative).

    Notes
    -----
    Under the premise, each dark record is a respiration >= 0 plus a random error
    symmetric about 0 (Richardson et al. 2006 found it double-exponential), so a record
    is negative with a probability of at most 1/2 and the count of negative records is
    at most Binomial(n, 1/2). A large positive ``z`` rejects the premise.

    References
    ----------
    Conover, W. J. (1999). Practical Nonparametric Statistics, 3rd ed. Wiley, section 3.4
    (the sign test) (m).

    Richardson, A. D., et al. (2006). A multi-site analysis of random error in tower-based
    measurements of carbon and energy fluxes. Agricultural and Forest Meteorology 136,
    1-18. doi:10.1016/j.agrformet.2006.01.007
    """
    index = pd.DatetimeIndex(index)
    nee = np.asarray(nee, dtype=float)
    elevation = np.asarray(sun_elevation, dtype=float)
    with np.errstate(invalid="ignore"):
        dark = (elevation < DARK_SUN_ELEVATION) & np.isfinite(nee)
    columns = ["records", "negative", "median", "z"]
    if not dark.any():
        return pd.DataFrame(columns=columns, dtype=float)
    values = pd.Series(nee[dark], index=index[dark].to_period("M"))
    grouped = values.groupby(level=0, sort=True)
    records = grouped.size().astype(float)
    negative = grouped.apply(lambda v: float((v < 0).sum()))
    median = grouped.median()
    z = (negative - 0.5 - records / 2) / (np.sqrt(records) / 2)
    return pd.DataFrame({"records": records, "negative": negative, "median": median,
                         "z": z})[columns]


def uptake_note(months: pd.DataFrame, column: str = "nee") -> str | None:
    """The months whose dark records take up CO2, in one line; None where there are none.

    Parameters
    ----------
    months : pandas.DataFrame
        :func:`dark_uptake_months`.
    column : str, optional
        The file column NEE was read from, to name it.

    Returns
    -------
    str or None
        What was found, what it means for the partitioning and what remains valid.

    References
    ----------
    Osmond, C. B. (1978). Crassulacean acid metabolism: a curiosity in context. Annual
    Review of Plant Physiology 29, 379-414 (m).

    Burba, G. G., et al. (2008). Addressing the influence of instrument surface heat
    exchange on the measurements of CO2 flux from open-path gas analyzers. Global Change
    Biology 14, 1854-1876 (m).
    """
    tested = months[months["records"] >= MIN_DARK_RECORDS]
    failing = tested[tested["z"] > SIGN_TEST_Z]
    if failing.empty:
        return None
    names = [str(period) for period in failing.index]
    shown = ", ".join(names[:6]) + (f" and {len(names) - 6} more" if len(names) > 6 else "")
    share = failing["negative"].sum() / failing["records"].sum()
    median = float(np.median(failing["median"]))
    return (
        f"{column!r}: the measured NEE of the dark records (sun more than "
        f"{-DARK_SUN_ELEVATION:g} degrees below the horizon) is below 0 in most records of "
        f"{len(failing)} of {len(tested)} months ({shown}; {100 * share:.0f} % of their records "
        f"negative, median of the months' medians {median:.2f} µmol m-2 s-1). Respiration "
        "is never negative, so CO2 is taken up in the dark: plants with crassulacean acid "
        "metabolism (agave, pineapple, opuntia) fix it at night, or an open-path analyser "
        "heated above cold air reports an apparent uptake, or the column holds another "
        "quantity. Both partitioning methods read dark NEE as respiration, so their GPP and "
        "Reco are not valid here. The NEE gap filling does not rest on it, and the NEE "
        "budget stands where plants take the CO2 up; where the analyser's heat or another "
        "quantity causes it, the measured NEE itself is biased, by day too (correct the "
        "heating before reading: Burba et al. 2008), and so is the budget (where a "
        "partitioning fit fails on these records, [processing] e0_fallback lets the run give "
        "them)")


@contextmanager
def named_in_failure(findings):
    """Append the preflight's uptake-in-the-dark note to a partitioning error raised within.

    Parameters
    ----------
    findings : list of fluxpart.preflight.Finding
        The record's preflight findings.

    Yields
    ------
    None
        The block runs unchanged; only an error it raises is reworded.

    Raises
    ------
    InsufficientDataError
        The error raised within, its message followed by the note where the findings
        hold one (the same error class, chained to the original).

    References
    ----------
    Osmond (1978) and Burba et al. (2008), as in :func:`uptake_note` (m): the causes
    the note names.
    """
    note = next((f.message for f in findings if f.stage == STAGE), None)
    try:
        yield
    except InsufficientDataError as error:
        if note is None:
            raise
        raise type(error)(f"{error} The likely cause, found before fitting: {note}") from error
