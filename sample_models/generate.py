#!/usr/bin/env python3
"""Generator for swayscreen's invented sample buildings.

Every building here is our own invention (names, sites and layouts are made up). The
generator authors them with ``ifcopenshell.api`` (project, units, contexts, spatial tree,
types, materials, openings, containment) plus a few direct entity constructors for the
geometry, so that every coordinate is written exactly from integer-millimetre inputs.

Committed samples (``python sample_models/generate.py [--out DIR]`` regenerates them):

* ``office_tower_40.ifc``: "Ferrow Quay Tower", 40 storeys + 1 basement, closed two-cell
  core with door openings, perimeter columns (mapped through IfcColumnType), post-tensioned
  flat slabs with a lift-shaft void and a riser opening, one curtain wall per facade per storey.
* ``residential_tower_60.ifc``: "Alderbank Residences", 60 storeys, slender, open C-shaped
  core with returns on the east side of the plate (web facing the plate centre, opening to
  the east), blade columns, chamfered polyline plates.
* ``courtyard_12_mm.ifc``: "Tansy Yard", 12 storeys, L-shaped plate, six separate shear
  walls, millimetre length unit, true north 30 degrees counter-clockwise from +Y, building
  placed 12 m / 8 m off the site origin.
* ``courtyard_12_m.ifc``: the same building in metres (for mm/m comparisons).
* ``courtyard_12_mm_ifc2x3.ifc``: the same building in IFC2X3 (IfcWallStandardCase,
  mandatory owner history).
* ``specs.json``: the generator's inputs per sample (see :func:`spec_of`), in metres, world
  coordinates of the project.

The benchmark tower (not committed) comes from :func:`generate_tower`.

Determinism: GlobalIds come from a SHA-256 of (sample name, counter); the header carries a
fixed time stamp and fixed application strings; IFC2X3 owner histories share one fixed
date. Two runs produce byte-identical files.

Conventions (also in README.md): element placements are relative to their storey's
placement, storeys relative to the building, the building relative to the site. Slab tops
are at the storey elevation (three ways of saying so, one per building: extruded downward;
placement lowered by the thickness and extruded up; solid position lowered by the
thickness). Walls and columns rise from the storey elevation by the storey height. All
lengths below are integer millimetres; ``_L`` converts them to the file's unit.
"""
from __future__ import annotations

import argparse
import contextlib
import hashlib
import json
import math
import sys
import time
import uuid
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterator

import ifcopenshell
import ifcopenshell.api.aggregate
import ifcopenshell.api.context
import ifcopenshell.api.feature
import ifcopenshell.api.material
import ifcopenshell.api.owner
import ifcopenshell.api.project
import ifcopenshell.api.pset
import ifcopenshell.api.root
import ifcopenshell.api.spatial
import ifcopenshell.api.type
import ifcopenshell.api.unit
import ifcopenshell.guid

__all__ = [
    "OpeningDef",
    "WallDef",
    "ColumnDef",
    "SlabDef",
    "CurtainWallDef",
    "PlanDef",
    "StoreyDef",
    "MaterialDef",
    "BuildingDef",
    "office_tower_def",
    "residential_tower_def",
    "courtyard_def",
    "tower_def",
    "build",
    "generate_tower",
    "spec_of",
    "expand",
    "sample_defs",
    "write_all",
    "SAMPLE_FILES",
    "SPECS",
    "main",
]

Pt = tuple[int, int]

HEADER_TIME_STAMP = "2025-01-01T00:00:00"
# 2025-01-01T00:00:00Z, used for every IfcOwnerHistory date in the IFC2X3 sample.
OWNER_HISTORY_DATE = 1735689600
APPLICATION = "swayscreen sample_models/generate.py"
APPLICATION_VERSION = "1"
SPEC_FORMAT = "swayscreen-sample-specs/1"


# ---------------------------------------------------------------------------------------
# Input definitions (integer millimetres, building-local plan coordinates)
# ---------------------------------------------------------------------------------------


@dataclass(frozen=True)
class OpeningDef:
    """A rectangular opening through a wall, in the wall's axis coordinates (mm).

    ``start``/``end`` run along the axis from its start point; ``sill``/``head`` are above
    the wall base. ``door`` adds an IfcDoor filling the opening.
    """

    start: int
    end: int
    sill: int
    head: int
    door: bool = True


@dataclass(frozen=True)
class WallDef:
    """A straight wall on its centre line (the axis), rising from the storey elevation.

    ``profile`` chooses the body's swept area: "arbitrary" (closed polyline) or
    "rectangle" (IfcRectangleProfileDef centred on the axis).
    """

    name: str
    start: Pt
    end: Pt
    thickness: int
    predefined_type: str = "SHEAR"
    load_bearing: bool = True
    is_external: bool = False
    material: str = "Concrete C40/50"
    openings: tuple[OpeningDef, ...] = ()
    profile: str = "arbitrary"

    @property
    def length(self) -> int:
        return int(round(math.hypot(self.end[0] - self.start[0], self.end[1] - self.start[1])))


@dataclass(frozen=True)
class ColumnDef:
    """A rectangular column: ``width`` along its local x, ``depth`` along local y (mm).

    ``rotated`` turns the placement by +90 degrees (local x along world +Y), as design
    tools do for a rotated family instance; the world extents then swap.
    """

    name: str
    centre: Pt
    width: int
    depth: int
    rotated: bool = False
    material: str = "Concrete C40/50"

    @property
    def size_x(self) -> int:
        return self.depth if self.rotated else self.width

    @property
    def size_y(self) -> int:
        return self.width if self.rotated else self.depth


@dataclass(frozen=True)
class SlabDef:
    """A horizontal slab whose top is at the storey elevation.

    ``outline`` is counter-clockwise. ``voids`` become inner curves of an
    IfcArbitraryProfileDefWithVoids; ``openings`` become IfcOpeningElements voiding the
    slab (axis-aligned rectangles, given as (xmin, ymin, xmax, ymax)). ``profile`` is
    "arbitrary" or "rectangle" (an axis-aligned rectangular outline without voids).
    """

    name: str
    outline: tuple[Pt, ...]
    thickness: int
    predefined_type: str = "FLOOR"
    voids: tuple[tuple[Pt, ...], ...] = ()
    openings: tuple[tuple[int, int, int, int], ...] = ()
    profile: str = "arbitrary"
    material: str = "Concrete C40/50"
    is_external: bool = False


@dataclass(frozen=True)
class CurtainWallDef:
    """A facade strip along a slab edge; it hangs outside the line (to the right of
    start->end, i.e. outward for a counter-clockwise plate)."""

    name: str
    start: Pt
    end: Pt
    depth: int = 150


@dataclass(frozen=True)
class PlanDef:
    """What stands on a storey: slabs at its elevation, walls/columns/facades above it."""

    slabs: tuple[SlabDef, ...] = ()
    walls: tuple[WallDef, ...] = ()
    columns: tuple[ColumnDef, ...] = ()
    curtain_walls: tuple[CurtainWallDef, ...] = ()
    # Expected wall groups (walls touching/overlapping in plan) and their closed cells.
    wall_groups: tuple[tuple[tuple[str, ...], int], ...] = ()


@dataclass(frozen=True)
class StoreyDef:
    """One IfcBuildingStorey. ``usage`` goes to the storey's IfcSpace as
    Pset_SpaceOccupancyRequirements.OccupancyType (None: no space)."""

    name: str
    long_name: str
    elevation: int
    plan: str
    usage: str | None
    space_name: str | None = None


@dataclass(frozen=True)
class MaterialDef:
    """An IfcMaterial; the optional mechanical values are written as material property
    sets (Pset_MaterialCommon.MassDensity, Pset_MaterialMechanical.YoungModulus /
    PoissonRatio) when ``write_properties`` is set on the building."""

    name: str
    category: str
    density_kg_m3: float | None = None
    youngs_modulus_pa: float | None = None
    poisson_ratio: float | None = None


