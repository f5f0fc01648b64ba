"""Plugin mechanism: discovery through entry points, validation, ordering errors.

The worked example in DEVELOPERS.md is extracted, installed into a temporary folder as a
distribution with an entry point (the layout pip writes: a module plus a .dist-info with
entry_points.txt) and discovered and run like any installed plugin.
"""
from __future__ import annotations

import importlib
import re
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest
from shapely.geometry import box

from swayscreen.pipeline.errors import PluginError
from swayscreen.pipeline.plugin_api import BasicPlugin, Context
from swayscreen.pipeline.registry import discover, order, settings_sections
from swayscreen.pipeline.settings import load_settings
from swayscreen.pipeline.stick import Level, StickModel
from swayscreen.pipeline.takeoff import BuildingTakeoff

ROOT = Path(__file__).resolve().parents[1]


def fake(name, needs=(), provides=("x",), wants=()):
    return BasicPlugin(name, "1", lambda ctx: {p: 1 for p in provides}, needs, provides, wants)


def test_order_follows_needs_and_wants():
    a = fake("a", provides=("r1",))
    b = fake("b", needs=("r1",), provides=("r2",))
    c = fake("c", wants=("r2",), provides=("r3",))
    assert [p.name for p in order([c, b, a])] == ["a", "b", "c"]


def test_missing_provider_names_plugin_and_result():
    with pytest.raises(PluginError, match="plugin 'b' needs result 'nothing'"):
        order([fake("b", needs=("nothing",), provides=("r2",))])


def test_two_providers_named():
    with pytest.raises(PluginError, match="provided by two plugins: 'a' and 'b'"):
        order([fake("a", provides=("r",)), fake("b", provides=("r",))])


def test_cycle_named():
    with pytest.raises(PluginError, match="cycle: .*a.*b"):
        order([fake("a", needs=("rb",), provides=("ra",)), fake("b", needs=("ra",), provides=("rb",))])


def test_builtins_discovered_and_ordered():
    plugins = order(discover())
    names = [p.name for p in plugins]
    assert names.index("modal") < names.index("wind_en") < names.index("comfort")


@pytest.fixture()
def installed_example(tmp_path, monkeypatch):
    text = (ROOT / "DEVELOPERS.md").read_text()
    code = re.search(r"```python\n# file: slenderness_plugin.py\n(.*?)```", text, re.S).group(1)
    (tmp_path / "slenderness_plugin.py").write_text(code)
    info = tmp_path / "slenderness_plugin-0.1.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: slenderness-plugin\nVersion: 0.1\n")
    (info / "entry_points.txt").write_text("[swayscreen.plugins]\nslenderness = slenderness_plugin:PLUGIN\n")
    monkeypatch.syspath_prepend(str(tmp_path))
    importlib.invalidate_caches()
    yield
    sys.modules.pop("slenderness_plugin", None)


def test_third_party_example_is_discovered_and_runs(installed_example, tmp_path):
    plugins = order(discover())
    example = next(p for p in plugins if p.name == "slenderness")
    sections = settings_sections(plugins)
    assert "slenderness" in sections
    (tmp_path / "s.toml").write_text("[slenderness]\nlimit = 4.0\n")
    settings = load_settings(tmp_path / "s.toml", sections)
    # A 60 m tall stick on a 10 x 20 m plate: H/B = 6 (closed form)
    levels = tuple(
        Level(f"L{i}", f"id{i}", 3.0 * i, 3.0, 1e5, (5.0, 10.0), 1e6, plate=box(0, 0, 10, 20))
        for i in range(1, 21)
    )
    stick = StickModel("b", "B", 0.0, levels, ())
    out = example.run(Context(stick, BuildingTakeoff("b", "B", ()), settings))
    assert out["slenderness"] == pytest.approx(6.0, rel=1e-12)
    (check,) = out["slenderness_checks"]
    assert check.limit == 4.0 and not check.passes


def test_broken_plugin_fails_loudly(tmp_path, monkeypatch):
    (tmp_path / "broken_plugin.py").write_text("raise RuntimeError('boom')\n")
    info = tmp_path / "broken_plugin-0.1.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: broken-plugin\nVersion: 0.1\n")
    (info / "entry_points.txt").write_text("[swayscreen.plugins]\nbroken = broken_plugin:PLUGIN\n")
    monkeypatch.syspath_prepend(str(tmp_path))
    importlib.invalidate_caches()
    with pytest.raises(PluginError, match="'broken'.*failed to load: boom"):
        discover()
    sys.modules.pop("broken_plugin", None)


def test_invalid_plugin_rejected():
    @dataclass(frozen=True)
    class NoProvides:
        name: str = "p"
        version: str = "1"
        needs: tuple = ()
        provides: tuple = ()
        wants: tuple = ()
        settings_section: None = None
        settings_type: None = None

        def run(self, ctx):
            return {}

    from swayscreen.pipeline.registry import validate

    with pytest.raises(PluginError, match="'p'.*provides nothing"):
        validate(NoProvides())
