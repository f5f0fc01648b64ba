"""The command line as a user runs it: exit codes, one-line errors, JSON keys.

Exit codes are the project's contract (README): 0 pass, 1 flagged, 2 unusable input.
The sample buildings are our own (sample_models/generate.py); the site settings are the
invented example sites shipped beside them.
"""
from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from swayscreen.pipeline.cli import main

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_models"


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_settings_prints_commented_defaults(capsys):
    import tomllib

    code, out, _ = run(capsys, "settings")
    assert code == 0
    parsed = tomllib.loads(out)
    assert {"materials", "loads", "stiffness", "levels", "wind", "comfort", "drift", "modal", "dampers"} <= set(parsed)
    assert "Source:" in out and "common practice" in out


def test_plugins_lists_builtins(capsys):
    code, out, _ = run(capsys, "plugins", "--json")
    assert code == 0
    names = {row["name"] for row in json.loads(out)}
    assert {"modal", "empirical_periods", "wind_en", "wind_nbcc", "corners", "comfort", "drift", "damping"} <= names


@pytest.mark.parametrize("content, fragment", [
    (None, "not found"),
    (b"this is not an IFC file\n", "not"),
    (bytes(range(256)) * 40, "not"),
])
def test_bad_model_is_one_line_exit_2(capsys, tmp_path, content, fragment):
    path = tmp_path / "model.ifc"
    if content is not None:
        path.write_bytes(content)
    for command in ("takeoff", "screen"):
        code, out, err = run(capsys, command, path)
        assert code == 2
        assert "Traceback" not in err + out
        lines = [x for x in err.splitlines() if x.strip()]
        assert len(lines) == 1 and fragment in lines[0] and "model.ifc" in lines[0]


def test_truncated_model_is_one_line_exit_2(capsys, tmp_path):
    data = (SAMPLES / "courtyard_12_m.ifc").read_bytes()
    path = tmp_path / "cut.ifc"
    path.write_bytes(data[: len(data) // 2])
    code, out, err = run(capsys, "screen", path)
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and "cut.ifc" in err


def test_bad_settings_exit_2(capsys, tmp_path):
    bad = tmp_path / "s.toml"
    bad.write_text("[wind]\nbasic_wind_speed = 30\n")
    code, _, err = run(capsys, "screen", SAMPLES / "courtyard_12_m.ifc", "--settings", bad)
    assert code == 2
    assert "unknown key(s) basic_wind_speed" in err and len(err.strip().splitlines()) == 1


def test_takeoff_json_keys(capsys):
    code, out, _ = run(capsys, "takeoff", "--json", SAMPLES / "courtyard_12_mm.ifc")
    assert code == 0
    data = json.loads(out)
    assert data["length_unit"] == "MILLIMETRE"
    # the generator writes TrueNorth (-sin 30, cos 30): 30 degrees (sample_models/README.md)
    assert data["true_north_deg"] == pytest.approx(30.0, abs=1e-9)
    (b,) = data["buildings"]
    s = next(s for s in b["storeys"] if s["above_grade"] and s["walls"])
    for key in ("name", "elevation_m", "height_m", "above_grade", "slab_area_m2", "slab_thickness_m", "walls",
                "columns", "mass_kg", "mass_centre_m", "stiffness_centre_m"):
        assert key in s
    assert {"global_id", "length_m", "thickness_m", "height_m", "plan_area_m2"} <= set(s["walls"][0])
    assert {"global_id", "area_m2", "height_m"} <= set(s["columns"][0])
    assert b["cores"] and {"id", "wall_ids", "closed", "area_m2", "ixx_m4", "iyy_m4", "j_m4"} <= set(b["cores"][0])
    assert "warnings" in data


def test_screen_office_tower_passes_on_moderate_site(capsys):
    code, out, _ = run(capsys, "screen", "--json", SAMPLES / "office_tower_40.ifc",
                       "--settings", SAMPLES / "moderate_site.toml")
    data = json.loads(out)
    assert data["status"] == "pass" and code == 0
    assert data["modes"][0]["period_s"] > 0 and data["empirical"]
    assert {"method", "return_period_yr", "direction_deg", "floor", "peak_mg", "limit_mg", "criterion",
            "passes"} <= set(data["accelerations"][0])
    assert data["drift"] and data["governing"]


def test_console_script_is_installed(tmp_path):
    proc = subprocess.run([sys.executable, "-c", "import sys; from swayscreen.pipeline.cli import main; "
                           "sys.exit(main(['screen', sys.argv[1]]))", str(tmp_path / "missing.ifc")],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2 and "Traceback" not in proc.stderr
    exe = Path(sys.executable).with_name("swayscreen")
    if exe.exists():
        proc = subprocess.run([str(exe), "--version"], capture_output=True, text=True, timeout=60)
        assert proc.returncode == 0 and proc.stdout.startswith("swayscreen ")
