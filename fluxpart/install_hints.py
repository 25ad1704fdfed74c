"""How a message tells a user to install an optional extra: from the checkout, by path.

The project name ``fluxpart`` on the package index belongs to another, unrelated project
(README, Quick start), so the hint that a missing matplotlib, Dask or NetCDF engine gave,
to pip-install the extra by that bare name, would fetch that project into the user's
environment. A hint names the checkout this fluxpart was installed from where the
installed files tell it (an editable install: the package folder beside the project's
``pyproject.toml``), else a placeholder for it, and the interpreter running fluxpart, so
that the extra lands in the environment that lacks it.
"""

from __future__ import annotations

import sys
import tomllib
from pathlib import Path

__all__ = ["install_command", "package_command"]


def _checkout() -> Path | None:
    """The folder of the checkout this package runs from, or None (an installed copy)."""
    root = Path(__file__).resolve().parent.parent
    try:
        project = tomllib.loads((root / "pyproject.toml").read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return None
    section = project.get("project")
    return root if isinstance(section, dict) and section.get("name") == "fluxpart" else None


def install_command(extra: str, *, reinstall: bool = False) -> str:
    """The command that installs `extra` of this fluxpart into the running environment.

    Parameters
    ----------
    extra : str
        The optional-dependency group of ``pyproject.toml`` (``"report"``, ``"batch"``,
        ``"netcdf"``).
    reinstall : bool, optional
        Add ``--force-reinstall`` (an extra that is installed but does not load).

    Returns
    -------
    str
        ``<python> -m pip install "<checkout>[extra]"``: the checkout's folder where this
        package runs from one, else ``<folder of your fluxpart checkout>`` with the reason
        a path is needed.

    References
    ----------
    Python Packaging User Guide, "Installing packages": ``python -m pip`` installs into
    the environment of that interpreter; a requirement given as a local path with extras,
    ``path[extra]``, installs that project (PEP 508) (m).
    """
    root = _checkout()
    target = f"{root}[{extra}]" if root else f"<folder of your fluxpart checkout>[{extra}]"
    flags = "--force-reinstall " if reinstall else ""
    command = f'{_python()} -m pip install {flags}"{target}"'
    if root is None:
        command += (" (a path: the name fluxpart on the package index belongs to another "
                    "project)")
    return command


def _python() -> str:
    """The running interpreter, quoted where its path holds a blank."""
    return f'"{sys.executable}"' if " " in sys.executable else sys.executable


def package_command(name: str) -> str:
    """The command that installs the package `name` of the package index into the running
    environment: ``<python> -m pip install <name>`` (review47: the NetCDF hint's "pip
    install h5py" may install into another environment than the one lacking it).

    References
    ----------
    Python Packaging User Guide, "Installing packages": ``python -m pip`` installs into
    the environment of that interpreter (m).
    """
    return f"{_python()} -m pip install {name}"
