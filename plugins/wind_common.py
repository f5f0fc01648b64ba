"""Shared site-wind settings, wind profile helpers, directions and modal helpers.

Used by the wind plugins (``wind_en``, ``wind_nbcc``), ``corners``, ``comfort`` and
``drift``. Everything here is a plain function over plain data, testable without the
plugin machinery.

Settings ownership: the ``[wind]`` section (:class:`WindSettings`) is declared by the
``wind_en`` plugin (one owner per section name). The other plugins read it with
:func:`wind_settings`, which falls back to the defaults when the section is absent
(e.g. when ``wind_en`` is not installed), so no plugin depends on another's section.

Directions: a wind direction is where the wind blows FROM, in degrees clockwise from
true north (meteorological convention). The model's true north is
``StickModel.true_north_deg`` counter-clockwise from model +Y (IFC ``TrueNorth``), so
north in model coordinates is ``(-sin a, cos a)`` and east ``(cos a, sin a)``.
:func:`wind_axes` gives the unit vector along which the wind travels (the along-wind
direction) and the across-wind vector, 90 degrees counter-clockwise from it.

Return periods: EN 1991-1-4 eq. (4.2) with K = 0.2, n = 0.5 (recommended values) and
the annual exceedance probability p = 1 - exp(-1/R) (Poisson), which stays defined at
R = 1 yr (p = 1/R does not); it differs from p = 1/R by 0.35 % in speed at R = 10 yr.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from shapely.geometry import MultiPolygon, Polygon

from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.settings import setting
from swayscreen.pipeline.stick import Level, StickModel

__all__ = [
    "G",
    "Z_MAX_M",
    "MG",
    "TERRAIN_TABLE",
    "LOG_DECREMENT_TABLE_F2",
    "WindSettings",
    "Terrain",
    "terrain_from_settings",
    "wind_settings",
    "structural_damping_ratio",
    "c_prob",
    "sector_directions",
    "directional_factor",
    "basic_wind_speed",
    "required_return_periods",
    "wind_axes",
    "plan_points",
    "plan_extent",
    "level_plate",
    "PlateHulls",
    "plate_hulls",
    "level_masses",
    "FloorGeometry",
    "floor_geometry",
    "UNOCCUPIED_USAGES",
    "top_occupied_index",
    "point_displacement",
    "directional_shape",
    "ModeMotion",
    "mode_motion",
    "mode_motions",
    "generalized_mass_kg",
    "directional_participation",
    "directional_share",
    "select_mode",
    "select_mode_motion",
    "COUPLED_SHARE",
    "AccelerationCase",
    "AccelerationResult",
    "peak_mg_for_damping",
]

G = 9.81
"""Standard gravity used for milli-g (m/s^2)."""
MG = 0.00981
"""One milli-g in m/s^2 (1 mg = g / 1000 with g = 9.81)."""

TERRAIN_TABLE: dict[str, tuple[float, float]] = {
    "0": (0.003, 1.0),
    "I": (0.01, 1.0),
    "II": (0.05, 2.0),
    "III": (0.3, 5.0),
    "IV": (1.0, 10.0),
}
"""EN 1991-1-4 Table 4.1: terrain category -> (roughness length z_0 m, minimum height z_min m)."""

LOG_DECREMENT_TABLE_F2: dict[str, float] = {"concrete": 0.10, "steel": 0.05, "mixed": 0.08}
"""EN 1991-1-4 Table F.2 structural logarithmic decrement delta_s for buildings (from memory;
steel 0.05 confirmed in the SBE-MSB03 worked example)."""

Z_MAX_M = 200.0
"""EN 1991-1-4 4.3.2: z_max = 200 m, the upper limit of the profile and of the method."""


@dataclass(frozen=True)
class WindSettings:
    """Site wind: speed, terrain, directions, return periods and damping for the wind plugins."""

    basic_wind_speed_m_s: float = setting(
        26.0, unit="m/s", minimum=5, maximum=80,
        source="EN 1991-1-4 4.2 (10-min mean at 10 m, terrain II, annual exceedance 0.02); example value, set for the site",
        doc="basic wind speed v_b (50-year, 10-minute mean at 10 m in open country)")
    terrain_category: str = setting(
        "III", choices=("0", "I", "II", "III", "IV"),
        source="EN 1991-1-4 Table 4.1; example value (suburban/urban), set for the site",
        doc="terrain category around the site (gives z_0 and z_min)")
    roughness_length_m: float | None = setting(
        None, unit="m", minimum=0.001, maximum=2.0,
        source="EN 1991-1-4 Table 4.1 when not set",
        doc="override of the roughness length z_0 (z_min then taken from the category with the nearest z_0)")
    air_density_kg_m3: float = setting(
        1.25, unit="kg/m^3", minimum=0.9, maximum=1.5, source="EN 1991-1-4 4.5(1) note 2 (recommended value)",
        doc="air density rho")
    turbulence_factor: float = setting(
        1.0, minimum=0.5, maximum=2.0, source="EN 1991-1-4 4.4(1) note 2 (recommended k_I = 1.0)",
        doc="turbulence factor k_I")
    orography_factor: float = setting(
        1.0, minimum=0.5, maximum=2.0, source="EN 1991-1-4 4.3.3 (c_o = 1.0 on flat terrain)",
        doc="orography factor c_o, taken constant over the height")
    sectors: int = setting(
        12, minimum=1, maximum=72, source="EN 1991-1-4 4.2(2) note 2 (12 sectors of 30 degrees is customary)",
        doc="number of equal wind direction sectors, the first centred on north")
    directional_factors: list[float] = setting(
        [1.0] * 12, minimum=0.5, maximum=1.2,
        source="EN 1991-1-4 4.2(2) note 2 (recommended c_dir = 1.0); National Annexes give sector values",
        doc="directional factor c_dir per sector, clockwise from north (one value per sector)")
    return_periods_yr: list[float] = setting(
        [1.0, 10.0], unit="yr", minimum=0.5, maximum=10000,
        source="common practice (1-year for frequency-dependent comfort curves, 10-year for peak limits)",
        doc="return periods at which accelerations are computed (EN 1991-1-4 eq. 4.2 with p = 1 - exp(-1/R))")
    structural_system: str = setting(
        "concrete", choices=("concrete", "steel", "mixed"),
        source="EN 1991-1-4 Table F.2 (delta_s: RC buildings 0.10, steel 0.05, mixed 0.08; from memory)",
        doc="structural material, for the default structural damping")
    structural_damping_ratio: float | None = setting(
        None, minimum=0.001, maximum=0.2,
        source="EN 1991-1-4 Table F.2 via zeta = delta_s / (2 pi) when not set (concrete 1.59 %, steel 0.80 %, mixed 1.27 %)",
        doc="structural damping ratio (fraction of critical); overrides structural_system")
    force_coefficient: float = setting(
        1.3, minimum=0.3, maximum=3.0,
        source="EN 1991-1-4 7.6 (c_f = c_f,0 psi_r psi_lambda, about 1.3-1.5 for square towers after end effect; common practice)",
        doc="along-wind force coefficient c_f of the building section")
    peak_factor_duration_s: float = setting(
        600.0, unit="s", minimum=60, maximum=7200, source="EN 1991-1-4 (B.4) (T = 600 s, the averaging time of the mean wind)",
        doc="averaging time T in the peak factor k_p")
    serviceability_return_period_yr: float = setting(
        10.0, unit="yr", minimum=0.5, maximum=10000,
        source="common practice (ASCE 7 Appendix C commentary uses a 10-year wind for drift)",
        doc="return period of the wind for drift")
    plate_rule: str = setting(
        "widest", choices=("widest", "top"),
        source="common practice (the widest plate is conservative for the wind force)",
        doc="which floor plate gives the reference width b and depth d for a direction: the widest, or the top occupied floor's")


@dataclass(frozen=True)
class Terrain:
    """Roughness length z_0 (m) and minimum height z_min (m) of the site terrain."""

    category: str
    z0_m: float
    z_min_m: float


def terrain_from_settings(ws: WindSettings) -> Terrain:
    """Terrain of the site: EN 1991-1-4 Table 4.1, or the z_0 override.

    With ``roughness_length_m`` set, z_min comes from the category whose z_0 is nearest
    on a log scale (a documented choice; EN gives z_min only per category).
    """
    if ws.roughness_length_m is None:
        z0, zmin = TERRAIN_TABLE[ws.terrain_category]
        return Terrain(ws.terrain_category, z0, zmin)
    z0 = float(ws.roughness_length_m)
    cat = min(TERRAIN_TABLE, key=lambda c: abs(math.log(TERRAIN_TABLE[c][0] / z0)))
    return Terrain(f"z0={z0:g} m (z_min as {cat})", z0, TERRAIN_TABLE[cat][1])


def wind_settings(settings: Mapping[str, Any]) -> WindSettings:
    """The ``[wind]`` section from a settings mapping, or the defaults when absent; validated."""
    ws = settings["wind"] if "wind" in settings else WindSettings()
    if len(ws.directional_factors) != ws.sectors:
        raise InputError(
            f"settings [wind] directional_factors: {len(ws.directional_factors)} value(s) given for "
            f"{ws.sectors} sector(s); give one factor per sector")
    if not ws.return_periods_yr:
        raise InputError("settings [wind] return_periods_yr: give at least one return period")
    return ws


def structural_damping_ratio(ws: WindSettings) -> float:
    """Structural damping ratio: the override, else EN 1991-1-4 Table F.2 delta_s / (2 pi)."""
    if ws.structural_damping_ratio is not None:
        return float(ws.structural_damping_ratio)
    return LOG_DECREMENT_TABLE_F2[ws.structural_system] / (2.0 * math.pi)


def c_prob(return_period_yr: float, k: float = 0.2, n: float = 0.5) -> float:
    """Probability factor on the basic wind speed, EN 1991-1-4 eq. (4.2).

    c_prob = [(1 - K ln(-ln(1 - p))) / (1 - K ln(-ln 0.98))]^n with p = 1 - exp(-1/R),
    i.e. -ln(1 - p) = 1/R. R = 1 -> 0.7495, R = 10 -> 0.9057 (methods sheet 1.2).
    """
    r = float(return_period_yr)
    if not r > 0:
        raise InputError(f"return period must be positive, got {return_period_yr!r}")
    num = 1.0 - k * math.log(1.0 / r)  # ln(-ln(1-p)) = ln(1/R)
    den = 1.0 - k * math.log(-math.log(0.98))
    return (num / den) ** n


def sector_directions(sectors: int) -> tuple[float, ...]:
    """Sector centres in degrees clockwise from north (the wind blowing from), the first at 0."""
    return tuple(360.0 * k / sectors for k in range(sectors))


def directional_factor(ws: WindSettings, direction_deg: float) -> float:
    """c_dir of the sector containing ``direction_deg`` (sectors centred on the sector directions)."""
    width = 360.0 / ws.sectors
    k = int(math.floor(((direction_deg % 360.0) + width / 2.0) / width)) % ws.sectors
    return float(ws.directional_factors[k])


def basic_wind_speed(ws: WindSettings, return_period_yr: float, direction_deg: float) -> float:
    """v_b = c_dir c_season c_prob v_b,0 (m/s), EN 1991-1-4 eq. (4.1)-(4.2) with c_season = 1."""
    return ws.basic_wind_speed_m_s * c_prob(return_period_yr) * directional_factor(ws, direction_deg)


def required_return_periods(settings: Mapping[str, Any]) -> tuple[float, ...]:
    """Return periods the wind plugins compute: ``[wind] return_periods_yr`` plus those the
    ``[comfort]`` section (when present) checks against, sorted and unique."""
    ws = wind_settings(settings)
    periods = {float(r) for r in ws.return_periods_yr}
    if "comfort" in settings:
        cs = settings["comfort"]
        for attr in ("peak_limit_return_period_yr", "curve_return_period_yr"):
            val = getattr(cs, attr, None)
            if val is not None:
                periods.add(float(val))
    return tuple(sorted(periods))


def wind_axes(direction_deg: float, true_north_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """Unit vectors (model x, y) of the along-wind travel direction and the across-wind direction.

    ``direction_deg``: where the wind blows from, clockwise from true north.
    ``true_north_deg``: true north, counter-clockwise from model +Y.
    The across-wind vector is the along-wind one turned 90 degrees counter-clockwise.
    """
    a = math.radians(true_north_deg)
    north = np.array([-math.sin(a), math.cos(a)])
    east = np.array([math.cos(a), math.sin(a)])
    t = math.radians(direction_deg)
    from_vec = math.sin(t) * east + math.cos(t) * north
    along = -from_vec
    across = np.array([-along[1], along[0]])
    return along, across


def plan_points(geom: Polygon | MultiPolygon) -> np.ndarray:
    """Vertices (k, 2) of the convex hull of a plan shape, closing point dropped."""
    hull = geom.convex_hull
    if isinstance(hull, Polygon):
        pts = np.asarray(hull.exterior.coords)[:-1]
    else:  # a degenerate plate (line or point)
        pts = np.asarray(hull.coords)
    return np.asarray(pts[:, :2], dtype=float)


def plan_extent(geom: Polygon | MultiPolygon, along: np.ndarray) -> tuple[float, float]:
    """(width normal to the wind b, depth along the wind d) of a plan shape, in m."""
    pts = plan_points(geom)
    across = np.array([-along[1], along[0]])
    pa = pts @ across
    pd = pts @ along
    return float(pa.max() - pa.min()), float(pd.max() - pd.min())


def level_plate(level: Level) -> Polygon | MultiPolygon:
    """The floor plate, or a square of equal radius of gyration about the mass centre when absent."""
    if level.plate is not None and not level.plate.is_empty:
        return level.plate
    if level.mass_kg <= 0 or level.polar_moment_kg_m2 <= 0:
        raise InputError(f"storey {level.name!r}: no floor plate and no mass moment to estimate its plan size")
    side = math.sqrt(6.0 * level.polar_moment_kg_m2 / level.mass_kg)  # square: J = m a^2 / 6
    cx, cy = level.mass_centre_m
    h = side / 2.0
    return Polygon([(cx - h, cy - h), (cx + h, cy - h), (cx + h, cy + h), (cx - h, cy + h)])


def _memoised(stick: StickModel, key: tuple, build: Any) -> Any:
    """``build()`` once per live stick model (the pipeline's per-stick memo, see
    :mod:`swayscreen.pipeline.assembly`); stick models are frozen, so the result cannot go stale."""
    from swayscreen.pipeline.assembly import _memoised as memo  # scipy-backed module: imported on use

    return memo(stick, key, build)


def _readonly(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


@dataclass(frozen=True)
class PlateHulls:
    """The convex-hull vertices of every floor plate (:func:`level_plate`), stacked, lowest floor first.

    Attributes:
        points_m: (P, 2) hull vertices of all floors (m), closing points dropped.
        owner: (P,) floor index of each vertex.
        starts: (n,) first row of each floor in ``points_m``.
        centres_m: (n, 2) plate centroids (m).
        fallback_plates: names of levels whose plate was estimated from the mass moment.
    """

    points_m: np.ndarray
    owner: np.ndarray
    starts: np.ndarray
    centres_m: np.ndarray
    fallback_plates: tuple[str, ...]


def _plate_hulls_now(stick: StickModel) -> PlateHulls:
    pts, centres, fallback = [], [], []
    for lv in stick.levels:
        if lv.plate is None or lv.plate.is_empty:
            fallback.append(lv.name)
        plate = level_plate(lv)
        pts.append(plan_points(plate))
        c = plate.centroid
        centres.append((float(c.x), float(c.y)))
    counts = [len(p) for p in pts]
    owner = np.repeat(np.arange(len(pts)), counts)
    starts = np.concatenate([[0], np.cumsum(counts)[:-1]]).astype(int) if pts else np.zeros(0, dtype=int)
    points = np.concatenate(pts, axis=0).reshape(-1, 2) if pts else np.zeros((0, 2))
    return PlateHulls(_readonly(points), _readonly(owner), _readonly(starts),
                      _readonly(np.array(centres, dtype=float).reshape(-1, 2)), tuple(fallback))


def plate_hulls(stick: StickModel) -> PlateHulls:
    """:class:`PlateHulls` of a stick model, computed once per model (the plates do not depend
    on the wind direction; every wind plugin asks for them once per direction)."""
    return _memoised(stick, ("wind plate hulls",), lambda: _plate_hulls_now(stick))


def level_masses(stick: StickModel) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(mass kg (n,), polar moment about the mass centre kg m^2 (n,), mass centre m (n, 2)) of
    every floor, lowest first; read-only arrays computed once per stick model."""
    def build() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        m = np.array([lv.mass_kg for lv in stick.levels], dtype=float)
        j = np.array([lv.polar_moment_kg_m2 for lv in stick.levels], dtype=float)
        mc = np.array([lv.mass_centre_m for lv in stick.levels], dtype=float).reshape(-1, 2)
        return _readonly(m), _readonly(j), _readonly(mc)

    return _memoised(stick, ("level masses",), build)


