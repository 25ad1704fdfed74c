"""A graded quality flag whose middle grade ``flag_accept`` rejects (round leftovers61).

Many towers write a graded flag of their flux: 0 the best records, 1 records usable for
budgets, 2 records to discard (the 0-1-2 scheme of Mauder & Foken 2004, common practice
since). With the default ``flag_accept = [0]`` the middle grade is rejected too, and at a
site whose grade 1 is frequent a third of the records holding an NEE value were gap
filled instead of used, while ``check`` listed no problem, only the count (the reader
warned from half of them on). This names such a flag where it rejects over a third of the
records with an NEE value, the flag keeps only the best grade of three or more, and some
of the rejected records hold a grade between it and the worst: the codes that may mean
"usable".

Why a third: a year's eddy-covariance record loses about a third of its records to every
cause together (instrument failures, rain, the site's quality tests, low turbulence:
average data coverage of about 65 %, Falge et al. 2001 (m)); a site flag that alone
rejects more than that share of the records that do hold a value rejects more than a
typical year loses in all, and is worth a look at its codes. Why the middle grade only:
a flag of two codes (0 kept, 1 or 2 rejected: a sea sector, a failed test) rejecting a
third says nothing about ``flag_accept``, which keeps all it can (a coastal tower's
sector flag rejects half its records rightly), and a flag rejecting over half is already
warned by the reader whatever its codes.

References
----------
Mauder, M., & Foken, T. (2004). Documentation and instruction manual of the eddy
covariance software package TK2. Arbeitsergebnisse 26, Universität Bayreuth (the 0-1-2
flag scheme: 0 high quality, 1 for budgets, 2 discard) (m).
Falge, E., et al. (2001). Gap filling strategies for defensible annual sums of net
ecosystem exchange. Agricultural and Forest Meteorology 107, 43-69 (average data coverage
65 %) (m).
"""
from __future__ import annotations

import numpy as np

__all__ = ["MIDDLE_GRADE_SHARE", "middle_grade_warning", "middle_grades"]

#: Share of the records holding an NEE value that the site flag rejects above which a
#: rejected middle grade is named (see the module docstring: about what a year loses to
#: every cause together, Falge et al. 2001 (m)).
MIDDLE_GRADE_SHARE = 1.0 / 3.0
#: The reader's own warning of a flag rejecting most records (io: half); above it this
#: note is not added, so one flag gets one warning.
_MOST = 0.5


def middle_grades(codes: np.ndarray, accept) -> list[float]:
    """The rejected codes between the one kept grade and the worst.

    Judged only where the flag keeps a single code of those present and it is one end
    of the scale (the best grade alone, as the default ``[0]`` keeps): a scale whose
    usable grades are already kept (1-6 of the 1-9 scheme, 0 and 1 of 0-1-2) rejects its
    worse grades rightly, however many.

    Parameters
    ----------
    codes : numpy.ndarray
        One flag column's codes on the records judged (NaN where missing).
    accept : sequence of float
        The codes that keep a record (``flag_accept``).

    Returns
    -------
    list of float
        The codes present strictly between the kept end and the other end (1 of 0, 1, 2
        under ``[0]``, and under ``[2]``: a scale written the other way), ascending;
        empty for two codes or none kept.
    """
    present = np.unique(codes[np.isfinite(codes)])
    kept = np.isin(present, np.asarray(accept, dtype=float))
    if len(present) < 3 or kept.sum() != 1 or not (kept[0] or kept[-1]):
        return []
    return [float(code) for code in present[1:-1]]


def _code_text(value: float) -> str:
    return f"{value:g}"


def middle_grade_warning(flags: list, columns: list, accept, nee: np.ndarray,
                         rejected: np.ndarray) -> str:
    """The warning of a flag whose rejected middle grade costs over a third of the NEE
    values, else ''.

    Parameters
    ----------
    flags : list of numpy.ndarray
        Each mapped flag column's codes per record (NaN where missing).
    columns : list of str
        The flag columns' names in the file, in the order of `flags`.
    accept : sequence of float
        ``[input] flag_accept`` (numbers; a flag of words is not judged here: its codes
        are places in a list, not grades).
    nee : numpy.ndarray
        NEE per record [µmol m-2 s-1] (NaN where missing).
    rejected : numpy.ndarray
        The canonical site flag per record: 1 where a flag rejects, 0 where every flag
        keeps, NaN where no flag is written.

    Returns
    -------
    str
        ``nee_flag: ...`` naming the columns, the kept codes, the share rejected, the
        middle codes with their counts, and the setting that keeps them; '' where the
        share is at most :data:`MIDDLE_GRADE_SHARE` or above half (the reader's own
        warning), or no middle grade is rejected that no other flag column holds as a
        rejected code (widening ``flag_accept``, one list for every column, would keep
        that column's rejected records too).
    """
    judged = np.isfinite(nee) & np.isfinite(rejected)
    count = int(judged.sum())
    dropped = int((judged & (rejected == 1)).sum())
    if not count or not MIDDLE_GRADE_SHARE * count < dropped <= _MOST * count:
        return ""
    middle, rejecting = {}, set()
    for codes in flags:
        grades = middle_grades(codes[judged], accept)
        for code in grades:
            middle[code] = middle.get(code, 0) + int((codes[judged] == code).sum())
        # a code another column holds as a rejected code but no middle grade (the 1 of a
        # sector flag 0 kept / 1 rejected beside a 0-1-2 grade): flag_accept is one list
        # for every column, so widening it to that code would keep that column's rejected
        # records too, and no warning would name it after (round review99)
        present = np.unique(codes[judged][np.isfinite(codes[judged])])
        rejecting.update(float(c) for c in present
                         if c not in grades and c not in np.asarray(accept, dtype=float))
    middle = {code: number for code, number in middle.items() if code not in rejecting}
    if not middle:
        return ""
    accepted = [float(a) for a in accept]
    wider = ", ".join(_code_text(c) for c in sorted({*accepted, *middle}))
    held = ", ".join(f"{_code_text(code)} ({number} records)"
                     for code, number in sorted(middle.items()))
    return (f"nee_flag: {dropped} of {count} records with an NEE value "
            f"({100 * dropped / count:.0f} %) are rejected by {' + '.join(columns)} with "
            f"[input] flag_accept = [{', '.join(_code_text(a) for a in accepted)}], more than "
            f"a third; among them the grade(s) {held} between the kept grade and the worst "
            "one: where these codes mean \"usable\" (as 1 does in the common 0-1-2 scheme: "
            f"0 best, 1 usable for budgets, 2 discard), set [input] flag_accept = [{wider}]; "
            "where they mean rejected, the records are rightly gap-filled")
