"""Shared fixtures: paths to the sample folders and a builder for tiny IFC models.

* ``shared_samples``: ``../shared/ifc-samples`` relative to the repository root (real
  exports, never copied into the repo); tests using it skip when it is absent.
* ``sample_models``: the repository's ``sample_models/`` folder (our invented buildings);
  tests skip when its IFC files have not been generated.
* ``ifc_builder``: a factory for :class:`ModelBuilder`, which writes small models with
  exact, hand-checkable geometry through ``ifcopenshell.api`` (project, units, contexts,
  spatial tree, containment, materials, property sets, types, openings) and direct entity
  constructors for the geometry, in IFC2X3, IFC4 or IFC4X3 and metre, millimetre or foot
  units. All builder inputs are metres; the builder converts to the file unit.
"""
from __future__ import annotations

import contextlib
import math
import os
from pathlib import Path
from typing import Iterator, Sequence

import pytest

REPO_ROOT = Path(__file__).resolve().parents[1]
SHARED_SAMPLES = REPO_ROOT.parent / "shared" / "ifc-samples"
SAMPLE_MODELS = REPO_ROOT / "sample_models"


@pytest.fixture(scope="session")
def shared_samples() -> Path:
    """The shared folder of real IFC exports (skip when absent)."""
    if not SHARED_SAMPLES.is_dir() or not any(SHARED_SAMPLES.glob("*.ifc")):
        pytest.skip(f"shared IFC samples not found at {SHARED_SAMPLES}")
    return SHARED_SAMPLES


@pytest.fixture(scope="session")
def sample_models() -> Path:
    """The generated sample buildings with their specs.json (skip when not generated yet).

    ``SWAYSCREEN_SAMPLE_MODELS`` may point at another folder of generator output."""
    folder = Path(os.environ.get("SWAYSCREEN_SAMPLE_MODELS", SAMPLE_MODELS))
    if not any(folder.glob("*.ifc")) or not (folder / "specs.json").is_file():
        pytest.skip(f"no generated sample IFC files with specs.json in {folder}")
    return folder


# ---------------------------------------------------------------------------- the builder

UNITS = {"m": 1.0, "mm": 1e-3, "ft": 0.3048}