UNOCCUPIED_USAGES = ("plant", "roof")


def top_occupied_index(stick: StickModel) -> int:
    """Index of the top occupied floor (the floor whose accelerations occupants feel).

    Rule (documented choice): when some levels carry an occupied usage (anything but
    "plant" or "roof"), the highest such level; levels without a usage above it are taken
    as roof or plant. Without usage information: the highest level that is not "plant" or
    "roof" and, for the top level only, whose name does not contain "roof" (the roof slab is
    the ceiling of the top storey, whose occupants stand on the floor below). Falls back to
    the top level.
    """
    levels = stick.levels
    known = [i for i, lv in enumerate(levels) if lv.usage and lv.usage.lower() not in UNOCCUPIED_USAGES]
    if known:
        return max(known)
    n = len(levels)
    for i in range(n - 1, -1, -1):
        lv = levels[i]
        if (lv.usage or "").lower() in UNOCCUPIED_USAGES:
            continue
        if i == n - 1 and n > 1 and "roof" in lv.name.lower():
            continue
        return i
    return n - 1


@dataclass(frozen=True)
class FloorGeometry:
    """Per-floor wind geometry for one direction (arrays over levels, lowest first).

    Attributes:
        z_m: floor height above the base (m).
        tributary_m: height of facade loaded onto the floor (half storey below + half above; m).
        width_m: plate width normal to the wind (m).
        depth_m: plate depth along the wind (m).
        centre_m: (n, 2) plate centroid, where the floor's wind force acts (m).
        ref_index: index of the level giving the reference width/depth (``plate_rule``).
        b_m, d_m: reference width and depth (m).
        height_m: building height h (top level above the base, m).
        top_index: the top occupied floor.
        fallback_plates: names of levels whose plate was estimated from the mass moment.
    """

    z_m: np.ndarray
    tributary_m: np.ndarray
    width_m: np.ndarray
    depth_m: np.ndarray
    centre_m: np.ndarray
    ref_index: int
    b_m: float
    d_m: float
    height_m: float
    top_index: int
    fallback_plates: tuple[str, ...] = ()


