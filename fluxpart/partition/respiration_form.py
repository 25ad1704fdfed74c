"""The form of the respiration–temperature response, as a structural uncertainty.

Both partitioning methods describe respiration by Lloyd & Taylor (1994), whose
temperature sensitivity falls with temperature. Where respiration instead
keeps one Q10 over a wide range of temperature, an E0 set mostly by cold nights
extrapolates the warm season too low in both methods alike, so their
difference cannot reveal it (an independent known-truth trial: a 68° N
site-year with Q10 = 3 gave nighttime Reco −23 % and daytime −15 %, outside
both stated intervals).

:func:`exponential_reco` refits the whole nighttime method (E0 in short
windows, the annual E0, Rref in 4-day windows) with the exponential
(constant-Q10) form instead, on the same night records, by feeding the
Lloyd–Taylor code the temperature at which it is that form
(:func:`fluxpart.responses.exponential_equivalent_temperature`). The two fits
have the same number of parameters, so the night data weigh them by their sums
of absolute residuals (:func:`fluxpart.uncertainty.driver_weight`, the BIC weight
under Laplace errors since 0.17.0, sums of squares before; the weight also
used for the choice of temperature), and
:func:`fluxpart.uncertainty.period_uncertainty` states √w·|ΣΔReco| as a part of
every partitioned flux.

Since 0.10.0 the nighttime method's central Reco is the average of the two
forms weighted by that probability (:func:`average_forms`; Bayesian model
averaging, Hoeting et al. 1999), and the stated part is the spread of the two
forms about that average, √(w (1 − w))·|ΣΔReco|. ``respiration_form =
"lloyd_taylor"`` keeps the published Lloyd–Taylor form as the central estimate
(the part is then √w·|ΣΔReco|). The daytime method keeps Lloyd–Taylor.

References
----------
Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil
respiration. Functional Ecology 8:315–323. doi:10.2307/2389824

Reichstein, M. et al. (2005). Global Change Biology 11:1424–1439.
doi:10.1111/j.1365-2486.2005.001002.x

Hoeting, J. A., Madigan, D., Raftery, A. E. & Volinsky, C. T. (1999). Bayesian
model averaging: a tutorial. Statistical Science 14:382–417. (m)

Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel
Inference, 2nd ed. Springer, ch. 4 and 6.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..responses import exponential_equivalent_temperature
from .nighttime import partition_nighttime

_DEFAULT_E0_BOUNDS = (30.0, 450.0)   # partition_nighttime's default e0_bounds [K]
_DEFAULT_MIN_RANGE = 5.0             # partition_nighttime's e0_min_temperature_range [K]
#: dT*/dT at the reference temperature: E0 of the exponential fit stands for 2 D² k,
#: so its bounds and fall-back double and a temperature range halves (Notes of
#: :func:`fluxpart.responses.exponential_equivalent_temperature`).
_SCALE = 2.0


def exponential_reco(index, nee_measured, nee_filled, temperature_measured, temperature_filled,
                     is_night, **settings) -> np.ndarray:
    """Nighttime Reco with the exponential (constant-Q10) temperature response.

    Parameters
    ----------
    index : pandas.DatetimeIndex
        Start of each interval, local standard time.
    nee_measured, nee_filled : array_like
        Measured (u*-filtered) and gap-filled NEE [µmol m-2 s-1].
    temperature_measured, temperature_filled : array_like
        The respiration temperature, measured and gap-filled [°C].
    is_night : array_like of bool
        Night records.
    **settings
        Keyword settings of :func:`fluxpart.partition.nighttime.partition_nighttime`
        as for the central fit; ``e0_bounds`` and ``e0_fallback`` are doubled and
        ``e0_min_temperature_range`` halved, so that the exponential fit spans the
        temperature sensitivity Lloyd–Taylor's E0 range (30–450 K) has at 10 °C
        (Q10 1.10–4.20).

    Returns
    -------
    numpy.ndarray
        Reco per record [µmol m-2 s-1].

    Raises
    ------
    FluxpartError
        As :func:`~fluxpart.partition.nighttime.partition_nighttime` (e.g. no E0).

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). Functional Ecology 8:315–323.
    """
    scaled = dict(settings)
    low, high = settings.get("e0_bounds", _DEFAULT_E0_BOUNDS)
    scaled["e0_bounds"] = (_SCALE * low, _SCALE * high)
    if settings.get("e0_fallback") is not None:
        scaled["e0_fallback"] = _SCALE * settings["e0_fallback"]
    scaled["e0_min_temperature_range"] = settings.get(
        "e0_min_temperature_range", _DEFAULT_MIN_RANGE) / _SCALE
    result = partition_nighttime(
        index, nee_measured, nee_filled,
        exponential_equivalent_temperature(np.asarray(temperature_measured, dtype=float)),
        exponential_equivalent_temperature(np.asarray(temperature_filled, dtype=float)),
        is_night, **scaled)
    return result.reco


#: ``respiration_form`` settings: the central nighttime Reco is the weighted average of
#: the two forms, or Lloyd–Taylor's alone.
FORM_SETTINGS = ("average", "lloyd_taylor")


@dataclass(frozen=True)
class FormAverage:
    """Nighttime Reco of both respiration forms and the share of their difference applied.

    Attributes
    ----------
    lloyd_taylor : numpy.ndarray
        Nighttime Reco with the Lloyd–Taylor form [µmol m-2 s-1].
    exponential : numpy.ndarray or None
        Nighttime Reco with the exponential (constant-Q10) form [µmol m-2 s-1];
        None where that fit failed.
    weight : float
        Probability w that the night data favour the exponential form [1].
    share : float
        Share c of the difference added to the Lloyd–Taylor Reco: w with
        ``"average"``, 0 with ``"lloyd_taylor"`` or without an exponential fit [1].
    setting : str
        The ``respiration_form`` setting.
    """

    lloyd_taylor: np.ndarray
    exponential: np.ndarray | None
    weight: float
    share: float
    setting: str

    @property
    def difference(self) -> np.ndarray:
        """Exponential minus Lloyd–Taylor Reco per record [µmol m-2 s-1] (0 where unknown)."""
        if self.exponential is None:
            return np.zeros_like(self.lloyd_taylor)
        return np.nan_to_num(self.exponential - self.lloyd_taylor)

    @property
    def shift(self) -> np.ndarray:
        """What the average adds to each record's Lloyd–Taylor Reco and GPP [µmol m-2 s-1]."""
        return self.share * self.difference

    @property
    def spread_factor(self) -> float:
        """Root second moment of the form's error about the central estimate, per |ΣΔ| [1].

        The truth follows the exponential form with probability w and Lloyd–Taylor
        otherwise; about a central estimate at share c of the difference the second
        moment is ((1 − w) c² + w (1 − c)²) Δ²: w (1 − w) Δ² for the average
        (c = w), w Δ² for Lloyd–Taylor alone (c = 0).
        """
        if self.exponential is None:
            return 0.0
        w, c = self.weight, self.share
        return float(np.sqrt((1.0 - w) * c * c + w * (1.0 - c) ** 2))

    def to_dict(self) -> dict:
        """Setting, weight and share for the provenance record."""
        return {"setting": self.setting, "fitted": self.exponential is not None,
                "exponential_weight": round(self.weight, 6), "share_applied": round(self.share, 6),
                "criterion": "BIC weight of the constant-Q10 against the Lloyd–Taylor nighttime "
                             "fit on the measured, u*-filtered night NEE under Laplace errors "
                             "(equal priors)"}


