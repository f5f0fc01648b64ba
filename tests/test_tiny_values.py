"""Numbers closer to zero than any building dimension read as exactly zero.

Property-based tests once produced wall coordinates of about 2e-313 (subnormal doubles,
IEEE 754 below 2.2e-308); GEOS then failed in the core-plan union with a TopologyException.
The reader now flushes magnitudes below 1e-100 (file units) to 0 at the read boundary, so such
a model reads exactly like the one with zeros written, and screens.
"""
from __future__ import annotations

import subprocess
import sys

from swayscreen.pipeline.reading import read_model
from swayscreen.pipeline.takeoff_json import takeoff_to_dict

TINY = 2e-313  # a subnormal double (IEEE 754 binary64: below 2.2250738585072014e-308)
H = 3.2


def _core(b, eps: float):
    """Three storeys of a closed 6 x 6 m wall box at the origin and a plate; zeros replaced by ``eps``."""
    for i in range(3):
        s = b.storey(f"L{i}", i * H)
        b.slab(s, [(eps, eps), (20.0, eps), (20.0, 20.0), (eps, 20.0)], 0.25, name=f"L{i} plate")
        b.wall(s, (eps, eps), (6.0, eps), 0.3, H, name=f"L{i} s")
        b.wall(s, (6.0, eps), (6.0, 6.0), 0.3, H, name=f"L{i} e")
        b.wall(s, (6.0, 6.0), (eps, 6.0), 0.3, H, name=f"L{i} n")
        b.wall(s, (eps, 6.0), (eps, eps), 0.3, H, name=f"L{i} w")
        b.column(s, b.rect_profile(0.5, 0.5, centre=(eps, eps)), (eps, eps), H, name=f"L{i} c")


def _digest(t) -> dict:
    d = takeoff_to_dict(t)

    def strip(x):
        if isinstance(x, dict):
            return {k: strip(v) for k, v in x.items() if not k.endswith(("global_id", "_id", "source_path", "warnings"))}
        if isinstance(x, list):
            return [strip(v) for v in x]
        return x

    return strip(d)


def test_subnormal_coordinates_read_as_zero(ifc_builder, tmp_path):
    a, z = ifc_builder("IFC4", "m"), ifc_builder("IFC4", "m")
    _core(a, TINY)
    _core(z, 0.0)
    pa, pz = a.write(tmp_path / "tiny.ifc"), z.write(tmp_path / "zero.ifc")
    assert b"E-313" in pa.read_bytes().upper()  # the file really carries the subnormal values
    assert _digest(read_model(pa)) == _digest(read_model(pz))


def test_model_with_subnormal_coordinates_screens(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _core(b, TINY)
    path = b.write(tmp_path / "tiny.ifc")
    r = subprocess.run([sys.executable, "-m", "swayscreen.pipeline.cli", "screen", str(path)],
                       capture_output=True, text=True, timeout=300)
    assert r.returncode in (0, 1), r.stderr
    assert "Traceback" not in r.stderr and "TopologyException" not in r.stderr + r.stdout
    assert "STATUS:" in r.stdout