def floor_geometry(stick: StickModel, along: np.ndarray, plate_rule: str = "widest") -> FloorGeometry:
    """Heights, tributary heights, widths and force points of every floor for one wind direction."""
    if stick.n_levels == 0:
        raise InputError(f"building {stick.building_name!r}: no above-grade floors for the wind analysis")
    z = np.array([lv.elevation_m - stick.base_elevation_m for lv in stick.levels], dtype=float)
    if np.any(z <= 0) or np.any(np.diff(z) <= 0):
        raise InputError(f"building {stick.building_name!r}: floor heights above the base must increase from above zero")
    seg = np.diff(np.concatenate([[0.0], z]))
    trib = 0.5 * seg + 0.5 * np.concatenate([seg[1:], [0.0]])
    hulls = plate_hulls(stick)
    # plan_extent of every floor at once: projections of the stacked hull vertices, then the
    # range within each floor's rows
    across = np.array([-along[1], along[0]])
    pa = hulls.points_m @ across
    pd = hulls.points_m @ along
    w = np.maximum.reduceat(pa, hulls.starts) - np.minimum.reduceat(pa, hulls.starts)
    depths = np.maximum.reduceat(pd, hulls.starts) - np.minimum.reduceat(pd, hulls.starts)
    top = top_occupied_index(stick)
    ref = int(np.argmax(w)) if plate_rule == "widest" else top
    return FloorGeometry(z, trib, w, depths, hulls.centres_m.copy(), ref, float(w[ref]),
                         float(depths[ref]), float(z[-1]), top, hulls.fallback_plates)


