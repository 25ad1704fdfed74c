"""A missing-value code that is an ordinary reading of one column (round layouts31).

``[input] missing`` applies to every column. A code chosen for one column can be a value
another column measures as a matter of course: the reader's own hint for a flux written 0
where missing is "add 0 to [input] missing", and a logger that clamps global radiation at
0 then loses every night's Rg; a code of 0 blanks air and soil temperatures at the freezing
point. Both readings, "no value" and "measured", pass every range check, and they move the
budget: on the invented grassland example with Rg clamped at 0 by night, ``missing =
[-9999, 0]`` moved the daytime GPP by +23.6 g C m-2 and the u* threshold from 0.156 to
0.163 m s-1, without a word. Such a code is refused naming both readings and the setting of
each; :data:`fluxpart.io` reads codes meant for some columns only from ``[input]
missing_by_variable``.

Two kinds of ordinary value are told (our choices, argued in each constant):

* Rg: a pyranometer reads about 0 with the sun down (within its thermal offset of a few
  W m-2, WMO Guide to Instruments and Methods of Observation, vol. I, ch. 7 (m)), and a
  logger that clamps negative readings writes exactly 0 every night. A code within
  :data:`RG_NIGHT_CODE` of 0 whose cells lie at night (:data:`NIGHT_SHARE`) is a reading.
* any other column: a code lying among the column's values, as frequent as the values one
  resolution step either side of it (a measured quantity is continuous: at the file's
  resolution one value is about as frequent as its neighbours), is a reading; a code far
  more frequent than its neighbours (:data:`SPIKE_RATIO`) is a logger's code, as the NEE
  zero-code rule of :mod:`fluxpart.unit_checks` judges it.
* a code at the bound of a column's values (VPD written 0 at saturation, since round
  layouts32): a reading where the records beside its cells in time lie near it
  (:data:`BOUND_NEAR`), as a continuous quantity reaching its bound does; an outage's
  neighbours lie anywhere.

References
----------
World Meteorological Organization (2018). Guide to Instruments and Methods of Observation,
vol. I, chapter 7, Measurement of radiation. WMO-No. 8 (m)
"""
from __future__ import annotations

import numpy as np

__all__ = ["JUDGED_MAGNITUDE", "NIGHT_POTENTIAL", "ordinary_code_message"]

#: Codes of this magnitude or more are not judged [file units]: -9999, -6999, 9999 lie
#: outside every column's range of readings (a temperature, radiation, flux, VPD, RH or
#: u* of a thousand or more in any unit the reader takes is no reading).
JUDGED_MAGNITUDE = 1000.0
#: Share of a column's cells holding a value that a code must blank to be judged [1]. Our
#: choice: a twentieth of a driver's or a flux's records changes its fills and fits; fewer
#: (a few freezing-point temperatures in a year) are gap-filled like any outage.
MIN_SHARE = 0.05
#: Least number of such cells [records]: a day of half-hourly records (our choice).
MIN_CELLS = 48
#: Rg (and PPFD) codes within this distance of 0 are judged against the night [W m-2,
#: µmol m-2 s-1]: a pyranometer's thermal offset at night, a few W m-2 (WMO Guide, vol. I,
#: ch. 7 (m)).
RG_NIGHT_CODE = 5.0
#: Share of an Rg code's cells lying where the sun is down that makes the code a night
#: reading [1]. Our choice: outages fall by day and by night alike (about half at night);
#: nine in ten at night is no outage.
NIGHT_SHARE = 0.9
#: Potential radiation (interval mean) below which a record counts as night here
#: [W m-2]: the sun below about 2 degrees of elevation (1361 W m-2 times sin 2 degrees is
#: 47), where the diffuse light is a few W m-2 and a clamping logger may write 0. So the
#: records holding sunrise and sunset count with the night (our choice).
NIGHT_POTENTIAL = 50.0
#: A code this many times more frequent than the mean of the two values one resolution
#: step beside it is a logger's code, not a reading (the NEE zero-code rule's ratio,
#: ``unit_checks._ZERO_SPIKE_RATIO``).
SPIKE_RATIO = 10.0
#: A code at the bound of a column's values whose cells' neighbours in time lie a median
#: distance from it below this share of the column's median distance from it is a
#: reading [1] (round layouts32). Our choice: an outage falls at any value, so the ratio
#: is about 1 for a code (0.95-1.04 for 0 put at 1000 random records of the invented
#: grassland's VPD, u*, RH and air temperature); VPD written 0 at saturation gives 0.02
#: there, since humidity changes slowly; a fifth lies far from both.
BOUND_NEAR = 0.2
#: Share of a column's cells a code at its bound must blank to be judged [1]: 1 %, the
#: share of exact zeros at which the NEE zero-code rule judges (``unit_checks``). Below
#: :data:`MIN_SHARE`, since such cells are no outage gap-filled like any other: they are
#: the column's most humid (or calmest) records, blanked together (the invented grassland
#: example's 362 VPD zeros, 2.1 %, under ``missing = [-9999, 0]`` moved its annual NEE
#: from -241.67 to -240.42 and its daytime Reco by -2.8 g C m-2).
BOUND_MIN_SHARE = 0.01


