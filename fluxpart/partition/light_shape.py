"""The shape of the daytime light response, as a structural uncertainty.

The daytime method fits the rectangular hyperbola of Lasslop et al. (2010) to each
window. Where the canopy's light response bends more sharply (the non-rectangular
hyperbola, Johnson & Thornley 1984 (m); common in tower NEE, Gilmanov et al. 2003
(m)), the rectangular curve reaches its plateau too late, so the fit raises its
intercept: daytime Reco, and GPP with it (NEE being held by the data), run high.
A curvature profiled on the site's own windows (``daytime_curvature = "fit"``,
:func:`fluxpart.partition.daytime.partition_daytime`) cuts that bias, but it
also absorbs the other bends of the diurnal light response (photosynthesis limited
by temperature in the cool mornings of fens and evergreens), where it runs to its
grid's end and reverses the bias, and it narrows the daytime intervals.

With ``daytime_curvature = "average"`` the daytime method is fitted both ways on the
central u* run: rectangular, and with the profiled curvature.
:func:`average_shapes` combines the two per record with equal weights, and states
the spread of the two about that combination, ½·|ΣΔ| per period for GPP and for
Reco (Δ the profiled minus the rectangular flux), as a part of the daytime totals
(:func:`fluxpart.uncertainty.period_uncertainty`). The same per-record shift is
added to every u* scenario's daytime fluxes, so the profile is fitted once per run
and the scenarios' spread stays the u* threshold's alone, as the nighttime method's
respiration forms do (:mod:`fluxpart.partition.respiration_form`).

Why equal weights, not BIC weights
----------------------------------
Bayesian model averaging weighs two models by the probability the data give each
(Hoeting et al. 1999; BIC weights, Burnham & Anderson 2002, ch. 6). Here the data
cannot give it. The profiled curvature is one parameter for a whole record of some
ten thousand daytime records, so its likelihood gain is decisive (a BIC weight of
0 or 1) whatever bends the diurnal response; but the curvature of the leaf-scale
light response and the bend that cool mornings put in the response of a day's
records (photosynthesis limited by temperature, hysteresis between morning and
afternoon) both lower the sum of squares alike, and a light-response model without a
temperature term on photosynthesis cannot tell which one it fitted (the 0.3.0
measurement: profiles at the grid's end at fens and evergreens, whose planted
curvature was not there). Where the evidence cannot separate the two causes, the
two fits are equally credible descriptions of the respiration they extrapolate to
no light, and the honest statement is their midpoint with the half-difference as
its standard deviation: a two-point distribution with probabilities ½ has
standard deviation ½·|Δ| about its mean (√(w (1 − w))·|Δ| at w = ½, the
respiration form's part at equal weight).

References
----------
Lasslop, G. et al. (2010). Separation of net ecosystem exchange into assimilation
and respiration using a light response curve approach: critical issues and global
evaluation. Global Change Biology 16:187–208. doi:10.1111/j.1365-2486.2009.02041.x

Johnson, I. R. & Thornley, J. H. M. (1984). A model of instantaneous and daily
canopy photosynthesis. Journal of Theoretical Biology 107:531–545. (m)

Gilmanov, T. G. et al. (2003). Global Biogeochemical Cycles 17(2), 1071. (m)

Hoeting, J. A., Madigan, D., Raftery, A. E. & Volinsky, C. T. (1999). Bayesian
model averaging: a tutorial. Statistical Science 14:382–417. (m)

Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel
Inference, 2nd ed. Springer, ch. 4 and 6.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

#: The ``daytime_curvature`` setting that averages the two light-response shapes.
AVERAGE = "average"

#: Weight of the profiled (non-rectangular) light response in the average: equal
#: weights, the data cannot separate its curvature from a temperature-driven bend
#: (module docstring).
PROFILED_WEIGHT = 0.5


def central_curvature(setting):
    """The curvature the u* runs fit: the rectangular 0 for ``"average"``, else `setting`.

    Parameters
    ----------
    setting : str or float
        ``Config.daytime_curvature``.

    Returns
    -------
    str or float
        A curvature [1] or ``"fit"``, as :func:`fluxpart.partition.daytime.partition_daytime`
        takes it.
    """
    return 0.0 if setting == AVERAGE else setting


@dataclass(frozen=True)
class ShapeAverage:
    """Daytime GPP and Reco of the two light-response shapes and the share applied.

    Attributes
    ----------
    gpp_difference, reco_difference : numpy.ndarray
        Profiled minus rectangular daytime GPP and Reco per record [µmol m-2 s-1]
        (0 where either is not finite).
    curvature : float
        The profiled curvature [1].
    weight : float
        Weight of the profiled shape, :data:`PROFILED_WEIGHT` [1].
    """

    gpp_difference: np.ndarray
    reco_difference: np.ndarray
    curvature: float
    weight: float = PROFILED_WEIGHT

    @property
    def spread_factor(self) -> float:
        """Standard deviation of the two shapes about their average, per |ΣΔ| [1]:
        √(w (1 − w)), ½ at equal weights."""
        return float(np.sqrt(self.weight * (1.0 - self.weight)))

    def shifted(self, day):
        """A daytime result with the average's shift added to its GPP and Reco.

        Parameters
        ----------
        day : fluxpart.partition.daytime.DaytimeResult
            A u* run's rectangular daytime partitioning.

        Returns
        -------
        fluxpart.partition.daytime.DaytimeResult
            A copy whose ``gpp``, ``reco``, ``gpp_before`` and ``gpp_after`` carry
            w·Δ [µmol m-2 s-1].
        """
        gpp_shift = self.weight * self.gpp_difference
        sides = {name: getattr(day, name) + gpp_shift for name in ("gpp_before", "gpp_after")
                 if getattr(day, name) is not None}
        return dataclasses.replace(day, gpp=day.gpp + gpp_shift,
                                   reco=day.reco + self.weight * self.reco_difference, **sides)

    def to_dict(self) -> dict:
        """Setting, curvature and weight for the provenance record."""
        return {"setting": AVERAGE, "profiled_curvature": round(self.curvature, 6),
                "profiled_weight": self.weight,
                "criterion": "equal weights of the rectangular and the profiled "
                             "non-rectangular light response: the daytime records cannot "
                             "separate the curvature from a temperature-driven bend of the "
                             "diurnal response"}


def not_averaged(reason) -> str:
    """The warning where ``daytime_curvature = "average"`` could not fit the profiled shape.

    Parameters
    ----------
    reason : Exception or str
        Why the daytime method with a profiled curvature could not be fitted.

    Returns
    -------
    str
        The warning: the daytime fluxes are the rectangular hyperbola's alone and their
        totals hold no light-shape part, so they state less than the setting asked for.
    """
    return ("daytime partitioning: daytime_curvature = \"average\", but the light response "
            f"with a profiled curvature could not be fitted ({reason}); daytime GPP and Reco "
            "are the rectangular hyperbola's alone and their totals hold no light-shape part "
            "(gpp_daytime_uncertainty_light_shape is not written)")


def average_shapes(rectangular, profiled, weight=PROFILED_WEIGHT) -> ShapeAverage:
    """The daytime method's GPP and Reco averaged over the two light-response shapes.

    Parameters
    ----------
    rectangular : fluxpart.partition.daytime.DaytimeResult
        The daytime partitioning with the rectangular hyperbola (curvature 0).
    profiled : fluxpart.partition.daytime.DaytimeResult
        The same with the curvature profiled on the record (``curvature = "fit"``);
        its window table's ``curvature`` is the profiled value.
    weight : float, optional
        Weight w of the profiled shape [1]; default :data:`PROFILED_WEIGHT` (½).

    Returns
    -------
    ShapeAverage
        The central daytime flux is X_rect + w·Δ, its structural standard deviation
        √(w (1 − w))·|ΣΔ| per period.

    Notes
    -----
    Equal weights, not the records' BIC weights: see the module docstring.

    References
    ----------
    Hoeting, J. A. et al. (1999). Statistical Science 14:382–417. (m)

    Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel
    Inference, 2nd ed. Springer.
    """
    if not 0.0 <= weight <= 1.0:
        raise ValueError(f"light-shape weight = {weight!r}: expected a number in [0, 1]")

    def difference(name):
        with np.errstate(invalid="ignore"):
            delta = np.asarray(getattr(profiled, name), dtype=float) \
                - np.asarray(getattr(rectangular, name), dtype=float)
        return np.where(np.isfinite(delta), delta, 0.0)

    return ShapeAverage(gpp_difference=difference("gpp"), reco_difference=difference("reco"),
                        curvature=float(profiled.parameters["curvature"].iloc[0]),
                        weight=float(weight))