# ---------------------------------------------------------------------------------------------
# Mode-shape helpers (duck-typed modes: ``shape`` (n, 3) x m, y m, twist rad about stick.origin_m)


def point_displacement(shape: np.ndarray, points: np.ndarray, origin: Sequence[float]) -> np.ndarray:
    """Plan displacement (n, 2) of one point per floor: (ux - th (py - oy), uy + th (px - ox)).

    ``points`` is (n, 2) (one point per floor) or (2,) (the same point on every floor).
    Sign convention of :mod:`swayscreen.pipeline.stick`.
    """
    s = np.asarray(shape, dtype=float)
    p = np.broadcast_to(np.asarray(points, dtype=float), (s.shape[0], 2))
    dx = p[:, 0] - origin[0]
    dy = p[:, 1] - origin[1]
    return np.column_stack([s[:, 0] - s[:, 2] * dy, s[:, 1] + s[:, 2] * dx])


def directional_shape(shape: np.ndarray, points: np.ndarray, origin: Sequence[float],
                      vec: np.ndarray) -> np.ndarray:
    """Mode-shape component along the unit vector ``vec`` at one point per floor (n,)."""
    return point_displacement(shape, points, origin) @ np.asarray(vec, dtype=float)


@dataclass(frozen=True)
class ModeMotion:
    """What of a mode does not depend on the wind direction: the plan motion of every floor's
    mass centre (n, 2) (m, :func:`point_displacement` at the mass centres) and the generalized
    mass (kg, :func:`generalized_mass_kg`). Computed once per mode and plugin run
    (:func:`mode_motions`) instead of once per mode and direction."""

    centre_motion_m: np.ndarray
    generalized_mass_kg: float


