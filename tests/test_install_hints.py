"""Install hints name the checkout by path, never the bare project name (review46)."""

import re
import sys
import tomllib
from pathlib import Path

import fluxpart
from fluxpart import install_hints
from fluxpart.install_hints import install_command

ROOT = Path(fluxpart.__file__).resolve().parent


def test_the_hint_installs_this_checkout_into_this_interpreter():
    """The tests run fluxpart from its checkout (the package folder beside the project's
    pyproject.toml, whose [project] name is fluxpart): the hint gives that folder with the
    extra, PEP 508's path[extra], and the running interpreter's ``-m pip``."""
    project = tomllib.loads((ROOT.parent / "pyproject.toml").read_text(encoding="utf-8"))
    assert project["project"]["name"] == "fluxpart"
    assert "report" in project["project"]["optional-dependencies"]
    command = install_command("report")
    assert command.endswith(f'-m pip install "{ROOT.parent}[report]"')
    assert sys.executable in command
    assert "--force-reinstall" in install_command("report", reinstall=True)


def test_an_installed_copy_gets_a_placeholder_and_the_reason(monkeypatch):
    """Installed without its checkout (a wheel in site-packages), the hint cannot name the
    folder: it asks for it, and says why the name alone would not do."""
    monkeypatch.setattr(install_hints, "_checkout", lambda: None)
    command = install_command("batch")
    assert '"<folder of your fluxpart checkout>[batch]"' in command
    assert "another project" in command


def test_no_message_installs_fluxpart_by_its_bare_name():
    """The README: the name fluxpart on the package index belongs to another project. A
    missing matplotlib, Dask or NetCDF engine said ``pip install "fluxpart[report]"``
    (and [batch], [netcdf]); no source file may write that again."""
    bare = re.compile(r"""pip install (--[a-z-]+ )*["']?fluxpart\[""")
    offending = [path.name for path in ROOT.rglob("*.py") if bare.search(path.read_text("utf-8"))]
    assert offending == []
