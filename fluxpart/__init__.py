"""fluxpart: carbon budgets from eddy-covariance flux-tower records."""

from .config import Config
from .site import Site

__version__ = "0.1.0"

__all__ = ["Config", "Site", "__version__"]