def mode_motion(stick: StickModel, shape: np.ndarray) -> ModeMotion:
    """:class:`ModeMotion` of one mode shape."""
    s = np.asarray(shape, dtype=float)
    m, j, mc = level_masses(stick)
    u = point_displacement(s, mc, stick.origin_m)
    return ModeMotion(u, float(np.sum(m * np.sum(u * u, axis=1)) + np.sum(j * s[:, 2] ** 2)))


def mode_motions(stick: StickModel, modes: Sequence[Any]) -> tuple[ModeMotion, ...]:
    """:class:`ModeMotion` of every mode, in the order of ``modes``."""
    return tuple(mode_motion(stick, md.shape) for md in modes)


def generalized_mass_kg(stick: StickModel, shape: np.ndarray) -> float:
    """phi^T M phi of the rigid-diaphragm mass matrix: sum m_i |u(mass centre)|^2 + J_i theta_i^2 (kg).

    J_i is the polar mass moment about the mass centre; this is identical to the
    generalized mass about any origin (parallel-axis theorem).
    """
    return mode_motion(stick, shape).generalized_mass_kg


def directional_participation(stick: StickModel, shape: np.ndarray, vec: np.ndarray,
                              motion: ModeMotion | None = None) -> float:
    """Effective-mass ratio of a mode for a uniform floor acceleration along ``vec``:
    (sum m_i u_i . vec)^2 / (M* sum m_i), u_i at the mass centres (0..1).

    ``motion``: the mode's :class:`ModeMotion` when already known."""
    mo = mode_motion(stick, shape) if motion is None else motion
    m = level_masses(stick)[0]
    u = mo.centre_motion_m @ np.asarray(vec, dtype=float)
    gm = mo.generalized_mass_kg
    if gm <= 0:
        return 0.0
    return float(np.sum(m * u) ** 2 / (gm * m.sum()))