@dataclass(frozen=True)
class BuildingDef:
    """A whole sample: spatial tree, storeys and plans, plus how to write it."""

    file_name: str
    seed: str
    project_name: str
    site_name: str
    building_name: str
    description: str
    storeys: tuple[StoreyDef, ...]
    plans: dict[str, PlanDef]
    materials: tuple[MaterialDef, ...]
    schema: str = "IFC4"
    length_unit: str = "METRE"  # or "MILLIMETRE"
    true_north_deg: float = 0.0
    building_origin: tuple[int, int, int] = (0, 0, 0)
    site_ref_elevation_m: float = 0.0
    slab_method: str = "extrude_down"  # "extrude_down" | "placement_below" | "solid_below"
    map_columns: bool = False  # columns through IfcColumnType representation maps
    write_material_properties: bool = False
    facade_detail: bool = False  # benchmark: panels and mullions inside each curtain wall
    facade_module: int = 1800

    def storey_heights(self) -> list[int | None]:
        """Storey heights (mm) to the next storey; None for the top (roof) storey."""
        elev = [s.elevation for s in self.storeys]
        return [elev[i + 1] - elev[i] for i in range(len(elev) - 1)] + [None]


# ---------------------------------------------------------------------------------------
# The buildings
# ---------------------------------------------------------------------------------------

_CONCRETE_C40 = MaterialDef("Concrete C40/50", "concrete", 2500.0, 35.0e9, 0.2)
_CONCRETE_C60 = MaterialDef("Concrete C60/75", "concrete", 2500.0, 39.0e9, 0.2)
_GLAZING = MaterialDef("Curtain wall glazing", "glass")
_GYPSUM = MaterialDef("Gypsum partition board", "gypsum")
_ALUMINIUM = MaterialDef("Aluminium mullion", "aluminium")


def _rect(x0: int, y0: int, x1: int, y1: int) -> tuple[Pt, ...]:
    """Counter-clockwise rectangle outline."""
    return ((x0, y0), (x1, y0), (x1, y1), (x0, y1))


# ----- Ferrow Quay Tower (office) ------------------------------------------------------
# Core: 16.0 m (x) by 14.0 m (y) outside, centred on the plate; wall thickness t steps
# from 0.6 m to 0.5 m at L20 with the outer faces kept; 0.4 m cross wall at x = 0 makes a
# west cell (lift shaft, open through the slabs) and an east cell (stair and risers).
_OFFICE_CORE_NAMES = ("CW-S", "CW-E", "CW-N", "CW-W", "CW-X")
_OFFICE_RISER = (5500, 4000, 7000, 5500)  # slab opening in the east cell (xmin, ymin, xmax, ymax)


