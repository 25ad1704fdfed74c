"""fluxpart: carbon budgets from eddy-covariance flux-tower records.

Screen the records, find the u* threshold, gap-fill NEE and its drivers by
marginal distribution sampling, partition NEE into GPP and Reco by the nighttime
and daytime methods, and sum days, months and years with coverage.

The public names below are imported on first use (PEP 562), so ``import fluxpart``
stays quick: the science stack (pandas, SciPy, statsmodels) loads only when a name
that needs it is touched, and the demo, report and batch paths only when used.
"""

from __future__ import annotations

import logging
from importlib import import_module

# A library logs, the application decides where to (Python logging HOWTO, "Configuring
# Logging for a Library"): progress of process() goes to the 'fluxpart' logger at INFO.
logging.getLogger("fluxpart").addHandler(logging.NullHandler())

# The one place the version is written; pyproject.toml reads it from here.
__version__ = "0.40.0"

#: Public name -> (module, attribute); attribute None means the module itself.
_LAZY = {
    "Config": (".config", "Config"),
    "FluxpartError": (".errors", "FluxpartError"),
    "FluxpartWarning": (".errors", "FluxpartWarning"),
    "Result": (".result", "Result"),
    "Site": (".site", "Site"),
    "demo": (".demo", None),
    "load": (".result", "load"),
    "process": (".pipeline", "process"),
    "process_site_config": (".pipeline", "process_site_config"),
    "read_config": (".io", "read_config"),
}

__all__ = [
    "Config",
    "FluxpartError",
    "FluxpartWarning",
    "Result",
    "Site",
    "__version__",
    "demo",
    "load",
    "process",
    "process_site_config",
    "read_config",
]


def __getattr__(name: str):
    """Import a public name on first use and keep it in the package namespace."""
    try:
        module_name, attribute = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'fluxpart' has no attribute {name!r}") from None
    module = import_module(module_name, __name__)
    value = module if attribute is None else getattr(module, attribute)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