def directional_share(stick: StickModel, shape: np.ndarray, vec: np.ndarray,
                      motion: ModeMotion | None = None) -> float:
    """Fraction of a mode's kinetic energy in motion along ``vec``: sum m_i (u_i . vec)^2 / M*,
    u_i at the mass centres (1 for a pure translation along ``vec``, 0.5 for a diagonal one).

    ``motion``: the mode's :class:`ModeMotion` when already known."""
    mo = mode_motion(stick, shape) if motion is None else motion
    m = level_masses(stick)[0]
    u = mo.centre_motion_m @ np.asarray(vec, dtype=float)
    gm = mo.generalized_mass_kg
    return float(np.sum(m * u * u) / gm) if gm > 0 else 0.0


COUPLED_SHARE = 0.8
"""A mode with less than this share of its kinetic energy along the response direction is
reported as coupled (a note, not a validity limit; common practice)."""


def select_mode_motion(modes: Sequence[Any], stick: StickModel, vec: np.ndarray,
                       motions: Sequence[ModeMotion] | None = None) -> tuple[Any, float, ModeMotion]:
    """:func:`select_mode`, also giving the chosen mode's :class:`ModeMotion`.

    ``motions``: :func:`mode_motions` of ``modes`` (same order) when already known."""
    if not modes:
        raise InputError(f"building {stick.building_name!r}: the modal analysis gave no modes")
    mos = mode_motions(stick, modes) if motions is None else motions
    if len(mos) != len(modes):
        raise ValueError(f"{len(mos)} mode motions given for {len(modes)} modes")
    best, best_ratio, best_motion = None, -1.0, None
    for mode, mo in sorted(zip(modes, mos), key=lambda pair: (pair[0].frequency_hz, pair[0].index)):
        ratio = directional_participation(stick, mode.shape, vec, mo)
        if ratio > best_ratio + 1e-9:
            best, best_ratio, best_motion = mode, ratio, mo
    return best, best_ratio, best_motion


