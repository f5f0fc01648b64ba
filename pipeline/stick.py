"""The stick model: rigid floors joined by the lateral systems, in plain dataclasses.

Produced by :mod:`swayscreen.pipeline.deriving` from a :class:`~swayscreen.pipeline.takeoff.BuildingTakeoff`,
consumed by the plugins. Three freedoms per floor: translations x, y (m) and twist
(rad) about the common origin ``StickModel.origin_m``. Global freedom index of floor
``i`` (0 = lowest above-grade floor above the base): ``3*i`` x, ``3*i+1`` y, ``3*i+2`` twist.

Sign conventions: plan axes are the model's world x/y; twist is counter-clockwise
positive. A point (px, py) on floor i moves by
``ux - theta*(py - oy)``, ``uy + theta*(px - ox)``.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from shapely.geometry import MultiPolygon, Polygon

__all__ = ["Level", "SectionProps", "Segment", "CoreSummary", "StickModel"]


@dataclass(frozen=True)
class Level:
    """One rigid floor (an above-grade storey's floor plate) with its lumped mass.

    Attributes:
        name: storey name.
        storey_id: IfcBuildingStorey GlobalId.
        elevation_m: world z of this floor.
        height_m: height of the storey below this floor, i.e. length of the segment
            that carries it (m).
        mass_kg: total floor mass.
        mass_centre_m: plan centre of mass (x, y).
        polar_moment_kg_m2: mass moment of inertia about the vertical axis through the
            mass centre.
        mass_components_kg: (component name, mass) pairs that add up to ``mass_kg``.
        plate: world plan outline of the floor plate (voids subtracted).
        usage: occupancy of this floor ("residential", "office", "hotel", "plant") or None.
    """

    name: str
    storey_id: str
    elevation_m: float
    height_m: float
    mass_kg: float
    mass_centre_m: tuple[float, float]
    polar_moment_kg_m2: float
    mass_components_kg: tuple[tuple[str, float], ...] = ()
    plate: Polygon | MultiPolygon | None = None
    usage: str | None = None


@dataclass(frozen=True)
class SectionProps:
    """Gross plan-section constants of one vertical system at one storey.

    Attributes:
        area_m2: section area.
        centroid_m: (x, y).
        ixx_m4: second moment about the centroidal axis parallel to world x (resists sway in y).
        iyy_m4: second moment about the centroidal axis parallel to world y (resists sway in x).
        ixy_m4: product moment (centroidal).
        principal_angle_rad: angle of the major principal axis from world x.
        shear_area_x_m2: web area effective for shear in x (walls parallel to x).
        shear_area_y_m2: web area effective for shear in y.
        j_m4: St Venant / Bredt-Batho torsion constant.
        shear_centre_m: (x, y), from the thin-walled centre-line model (open, branched and multi-cell).
        closed: True when at least one closed cell acts closed (Bredt-Batho).
        cw_m6: warping constant C_w about the shear centre (open sections; 0 when unknown
            or negligible, e.g. closed cells).
    """

    area_m2: float
    centroid_m: tuple[float, float]
    ixx_m4: float
    iyy_m4: float
    ixy_m4: float
    principal_angle_rad: float
    shear_area_x_m2: float
    shear_area_y_m2: float
    j_m4: float
    shear_centre_m: tuple[float, float]
    closed: bool = False
    cw_m6: float = 0.0


@dataclass(frozen=True)
class Segment:
    """The stiffness of one vertical system in the storey below floor ``level_index``.

    ``kind`` is "core" or "wall" (a flexure-and-shear cantilever; ``system_id`` is stable
    over the height so consecutive segments form one stack) or "frame" (the storey's
    columns: pure shear springs at ``centre_m``).

    Attributes:
        system_id: e.g. "core-1", "wall-3" (a separate wall), "columns".
        level_index: index into ``StickModel.levels`` of the floor on top of this segment.
        length_m: segment length (storey height).
        centre_m: reference point in plan: shear centre of a core/wall, centre of
            stiffness of a frame.
        ei_xx_nm2, ei_yy_nm2, ei_xy_nm2: E times ixx/iyy/ixy with cracked factors (N m^2);
            zero for frames.
        ga_x_n, ga_y_n: effective shear stiffness G A_s in x and y (N); zero for frames.
        gj_nm2: torsional stiffness G J (N m^2).
        ecw_nm4: warping stiffness E C_w (N m^4) of an open core (Vlasov torsion; 0 = St Venant only).
        k_x_n_m, k_y_n_m: storey shear springs (N/m) (frames; zero for cantilevers).
        k_twist_nm_rad: storey torsional spring about ``centre_m`` (N m/rad) (frames).
        section: the gross section constants (cantilevers), for reporting.
    """

    system_id: str
    kind: str
    level_index: int
    length_m: float
    centre_m: tuple[float, float]
    ei_xx_nm2: float = 0.0
    ei_yy_nm2: float = 0.0
    ei_xy_nm2: float = 0.0
    ga_x_n: float = 0.0
    ga_y_n: float = 0.0
    gj_nm2: float = 0.0
    ecw_nm4: float = 0.0
    k_x_n_m: float = 0.0
    k_y_n_m: float = 0.0
    k_twist_nm_rad: float = 0.0
    section: SectionProps | None = None


@dataclass(frozen=True)
class CoreSummary:
    """A core or separate wall found from the wall graph (for reports and write-back).

    Attributes:
        id: "core-1", ... or "wall-<n>" for a separate wall (stable over the height).
        wall_ids: GlobalIds of the walls forming it (over all storeys).
        closed: True when a closed cell acts closed (see DEVELOPERS.md for the door rule).
        section: the section at the lowest above-grade storey where it exists.
        note: how the closed/open decision was made.
    """

    id: str
    wall_ids: tuple[str, ...]
    closed: bool
    section: SectionProps
    note: str = ""


@dataclass(frozen=True)
class StickModel:
    """Rigid floors (bottom to top) and the vertical systems between them.

    Attributes:
        building_id / building_name: the IfcBuilding.
        base_elevation_m: world z of the fixed base (the ground level).
        levels: above-grade floors, lowest first.
        segments: all vertical-system segments.
        origin_m: common plan origin for the twist freedoms.
        true_north_deg: from the takeoff (see takeoff module).
        cores: cores and separate walls, for reporting.
        stiffness_centres_m: per level, the storey's centre of stiffness (x, y).
        warnings: discontinuities and assumptions found while deriving.
    """

    building_id: str
    building_name: str
    base_elevation_m: float
    levels: tuple[Level, ...]
    segments: tuple[Segment, ...]
    origin_m: tuple[float, float] = (0.0, 0.0)
    true_north_deg: float = 0.0
    cores: tuple[CoreSummary, ...] = ()
    stiffness_centres_m: tuple[tuple[float, float], ...] = ()
    warnings: tuple[str, ...] = field(default=())

    @property
    def n_levels(self) -> int:
        return len(self.levels)

    @property
    def height_m(self) -> float:
        """Height of the top floor above the base (the sway height)."""
        return self.levels[-1].elevation_m - self.base_elevation_m if self.levels else 0.0

    @property
    def total_mass_kg(self) -> float:
        return float(sum(lv.mass_kg for lv in self.levels))