class ModelBuilder:
    """A small IFC model with exact geometry. Inputs in metres, world coordinates.

    Args:
        schema: "IFC2X3", "IFC4" or "IFC4X3".
        unit: "m", "mm" or "ft" (project length unit).
        true_north_deg: writes TrueNorth = (-sin a, cos a) on the model context when given.
    """

    def __init__(self, schema: str = "IFC4", unit: str = "m", true_north_deg: float | None = None) -> None:
        import ifcopenshell
        import ifcopenshell.api.context
        import ifcopenshell.api.project
        import ifcopenshell.api.unit

        self.schema = schema
        self.unit = unit
        self.scale = UNITS[unit]
        self.f = f = ifcopenshell.api.project.create_file(version=schema)
        self._history = None
        if schema == "IFC2X3":
            person = f.createIfcPerson(None, "Tester", None, None, None, None, None, None)
            org = f.createIfcOrganization(None, "Test organisation", None, None, None)
            self._user = f.createIfcPersonAndOrganization(person, org, None)
            self._app = f.createIfcApplication(org, "1", "swayscreen test builder", "swayscreen-tests")
        with self.api():
            self.project = self._create("IfcProject", name="Test project")
            if unit == "m":
                length = ifcopenshell.api.unit.add_si_unit(f, unit_type="LENGTHUNIT")
            elif unit == "mm":
                length = ifcopenshell.api.unit.add_si_unit(f, unit_type="LENGTHUNIT", prefix="MILLI")
            else:
                length = ifcopenshell.api.unit.add_conversion_based_unit(f, name="foot")
            angle = ifcopenshell.api.unit.add_si_unit(f, unit_type="PLANEANGLEUNIT")
            ifcopenshell.api.unit.assign_unit(f, units=[length, angle])
            self.model_ctx = ifcopenshell.api.context.add_context(f, context_type="Model")
            self.body_ctx = ifcopenshell.api.context.add_context(
                f, context_type="Model", context_identifier="Body", target_view="MODEL_VIEW", parent=self.model_ctx)
            self.axis_ctx = ifcopenshell.api.context.add_context(
                f, context_type="Model", context_identifier="Axis", target_view="GRAPH_VIEW", parent=self.model_ctx)
        if true_north_deg is not None:
            a = math.radians(true_north_deg)
            self.model_ctx.TrueNorth = f.createIfcDirection((-math.sin(a), math.cos(a)))
        self.site_pl = self.placement((0, 0, 0))
        with self.api():
            self.site = self._create("IfcSite", name="Test site")
            self.site.ObjectPlacement = self.site_pl
            self._aggregate([self.site], self.project)
        self.buildings: list = []

    # -- ifcopenshell.api plumbing --------------------------------------------------
    @contextlib.contextmanager
    def api(self) -> Iterator[None]:
        """Route the owner-history hooks to a fixed user/application for IFC2X3."""
        if self.schema != "IFC2X3":
            yield
            return
        import ifcopenshell.api.owner.settings as s

        old = (s.get_user, s.get_application)
        s.get_user = lambda f: self._user
        s.get_application = lambda f: self._app
        try:
            yield
        finally:
            s.get_user, s.get_application = old

    def _create(self, ifc_class: str, name: str | None = None, predefined_type: str | None = None):
        import ifcopenshell.api.root

        with self.api():
            return ifcopenshell.api.root.create_entity(self.f, ifc_class=ifc_class, name=name,
                                                       predefined_type=predefined_type)

    def _aggregate(self, products, parent) -> None:
        import ifcopenshell.api.aggregate

        with self.api():
            ifcopenshell.api.aggregate.assign_object(self.f, products=list(products), relating_object=parent)

    def L(self, metres: float) -> float:
        """A length in the file unit."""
        return float(metres) / self.scale

    # -- geometry primitives (metres in, file units out) ----------------------------
    def point(self, xyz: Sequence[float]):
        return self.f.createIfcCartesianPoint(tuple(self.L(v) for v in xyz))

    def axis2(self, xyz=(0.0, 0.0, 0.0), z=None, x=None):
        f = self.f
        return f.createIfcAxis2Placement3D(self.point(xyz), f.createIfcDirection(tuple(map(float, z))) if z else None,
                                           f.createIfcDirection(tuple(map(float, x))) if x else None)

    def axis2d(self, xy=(0.0, 0.0), x=None):
        f = self.f
        return f.createIfcAxis2Placement2D(self.point(xy), f.createIfcDirection(tuple(map(float, x))) if x else None)

    def placement(self, xyz=(0.0, 0.0, 0.0), rel_to=None, z=None, x=None):
        return self.f.createIfcLocalPlacement(rel_to, self.axis2(xyz, z, x))

    def polyline_profile(self, pts: Sequence[Sequence[float]], voids: Sequence[Sequence[Sequence[float]]] = ()):
        f = self.f

        def poly(p):
            q = [self.point(v) for v in p]
            return f.createIfcPolyline(q + [q[0]])

        if voids:
            return f.createIfcArbitraryProfileDefWithVoids("AREA", None, poly(pts), [poly(v) for v in voids])
        return f.createIfcArbitraryClosedProfileDef("AREA", None, poly(pts))

    def rect_profile(self, x: float, y: float, centre=(0.0, 0.0), x_dir=None):
        pos = self.axis2d(centre, x_dir)
        return self.f.createIfcRectangleProfileDef("AREA", None, pos, self.L(x), self.L(y))

    def extrusion(self, profile, depth: float, origin=(0.0, 0.0, 0.0), direction=(0.0, 0.0, 1.0), z=None, x=None):
        f = self.f
        return f.createIfcExtrudedAreaSolid(profile, self.axis2(origin, z, x),
                                            f.createIfcDirection(tuple(map(float, direction))), self.L(depth))

    def shape(self, items, rep_type: str = "SweptSolid", axis_pts=None):
        f = self.f
        reps = [f.createIfcShapeRepresentation(self.body_ctx, "Body", rep_type, list(items))]
        if axis_pts is not None:
            line = f.createIfcPolyline([f.createIfcCartesianPoint(tuple(self.L(v) for v in p)) for p in axis_pts])
            reps.insert(0, f.createIfcShapeRepresentation(self.axis_ctx, "Axis", "Curve2D", [line]))
        return f.createIfcProductDefinitionShape(None, None, reps)

    # -- spatial structure ----------------------------------------------------------
    def building(self, name: str = "Test building", xyz=(0.0, 0.0, 0.0)):
        b = self._create("IfcBuilding", name=name)
        b.ObjectPlacement = self.placement(xyz, self.site_pl)
        self._aggregate([b], self.site)
        self.buildings.append(b)
        return b

    def storey(self, name: str, elevation: float, building=None, write_elevation: bool = True,
               long_name: str | None = None):
        if building is None:
            building = self.buildings[0] if self.buildings else self.building()
        s = self._create("IfcBuildingStorey", name=name)
        s.ObjectPlacement = self.placement((0, 0, elevation), building.ObjectPlacement)
        if write_elevation:
            s.Elevation = self.L(elevation)
        if long_name:
            s.LongName = long_name
        self._aggregate([s], building)
        return s

    def space(self, storey, name: str, long_name: str | None = None):
        sp = self._create("IfcSpace", name=name)
        if long_name:
            sp.LongName = long_name
        sp.ObjectPlacement = self.placement((0, 0, 0), storey.ObjectPlacement)
        self._aggregate([sp], storey)
        return sp

    def contain(self, elements, storey) -> None:
        import ifcopenshell.api.spatial

        with self.api():
            ifcopenshell.api.spatial.assign_container(self.f, products=list(elements), relating_structure=storey)

    def element(self, ifc_class: str, storey, shape, xyz=(0.0, 0.0, 0.0), name: str | None = None,
                predefined_type: str | None = None, z=None, x=None, contain_in=None, relative=True):
        e = self._create(ifc_class, name=name, predefined_type=predefined_type)
        rel = storey.ObjectPlacement if (storey is not None and relative) else None
        e.ObjectPlacement = self.placement(xyz, rel, z, x)
        e.Representation = shape
        target = contain_in if contain_in is not None else storey
        if target is not None:
            self.contain([e], target)
        return e

    # -- building elements ------------------------------------------------------------
    def slab(self, storey, outline, thickness: float, top: float = 0.0, voids=(), name: str = "Slab",
             predefined_type: str | None = "FLOOR", xy=(0.0, 0.0), **kw):
        """A flat slab whose top lies ``top`` above the storey datum, extruded downward;
        ``outline`` is in the slab's placement, which sits at ``xy`` (``x``: its x axis)."""
        prof = self.polyline_profile(outline, voids)
        solid = self.extrusion(prof, thickness, direction=(0.0, 0.0, -1.0))
        return self.element("IfcSlab", storey, self.shape([solid]), (xy[0], xy[1], top), name, predefined_type, **kw)

    def wall(self, storey, start, end, thickness: float, height: float, base: float = 0.0, name: str = "Wall",
             axis: bool = True, rectangle: bool = False, **kw):
        """A straight wall, its axis the centre line from ``start`` to ``end`` (plan, metres)."""
        dx, dy = end[0] - start[0], end[1] - start[1]
        length = math.hypot(dx, dy)
        ux, uy = dx / length, dy / length
        if rectangle:
            prof = self.rect_profile(length, thickness, centre=(length / 2, 0.0))
        else:
            t = thickness / 2
            prof = self.polyline_profile([(0, -t), (length, -t), (length, t), (0, t)])
        solid = self.extrusion(prof, height)
        cls = "IfcWallStandardCase" if self.schema == "IFC2X3" else "IfcWall"
        shape = self.shape([solid], axis_pts=[(0.0, 0.0), (length, 0.0)] if axis else None)
        return self.element(cls, storey, shape, (start[0], start[1], base), name, x=(ux, uy, 0.0), **kw)

    def column(self, storey, profile, xy, height: float, base: float = 0.0, name: str = "Column", **kw):
        solid = self.extrusion(profile, height)
        return self.element("IfcColumn", storey, self.shape([solid]), (xy[0], xy[1], base), name, **kw)

    def opening(self, host, profile, depth: float, origin, direction=(0.0, 0.0, 1.0), z=None, x=None,
                placement_rel_host: bool = True, name: str = "Opening"):
        """An IfcOpeningElement voiding ``host``; its placement is relative to the host's."""
        import ifcopenshell.api.feature

        op = self._create("IfcOpeningElement", name=name)
        op.ObjectPlacement = self.f.createIfcLocalPlacement(host.ObjectPlacement if placement_rel_host else None,
                                                             self.axis2((0, 0, 0)))
        op.Representation = self.shape([self.extrusion(profile, depth, origin, direction, z, x)])
        with self.api():
            ifcopenshell.api.feature.add_feature(self.f, feature=op, element=host)
        return op

    # -- materials, psets, types ------------------------------------------------------
    def material(self, elements, name: str, category: str | None = None):
        import ifcopenshell.api.material

        with self.api():
            m = ifcopenshell.api.material.add_material(self.f, name=name, category=category)
            ifcopenshell.api.material.assign_material(self.f, products=list(elements), type="IfcMaterial", material=m)
        return m

    def layer_set_usage(self, elements, layers: Sequence[tuple[str, float]], name: str = "Layers"):
        """An IfcMaterialLayerSetUsage (layers: material name, thickness in metres)."""
        f = self.f
        mats = {}
        ls = []
        for n, t in layers:
            m = mats.get(n) or f.createIfcMaterial(n)
            mats[n] = m
            ls.append(f.createIfcMaterialLayer(m, self.L(t), None))
        lset = f.createIfcMaterialLayerSet(ls, name)
        usage = f.createIfcMaterialLayerSetUsage(lset, "AXIS2", "POSITIVE", self.L(-sum(t for _, t in layers) / 2))
        with self.api():
            import ifcopenshell.api.root  # noqa: F401 - owner history for the relationship

            rel = f.createIfcRelAssociatesMaterial(self._guid(), self._owner(), None, None, list(elements), usage)
        return rel

    def pset(self, element, name: str, props: dict):
        import ifcopenshell.api.pset

        with self.api():
            ps = ifcopenshell.api.pset.add_pset(self.f, product=element, name=name)
            ifcopenshell.api.pset.edit_pset(self.f, pset=ps, properties=props)
        return ps

    def type_of(self, elements, ifc_class: str, name: str, predefined_type: str | None = None):
        import ifcopenshell.api.type

        t = self._create(ifc_class, name=name, predefined_type=predefined_type)
        with self.api():
            ifcopenshell.api.type.assign_type(self.f, related_objects=list(elements), relating_type=t,
                                              should_map_representations=False)
        return t

    def _guid(self) -> str:
        import ifcopenshell.guid

        return ifcopenshell.guid.new()

    def _owner(self):
        if self.schema != "IFC2X3":
            return None
        import ifcopenshell.api.owner

        with self.api():
            return ifcopenshell.api.owner.create_owner_history(self.f)

    def write(self, path: Path) -> Path:
        self.f.write(str(path))
        return path


@pytest.fixture
def ifc_builder():
    """Factory: ``ifc_builder(schema="IFC4", unit="m", true_north_deg=None)`` -> ModelBuilder."""
    return ModelBuilder