def select_mode(modes: Sequence[Any], stick: StickModel, vec: np.ndarray) -> tuple[Any, float]:
    """The mode with the greatest effective-mass ratio along ``vec`` (ties within 1e-9: the lowest
    frequency), and that ratio."""
    best, best_ratio, _ = select_mode_motion(modes, stick, vec)
    return best, best_ratio


# ---------------------------------------------------------------------------------------------
# Results shared by the acceleration plugins


@dataclass(frozen=True)
class AccelerationCase:
    """Wind-induced acceleration for one method, return period, direction and response.

    Attributes:
        method: e.g. "EN 1991-1-4 Annex B" or "NBCC Commentary I".
        return_period_yr: return period of the wind (yr).
        direction_deg: wind direction (blowing from), degrees clockwise from true north.
        response: "along" or "across" (the wind).
        axis_xy: unit vector (model x, y) of the response direction.
        mode_index: 1-based index of the mode used.
        frequency_hz: its frequency (Hz).
        damping_ratio: total damping ratio used by the method (EN: structural + aerodynamic;
            NBCC: structural), fraction of critical.
        structural_damping_ratio: the structural part (fraction of critical).
        rms_mg: RMS acceleration at the top occupied floor (mg) (NBCC: the peak over its peak factor g_p).
        peak_mg: peak acceleration at the top occupied floor (mg), at the plate centroid,
            along ``axis_xy``.
        floor_peak_mg: peak at every floor, lowest first (mg).
        top_floor: name of the top occupied floor.
        top_index: its level index.
        valid: False when outside the method's stated range (result still given).
        note: validity warnings and assumptions.
        details: intermediate values (names carry units where they have one), including
            ``modal_peak_m_s2``: peak acceleration of the mode's generalized coordinate, so
            that the acceleration of any plan point is ``modal_peak_m_s2`` times the modal
            plan displacement there (mode shape as given by the modal results).
    """

    method: str
    return_period_yr: float
    direction_deg: float
    response: str
    axis_xy: tuple[float, float]
    mode_index: int
    frequency_hz: float
    damping_ratio: float
    structural_damping_ratio: float
    rms_mg: float
    peak_mg: float
    floor_peak_mg: tuple[float, ...]
    top_floor: str
    top_index: int
    valid: bool
    note: str = ""
    details: Mapping[str, float] = field(default_factory=dict)

    @property
    def peak_m_s2(self) -> float:
        """Peak at the top occupied floor in m/s^2."""
        return self.peak_mg * MG

    @property
    def floor_rms_mg(self) -> tuple[float, ...]:
        """RMS acceleration at every floor, lowest first (mg): the floor peaks over the peak factor."""
        ratio = self.rms_mg / self.peak_mg if self.peak_mg > 0 else 0.0
        return tuple(v * ratio for v in self.floor_peak_mg)