def average_forms(lloyd_taylor, exponential, weight, setting="average") -> FormAverage:
    """The nighttime method's Reco averaged over the two respiration forms.

    Parameters
    ----------
    lloyd_taylor : array_like
        Nighttime Reco with the Lloyd–Taylor form [µmol m-2 s-1].
    exponential : array_like or None
        Nighttime Reco with the exponential (constant-Q10) form
        (:func:`exponential_reco`) [µmol m-2 s-1]; None where that fit failed.
    weight : float
        Probability that the night data favour the exponential form, e.g. the
        BIC weight of :func:`fluxpart.uncertainty.driver_weight` [1].
    setting : {"average", "lloyd_taylor"}
        ``"average"``: the central Reco is (1 − w) R_LT + w R_exp;
        ``"lloyd_taylor"``: R_LT.

    Returns
    -------
    FormAverage

    Notes
    -----
    Neither form is known to be the ecosystem's: Lloyd & Taylor (1994) found the
    temperature sensitivity of soil respiration to fall with temperature, while
    many ecosystems keep a near-constant Q10 (about 2, the doubling per 10 °C of
    enzyme-driven rates; common practice). With one E0 per year, a constant-Q10
    respiration over a wide range of temperature (fens: −20 to +15 °C) gives an E0
    set mostly by cold nights, and the warm season is extrapolated low. Weighting
    the two fits by the probability the night data give each (Bayesian model
    averaging, Hoeting et al. 1999; Akaike or BIC weights, Burnham & Anderson
    2002) follows the data where they decide and splits the difference where
    they do not. Measured on the generated benchmarks (0.10.0): on 42 site-years
    with a constant-Q10 truth, fen nighttime Reco −11.6 → −7.3 %, −8.5 → −2.9 %,
    −3.9 → +1.5 % (18 site-years closer to the truth, 6 farther, median |error|
    1.6 → 1.2 %, worst 11.6 → 10.0 %); on 126 Lloyd–Taylor truths the weight is
    mostly small: 116 moved by under 0.5 points, the others by 0.6–4.2 points
    (11 closer, 13 farther; worst 15.1 % unchanged).

    References
    ----------
    Hoeting, J. A. et al. (1999). Statistical Science 14:382–417. (m)

    Burnham, K. P. & Anderson, D. R. (2002). Model Selection and Multimodel
    Inference, 2nd ed. Springer.
    """
    if setting not in FORM_SETTINGS:
        raise ValueError(f"respiration_form = {setting!r}: expected one of {FORM_SETTINGS}")
    base = np.asarray(lloyd_taylor, dtype=float)
    other = None if exponential is None else np.asarray(exponential, dtype=float)
    weight = 0.0 if other is None else float(np.clip(weight, 0.0, 1.0))
    share = weight if (setting == "average" and other is not None) else 0.0
    return FormAverage(lloyd_taylor=base, exponential=other, weight=weight, share=share,
                       setting=setting)
