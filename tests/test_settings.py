"""Settings: defaults with sources, unknown keys and wrong types rejected (exit 2 path)."""
from __future__ import annotations

import dataclasses

import pytest

from swayscreen.pipeline.core_settings import CORE_SECTIONS, MaterialSettings
from swayscreen.pipeline.errors import SettingsError
from swayscreen.pipeline.settings import load_settings, template


def write(tmp_path, text):
    p = tmp_path / "s.toml"
    p.write_text(text)
    return p


def test_defaults_load_without_file():
    s = load_settings(None, CORE_SECTIONS)
    # EN 1991-1-1 Table A.1: reinforced normal-weight concrete 24 + 1 kN/m^3
    assert s["materials"].concrete_unit_weight_kn_m3 == 25.0
    assert s["loads"].occupancy == "office"


def test_every_default_names_its_source():
    for cls in CORE_SECTIONS.values():
        for f in dataclasses.fields(cls):
            assert f.metadata.get("source"), f"{cls.__name__}.{f.name} has no source"


def test_template_round_trips(tmp_path):
    text = template(CORE_SECTIONS)
    assert "Source: EN 1991-1-1 Table A.1" in text
    s = load_settings(write(tmp_path, text), CORE_SECTIONS)
    assert s.to_dict() == load_settings(None, CORE_SECTIONS).to_dict()


def test_values_override(tmp_path):
    s = load_settings(write(tmp_path, "[loads]\nsuperimposed_dead_kpa = 2\noccupancy = \"residential\"\n"),
                      CORE_SECTIONS)
    assert s["loads"].superimposed_dead_kpa == 2.0
    assert s["loads"].occupancy == "residential"


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("[loads]\nsuperimposed_dead = 2\n", "unknown key(s) superimposed_dead"),
        ("[lods]\n", "unknown section(s) [lods]"),
        ("[loads]\nsuperimposed_dead_kpa = \"two\"\n", "expected a number"),
        ("[loads]\nsuperimposed_dead_kpa = -1\n", "below the minimum"),
        ("[loads]\noccupancy = \"castle\"\n", "not one of"),
        ("[stiffness]\ncolumn_clear_height = 1\n", "expected true or false"),
        ("[loads]\nlive_load_kpa = { attic = 1.0 }\n", "unknown key 'attic'"),
        ("[loads\n", "not valid TOML"),
        ("loads = 3\n", "must be a table"),
    ],
)
def test_bad_settings_are_one_line_errors(tmp_path, text, fragment):
    with pytest.raises(SettingsError) as err:
        load_settings(write(tmp_path, text), CORE_SECTIONS)
    assert fragment in str(err.value)
    assert "\n" not in str(err.value)


def test_missing_settings_file(tmp_path):
    with pytest.raises(SettingsError, match="settings file not found"):
        load_settings(tmp_path / "nope.toml", CORE_SECTIONS)


def test_digest_changes_with_values(tmp_path):
    a = load_settings(None, CORE_SECTIONS)
    b = a.replace("materials", concrete_class="C50/60")
    assert a.digest() != b.digest()
    assert isinstance(b["materials"], MaterialSettings)