def _office_core(t: int) -> tuple[WallDef, ...]:
    """The closed core for wall thickness ``t`` (mm). The x-walls run the full 16 m; the
    y-walls and the cross wall butt between the x-walls' inner faces (touching, not
    overlapping). Three lift doors (1.2 x 2.4 m) in the south wall of the west cell, stair
    doors (1.0 x 2.2 m) into the east cell from south and north; each leaves a lintel."""
    lifts = (OpeningDef(1000, 2200, 0, 2400), OpeningDef(3000, 4200, 0, 2400), OpeningDef(5000, 6200, 0, 2400))
    stair_s = (OpeningDef(10000, 11000, 0, 2200),)
    stair_n = (OpeningDef(4000, 5000, 0, 2200),)
    yi = 7000 - t  # inner face of the x-walls
    return (
        WallDef("CW-S", (-8000, -7000 + t // 2), (8000, -7000 + t // 2), t, openings=lifts + stair_s),
        WallDef("CW-E", (8000 - t // 2, -yi), (8000 - t // 2, yi), t),
        WallDef("CW-N", (8000, 7000 - t // 2), (-8000, 7000 - t // 2), t, openings=stair_n),
        WallDef("CW-W", (-8000 + t // 2, yi), (-8000 + t // 2, -yi), t),
        WallDef("CW-X", (0, -yi), (0, yi), 400),
    )


def _office_lift_shaft(t: int) -> tuple[Pt, ...]:
    """The west cell between the wall inner faces (the slab void), clockwise as an inner
    curve."""
    yi = 7000 - t
    return ((-8000 + t, -yi), (-8000 + t, yi), (-200, yi), (-200, -yi))


def _office_columns(size: int, material: str = "Concrete C60/75") -> tuple[ColumnDef, ...]:
    """Sixteen perimeter columns on lines x, y = +-17.0 m, at 8.5 m centres."""
    xs = (-17000, -8500, 0, 8500, 17000)
    letters = "ABCDE"
    cols = []
    for j, y in enumerate(xs):
        for i, x in enumerate(xs):
            if i in (0, 4) or j in (0, 4):
                cols.append(ColumnDef(f"C-{letters[i]}{j + 1}", (x, y), size, size, material=material))
    return tuple(cols)


def _office_facades(half: int = 18000) -> tuple[CurtainWallDef, ...]:
    h = half
    return (
        CurtainWallDef("FC-S", (-h, -h), (h, -h)),
        CurtainWallDef("FC-E", (h, -h), (h, h)),
        CurtainWallDef("FC-N", (h, h), (-h, h)),
        CurtainWallDef("FC-W", (-h, h), (-h, -h)),
    )


def _office_floor(t: int, thickness: int = 300, outline: tuple[Pt, ...] | None = None,
                  name: str = "Floor plate") -> SlabDef:
    return SlabDef(name, outline or _rect(-18000, -18000, 18000, 18000), thickness, "FLOOR",
                   voids=(_office_lift_shaft(t),), openings=(_OFFICE_RISER,))


def _office_plan(t: int, column: int, facades: bool = True, slab: SlabDef | None = None) -> PlanDef:
    return PlanDef((slab or _office_floor(t),), _office_core(t), _office_columns(column),
                   _office_facades() if facades else (), ((_OFFICE_CORE_NAMES, 2),))


def office_tower_def() -> BuildingDef:
    """Ferrow Quay Tower: 40-storey concrete office tower with one basement.

    Plate 36 x 36 m, 0.30 m post-tensioned flat slabs (0.35 m ground slab over the
    40 x 40 m basement, 1.2 m raft), closed 16 x 14 m two-cell core (0.6 m walls to L19,
    0.5 m above), 16 perimeter columns stepping 1.2 / 1.0 / 0.8 m square (C60/75) at L13
    and L27, a 4.6 m plant floor at L20. 154.5 m to the roof.
    """
    plate = _rect(-18000, -18000, 18000, 18000)
    podium = _rect(-20000, -20000, 20000, 20000)
    retaining = (
        WallDef("RW-S", (-20000, -19800), (20000, -19800), 400, "SOLIDWALL", is_external=True),
        WallDef("RW-E", (19800, -19600), (19800, 19600), 400, "SOLIDWALL", is_external=True),
        WallDef("RW-N", (20000, 19800), (-20000, 19800), 400, "SOLIDWALL", is_external=True),
        WallDef("RW-W", (-19800, 19600), (-19800, -19600), 400, "SOLIDWALL", is_external=True),
    )
    plans = {
        "basement": PlanDef(
            slabs=(SlabDef("Basement raft", podium, 1200, "BASESLAB", profile="rectangle"),),
            walls=_office_core(600) + retaining,
            columns=_office_columns(1200),
            wall_groups=((_OFFICE_CORE_NAMES, 2), (("RW-S", "RW-E", "RW-N", "RW-W"), 1)),
        ),
        "ground": _office_plan(600, 1200, slab=_office_floor(600, 350, podium, "Ground slab")),
        "low": _office_plan(600, 1200),
        "mid_lower": _office_plan(600, 1000),
        "mid_upper": _office_plan(500, 1000),
        "high": _office_plan(500, 800),
        "roof": PlanDef(slabs=(SlabDef("Roof slab", plate, 300, "ROOF", is_external=True),)),
    }
    storeys = [
        StoreyDef("B1", "Basement 1", -4500, "basement", "Parking", "Car park"),
        StoreyDef("L00", "Level 00", 0, "ground", "Office", "Entrance lobby"),
    ]
    elev = 5500
    for k in range(1, 40):
        zone = "low" if k <= 12 else "mid_lower" if k <= 19 else "mid_upper" if k <= 26 else "high"
        if k == 20:
            storeys.append(StoreyDef(f"L{k:02d}", f"Level {k:02d}", elev, zone, "Plant", "Plant floor"))
            elev += 4600
        else:
            storeys.append(StoreyDef(f"L{k:02d}", f"Level {k:02d}", elev, zone, "Office", "Office floor"))
            elev += 3800
    storeys.append(StoreyDef("Roof", "Roof", elev, "roof", None))
    return BuildingDef(
        file_name="office_tower_40.ifc",
        seed="ferrow-quay-tower",
        project_name="Ferrow Quay",
        site_name="Ferrow Quay plot 3",
        building_name="Ferrow Quay Tower",
        description="40-storey concrete office tower, closed two-cell core, perimeter columns",
        storeys=tuple(storeys),
        plans=plans,
        materials=(_CONCRETE_C40, _CONCRETE_C60, _GLAZING),
        site_ref_elevation_m=4.5,
        slab_method="extrude_down",
        map_columns=True,
        write_material_properties=True,
    )


# ----- Alderbank Residences (residential) ----------------------------------------------
# Plate 28.0 m (x) by 30.0 m (y) with 1 m corner chamfers. Core: a C with returns, outside
# 13.0 m (x, from 0 to 13.0 m) by 18.0 m (y), its web on the west side facing the plate
# centre, the flanges running east to the east column line and two 7.5 m returns turning in
# from the flange ends, which leave a 3.0 m opening (the entrance to the lift lobby) in the
# east face. No coupling beams across the opening: an open section, whose shear centre lies
# west of the web, about 10 m from the mass centre, so the y sway and the twist couple.
_RES_PLATE_HALF = (14000, 15000)  # half the plate's extent in x and y (corners chamfered 1 m)
_RES_CORE_X = (0, 13000)  # outside faces of the web and of the returns
_RES_CORE_HALF_Y = 9000  # outside faces of the flanges at y = +-9.0 m
_RES_RETURN = 7500  # length of each return from the flange's outside face
_RES_CORE_NAMES = ("RC-WEB", "RC-FS", "RC-FN", "RC-RS", "RC-RN")
_RES_WEB_T = (500, 400, 300)  # web thickness by zone (L00-L19, L20-L39, L40-L59)
_RES_WALL_T = (800, 600, 400)  # flanges and returns by zone
# Slab openings inside the core (xmin, ymin, xmax, ymax): the lift shafts along the web and
# the two stairs against the flanges.
_RES_SLAB_OPENINGS = ((1000, -4000, 4000, 4000), (5000, 5500, 11000, 8000), (5000, -8000, 11000, -5500))


def _residential_core(zone: int) -> tuple[WallDef, ...]:
    """The C core with returns for a thickness zone (0, 1, 2). The web spans the full
    18 m; the flanges run from the web's centre line to the east face (overlapping the web);
    the returns run from the flanges' outside faces (overlapping the flanges' ends)."""
    tw, t = _RES_WEB_T[zone], _RES_WALL_T[zone]
    x0, x1 = _RES_CORE_X
    hy = _RES_CORE_HALF_Y
    xw = x0 + tw // 2
    xr = x1 - t // 2
    yf = hy - t // 2
    gap = hy - _RES_RETURN
    return (
        WallDef("RC-WEB", (xw, -hy), (xw, hy), tw, profile="rectangle"),
        WallDef("RC-FS", (xw, -yf), (x1, -yf), t, profile="rectangle"),
        WallDef("RC-FN", (x1, yf), (xw, yf), t, profile="rectangle"),
        WallDef("RC-RS", (xr, -hy), (xr, -gap), t, profile="rectangle"),
        WallDef("RC-RN", (xr, gap), (xr, hy), t, profile="rectangle"),
    )


def _residential_columns(zone: int) -> tuple[ColumnDef, ...]:
    """Blade columns on the north, south and west facades (long side along the facade; the
    west ones placed rotated 90 degrees), square corner columns and a line of three square
    interior columns in the west bay, all C60/75, on a grid of about 7 m, stepping down at
    L20 and L40 (zone 0, 1, 2). The east facade needs none between the corners: the core's
    flanges reach it."""
    m = "Concrete C60/75"
    bl, bt = ((1400, 450), (1200, 400), (1000, 350))[zone]
    corner = (700, 600, 500)[zone]
    inner = (1000, 800, 600)[zone]
    cx, cy = (v - 1000 for v in _RES_PLATE_HALF)  # column lines 1 m inside the plate edges
    cols: list[ColumnDef] = []
    for y, row in ((-cy, "S"), (cy, "N")):
        for x in (-7000, 0, 7000):
            cols.append(ColumnDef(f"B-{row}{x // 100:+d}", (x, y), bl, bt, material=m))
    for y in (-7000, 0, 7000):
        cols.append(ColumnDef(f"B-W{y // 100:+d}", (-cx, y), bl, bt, rotated=True, material=m))
    for x in (-cx, cx):
        for y in (-cy, cy):
            cols.append(ColumnDef(f"K-{'W' if x < 0 else 'E'}{'S' if y < 0 else 'N'}", (x, y), corner, corner,
                                  material=m))
    for y in (-7000, 0, 7000):
        cols.append(ColumnDef(f"I{y // 100:+d}", (-6500, y), inner, inner, material=m))
    return tuple(cols)


def residential_tower_def() -> BuildingDef:
    """Alderbank Residences: slender 60-storey residential tower.

    Plate 28 m (x) by 30 m (y) with 1 m corner chamfers (838 m2), 3.2 m storeys (4.2 m
    ground), 193 m tall (height / least plate width 6.9), 0.20 m post-tensioned flat slabs
    with the lift and stair openings inside the core, an open C-shaped core with returns on
    the east side, its web facing the plate centre (flanges and returns 0.80 / 0.60 /
    0.40 m, web 0.50 / 0.40 / 0.30 m, stepping at L20 and L40), blade, corner and interior
    columns (C60/75).
    """
    a, b = _RES_PLATE_HALF
    plate = ((-a + 1000, -b), (a - 1000, -b), (a, -b + 1000), (a, b - 1000),
             (a - 1000, b), (-a + 1000, b), (-a, b - 1000), (-a, -b + 1000))
    partitions = (
        WallDef("PW-1", (-4000, 7000), (-4000, b - 500), 100, "PARTITIONING", False, material=_GYPSUM.name),
        WallDef("PW-2", (-4000, -b + 500), (-4000, -7000), 100, "PARTITIONING", False, material=_GYPSUM.name),
    )
    groups = ((_RES_CORE_NAMES, 0), (("PW-1",), 0), (("PW-2",), 0))
    floor = SlabDef("Floor plate", plate, 200, "FLOOR", openings=_RES_SLAB_OPENINGS)

    def plan(zone: int, slab: SlabDef = floor) -> PlanDef:
        return PlanDef((slab,), _residential_core(zone) + partitions, _residential_columns(zone), (), groups)

    plans = {
        "ground": plan(0, SlabDef("Ground slab", plate, 600, "BASESLAB")),
        "lower": plan(0),
        "middle": plan(1),
        "upper": plan(2),
        "roof": PlanDef(slabs=(SlabDef("Roof slab", plate, 300, "ROOF", is_external=True),)),
    }
    storeys = [StoreyDef("L00", "Level 00", 0, "ground", "Retail", "Ground floor retail")]
    elev = 4200
    for k in range(1, 60):
        zone = "lower" if k < 20 else "middle" if k < 40 else "upper"
        storeys.append(StoreyDef(f"L{k:02d}", f"Level {k:02d}", elev, zone, "Residential", "Apartments"))
        elev += 3200
    storeys.append(StoreyDef("Roof", "Roof", elev, "roof", None))
    return BuildingDef(
        file_name="residential_tower_60.ifc",
        seed="alderbank-residences",
        project_name="Alderbank",
        site_name="Alderbank east plot",
        building_name="Alderbank Residences",
        description="60-storey residential tower, offset open C core with returns, blade columns",
        storeys=tuple(storeys),
        plans=plans,
        materials=(_CONCRETE_C40, _CONCRETE_C60, _GYPSUM),
        site_ref_elevation_m=11.0,
        slab_method="placement_below",
    )


# ----- Tansy Yard (courtyard, millimetres) ---------------------------------------------


def courtyard_def(length_unit: str = "MILLIMETRE", schema: str = "IFC4") -> BuildingDef:
    """Tansy Yard: 12-storey L-shaped courtyard building on six separate shear walls.

    L plate 42 x 15 m plus 15 x 21 m (945 m2), 3.15 m storeys (4.2 m ground), 0.25 m slabs,
    30 columns 0.6 m square on a 6.9 m grid, six 0.3 m shear walls 6-8 m long (three in x,
    three in y), none touching. True north 30 degrees counter-clockwise from +Y; the
    building sits 12 m east and 8 m north of the site origin.
    """
    plate = ((0, 0), (42000, 0), (42000, 15000), (15000, 15000), (15000, 36000), (0, 36000))
    walls = (
        WallDef("SW-1", (4000, 2000), (12000, 2000), 300),
        WallDef("SW-2", (2000, 12000), (2000, 5000), 300),
        WallDef("SW-3", (22000, 13000), (29000, 13000), 300),
        WallDef("SW-4", (40000, 4000), (40000, 11000), 300),
        WallDef("SW-5", (11000, 34000), (4000, 34000), 300),
        WallDef("SW-6", (13000, 21000), (13000, 27000), 300),
    )
    cols = []
    for j, y in enumerate((600, 7500, 14400)):
        for i, x in enumerate((600, 7500, 14400, 21300, 28200, 35100, 41400)):
            cols.append(ColumnDef(f"C-{i + 1}{'ABC'[j]}", (x, y), 600, 600))
    for j, y in enumerate((21300, 28200, 35400)):
        for i, x in enumerate((600, 7500, 14400)):
            cols.append(ColumnDef(f"C-{i + 1}{'DEF'[j]}", (x, y), 600, 600))
    groups = tuple(((w.name,), 0) for w in walls)
    plans = {
        "ground": PlanDef((SlabDef("Ground slab", plate, 400, "BASESLAB"),), walls, tuple(cols), (), groups),
        "typical": PlanDef((SlabDef("Floor plate", plate, 250, "FLOOR"),), walls, tuple(cols), (), groups),
        "roof": PlanDef(slabs=(SlabDef("Roof slab", plate, 300, "ROOF", is_external=True),)),
    }
    storeys = [StoreyDef("L00", "Level 00", 0, "ground", "Retail", "Ground floor retail")]
    elev = 4200
    for k in range(1, 12):
        storeys.append(StoreyDef(f"L{k:02d}", f"Level {k:02d}", elev, "typical", "Residential", "Apartments"))
        elev += 3150
    storeys.append(StoreyDef("Roof", "Roof", elev, "roof", None))
    unit_tag = "mm" if length_unit == "MILLIMETRE" else "m"
    suffix = "_ifc2x3" if schema == "IFC2X3" else ""
    return BuildingDef(
        file_name=f"courtyard_12_{unit_tag}{suffix}.ifc",
        seed="tansy-yard",  # same GlobalIds in every variant
        project_name="Tansy Yard",
        site_name="Tansy Yard site",
        building_name="Tansy Yard",
        description="12-storey L-shaped courtyard building on separate shear walls",
        storeys=tuple(storeys),
        plans=plans,
        materials=(_CONCRETE_C40,),
        schema=schema,
        length_unit=length_unit,
        true_north_deg=30.0,
        building_origin=(12000, 8000, 0),
        site_ref_elevation_m=23.5,
        slab_method="solid_below",
    )


# ----- Benchmark tower -----------------------------------------------------------------


def tower_def(n_storeys: int, *, facade_panels: bool = True, name: str | None = None) -> BuildingDef:
    """A benchmark tower of ``n_storeys`` storeys on the office tower's plan.

    Ground storey 5.5 m, 3.8 m above; core walls 0.6 m in the lower half, 0.5 m above;
    columns 1.2 / 1.0 / 0.8 m by thirds of the height. With ``facade_panels`` each curtain
    wall holds vision and spandrel panels (IfcPlate) and mullions (IfcMember) on a 1.8 m
    module: about 280 elements and 3,900 entity instances per storey.
    """
    if n_storeys < 1:
        raise ValueError("n_storeys must be at least 1")
    plate = _rect(-18000, -18000, 18000, 18000)
    plans = {}
    storeys = []
    elev = 0
    for k in range(n_storeys):
        t = 600 if 2 * k < n_storeys else 500
        c = 1200 if 3 * k < n_storeys else 1000 if 3 * k < 2 * n_storeys else 800
        key = f"w{t}_c{c}"
        plans.setdefault(key, _office_plan(t, c))
        storeys.append(StoreyDef(f"L{k:03d}", f"Level {k:03d}", elev, key, "Office", "Office floor"))
        elev += 5500 if k == 0 else 3800
    plans["roof"] = PlanDef(slabs=(SlabDef("Roof slab", plate, 300, "ROOF", is_external=True),))
    storeys.append(StoreyDef("Roof", "Roof", elev, "roof", None))
    label = name or f"Benchmark Tower {n_storeys}"
    return BuildingDef(
        file_name=f"tower_{n_storeys}.ifc",
        seed=f"benchmark-tower-{n_storeys}-{int(facade_panels)}",
        project_name=label,
        site_name=f"{label} site",
        building_name=label,
        description=f"{n_storeys}-storey benchmark tower",
        storeys=tuple(storeys),
        plans=plans,
        materials=(_CONCRETE_C40, _CONCRETE_C60, _GLAZING, _ALUMINIUM),
        slab_method="extrude_down",
        map_columns=True,
        facade_detail=facade_panels,
    )


def sample_defs() -> list[BuildingDef]:
    """The committed samples, in file order."""
    return [
        office_tower_def(),
        residential_tower_def(),
        courtyard_def("MILLIMETRE"),
        courtyard_def("METRE"),
        courtyard_def("MILLIMETRE", "IFC2X3"),
    ]


# ---------------------------------------------------------------------------------------
# Determinism
# ---------------------------------------------------------------------------------------


class _GuidSource:
    """Seeded GlobalIds: SHA-256 of "seed/counter", formatted as a version-4 UUID."""

    def __init__(self, seed: str) -> None:
        self.seed = seed
        self.count = 0

    def __call__(self) -> str:
        self.count += 1
        digest = hashlib.sha256(f"{self.seed}/{self.count}".encode()).digest()[:16]
        return ifcopenshell.guid.compress(uuid.UUID(bytes=digest, version=4).hex)


@contextlib.contextmanager
def _deterministic(guids: _GuidSource, owner: Any) -> Iterator[None]:
    """Route ifcopenshell's GlobalId and owner-history hooks to fixed values while the
    API builds one file; restore them afterwards."""
    saved = (
        ifcopenshell.guid.new,
        ifcopenshell.api.owner.create_owner_history,
        ifcopenshell.api.owner.update_owner_history,
    )
    ifcopenshell.guid.new = guids
    ifcopenshell.api.owner.create_owner_history = lambda file: owner["history"]
    ifcopenshell.api.owner.update_owner_history = lambda file, element=None: owner["history"]
    try:
        yield
    finally:
        (
            ifcopenshell.guid.new,
            ifcopenshell.api.owner.create_owner_history,
            ifcopenshell.api.owner.update_owner_history,
        ) = saved


# ---------------------------------------------------------------------------------------
# Writing IFC
# ---------------------------------------------------------------------------------------


def _half(v: int) -> int:
    """Exact half of an even integer length in mm (the samples keep every such value
    even, so the written coordinates are exactly the inputs)."""
    if v % 2:
        raise ValueError(f"{v} mm: expected an even value")
    return v // 2


def _shoelace2(poly: tuple[Pt, ...]) -> int:
    """Twice the signed area of an integer polygon (exact)."""
    s = 0
    n = len(poly)
    for i in range(n):
        x0, y0 = poly[i]
        x1, y1 = poly[(i + 1) % n]
        s += x0 * y1 - x1 * y0
    return s


class _Writer:
    """Builds one IFC file from a :class:`BuildingDef`."""

    def __init__(self, d: BuildingDef) -> None:
        self.d = d
        self.scale = 1.0 if d.length_unit == "MILLIMETRE" else 0.001
        self.x3 = d.schema == "IFC2X3"
        self.f = ifcopenshell.api.project.create_file(d.schema)
        self.guid = _GuidSource(d.seed)
        self.owner: dict[str, Any] = {"history": None}
        self._points: dict[tuple, Any] = {}
        self._dirs: dict[tuple, Any] = {}
        self._axes: dict[tuple, Any] = {}
        self._solids: dict[tuple, Any] = {}
        self._profiles: dict[tuple, Any] = {}
        self._material_targets: dict[Any, list] = {}
        self._column_types: dict[tuple, Any] = {}
        self._maps: dict[tuple, Any] = {}
        self._placement_of: dict[Any, Any] = {}
        self._pending: list[tuple[Any, Any]] = []

    # -- small geometry helpers (file units, shared by value) -------------------------
    def _L(self, mm: int | float) -> float:
        return float(mm) if self.scale == 1.0 else mm / 1000

    def pt(self, *mm: int) -> Any:
        key = tuple(mm)
        if key not in self._points:
            self._points[key] = self.f.createIfcCartesianPoint(tuple(self._L(v) for v in mm))
        return self._points[key]

    def direction(self, *v: float) -> Any:
        key = tuple(float(c) for c in v)
        if key not in self._dirs:
            self._dirs[key] = self.f.createIfcDirection(key)
        return self._dirs[key]

    def axis3(self, origin: tuple[int, int, int] = (0, 0, 0), xdir: tuple[int, int] | None = None) -> Any:
        key = (origin, xdir)
        if key not in self._axes:
            if xdir is None or xdir == (1, 0):
                a = self.f.createIfcAxis2Placement3D(self.pt(*origin), None, None)
            else:
                a = self.f.createIfcAxis2Placement3D(self.pt(*origin), self.direction(0, 0, 1), self.direction(xdir[0], xdir[1], 0))
            self._axes[key] = a
        return self._axes[key]

    def axis2(self, origin: tuple[int, int] = (0, 0)) -> Any:
        key = ("2d", origin)
        if key not in self._axes:
            self._axes[key] = self.f.createIfcAxis2Placement2D(self.pt(*origin), None)
        return self._axes[key]

    def place(self, product: Any, rel_to: Any, origin: tuple[int, int, int],
              xdir: tuple[int, int] | None = None) -> Any:
        """Create ``product``'s IfcLocalPlacement relative to ``rel_to``'s (a product or
        None). It is attached by :meth:`flush` after the API relationship calls, which
        would otherwise re-localise placements through floating-point matrices."""
        parent = None if rel_to is None else self._placement_of[rel_to]
        lp = self.f.createIfcLocalPlacement(parent, self.axis3(origin, xdir))
        self._placement_of[product] = lp
        self._pending.append((product, lp))
        return lp

    def flush(self) -> None:
        for product, lp in self._pending:
            product.ObjectPlacement = lp
        self._pending.clear()

    def polyline(self, pts: tuple[Pt, ...], closed: bool = True) -> Any:
        seq = [self.pt(*p) for p in pts]
        if closed:
            seq.append(seq[0])
        return self.f.createIfcPolyline(seq)

    def rect_profile(self, xdim: int, ydim: int, centre: tuple[int, int] = (0, 0)) -> Any:
        key = ("rect", xdim, ydim, centre)
        if key not in self._profiles:
            self._profiles[key] = self.f.createIfcRectangleProfileDef(
                "AREA", None, self.axis2(centre), self._L(xdim), self._L(ydim))
        return self._profiles[key]

    def poly_profile(self, outline: tuple[Pt, ...], voids: tuple[tuple[Pt, ...], ...] = ()) -> Any:
        key = ("poly", outline, voids)
        if key not in self._profiles:
            if voids:
                self._profiles[key] = self.f.createIfcArbitraryProfileDefWithVoids(
                    "AREA", None, self.polyline(outline), [self.polyline(v) for v in voids])
            else:
                self._profiles[key] = self.f.createIfcArbitraryClosedProfileDef("AREA", None, self.polyline(outline))
        return self._profiles[key]

    def extrusion(self, profile: Any, depth: int, down: bool = False, z0: int = 0) -> Any:
        key = (profile.id(), depth, down, z0)
        if key not in self._solids:
            self._solids[key] = self.f.createIfcExtrudedAreaSolid(
                profile, self.axis3((0, 0, z0)), self.direction(0, 0, -1 if down else 1), self._L(depth))
        return self._solids[key]

    def shape(self, items: list, *, kind: str = "SweptSolid", axis: Any = None) -> Any:
        reps = [self.f.createIfcShapeRepresentation(self.body, "Body", kind, items)]
        if axis is not None:
            reps.insert(0, self.f.createIfcShapeRepresentation(self.axis_ctx, "Axis", "Curve2D", [axis]))
        return self.f.createIfcProductDefinitionShape(None, None, reps)

    # -- semantic helpers -----------------------------------------------------------
    def entity(self, ifc_class: str, name: str | None = None, predefined_type: str | None = None) -> Any:
        return ifcopenshell.api.root.create_entity(self.f, ifc_class=ifc_class, name=name,
                                                   predefined_type=predefined_type)

    def pset(self, products: list, name: str, props: dict[str, Any]) -> None:
        """One property set shared by ``products`` through one IfcRelDefinesByProperties."""
        values = []
        for key, val in props.items():
            if isinstance(val, bool):
                nominal = self.f.create_entity("IfcBoolean", val)
            else:
                nominal = self.f.create_entity("IfcLabel", str(val))
            values.append(self.f.createIfcPropertySingleValue(key, None, nominal, None))
        ps = self.f.createIfcPropertySet(self.guid(), self.owner["history"], name, None, values)
        self.f.createIfcRelDefinesByProperties(self.guid(), self.owner["history"], None, None, products, ps)

    def associate(self, material: Any, products: list) -> None:
        self._material_targets.setdefault(material, []).extend(products)

    # -- the build ----------------------------------------------------------------------
    def build(self) -> ifcopenshell.file:
        d = self.d
        f = self.f
        f.header.file_name.name = d.file_name
        f.header.file_name.time_stamp = HEADER_TIME_STAMP
        f.header.file_name.author = ("swayscreen sample generator",)
        f.header.file_name.organization = ("swayscreen",)
        f.header.file_name.preprocessor_version = APPLICATION
        f.header.file_name.originating_system = f"{APPLICATION} {APPLICATION_VERSION}"
        f.header.file_name.authorization = "none"
        view = "CoordinationView_V2.0" if self.x3 else "DesignTransferView"
        f.header.file_description.description = (f"ViewDefinition [{view}]",)
        with _deterministic(self.guid, self.owner):
            if self.x3:
                self._owner_history()
            self._project()
            self._materials()
            self._storeys()
            for mat, products in self._material_targets.items():
                f.createIfcRelAssociatesMaterial(self.guid(), self.owner["history"], None, None, products, mat)
        self._sort_relationships()
        return f

    def _sort_relationships(self) -> None:
        """The API fills some SETs (related objects, units) through Python sets of entity
        instances, whose order depends on memory addresses; write them in entity-id order
        so the file does not depend on the process it was made in."""
        for rel in self.f.by_type("IfcRelationship") + self.f.by_type("IfcUnitAssignment"):
            for attr in ("RelatedObjects", "RelatedElements", "Units"):
                related = getattr(rel, attr, None)
                if isinstance(related, tuple) and len(related) > 1:
                    ordered = sorted(related, key=lambda e: e.id())
                    if list(related) != ordered:
                        setattr(rel, attr, ordered)

    def _owner_history(self) -> None:
        f = self.f
        person = f.createIfcPerson(None, "Generator", "Sample", None, None, None, None, None)
        org = f.createIfcOrganization(None, "swayscreen", None, None, None)
        user = f.createIfcPersonAndOrganization(person, org, None)
        app = f.createIfcApplication(org, APPLICATION_VERSION, APPLICATION, "swayscreen-samples")
        self.owner["history"] = f.createIfcOwnerHistory(
            user, app, "READWRITE", "ADDED", OWNER_HISTORY_DATE, user, app, OWNER_HISTORY_DATE)

    def _project(self) -> None:
        d, f = self.d, self.f
        self.project = self.entity("IfcProject", d.project_name)
        prefix = "MILLI" if d.length_unit == "MILLIMETRE" else None
        units = [
            ifcopenshell.api.unit.add_si_unit(f, "LENGTHUNIT", prefix=prefix),
            ifcopenshell.api.unit.add_si_unit(f, "AREAUNIT"),
            ifcopenshell.api.unit.add_si_unit(f, "VOLUMEUNIT"),
            ifcopenshell.api.unit.add_si_unit(f, "PLANEANGLEUNIT"),
        ]
        if d.write_material_properties:
            kg = ifcopenshell.api.unit.add_si_unit(f, "MASSUNIT", prefix="KILO")
            metre = ifcopenshell.api.unit.add_si_unit(f, "LENGTHUNIT") if prefix else units[0]
            newton = ifcopenshell.api.unit.add_si_unit(f, "FORCEUNIT")
            pascal = ifcopenshell.api.unit.add_si_unit(f, "PRESSUREUNIT")
            density = f.createIfcDerivedUnit(
                [f.createIfcDerivedUnitElement(kg, 1), f.createIfcDerivedUnitElement(metre, -3)],
                "MASSDENSITYUNIT", None)
            modulus = f.createIfcDerivedUnit(
                [f.createIfcDerivedUnitElement(newton, 1), f.createIfcDerivedUnitElement(metre, -2)],
                "MODULUSOFELASTICITYUNIT", None)
            units += [kg, newton, pascal, density, modulus]
        ifcopenshell.api.unit.assign_unit(f, units=units)
        model = ifcopenshell.api.context.add_context(f, context_type="Model")
        model.Precision = 0.01 if self.scale == 1.0 else 1.0e-5  # 0.01 mm either way
        if d.true_north_deg:
            a = math.radians(d.true_north_deg)
            north = (-0.5, math.sqrt(3.0) / 2.0) if d.true_north_deg == 30.0 else (-math.sin(a), math.cos(a))
            model.TrueNorth = f.createIfcDirection(north)
        self.body = ifcopenshell.api.context.add_context(f, "Model", "Body", "MODEL_VIEW", parent=model)
        self.axis_ctx = ifcopenshell.api.context.add_context(f, "Model", "Axis", "GRAPH_VIEW", parent=model)

        site = self.entity("IfcSite", d.site_name)
        self.place(site, None, (0, 0, 0))
        site.RefElevation = self._L(int(round(d.site_ref_elevation_m * 1000)))
        building = self.entity("IfcBuilding", d.building_name)
        building.Description = d.description
        self.place(building, site, d.building_origin)
        building.ElevationOfRefHeight = 0.0
        ifcopenshell.api.aggregate.assign_object(f, products=[site], relating_object=self.project)
        ifcopenshell.api.aggregate.assign_object(f, products=[building], relating_object=site)
        self.site, self.building = site, building
        self.flush()

    def _materials(self) -> None:
        f, d = self.f, self.d
        self.mat: dict[str, Any] = {}
        for m in d.materials:
            mat = ifcopenshell.api.material.add_material(f, name=m.name, category=None if self.x3 else m.category)
            self.mat[m.name] = mat
            if d.write_material_properties and not self.x3 and m.density_kg_m3 is not None:
                common = ifcopenshell.api.pset.add_pset(f, product=mat, name="Pset_MaterialCommon")
                ifcopenshell.api.pset.edit_pset(f, pset=common, properties={"MassDensity": m.density_kg_m3})
                mech = ifcopenshell.api.pset.add_pset(f, product=mat, name="Pset_MaterialMechanical")
                ifcopenshell.api.pset.edit_pset(f, pset=mech, properties={
                    "YoungModulus": m.youngs_modulus_pa, "PoissonRatio": m.poisson_ratio})
        self._layer_usages: dict[tuple, Any] = {}

    def layer_usage(self, material: str, thickness: int, direction: str, sense: str, offset: int) -> Any:
        """One IfcMaterialLayerSetUsage per (material, thickness, placement rule), shared."""
        key = (material, thickness, direction, sense, offset)
        if key not in self._layer_usages:
            f = self.f
            layer = f.create_entity("IfcMaterialLayer", Material=self.mat[material], LayerThickness=self._L(thickness))
            lset = f.create_entity("IfcMaterialLayerSet", MaterialLayers=[layer],
                                   LayerSetName=f"{material} {thickness} mm")
            self._layer_usages[key] = f.create_entity(
                "IfcMaterialLayerSetUsage", ForLayerSet=lset, LayerSetDirection=direction,
                DirectionSense=sense, OffsetFromReferenceLine=self._L(offset))
        return self._layer_usages[key]

    def _storeys(self) -> None:
        d, f = self.d, self.f
        heights = d.storey_heights()
        storeys = []
        for s in d.storeys:
            st = self.entity("IfcBuildingStorey", s.name)
            st.LongName = s.long_name
            st.Elevation = self._L(s.elevation)
            self.place(st, self.building, (0, 0, s.elevation))
            storeys.append(st)
        ifcopenshell.api.aggregate.assign_object(f, products=storeys, relating_object=self.building)
        self.flush()
        for i, (s, st) in enumerate(zip(d.storeys, storeys)):
            plan = d.plans[s.plan]
            h = heights[i]
            nxt = d.plans[d.storeys[i + 1].plan] if i + 1 < len(d.storeys) else None
            contained: list = []
            contained += self._slabs(st, s, plan)
            if plan.walls or plan.columns or plan.curtain_walls:
                if h is None:
                    raise ValueError(f"{d.file_name}: top storey {s.name} cannot carry walls or columns")
                contained += self._walls(st, s, plan, h)
                contained += self._columns(st, s, plan, h)
                contained += self._curtain_walls(st, s, plan, h)
            if contained:
                ifcopenshell.api.spatial.assign_container(f, products=contained, relating_structure=st)
            if s.usage and h is not None:
                self._space(st, s, plan, h, nxt)
            self.flush()

    # -- elements ---------------------------------------------------------------------
    def _slabs(self, st: Any, s: StoreyDef, plan: PlanDef) -> list:
        out = []
        for sd in plan.slabs:
            t = sd.thickness
            slab = self.entity("IfcSlab", sd.name, sd.predefined_type)
            slab.Tag = f"{s.name}/{sd.name}"
            if sd.profile == "rectangle":
                xs = [p[0] for p in sd.outline]
                ys = [p[1] for p in sd.outline]
                cx, cy = _half(min(xs) + max(xs)), _half(min(ys) + max(ys))
                if sd.voids or len(sd.outline) != 4:
                    raise ValueError(f"{sd.name}: a rectangle profile takes a plain rectangular outline")
                prof = self.rect_profile(max(xs) - min(xs), max(ys) - min(ys), (cx, cy))
            else:
                prof = self.poly_profile(sd.outline, sd.voids)
            method = self.d.slab_method
            if method == "extrude_down":
                self.place(slab, st, (0, 0, 0))
                solid = self.extrusion(prof, t, down=True)
                bottom, usage = -t, self.layer_usage(sd.material, t, "AXIS3", "NEGATIVE", 0)
            elif method == "placement_below":
                self.place(slab, st, (0, 0, -t))
                solid = self.extrusion(prof, t)
                bottom, usage = 0, self.layer_usage(sd.material, t, "AXIS3", "POSITIVE", 0)
            elif method == "solid_below":
                self.place(slab, st, (0, 0, 0))
                solid = self.extrusion(prof, t, z0=-t)
                bottom, usage = -t, self.layer_usage(sd.material, t, "AXIS3", "POSITIVE", -t)
            else:
                raise ValueError(f"unknown slab method {method!r}")
            slab.Representation = self.shape([solid])
            self.associate(usage, [slab])
            for k, (x0, y0, x1, y1) in enumerate(sd.openings):
                op = self.entity("IfcOpeningElement", f"{sd.name} opening {k + 1}",
                                 None if self.x3 else "OPENING")
                self.place(op, slab, (_half(x0 + x1), _half(y0 + y1), bottom - 50))
                op.Representation = self.shape([self.extrusion(self.rect_profile(x1 - x0, y1 - y0), t + 100)])
                ifcopenshell.api.feature.add_feature(self.f, feature=op, element=slab)
            self.pset([slab], "Pset_SlabCommon", {"LoadBearing": True, "IsExternal": sd.is_external})
            out.append(slab)
        return out

    def _walls(self, st: Any, s: StoreyDef, plan: PlanDef, h: int) -> list:
        out, bearing, other = [], [], []
        wall_class = "IfcWallStandardCase" if self.x3 else "IfcWall"
        for wd in plan.walls:
            dx, dy = wd.end[0] - wd.start[0], wd.end[1] - wd.start[1]
            if dx != 0 and dy != 0:
                raise ValueError(f"{wd.name}: sample walls are axis-aligned")
            length, t = wd.length, wd.thickness
            xdir = (int(math.copysign(1, dx)) if dx else 0, int(math.copysign(1, dy)) if dy else 0)
            wall = self.entity(wall_class, wd.name, None if self.x3 else wd.predefined_type)
            wall.Tag = f"{s.name}/{wd.name}"
            self.place(wall, st, (wd.start[0], wd.start[1], 0), xdir)
            half = _half(t)
            if wd.profile == "rectangle":
                prof = self.rect_profile(length, t, (length / 2, 0))
            else:
                prof = self.poly_profile(((0, -half), (length, -half), (length, half), (0, half)))
            axis = self.polyline(((0, 0), (length, 0)), closed=False)
            wall.Representation = self.shape([self.extrusion(prof, h)], axis=axis)
            self.associate(self.layer_usage(wd.material, t, "AXIS2", "POSITIVE", -half), [wall])
            for k, o in enumerate(wd.openings):
                op = self.entity("IfcOpeningElement", f"{wd.name} opening {k + 1}", None if self.x3 else "OPENING")
                w = o.end - o.start
                self.place(op, wall, (_half(o.start + o.end), 0, o.sill))
                op.Representation = self.shape([self.extrusion(self.rect_profile(w, t + 100), o.head - o.sill)])
                ifcopenshell.api.feature.add_feature(self.f, feature=op, element=wall)
                if o.door and not self.x3:
                    door = self.entity("IfcDoor", f"{wd.name} door {k + 1}", "DOOR")
                    door.Tag = f"{s.name}/{wd.name}/D{k + 1}"
                    door.OverallWidth = self._L(w)
                    door.OverallHeight = self._L(o.head - o.sill)
                    self.place(door, op, (-_half(w), 0, 0))
                    ifcopenshell.api.feature.add_filling(self.f, opening=op, element=door)
                    out.append(door)
            (bearing if wd.load_bearing else other).append(wall)
            out.append(wall)
        if bearing:
            self.pset(bearing, "Pset_WallCommon", {"LoadBearing": True, "IsExternal": False})
        if other:
            self.pset(other, "Pset_WallCommon", {"LoadBearing": False, "IsExternal": False})
        return out

    def _column_type(self, cd: ColumnDef, h: int) -> Any:
        key = (cd.width, cd.depth, h, cd.material)
        if key not in self._column_types:
            ctype = self.entity("IfcColumnType", f"RC column {cd.width}x{cd.depth} h{h}", "COLUMN")
            rep = self.f.createIfcShapeRepresentation(
                self.body, "Body", "SweptSolid", [self.extrusion(self.rect_profile(cd.width, cd.depth), h)])
            ctype.RepresentationMaps = [self.f.createIfcRepresentationMap(self.axis3(), rep)]
            self.associate(self.mat[cd.material], [ctype])
            self._column_types[key] = ctype
        return self._column_types[key]

    def _columns(self, st: Any, s: StoreyDef, plan: PlanDef, h: int) -> list:
        out = []
        by_type: dict[Any, list] = {}
        for cd in plan.columns:
            col = self.entity("IfcColumn", cd.name, None if self.x3 else "COLUMN")
            col.Tag = f"{s.name}/{cd.name}"
            self.place(col, st, (cd.centre[0], cd.centre[1], 0), (0, 1) if cd.rotated else None)
            if self.d.map_columns:
                ctype = self._column_type(cd, h)
                op3 = self.f.createIfcCartesianTransformationOperator3D(None, None, self.pt(0, 0, 0), None, None)
                item = self.f.createIfcMappedItem(ctype.RepresentationMaps[0], op3)
                col.Representation = self.shape([item], kind="MappedRepresentation")
                by_type.setdefault(ctype, []).append(col)
            else:
                col.Representation = self.shape([self.extrusion(self.rect_profile(cd.width, cd.depth), h)])
                self.associate(self.mat[cd.material], [col])
            out.append(col)
        for ctype, cols in by_type.items():
            ifcopenshell.api.type.assign_type(self.f, related_objects=cols, relating_type=ctype,
                                              should_map_representations=False)
        if out:
            self.pset(out, "Pset_ColumnCommon", {"LoadBearing": True, "IsExternal": False})
        return out

    def _curtain_walls(self, st: Any, s: StoreyDef, plan: PlanDef, h: int) -> list:
        out = []
        for cw in plan.curtain_walls:
            dx, dy = cw.end[0] - cw.start[0], cw.end[1] - cw.start[1]
            length = int(round(math.hypot(dx, dy)))
            xdir = (int(math.copysign(1, dx)) if dx else 0, int(math.copysign(1, dy)) if dy else 0)
            wall = self.entity("IfcCurtainWall", cw.name, None if self.x3 else "NOTDEFINED")
            wall.Tag = f"{s.name}/{cw.name}"
            self.place(wall, st, (cw.start[0], cw.start[1], 0), xdir)
            if self.d.facade_detail:
                parts = self._facade_parts(wall, length, h, cw.depth)
                ifcopenshell.api.aggregate.assign_object(self.f, products=parts, relating_object=wall)
            else:
                prof = self.rect_profile(length, cw.depth, (_half(length), -_half(cw.depth)))
                wall.Representation = self.shape([self.extrusion(prof, h)])
                self.associate(self.mat[_GLAZING.name], [wall])
            out.append(wall)
        if out:
            self.pset(out, "Pset_CurtainWallCommon", {"IsExternal": True})
        return out

    def _facade_map(self, kind: str, w: int, d: int, h: int) -> Any:
        key = (kind, w, d, h)
        if key not in self._maps:
            rep = self.f.createIfcShapeRepresentation(
                self.body, "Body", "SweptSolid",
                [self.extrusion(self.rect_profile(w, d, (_half(w), -_half(d))), h)])
            self._maps[key] = self.f.createIfcRepresentationMap(self.axis3(), rep)
        return self._maps[key]

    def _facade_parts(self, wall: Any, length: int, h: int, depth: int) -> list:
        """Vision and spandrel panels and mullions on the building's facade module. Each
        part gets its own placement, mapped body and property set, as exports do."""
        f = self.f
        module = self.d.facade_module
        n = max(1, length // module)
        panel_w = length // n
        spandrel = 1000
        parts = []
        vision_map = self._facade_map("vision", panel_w, 30, h - spandrel)
        spandrel_map = self._facade_map("spandrel", panel_w, 30, spandrel)
        mullion_map = self._facade_map("mullion", 80, depth, h)

        def part(ifc_class: str, name: str, ptype: str, rep_map: Any, x: int, z: int, material: str) -> Any:
            e = f.create_entity(ifc_class, GlobalId=self.guid(), OwnerHistory=self.owner["history"], Name=name,
                                PredefinedType=ptype)
            origin = f.createIfcCartesianPoint((self._L(x), self._L(-_half(depth)), self._L(z)))
            axis = f.createIfcAxis2Placement3D(origin, f.createIfcDirection((0.0, 0.0, 1.0)),
                                               f.createIfcDirection((1.0, 0.0, 0.0)))
            self._pending.append((e, f.createIfcLocalPlacement(self._placement_of[wall], axis)))
            op3 = f.createIfcCartesianTransformationOperator3D(None, None, f.createIfcCartesianPoint((0.0, 0.0, 0.0)),
                                                               None, None)
            e.Representation = f.createIfcProductDefinitionShape(None, None, [f.createIfcShapeRepresentation(
                self.body, "Body", "MappedRepresentation", [f.createIfcMappedItem(rep_map, op3)])])
            props = [
                f.createIfcPropertySingleValue("IsExternal", None, f.create_entity("IfcBoolean", True), None),
                f.createIfcPropertySingleValue("LoadBearing", None, f.create_entity("IfcBoolean", False), None),
            ]
            pset_name = "Pset_PlateCommon" if ifc_class == "IfcPlate" else "Pset_MemberCommon"
            ps = f.createIfcPropertySet(self.guid(), self.owner["history"], pset_name, None, props)
            f.createIfcRelDefinesByProperties(self.guid(), self.owner["history"], None, None, [e], ps)
            self.associate(self.mat[material], [e])
            return e

        for j in range(n):
            x = j * panel_w
            parts.append(part("IfcPlate", f"Spandrel {j + 1}", "CURTAIN_PANEL", spandrel_map, x, 0, _GLAZING.name))
            parts.append(part("IfcPlate", f"Vision {j + 1}", "CURTAIN_PANEL", vision_map, x, spandrel, _GLAZING.name))
        for j in range(n + 1):
            x = min(max(j * panel_w - 40, 0), length - 80)  # on the panel joints, kept inside the strip
            parts.append(part("IfcMember", f"Mullion {j + 1}", "MULLION", mullion_map, x, 0, _ALUMINIUM.name))
        return parts

    def _space(self, st: Any, s: StoreyDef, plan: PlanDef, h: int, nxt: PlanDef | None) -> None:
        """One IfcSpace per occupied storey: body = the plate's outline extruded to the
        underside of the slab above; the occupancy goes in Pset_SpaceOccupancyRequirements."""
        if not plan.slabs:
            return
        sd = plan.slabs[0]
        above = nxt.slabs[0].thickness if nxt is not None and nxt.slabs else 0
        space = self.entity("IfcSpace", f"{s.name} {s.usage}", None if self.x3 else "INTERNAL")
        space.LongName = s.space_name or s.usage
        if self.x3:
            space.InteriorOrExteriorSpace = "INTERNAL"
        self.place(space, st, (0, 0, 0))
        space.Representation = self.shape([self.extrusion(self.poly_profile(sd.outline), h - above)])
        ifcopenshell.api.aggregate.assign_object(self.f, products=[space], relating_object=st)
        self.pset([space], "Pset_SpaceOccupancyRequirements", {"OccupancyType": s.usage})


def build(d: BuildingDef) -> ifcopenshell.file:
    """Author the IFC model for ``d`` (in memory)."""
    return _Writer(d).build()


def generate_tower(n_storeys: int, *, facade_panels: bool = True, path: str | Path | None = None,
                   name: str | None = None) -> ifcopenshell.file:
    """Benchmark tower of ``n_storeys`` storeys (see :func:`tower_def`); optionally
    written to ``path``. With facade panels: about 270 elements and 3,900 entity
    instances per storey."""
    f = build(tower_def(n_storeys, facade_panels=facade_panels, name=name))
    if path is not None:
        f.write(str(path))
    return f


# ---------------------------------------------------------------------------------------
# Specs: the generator's inputs in metres, world coordinates of the project
# ---------------------------------------------------------------------------------------


def _m(mm: int | float) -> float:
    return mm / 1000


def spec_of(d: BuildingDef) -> dict[str, Any]:
    """The inputs of one sample, in SI units and world (project) coordinates.

    Plans hold the elements once; each storey names its plan. Element z values follow from
    the storey: slab tops at the storey elevation, walls and columns from the storey
    elevation up by the storey height (see :func:`expand`). Areas are exact (integer
    shoelace of the input outlines, minus voids and openings)."""
    ox, oy, _ = d.building_origin

    def w(p: Pt) -> list[float]:
        return [_m(p[0] + ox), _m(p[1] + oy)]

    plans: dict[str, Any] = {}
    for key, plan in d.plans.items():
        slabs = []
        for sd in plan.slabs:
            gross2 = _shoelace2(sd.outline)
            holes2 = sum(abs(_shoelace2(v)) for v in sd.voids)
            holes2 += sum(2 * (x1 - x0) * (y1 - y0) for x0, y0, x1, y1 in sd.openings)
            slabs.append({
                "name": sd.name,
                "predefined_type": sd.predefined_type,
                "profile": ("IfcRectangleProfileDef" if sd.profile == "rectangle" else
                            "IfcArbitraryProfileDefWithVoids" if sd.voids else "IfcArbitraryClosedProfileDef"),
                "thickness_m": _m(sd.thickness),
                "outline_m": [w(p) for p in sd.outline],
                "voids_m": [[w(p) for p in v] for v in sd.voids],
                "openings_m": [[w((x0, y0)), w((x1, y1))] for x0, y0, x1, y1 in sd.openings],
                "gross_area_m2": gross2 / 2 / 1e6,
                "area_m2": (gross2 - holes2) / 2 / 1e6,
                "material": sd.material,
            })
        walls = []
        for wd in plan.walls:
            walls.append({
                "name": wd.name,
                "axis_m": [w(wd.start), w(wd.end)],
                "length_m": _m(wd.length),
                "thickness_m": _m(wd.thickness),
                "load_bearing": wd.load_bearing,
                "predefined_type": wd.predefined_type,
                "profile": "IfcRectangleProfileDef" if wd.profile == "rectangle" else "IfcArbitraryClosedProfileDef",
                "material": wd.material,
                "openings": [{"start_m": _m(o.start), "end_m": _m(o.end), "sill_m": _m(o.sill),
                              "head_m": _m(o.head), "door": o.door} for o in wd.openings],
            })
        columns = [{
            "name": c.name,
            "centre_m": w(c.centre),
            "size_x_m": _m(c.size_x),
            "size_y_m": _m(c.size_y),
            "area_m2": c.width * c.depth / 1e6,
            "rotated": c.rotated,
            "material": c.material,
        } for c in plan.columns]
        plans[key] = {
            "slabs": slabs,
            "walls": walls,
            "columns": columns,
            "curtain_walls": [{"name": c.name, "line_m": [w(c.start), w(c.end)], "depth_m": _m(c.depth)}
                              for c in plan.curtain_walls],
            "wall_groups": [{"walls": list(names), "closed_cells": cells} for names, cells in plan.wall_groups],
        }
    heights = d.storey_heights()
    props = d.write_material_properties and d.schema != "IFC2X3"
    storeys = [{
        "name": s.name,
        "long_name": s.long_name,
        "elevation_m": _m(s.elevation),
        "height_m": None if h is None else _m(h),
        "above_grade": s.elevation >= 0,
        "usage": s.usage,
        "plan": s.plan,
    } for s, h in zip(d.storeys, heights)]
    return {
        "file": d.file_name,
        "schema": d.schema,
        "length_unit": d.length_unit,
        "length_scale_m": 0.001 if d.length_unit == "MILLIMETRE" else 1.0,
        "true_north_deg": d.true_north_deg,
        "project_name": d.project_name,
        "site_name": d.site_name,
        "building_name": d.building_name,
        "building_origin_m": [_m(v) for v in d.building_origin],
        "site_ref_elevation_m": d.site_ref_elevation_m,
        "slab_method": d.slab_method,
        "columns_mapped": d.map_columns,
        "materials": [{"name": m.name, "category": m.category,
                       "density_kg_m3": m.density_kg_m3 if props else None,
                       "youngs_modulus_pa": m.youngs_modulus_pa if props else None,
                       "poisson_ratio": m.poisson_ratio if props else None}
                      for m in d.materials],
        "storeys": storeys,
        "plans": plans,
    }


def expand(sample: str | dict[str, Any]) -> list[dict[str, Any]]:
    """Per-storey expected elements for a sample (file name or a spec from
    :func:`spec_of`), lowest storey first, with z values filled in:
    slabs get ``top_elevation_m``; walls and columns get ``base_elevation_m`` and
    ``height_m`` (the storey height)."""
    spec = SPECS[sample] if isinstance(sample, str) else sample
    out = []
    for s in spec["storeys"]:
        plan = spec["plans"][s["plan"]]
        z, h = s["elevation_m"], s["height_m"]
        out.append({
            **{k: v for k, v in s.items() if k != "plan"},
            "slabs": [{**sl, "top_elevation_m": z} for sl in plan["slabs"]],
            "walls": [{**wl, "base_elevation_m": z, "height_m": h} for wl in plan["walls"]],
            "columns": [{**c, "base_elevation_m": z, "height_m": h} for c in plan["columns"]],
            "curtain_walls": [{**c, "base_elevation_m": z, "height_m": h} for c in plan["curtain_walls"]],
            "wall_groups": plan["wall_groups"],
        })
    return out


SPECS: dict[str, dict[str, Any]] = {d.file_name: spec_of(d) for d in sample_defs()}
SAMPLE_FILES: tuple[str, ...] = tuple(SPECS)


def specs_json() -> str:
    """specs.json text (stable formatting)."""
    doc = {
        "format": SPEC_FORMAT,
        "units": "metres, square metres, Pa, kg/m3; plan coordinates are world (project) x, y",
        "conventions": {
            "slab_top": "every slab's top is at its storey elevation",
            "walls_columns": "rise from the storey elevation by the storey height (to the next storey)",
            "true_north": "degrees counter-clockwise from +Y; TrueNorth direction (-sin a, cos a)",
            "usage": "IfcSpace per occupied storey, Pset_SpaceOccupancyRequirements.OccupancyType",
        },
        "samples": SPECS,
    }
    return json.dumps(doc, indent=1, sort_keys=False) + "\n"


def write_all(out_dir: str | Path) -> list[Path]:
    """Write every committed sample and specs.json into ``out_dir``."""
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    paths = []
    for d in sample_defs():
        p = out / d.file_name
        build(d).write(str(p))
        paths.append(p)
    p = out / "specs.json"
    p.write_text(specs_json(), encoding="utf-8", newline="\n")
    paths.append(p)
    return paths


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Regenerate swayscreen's invented sample buildings.")
    parser.add_argument("--out", default=str(Path(__file__).resolve().parent),
                        help="output folder (default: this script's folder)")
    parser.add_argument("--tower", type=int, metavar="N",
                        help="instead, write a benchmark tower of N storeys (tower_N.ifc) into --out")
    parser.add_argument("--no-facade-panels", action="store_true", help="benchmark tower without panels")
    args = parser.parse_args(argv)
    t0 = time.perf_counter()
    if args.tower:
        out = Path(args.out)
        out.mkdir(parents=True, exist_ok=True)
        path = out / f"tower_{args.tower}.ifc"
        generate_tower(args.tower, facade_panels=not args.no_facade_panels, path=path)
        paths = [path]
    else:
        paths = write_all(args.out)
    for p in paths:
        print(f"{p}  {p.stat().st_size / 1e6:.2f} MB")
    print(f"done in {time.perf_counter() - t0:.1f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
