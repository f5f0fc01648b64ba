"""Small invented towers and duck-typed modal results for the wind, comfort and drift tests.

The modes follow the modal plugin's result contract (index, period_s, frequency_hz,
omega_rad_s, shape (n, 3): x m, y m, twist rad about stick.origin_m, kind, shares,
participation, generalized_mass_kg) but are built directly with numpy, so the formula
tests do not depend on the modal plugin.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from shapely.geometry import Polygon, box

from swayscreen.pipeline.stick import Level, StickModel
from swayscreen.plugins.wind_common import generalized_mass_kg


@dataclass(frozen=True)
class FakeMode:
    index: int
    period_s: float
    frequency_hz: float
    omega_rad_s: float
    shape: np.ndarray
    kind: str
    shares: dict = field(default_factory=dict)
    participation: dict = field(default_factory=dict)
    generalized_mass_kg: float = 0.0


@dataclass(frozen=True)
class FakeModal:
    modes: tuple


def make_tower(n: int = 50, storey_m: float = 3.0, width_x_m: float = 40.0, width_y_m: float = 40.0,
               floor_mass_kg: float | None = None, true_north_deg: float = 0.0,
               centre_m: tuple[float, float] = (0.0, 0.0), origin_m: tuple[float, float] = (0.0, 0.0),
               usage: str | None = None, top_usage: str | None = None, plate: Polygon | None = None,
               mass_centre_m: tuple[float, float] | None = None, top_mass_factor: float = 1.0) -> StickModel:
    """A prismatic tower of ``n`` equal storeys with a rectangular (or given) plate.

    Default mass: 200 kg/m^3 of gross volume (the methods sheet's own example tower).
    ``top_mass_factor`` 0.5 makes the floors the trapezoidal lumping of a continuous uniform
    mass per height (the top floor carries half a storey).
    """
    cx, cy = centre_m
    geom = plate if plate is not None else box(cx - width_x_m / 2, cy - width_y_m / 2,
                                               cx + width_x_m / 2, cy + width_y_m / 2)
    m = floor_mass_kg if floor_mass_kg is not None else 200.0 * geom.area * storey_m
    c = geom.centroid
    mc = mass_centre_m if mass_centre_m is not None else (float(c.x), float(c.y))
    j = m * (width_x_m ** 2 + width_y_m ** 2) / 12.0
    levels = tuple(
        Level(name=f"L{i + 1:02d}", storey_id=f"S{i + 1:02d}", elevation_m=storey_m * (i + 1), height_m=storey_m,
              mass_kg=m * (top_mass_factor if i == n - 1 else 1.0), mass_centre_m=mc,
              polar_moment_kg_m2=j * (top_mass_factor if i == n - 1 else 1.0), plate=geom,
              usage=(top_usage if (i == n - 1 and top_usage is not None) else usage))
        for i in range(n))
    return StickModel("B-1", "invented test tower", 0.0, levels, (), origin_m, true_north_deg)


def mode(stick: StickModel, index: int, frequency_hz: float, direction: str, exponent: float = 1.0,
         kind: str | None = None) -> FakeMode:
    """A power-law mode (z/h)^exponent purely in "x", "y" or "twist" (twist scaled so that
    theta times the plate half-diagonal is 1 at the top)."""
    z = np.array([lv.elevation_m - stick.base_elevation_m for lv in stick.levels])
    prof = (z / z[-1]) ** exponent
    shape = np.zeros((stick.n_levels, 3))
    if direction == "x":
        shape[:, 0] = prof
    elif direction == "y":
        shape[:, 1] = prof
    else:
        minx, miny, maxx, maxy = stick.levels[-1].plate.bounds
        r = 0.5 * math.hypot(maxx - minx, maxy - miny)
        shape[:, 2] = prof / r
    return FakeMode(index, 1 / frequency_hz, frequency_hz, 2 * math.pi * frequency_hz, shape,
                    kind or ("torsion" if direction == "twist" else direction), {}, {},
                    generalized_mass_kg(stick, shape))


def three_modes(stick: StickModel, fx: float, fy: float, ft: float, exponent: float = 1.0) -> tuple:
    """Uncoupled x, y and twist modes, indexed by ascending frequency."""
    specs = sorted([(fx, "x"), (fy, "y"), (ft, "twist")])
    return tuple(mode(stick, i + 1, f, d, exponent) for i, (f, d) in enumerate(specs))


def shear_building_stiffness(n: int, k_x: float, k_y: float, k_t: float) -> np.ndarray:
    """(3n, 3n) stiffness of a uniform shear building with its stiffness centre at the origin:
    storey springs k between consecutive floors (and floor 0 and the fixed base)."""
    k = np.zeros((3 * n, 3 * n))
    for dof, kk in ((0, k_x), (1, k_y), (2, k_t)):
        for i in range(n):
            a = 3 * i + dof
            k[a, a] += kk
            if i + 1 < n:
                b = 3 * (i + 1) + dof
                k[a, a] += kk
                k[a, b] -= kk
                k[b, a] -= kk
    return k
