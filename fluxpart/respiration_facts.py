"""The respiration choices of a run as flat facts, for readers of the exported files.

Both partitioning methods model Reco on one respiration temperature (air or soil, chosen
on the night data where ``respiration_driver = "auto"``, possibly delayed), and the
nighttime method's Reco is an average of the Lloyd–Taylor and the constant-Q10 form
weighted by the night data (:mod:`fluxpart.partition.respiration_form`). A run records
these choices in its provenance (``manifest.json``: ``respiration_driver`` and
``respiration_form``, nested records), which a modeller reading the NetCDF or CSV export
never sees: there, a Reco or GPP series did not say which temperature drove it (round
modeller25). :func:`respiration_facts` gives them as named strings and numbers, which a
NetCDF global attribute or a CSVW property can hold, and :func:`respiration_comment` as one
sentence for the variables they concern.
"""

from __future__ import annotations

__all__ = ["FACT_UNITS", "respiration_comment", "respiration_facts"]

#: UDUNITS-2 unit of each numeric fact of :func:`respiration_facts`.
FACT_UNITS = {"respiration_temperature_delay_hours": "h",
              "respiration_temperature_daily_amplitude": "1",
              "respiration_form_share_constant_q10": "1"}
_TEMPERATURES = {"tair": "air temperature", "tsoil": "soil temperature"}


def respiration_facts(provenance) -> dict:
    """The respiration temperature, its delay and the forms' shares a run recorded.

    Parameters
    ----------
    provenance : dict
        A result's provenance (``Result.provenance``, ``manifest.json["provenance"]``).

    Returns
    -------
    dict
        In this order, each only where the provenance records it (an empty dict for a
        result that records neither choice):

        - ``respiration_temperature``: ``"tair"`` or ``"tsoil"`` (the name of the
          temperature in the result's tables and in the NetCDF export);
        - ``respiration_temperature_delay_hours`` [h]: the delay of that temperature
          (0 where none, or where the temperature was set);
        - ``respiration_temperature_daily_amplitude`` [1]: the share of the air
          temperature's daily range the delayed temperature keeps, only where the run
          damped it (``air_delay_damping = "conduction"``);
        - ``respiration_temperature_basis``: ``"chosen on the night data: <reason>"`` or
          ``"as set in [processing] respiration_driver"``;
        - ``respiration_form_share_constant_q10`` [1]: the weight of the constant-Q10
          form in the nighttime method's Reco (the rest is Lloyd–Taylor; the daytime
          method's Reco is Lloyd–Taylor alone).

    References
    ----------
    Lloyd, J. & Taylor, J. A. (1994). On the temperature dependence of soil respiration.
    Functional Ecology 8(3):315-323. doi:10.2307/2389824

    Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics
    6(2):461-464 (the BIC the night data's choices rest on).
    """
    facts = {}
    provenance = provenance if isinstance(provenance, dict) else {}
    driver = provenance.get("respiration_driver")
    if isinstance(driver, dict):
        chosen = driver.get("chosen") or driver.get("setting")
        if chosen in _TEMPERATURES:
            facts["respiration_temperature"] = str(chosen)
            delay = driver.get("delay_hours")
            facts["respiration_temperature_delay_hours"] = float(delay) if delay else 0.0
            if driver.get("delay_daily_amplitude") is not None:
                facts["respiration_temperature_daily_amplitude"] = float(
                    driver["delay_daily_amplitude"])
            facts["respiration_temperature_basis"] = (
                f"chosen on the night data: {driver['reason']}" if driver.get("chosen")
                and driver.get("reason") else "as set in [processing] respiration_driver")
    form = provenance.get("respiration_form")
    if isinstance(form, dict) and form.get("share_applied") is not None:
        facts["respiration_form_share_constant_q10"] = float(form["share_applied"])
    return facts


def respiration_comment(facts: dict) -> str:
    """One sentence of :func:`respiration_facts` for a Reco or GPP variable ("" for none).

    Parameters
    ----------
    facts : dict
        From :func:`respiration_facts`.

    Returns
    -------
    str
        E.g. "respiration temperature of both methods: tair (air temperature), delayed
        0 h; nighttime method's Reco: weight 0 of the constant-Q10 form, the rest
        Lloyd-Taylor; daytime method's Reco: Lloyd-Taylor".
    """
    parts = []
    name = facts.get("respiration_temperature")
    if name:
        delay = facts.get("respiration_temperature_delay_hours", 0.0)
        amplitude = facts.get("respiration_temperature_daily_amplitude")
        parts.append(f"respiration temperature of both methods: {name} "
                     f"({_TEMPERATURES[name]}), delayed {delay:g} h"
                     + (f", its daily course damped to {amplitude:.2f} of the range"
                        if amplitude is not None and delay else ""))
    share = facts.get("respiration_form_share_constant_q10")
    if share is not None:
        parts.append(f"nighttime method's Reco: weight {share:g} of the constant-Q10 form, "
                     "the rest Lloyd-Taylor; daytime method's Reco: Lloyd-Taylor")
    return "; ".join(parts)
