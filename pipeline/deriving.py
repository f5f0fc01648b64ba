"""Derive the stick model of one building from its takeoff: floors, masses, stiffness.

``derive_stick(building, settings)`` runs, in order:

1. :func:`~swayscreen.pipeline.floors.plan_floors`: which above-grade storeys become
   sway floors (the ground storey's floor is the fixed base; floor ``i`` sits at the top
   of storey ``i`` counted from the ground; the roof is the top storey's ceiling slab when
   one is modelled above it, else the top storey's own floor).
2. :func:`~swayscreen.pipeline.masses.floor_masses`: each floor's mass, by component,
   mass centre and polar moment.
3. :func:`swayscreen.pipeline.cores.find_systems_by_storey`: the cores and separate
   walls of every storey with their gross sections; then
   :mod:`~swayscreen.pipeline.stiffness`: one cantilever Segment per system and storey
   and one "frame" Segment (``system_id`` "columns") for the storey's columns.

Origin of the twist freedoms (``StickModel.origin_m``): the mass centre of the whole
building (the mass-weighted mean of the floors' mass centres). Models placed at site
coordinates can lie kilometres from (0, 0); taking the origin there would scale the
twist rows of the matrices by the square of that distance. Results do not depend on the
choice.

Bounded work: above :data:`MAX_SWAY_FLOORS` floors no stick model is built (reason in
``missing``).

Graceful degradation: a building with no usable lateral system (no walls, no columns,
or no core finder) gives ``stick = None`` with the reason in ``missing``, while
``levels`` still holds the floors and masses. A storey with no walls or columns of its
own takes the systems of the nearest storey below (else above) that has some, with a
warning. No slabs: masses from the building density (see :mod:`.masses`).
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from shapely.geometry import MultiPolygon

from .core_settings import LevelSettings, LoadSettings, MaterialSettings, StiffnessSettings
from .floors import Floor, FloorLayout, plan_floors
from .masses import LevelMass, floor_masses, floor_slabs
from .materials import MaterialBook
from .plan_moments import ShapeTable, polygons_of
from .plan_ops import PlanGeometryError, clean, robust_union
from .stick import CoreSummary, Level, Segment, StickModel
from .stiffness import (ColumnInput, RestraintReport, SlabField, cantilever_segment, column_frame,
                        storey_stiffness_centre)
from .takeoff import BuildingTakeoff, Storey, Takeoff

__all__ = ["DerivedModel", "derive_stick", "derive_takeoff", "MAX_SWAY_FLOORS"]

MAX_SWAY_FLOORS = 250
"""Most sway floors a stick model is built for. The tallest buildings built or planned have
about 170 floors (common practice); the estimators' cost grows with the cube of the floor
count or faster, so a model beyond this (damage, or a generated file) gets storeys and
masses but no stick model, with the reason in ``missing``."""


@dataclass(frozen=True)
class DerivedModel:
    """What deriving made of one building.

    Attributes:
        stick: the stick model, or None when no lateral system could be derived.
        levels: the sway floors with their masses (the same objects as ``stick.levels``
            when there is a stick; present even without one). Each Level's
            ``mass_components_kg`` is the per-component breakdown.
        materials_used: which material was used for which elements, one line each.
        warnings: assumptions and discontinuities, one sentence each.
        missing: what could not be derived and why.
        column_restraint: per storey with columns, the end-restraint factors used.
        base_elevation_m: world z of the fixed base (None without above-grade storeys).
        gross_volume_m3: sum over floors of the gross plate area (voids filled) x the
            storey height below (the building's gross volume above the base).
    """

    stick: StickModel | None
    levels: tuple[Level, ...] = ()
    materials_used: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    missing: tuple[str, ...] = ()
    column_restraint: tuple[RestraintReport, ...] = ()
    base_elevation_m: float | None = None
    gross_volume_m3: float = 0.0

    @property
    def total_mass_kg(self) -> float:
        return float(sum(lv.mass_kg for lv in self.levels))

    @property
    def density_kg_m3(self) -> float | None:
        """Total sway mass over the gross volume (kg/m^3); None when the volume is zero."""
        return self.total_mass_kg / self.gross_volume_m3 if self.gross_volume_m3 > 0 else None


def _section(settings: Any, name: str, cls: type) -> Any:
    try:
        sec = settings[name]
    except (KeyError, TypeError):
        return cls()
    return sec if isinstance(sec, cls) else cls()


def _level(f: Floor, lm: LevelMass) -> Level:
    return Level(
        name=f.name, storey_id=f.storey_id, elevation_m=f.elevation_m, height_m=f.height_m, mass_kg=lm.mass_kg,
        mass_centre_m=lm.centre_m, polar_moment_kg_m2=lm.polar_moment_kg_m2, mass_components_kg=lm.components_kg,
        plate=lm.plate, usage=None if f.is_roof else f.usage)


def _find_systems(storeys: Sequence[Storey], stiffness: StiffnessSettings, shapes: ShapeTable | None = None):
    from .cores import find_systems_by_storey  # written alongside; imported late so masses work without it

    return find_systems_by_storey(storeys, stiffness, shapes=shapes)


def _shape_table(layout: FloorLayout) -> ShapeTable:
    """Plan areas and WKB bytes of the layout's walls and columns, shared by the stages."""
    table = ShapeTable()
    table.add(layout.walls, [w.footprint for w in layout.walls])
    table.add(layout.columns, [c.section for c in layout.columns])
    return table


class _Memo:
    """Work shared over the storeys of one building: storeys with the same slabs, walls and
    columns in plan reuse the same slab fields, wall unions and column springs (the inputs
    are compared by value: WKB bytes of the plan shapes, thicknesses, moduli). Per element,
    the plan area, WKB bytes and resolved material are looked up once (by object identity;
    the entries hold the objects, so their ids stay unique while the memo lives)."""

    def __init__(self, layout: FloorLayout, book: MaterialBook | None = None, shapes: ShapeTable | None = None) -> None:
        self.walls_by_id = {w.global_id: w for w in layout.walls}
        self.fields: dict[tuple, SlabField] = {}
        self.field_at: dict[int, SlabField] = {}
        self.unions: dict[tuple, Any] = {}
        self.springs: dict = {}
        self.book = book
        self.materials: dict[int, tuple[Any, Any]] = {}
        self.shapes = shapes if shapes is not None else _shape_table(layout)
        self.rows = self.shapes.rows
        self.notes: list[str] = []  # geometry problems met, one sentence each (to the warnings)

    def _shape(self, element: Any, geom: Any) -> tuple[Any, float, bytes | None]:
        got = self.rows.get(id(element))
        if got is None or got[0] is not element:
            got = self.shapes.row(element, geom)
        return got

    def area(self, element: Any, geom: Any) -> float:
        """``geom.area`` (the element's plan shape, not None)."""
        return self._shape(element, geom)[1]

    def wkb(self, element: Any, geom: Any) -> bytes:
        """``geom.wkb`` (the element's plan shape, not None)."""
        return self._shape(element, geom)[2]  # type: ignore[return-value]

    def material(self, book: MaterialBook, material: Any) -> Any:
        """``book.get(material)`` (no role, so nothing is counted)."""
        got = self.materials.get(id(material))
        if got is None or got[0] is not material:
            got = self.materials[id(material)] = (material, book.get(material))
        return got[1]

    def columns(self, storeys: Sequence[Storey], book: MaterialBook) -> list[tuple[Any, bytes, float]]:
        """(column, section WKB, E Pa) of the storeys' columns with a section of positive area,
        in order (materials resolved in that order, as a loop calling ``book.get`` would)."""
        rows, mats = self.rows, self.materials
        out = []
        for s in storeys:
            for c in s.columns:
                sec = c.section
                if sec is None:
                    continue
                got = rows.get(id(c))
                if got is None or got[0] is not c:
                    got = self._shape(c, sec)
                if not got[1] > 0:
                    continue
                m = c.material
                r = mats.get(id(m))
                res = r[1] if r is not None and r[0] is m else self.material(book, m)
                out.append((c, got[2], res.e_pa))
        return out

    def slab_field(self, layout: FloorLayout, i: int, book: MaterialBook) -> SlabField:
        got = self.field_at.get(i)
        if got is not None:
            return got
        slabs, _ = floor_slabs(layout.floors, i)
        pieces = [(sl.footprint, sl.thickness_m, self.material(book, sl.material).e_pa) for sl in slabs]
        key = tuple((shp.wkb, float(t), float(e)) for shp, t, e in pieces)
        got = self.fields.get(key)
        if got is None:
            got = self.fields[key] = SlabField(pieces)
        self.field_at[i] = got
        return got

    def walls_union(self, walls: list[Any]) -> Any:
        """Union of the walls' footprints (walls with a footprint)."""
        if not walls:
            return None
        key = tuple(sorted(self.wkb(w, w.footprint) for w in walls))
        got = self.unions.get(key)
        if got is None:
            try:
                got = robust_union([w.footprint for w in walls], "union of the walls " + ", ".join(
                    w.global_id for w in walls))
            except PlanGeometryError as err:  # the walls' own (cleaned) outlines, overlapping
                parts = [p for w in walls for p in polygons_of(clean(w.footprint))]
                got = MultiPolygon(parts) if parts else None
                self.notes.append(f"{err}: their outlines are used as they are for the column supports")
            self.unions[key] = got
        return got


def _storey_segments(layout: FloorLayout, j: int, storeys: Sequence[Storey], systems: dict[str, list[Any]],
                     book: MaterialBook, stiffness: StiffnessSettings, warnings: list[str],
                     memo: _Memo | None = None) -> tuple[list[Segment], RestraintReport | None]:
    """Segments of floor ``j``'s storey built from the elements of ``storeys``."""
    f = layout.floors[j]
    segs: list[Segment] = []
    memo = memo or _Memo(layout)
    walls_by_id = memo.walls_by_id
    seen: set[str] = set()
    for s in storeys:
        for sysn in systems.get(s.global_id, ()):
            if sysn.system_id in seen:
                warnings.append(f"storey '{s.name}': system {sysn.system_id} appears twice in merged storeys; "
                                "the second is ignored")
                continue
            seen.add(sysn.system_id)
            ws = [walls_by_id[w] for w in sysn.wall_ids if w in walls_by_id]
            areas = [memo.area(w, w.footprint) for w in ws]
            area = sum(areas)
            if ws and area > 0:
                mats = [memo.material(book, w.material) for w in ws]
                e = sum(m.e_pa * a for m, a in zip(mats, areas)) / area
                g = sum(m.g_pa * a for m, a in zip(mats, areas)) / area
                if len({m.label for m in mats}) > 1:
                    warnings.append(f"{sysn.system_id} in '{s.name}': walls of different materials; "
                                    "area-weighted E and G used")
            else:
                m = memo.material(book, None)
                e, g = m.e_pa, m.g_pa
            sec = sysn.section
            if sec.ixx_m4 <= 0 or sec.iyy_m4 <= 0:
                warnings.append(f"{sysn.system_id} in '{s.name}': section with no bending stiffness ignored")
                continue
            segs.append(cantilever_segment(sysn.system_id, sysn.kind, j, f.height_m, sec, e, g, stiffness))
    rows = memo.columns(storeys, book)
    report = None
    if rows:
        signature = tuple((wkb, float(e)) for _, wkb, e in rows)
        walls_union = memo.walls_union([w for s in storeys for w in s.walls if w.footprint is not None])
        if memo.notes:
            warnings.extend(f"storey under floor '{f.name}': {n}" for n in memo.notes)
            memo.notes.clear()
        top = memo.slab_field(layout, j, book)
        bottom = memo.slab_field(layout, j - 1, book) if j > 0 else None
        name = " + ".join(s.name for s in storeys)
        seg, report, notes = column_frame(
            lambda: [ColumnInput(c.global_id, c.section, e) for c, _, e in rows], signature=signature,
            level_index=j, storey=name, length_m=f.height_m, top=top, bottom=bottom, fixed_base=(j == 0),
            walls=walls_union, stiffness=stiffness, cache=memo.springs)
        warnings.extend(notes)
        if seg is not None:
            segs.append(seg)
    return segs, report


def _restrains_twist(segs: Sequence[Segment]) -> bool:
    """True when a storey's segments give it torsional stiffness: a frame with k_twist > 0, a
    cantilever with GJ > 0 or warping stiffness E C_w > 0, or systems at two or more distinct plan points."""
    if any(s.k_twist_nm_rad > 0 or s.gj_nm2 > 0 or s.ecw_nm4 > 0 for s in segs):
        return True
    return len({(round(s.centre_m[0], 6), round(s.centre_m[1], 6)) for s in segs}) > 1


def derive_stick(building: BuildingTakeoff, settings: Any, *, true_north_deg: float = 0.0) -> DerivedModel:
    """Derive the stick model of ``building`` (see the module doc).

    Args:
        building: one building's takeoff (SI units, world coordinates).
        settings: a :class:`~swayscreen.pipeline.settings.Settings` with the sections
            "materials", "loads", "stiffness", "levels" (defaults for any missing).
        true_north_deg: copied into the stick model (see :mod:`~swayscreen.pipeline.takeoff`).
    """
    mats = _section(settings, "materials", MaterialSettings)
    loads = _section(settings, "loads", LoadSettings)
    stiff = _section(settings, "stiffness", StiffnessSettings)
    lvls = _section(settings, "levels", LevelSettings)
    book = MaterialBook(mats)
    warnings: list[str] = []
    missing: list[str] = []

    layout = plan_floors(building, lvls)
    warnings.extend(layout.notes)
    if not layout.floors:
        missing.append("sway floors: no above-grade floor above the ground storey, so no masses or stiffness")
        return DerivedModel(None, (), tuple(book.lines()), tuple(warnings), tuple(missing),
                            base_elevation_m=layout.base_elevation_m)

    shapes = _shape_table(layout)
    masses, mass_warnings = floor_masses(layout, book, loads, shapes=shapes)
    warnings.extend(mass_warnings)
    if not masses:
        missing.append("floor masses: no slabs, walls or columns with a plan area, so no masses or stiffness")
        return DerivedModel(None, (), tuple(book.lines()), tuple(warnings), tuple(missing),
                            base_elevation_m=layout.base_elevation_m)
    levels = tuple(_level(f, lm) for f, lm in zip(layout.floors, masses))
    gross = sum(lm.gross_area_m2 * f.height_m for f, lm in zip(layout.floors, masses))

    def done(stick: StickModel | None, restraint: Sequence[RestraintReport] = ()) -> DerivedModel:
        notes = book.notes()
        return DerivedModel(stick, levels, tuple(book.lines()), tuple(warnings + [n for n in notes if n not in warnings]),
                            tuple(missing), tuple(restraint), layout.base_elevation_m, gross)

    if len(layout.floors) > MAX_SWAY_FLOORS:
        missing.append(f"stick model: {len(layout.floors)} sway floors, more than the {MAX_SWAY_FLOORS} a stick model "
                       "is built for (the tallest buildings have about 170); storeys and masses are reported, "
                       "periods and wind response are not estimated")
        return done(None)

    if not layout.walls and not layout.columns:
        missing.append("lateral system: no walls or columns in the above-grade storeys, so no stick model "
                       "(storeys and masses are reported, periods cannot be estimated)")
        return done(None)

    storeys = sorted(building.above_grade, key=lambda s: s.elevation_m)
    try:
        systems, cores, core_warnings = _find_systems(storeys, stiff, shapes)
    except ImportError as exc:
        missing.append(f"lateral system: the core finder is not available ({exc}), so no stick model")
        return done(None)
    warnings.extend(core_warnings)
    systems = {k: list(v) for k, v in systems.items()}

    segments: list[Segment] = []
    restraint: list[RestraintReport] = []
    own: list[bool] = []
    per_level: list[list[Segment]] = []
    memo = _Memo(layout, book, shapes)
    for j, f in enumerate(layout.floors):
        segs, rep = _storey_segments(layout, j, f.segment_storeys, systems, book, stiff, warnings, memo)
        per_level.append(segs)
        own.append(bool(segs))
        if rep is not None:
            restraint.append(rep)
    if not any(own):
        missing.append("lateral system: no core, wall or column with stiffness was found, so no stick model "
                       "(storeys and masses are reported, periods cannot be estimated)")
        return done(None, restraint)
    for j, f in enumerate(layout.floors):
        if own[j]:
            continue
        donors = [k for k in range(j - 1, -1, -1) if own[k]] or [k for k in range(j + 1, len(own)) if own[k]]
        k = donors[0]
        donor = layout.floors[k]
        segs, rep = _storey_segments(layout, j, donor.segment_storeys, systems, book, stiff, warnings, memo)
        per_level[j] = segs
        if rep is not None:
            restraint.append(rep)
        below = "below" if k < j else "above"
        warnings.append(f"storey under floor '{f.name}' has no lateral system of its own: the walls and columns "
                        f"of the storey {below} (under '{donor.name}') are assumed to continue")
    unstable = [layout.floors[j].name for j, segs in enumerate(per_level) if not _restrains_twist(segs)]
    if unstable:
        missing.append("lateral system: the storey under floor(s) " + ", ".join(f"'{n}'" for n in unstable)
                       + " cannot resist twist (a single column or systems with no torsional stiffness at one "
                       "point), so no stick model")
        return done(None, restraint)
    if restraint:
        lo = min(min(r.a_x_min, r.a_y_min) for r in restraint)
        hi = max(max(r.a_x_max, r.a_y_max) for r in restraint)
        mean = sum(r.n_columns * (r.a_x_mean + r.a_y_mean) / 2 for r in restraint) / sum(r.n_columns for r in restraint)
        methods = sorted({r.method for r in restraint})
        warnings.append(f"column end restraint ({', '.join(methods)}): a = {lo:.2f}-{hi:.2f}, mean {mean:.2f}, "
                        f"over {len(restraint)} storey(s) (1 = fixed-fixed; set [stiffness] column_restraint_factor "
                        "to override)")
    for segs in per_level:
        segments.extend(segs)
    centres = []
    for j, segs in enumerate(per_level):
        c = storey_stiffness_centre(segs)
        centres.append(c if c is not None else levels[j].mass_centre_m)

    total = sum(lv.mass_kg for lv in levels)
    origin = (0.0, 0.0)
    if total > 0:
        origin = (sum(lv.mass_kg * lv.mass_centre_m[0] for lv in levels) / total,
                  sum(lv.mass_kg * lv.mass_centre_m[1] for lv in levels) / total)
    stick = StickModel(
        building_id=building.global_id, building_name=building.name,
        base_elevation_m=float(layout.base_elevation_m or 0.0), levels=levels, segments=tuple(segments),
        origin_m=origin, true_north_deg=true_north_deg, cores=tuple(c for c in cores if isinstance(c, CoreSummary)),
        stiffness_centres_m=tuple(centres), warnings=tuple(warnings))
    out = done(stick, sorted(restraint, key=lambda r: r.level_index))
    if out.warnings != stick.warnings:
        stick = StickModel(**{**stick.__dict__, "warnings": out.warnings})
        out = DerivedModel(stick, out.levels, out.materials_used, out.warnings, out.missing, out.column_restraint,
                           out.base_elevation_m, out.gross_volume_m3)
    return out


def derive_takeoff(takeoff: Takeoff, settings: Any) -> tuple[DerivedModel, ...]:
    """:func:`derive_stick` for every building of a takeoff, with the file's true north."""
    return tuple(derive_stick(b, settings, true_north_deg=takeoff.true_north_deg) for b in takeoff.buildings)