@dataclass(frozen=True)
class AccelerationResult:
    """All acceleration cases of one method (directions x return periods x responses)."""

    method: str
    cases: tuple[AccelerationCase, ...]
    warnings: tuple[str, ...] = ()

    def for_period(self, return_period_yr: float) -> tuple[AccelerationCase, ...]:
        return tuple(c for c in self.cases if abs(c.return_period_yr - return_period_yr) < 1e-9)

    def governing(self, return_period_yr: float) -> AccelerationCase | None:
        """Case with the largest top-floor peak at that return period (first on ties)."""
        cases = self.for_period(return_period_yr)
        return max(cases, key=lambda c: c.peak_mg) if cases else None


def peak_mg_for_damping(case: AccelerationCase, damping_ratio: float) -> float:
    """Top-floor peak (mg) of a case recomputed for another total damping ratio.

    ``damping_ratio`` replaces :attr:`AccelerationCase.damping_ratio` (the method's total:
    for EN structural + aerodynamic (+ added), for NBCC structural (+ added)). EN Annex B
    and the NBCC across-wind formula are resonant-only, so the peak scales exactly as
    1/sqrt(damping); the NBCC along-wind peak factor also depends on damping and is
    recomputed (see :func:`swayscreen.plugins.wind_nbcc.nbcc_along_peak_for_damping`).
    """
    if not damping_ratio > 0:
        raise ValueError(f"damping ratio must be positive, got {damping_ratio!r}")
    if case.method.startswith("NBCC") and case.response == "along":
        from .wind_nbcc import nbcc_along_peak_for_damping

        return nbcc_along_peak_for_damping(case.details, damping_ratio) / MG * _top_shape(case)
    if case.method.startswith("EN"):
        from .wind_en import en_peak_for_damping

        return en_peak_for_damping(case.details, damping_ratio) / MG * _top_shape(case)
    return case.peak_mg * math.sqrt(case.damping_ratio / damping_ratio)


def _top_shape(case: AccelerationCase) -> float:
    """Mode-shape value at the top occupied floor (1 at the roof)."""
    return float(case.details.get("phi_top_occupied", 1.0))
