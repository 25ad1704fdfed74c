"""fluxpart: carbon budgets from eddy-covariance flux-tower records.

Screen the records, find the u* threshold, gap-fill NEE and its drivers by
marginal distribution sampling, partition NEE into GPP and Reco by the nighttime
and daytime methods, and sum days, months and years with coverage.
"""

from . import demo
from .config import Config
from .io import read_config
from .manifest import load
from .pipeline import Result, process, process_site_config
from .site import Site

__version__ = "0.1.0"

__all__ = [
    "Config",
    "Result",
    "Site",
    "__version__",
    "demo",
    "load",
    "process",
    "process_site_config",
    "read_config",
]