def ordinary_code_message(name: str, column: str, code: float, values, night=None,
                          source: str = "") -> str | None:
    """A refusal where the missing code `code` is an ordinary reading of a column.

    Parameters
    ----------
    name : str
        Canonical variable of the column (``"rg"``, ``"tair"``, ...).
    column : str
        The column's name in the file.
    code : float
        A numeric missing code of ``[input] missing``, in the file's unit.
    values : array_like
        The column's numbers as written, the code not applied (NaN where empty or another
        code) [file unit].
    night : array_like of bool, optional
        True where the sun is down for the record (potential radiation below
        :data:`NIGHT_POTENTIAL`); needed for Rg.
    source : str
        The file, named in the message.

    Returns
    -------
    str or None
        One line naming the column, the cells, why they are readings, and the setting of
        each reading; None where the code is no ordinary value of the column.
    """
    values = np.asarray(values, dtype=float)
    present = np.isfinite(values)
    tolerance = 1e-6 * max(1.0, abs(code))
    is_code = present & (np.abs(values - code) <= tolerance)
    cells = int(is_code.sum())
    count = int(present.sum())
    if abs(code) >= JUDGED_MAGNITUDE or cells < MIN_CELLS:
        return None
    others = values[present & ~is_code]
    if (name not in ("rg", "ppfd") and others.size
            and not (others.min() < code < others.max())):
        if cells < BOUND_MIN_SHARE * count:
            return None
        return _bound_reading(name, column, code, values, present, is_code, others, source)
    # a code inside the values of a quantity held at it for days (soil at 0 degC through a
    # thaw) is too rare for the share below, or too frequent beside its neighbours, and was
    # blanked without a word: the neighbours in time tell it too (review38)
    held = (name not in ("rg", "ppfd", "nee") and others.size
            and cells >= BOUND_MIN_SHARE * count)
    if cells < MIN_SHARE * count:
        if held:
            return _bound_reading(name, column, code, values, present, is_code, others,
                                  source, at_bound=False)
        return None
    if name in ("rg", "ppfd"):
        if night is None or abs(code) > RG_NIGHT_CODE:
            return None
        at_night = float(np.asarray(night, dtype=bool)[is_code].mean())
        if at_night < NIGHT_SHARE:
            return None
        why = (f"{100 * at_night:.0f} % of them with the sun down, where a pyranometer reads about "
               "0 (a logger that clamps negative readings writes exactly 0)")
    else:
        if others.size == 0:
            return None
        distance = np.abs(others - code)
        step = float(distance.min())
        beside = int(np.count_nonzero(distance <= step * (1 + 1e-9)))
        if cells > SPIKE_RATIO * max(beside / 2.0, 1.0):
            # far more frequent than its neighbours: a code, unless held at it in time
            return _bound_reading(name, column, code, values, present, is_code, others,
                                  source, at_bound=False)
        why = (f"about as often as the values {step:.3g} beside it ({beside} cells), as a "
               f"measured value is, among values from {others.min():g} to {others.max():g}")
    return _message(name, column, code, cells, count, why, source)


def _message(name, column, code, cells, count, why, source) -> str:
    shown = f"{code:g}"
    where = f" of {source!r}" if source else ""
    # the example of "other columns" is another column than this one (review37: a refused
    # NEE column was offered nee = [0], which blanks its own readings)
    example = "rg" if name == "nee" else "nee"
    return (f"[input] missing lists {shown}, an ordinary value of column {column!r} ({name})"
            f"{where}: {cells} of its {count} values are {shown}, {why}; read as no value "
            f"they leave {name} missing there, read as measured they stay: if {shown} means "
            f"no value only in other columns, move it from [input] missing to "
            f"[input.missing_by_variable] for those (e.g. {example} = [{shown}]); if it means no "
            f"value in {column!r} too, add {name} = [{shown}] to [input.missing_by_variable]")


def _bound_reading(name, column, code, values, present, is_code, others,
                   source, at_bound=True) -> str | None:
    """A code at or beyond the bound of a column's values that the column reaches as a
    reading: VPD written 0 at saturation (a logger computing VPD from an RH clamped at
    100 %, or rounding), u* 0 on a calm night.

    A code at the bound has no neighbouring values on both sides to compare its frequency
    with (:data:`SPIKE_RATIO`), and a logger clamping at the bound writes it far more
    often than any value beside it. Time tells instead: a measured quantity changes little
    from one record to the next, so the records beside a reading of the bound lie near it,
    while an outage falls at any value, its neighbours as far from the code as the
    column's values are (a median distance ratio of about 1). The code is a reading where
    the median distance of its cells' neighbours (the records just before and after, in
    file order, holding another value) is below :data:`BOUND_NEAR` of the column's median
    distance from it.

    With ``at_bound`` False (review38) the same test judges a code inside the column's
    values that the frequency rule calls a code or leaves unjudged: a quantity held at it
    for days (soil at 0 degC through a thaw, the latent heat of freezing holding it there,
    Outcalt et al. 1990, "zero curtain" (m)) has neighbours within a step of it.

    Returns
    -------
    str or None
        The refusal of :func:`ordinary_code_message`, or None.
    """
    index = np.flatnonzero(is_code)
    beside = np.concatenate([index - 1, index + 1])
    beside = beside[(beside >= 0) & (beside < values.size)]
    beside = beside[present[beside] & ~is_code[beside]]
    if beside.size < MIN_CELLS:
        return None
    near = float(np.median(np.abs(values[beside] - code)))
    spread = float(np.median(np.abs(others - code)))
    if not spread > 0.0 or near >= BOUND_NEAR * spread:
        return None
    if at_bound:
        place, example = "at the bound of its values", "VPD at saturation"
    else:
        place, example = "among its values", "soil at 0 degC through a thaw"
    why = (f"{place} (the others from {others.min():g} to "
           f"{others.max():g}), and the records beside them in time lie a median {near:.3g} "
           f"from it where the column lies a median {spread:.3g} from it: a quantity "
           f"reaching {code:g} as a reading ({example}), not an outage, whose "
           "neighbours lie anywhere")
    return _message(name, column, code, int(is_code.sum()), int(present.sum()), why, source)
