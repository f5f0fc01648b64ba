"""The extracted building model ("takeoff"): plain, frozen dataclasses in SI units.

Produced by :mod:`swayscreen.pipeline.reading` (the only stage that touches IFC for
input) and consumed by :mod:`swayscreen.pipeline.deriving`. Everything is in world
coordinates of the project (metres, plan x/y, elevation z), already converted from the
file's length unit. Plan geometry is held as shapely geometries (immutable).

Angles: ``true_north_deg`` is the angle, counter-clockwise in plan, from the model's
+Y axis to geographic north (the IFC ``TrueNorth`` convention: a TrueNorth vector of
(-sin a, cos a) gives a). A model drawn with north up has 0.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from shapely.geometry import MultiPolygon, Polygon

__all__ = [
    "Material",
    "Slab",
    "WallOpening",
    "Wall",
    "Column",
    "Storey",
    "BuildingTakeoff",
    "Takeoff",
]

PlanShape = Polygon | MultiPolygon


@dataclass(frozen=True)
class Material:
    """A material as found in the model, or a default from settings.

    Attributes:
        name: IfcMaterial name, or "default <category>".
        category: one of "concrete", "steel", "timber", "masonry", "unknown".
        density_kg_m3: mass density from the model's material properties, if given.
        youngs_modulus_pa: elastic modulus from the model, if given.
        poisson_ratio: Poisson's ratio from the model, if given.
        strength_class: e.g. "C40/50" when recognisable from the name.
        from_model: True when the name/properties came from the IFC file.
    """

    name: str
    category: str = "unknown"
    density_kg_m3: float | None = None
    youngs_modulus_pa: float | None = None
    poisson_ratio: float | None = None
    strength_class: str | None = None
    from_model: bool = True


@dataclass(frozen=True)
class Slab:
    """A slab element (IfcSlab), read parametrically where possible.

    Attributes:
        global_id: IFC GlobalId.
        name: element Name (may be empty).
        footprint: world plan polygon, own voids and IfcOpeningElement voids subtracted.
        thickness_m: slab depth (extrusion depth for a horizontal extrusion).
        top_elevation_m: world z of the slab top.
        predefined_type: FLOOR, ROOF, BASESLAB, LANDING, NOTDEFINED... (occurrence, else type).
        sloped: True when the slab's extrusion is not vertical (a pitched roof): not a floor plate.
        material: the material read for it, or None.
        storey_id: GlobalId of the containing storey as exported (may disagree with geometry).
        from_mesh: True when read through the geometry engine (no parametric body).
    """

    global_id: str
    name: str
    footprint: PlanShape
    thickness_m: float
    top_elevation_m: float
    predefined_type: str = "NOTDEFINED"
    sloped: bool = False
    material: Material | None = None
    storey_id: str | None = None
    from_mesh: bool = False

    @property
    def area_m2(self) -> float:
        """Plan area, voids subtracted (m^2)."""
        return float(self.footprint.area)

    @property
    def perimeter_m(self) -> float:
        """Outer perimeter of the plan polygon(s), holes excluded (m)."""
        polys = self.footprint.geoms if isinstance(self.footprint, MultiPolygon) else [self.footprint]
        return float(sum(p.exterior.length for p in polys))

    @property
    def centroid_m(self) -> tuple[float, float]:
        c = self.footprint.centroid
        return (float(c.x), float(c.y))


@dataclass(frozen=True)
class WallOpening:
    """An opening in a wall, in the wall's own axis coordinates.

    Attributes:
        start_m, end_m: positions along the wall axis from its start point (m).
        sill_m, head_m: bottom and top of the opening above the wall base (m).
        global_id: the IfcOpeningElement's GlobalId.
    """

    start_m: float
    end_m: float
    sill_m: float
    head_m: float
    global_id: str = ""


@dataclass(frozen=True)
class Wall:
    """A wall element (IfcWall, IfcWallStandardCase, IfcWallElementedCase, ...).

    Attributes:
        axis_m: world plan start and end points of the wall's centre line.
        length_m: axis length (m).
        thickness_m: wall thickness (m).
        height_m: body height (m).
        base_elevation_m: world z of the wall base.
        footprint: world plan polygon of the body (openings not subtracted).
        openings: openings cut through the wall (doors, windows).
        load_bearing: Pset_WallCommon.LoadBearing where present, else None.
    """

    global_id: str
    name: str
    axis_m: tuple[tuple[float, float], tuple[float, float]]
    length_m: float
    thickness_m: float
    height_m: float
    base_elevation_m: float
    footprint: PlanShape
    openings: tuple[WallOpening, ...] = ()
    load_bearing: bool | None = None
    material: Material | None = None
    storey_id: str | None = None
    from_mesh: bool = False

    @property
    def plan_area_m2(self) -> float:
        return float(self.footprint.area)

    @property
    def top_elevation_m(self) -> float:
        return self.base_elevation_m + self.height_m


@dataclass(frozen=True)
class Column:
    """A column (IfcColumn) with its world plan section.

    Attributes:
        section: world plan polygon of the cross-section.
        height_m: member length (vertical extent) (m).
        base_elevation_m: world z of the column base.
    """

    global_id: str
    name: str
    section: PlanShape
    height_m: float
    base_elevation_m: float
    material: Material | None = None
    storey_id: str | None = None
    from_mesh: bool = False

    @property
    def area_m2(self) -> float:
        return float(self.section.area)

    @property
    def centroid_m(self) -> tuple[float, float]:
        c = self.section.centroid
        return (float(c.x), float(c.y))

    @property
    def top_elevation_m(self) -> float:
        return self.base_elevation_m + self.height_m


@dataclass(frozen=True)
class Storey:
    """One IfcBuildingStorey with the elements assigned to it.

    Attributes:
        elevation_m: world z of the storey datum.
        height_m: to the next storey's elevation (the top storey: its tallest element, else
            the storey below's height).
        above_grade: False for basements (below the ground level rule), excluded from the
            sway height but kept in the takeoff.
        usage: occupancy hint from IfcSpace / storey names ("residential", "office",
            "hotel", "plant"...) or None.
    """

    global_id: str
    name: str
    elevation_m: float
    height_m: float
    above_grade: bool
    slabs: tuple[Slab, ...] = ()
    walls: tuple[Wall, ...] = ()
    columns: tuple[Column, ...] = ()
    usage: str | None = None


@dataclass(frozen=True)
class BuildingTakeoff:
    """One IfcBuilding: its storeys sorted by elevation (lowest first)."""

    global_id: str
    name: str
    storeys: tuple[Storey, ...]
    ground_elevation_m: float = 0.0
    warnings: tuple[str, ...] = ()

    @property
    def above_grade(self) -> tuple[Storey, ...]:
        return tuple(s for s in self.storeys if s.above_grade)


@dataclass(frozen=True)
class Takeoff:
    """Everything read from one IFC file.

    Attributes:
        source_path: the file read.
        schema: "IFC2X3", "IFC4" or "IFC4X3".
        length_unit: e.g. "METRE", "MILLIMETRE", "FOOT".
        length_scale_m: metres per file length unit.
        true_north_deg: see module docstring.
        buildings: one per IfcBuilding.
        warnings: what was skipped or assumed, one line each.
        mesh_elements: GlobalIds read through the geometry engine (no parametric body).
    """

    source_path: str
    schema: str
    length_unit: str
    length_scale_m: float
    true_north_deg: float
    buildings: tuple[BuildingTakeoff, ...]
    warnings: tuple[str, ...] = ()
    mesh_elements: tuple[str, ...] = field(default=())
