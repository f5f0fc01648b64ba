"""Packaging: the top-level folders map into the swayscreen namespace and nothing else.

Checks against the setuptools package-dir mapping (PRACTICES.md, "Packaging the top-level
folders"): a subpackage missing from the explicit list would be absent from the wheel.
"""
from __future__ import annotations

import sys
from importlib.metadata import distribution, entry_points
from pathlib import Path

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

ROOT = Path(__file__).resolve().parents[1]
PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text())


def test_every_subpackage_folder_is_listed():
    mapping = PYPROJECT["tool"]["setuptools"]["package-dir"]
    listed = set(PYPROJECT["tool"]["setuptools"]["packages"])
    found = set()
    for pkg, folder in mapping.items():
        for init in (ROOT / folder).rglob("__init__.py"):
            rel = init.parent.relative_to(ROOT / folder)
            found.add(".".join([pkg, *rel.parts]) if rel.parts else pkg)
    assert found == listed


def test_no_bare_top_level_packages_installed():
    dist = distribution("swayscreen")
    files = [str(f) for f in (dist.files or [])]
    assert not [f for f in files if f.startswith(("pipeline/", "plugins/", "sample_models/"))]
    import swayscreen.pipeline
    import swayscreen.plugins

    assert swayscreen.pipeline.__name__ == "swayscreen.pipeline"


def test_builtin_plugins_registered_through_entry_points():
    names = {ep.name for ep in entry_points(group="swayscreen.plugins")}
    declared = set(PYPROJECT["project"]["entry-points"]["swayscreen.plugins"])
    assert declared <= names
    assert {"modal", "empirical_periods", "wind_en", "comfort", "drift"} <= declared


def test_console_script_declared():
    assert PYPROJECT["project"]["scripts"]["swayscreen"] == "swayscreen.pipeline.cli:run"
