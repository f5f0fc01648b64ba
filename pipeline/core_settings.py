"""The core settings sections used by reading and deriving (plugins bring their own).

Every default names its source; "common practice" marks a trade value with no single
authoritative source.
"""
from __future__ import annotations

from dataclasses import dataclass

from .settings import setting

__all__ = ["MaterialSettings", "LoadSettings", "StiffnessSettings", "LevelSettings", "CORE_SECTIONS"]

G = 9.81  # m/s^2, used to turn unit weights (kN/m^3, kPa) into masses


@dataclass(frozen=True)
class MaterialSettings:
    """Material defaults, used where the model names no recognisable material."""

    concrete_unit_weight_kn_m3: float = setting(
        25.0, unit="kN/m^3", minimum=5, maximum=40,
        source="EN 1991-1-1 Table A.1 (normal-weight concrete 24 + 1 for normal reinforcement)",
        doc="unit weight of reinforced concrete")
    concrete_class: str = setting(
        "C40/50", source="common practice for tall-building cores and columns",
        doc="concrete strength class (EN 1992-1-1 naming) used to derive the modulus")
    concrete_modulus_pa: float | None = setting(
        None, unit="Pa", minimum=1e9, maximum=1e11,
        source="EN 1992-1-1 Table 3.1: E_cm = 22 (f_cm/10)^0.3 GPa from the class when not set",
        doc="concrete elastic modulus; leave unset to derive it from concrete_class")
    concrete_poisson: float = setting(
        0.2, minimum=0, maximum=0.5, source="EN 1992-1-1 3.1.3(4) (uncracked concrete)",
        doc="Poisson's ratio of concrete (G = E / (2 (1 + nu)))")
    dynamic_modulus_factor: float = setting(
        1.0, minimum=0.5, maximum=1.5,
        source="common practice (dynamic modulus of concrete is 10-25 % above static; 1.0 is conservative for comfort)",
        doc="factor on the static concrete modulus for vibration")
    steel_unit_weight_kn_m3: float = setting(
        77.0, unit="kN/m^3", minimum=50, maximum=100, source="EN 1991-1-1 Table A.4",
        doc="unit weight of structural steel")
    steel_modulus_pa: float = setting(
        210e9, unit="Pa", minimum=1e10, maximum=3e11, source="EN 1993-1-1 3.2.6",
        doc="elastic modulus of structural steel")
    steel_poisson: float = setting(0.3, minimum=0, maximum=0.5, source="EN 1993-1-1 3.2.6",
                                   doc="Poisson's ratio of steel")
    timber_unit_weight_kn_m3: float = setting(
        5.0, unit="kN/m^3", minimum=2, maximum=12, source="EN 1991-1-1 Table A.3 (glulam GL24-GL36, about 3.7-4.4; rounded up)",
        doc="unit weight of timber")
    timber_modulus_pa: float = setting(
        11.5e9, unit="Pa", minimum=1e9, maximum=3e10, source="EN 14080 GL24h mean E (from memory)",
        doc="elastic modulus of timber")
    masonry_unit_weight_kn_m3: float = setting(
        20.0, unit="kN/m^3", minimum=5, maximum=30, source="EN 1991-1-1 Table A.1 (masonry, common practice value)",
        doc="unit weight of masonry")
    masonry_modulus_pa: float = setting(
        5e9, unit="Pa", minimum=5e8, maximum=3e10, source="EN 1996-1-1 3.7.2 (E = 1000 f_k, f_k about 5 MPa; common practice)",
        doc="elastic modulus of masonry")
    unknown_material: str = setting(
        "concrete", choices=("concrete", "steel", "timber", "masonry"), source="common practice",
        doc="category assumed for elements whose material is missing or not recognised")


@dataclass(frozen=True)
class LoadSettings:
    """Load assumptions that make up the floor masses for dynamics."""

    superimposed_dead_kpa: float = setting(
        1.5, unit="kPa", minimum=0, maximum=20, source="common practice (screed and finishes 1.0-1.5, ceilings and services 0.3-0.7)",
        doc="superimposed dead load over the slab area")
    partitions_kpa: float = setting(
        0.5, unit="kPa", minimum=0, maximum=5, source="EN 1991-1-1 6.3.1.2(8) (movable partitions <= 1 kN/m)",
        doc="partition allowance over the slab area")
    facade_kpa: float = setting(
        0.6, unit="kPa", minimum=0, maximum=10, source="common practice (curtain wall 0.5-1.0 kPa of elevation)",
        doc="facade weight per m^2 of elevation (plate perimeter times storey height)")
    live_load_fraction: float = setting(
        0.1, minimum=0, maximum=1,
        source="common practice for wind comfort (0-25 % of the design imposed load in the dynamic mass)",
        doc="fraction of the imposed load included in the dynamic mass")
    live_load_kpa: dict[str, float] = setting(
        {"residential": 2.0, "hotel": 2.0, "office": 3.0, "retail": 5.0, "plant": 7.5},
        unit="kPa", minimum=0, maximum=50,
        source="EN 1991-1-1 Table 6.2 recommended values (plant: common practice)",
        doc="design imposed load by occupancy")
    occupancy: str = setting(
        "office", choices=("residential", "hotel", "office", "retail", "plant"),
        source="common practice", doc="occupancy assumed where the model gives none")
    building_density_kg_m3: float = setting(
        300.0, unit="kg/m^3", minimum=50, maximum=1000,
        source="common practice (RC residential about 250-350 kg/m^3 of gross volume)",
        doc="bulk density used to estimate masses when slabs cannot be read")


@dataclass(frozen=True)
class StiffnessSettings:
    """Cracked-section factors and column end restraint for the lateral stiffness."""

    wall_flexure_factor: float = setting(
        1.0, minimum=0.1, maximum=1.0,
        source="ACI 318-19 R6.6.3.2.2: service level 1.4 x 0.70 I_g = 0.98 I_g for uncracked walls",
        doc="effective / gross second moment for walls and cores")
    wall_shear_factor: float = setting(
        1.0, minimum=0.1, maximum=1.0, source="ACI 318-19 Table 6.6.3.1.1(a) (area 1.0 A_g)",
        doc="effective / gross shear area for walls and cores")
    torsion_factor: float = setting(
        1.0, minimum=0.05, maximum=1.0, source="common practice (gross torsional stiffness at serviceability)",
        doc="effective / gross torsion constant for cores")
    column_flexure_factor: float = setting(
        0.98, minimum=0.1, maximum=1.0, source="ACI 318-19 R6.6.3.2.2: 1.4 x 0.70 I_g for columns at service level",
        doc="effective / gross second moment for columns")
    slab_flexure_factor: float = setting(
        0.35, minimum=0.05, maximum=1.0, source="ACI 318-19 R6.6.3.2.2: 1.4 x 0.25 I_g for flat plates at service level",
        doc="effective / gross second moment of the slab strips that restrain columns")
    slab_strip_width_ratio: float = setting(
        0.5, minimum=0.05, maximum=1.0, source="common practice (column strip = half the panel width, EN 1992-1-1 Annex I)",
        doc="effective slab-strip width as a fraction of the column spacing, for the column restraint")
    column_restraint_factor: float | None = setting(
        None, minimum=0.0, maximum=1.0,
        source="Muto D-value method a = k / (2 + k) from the slab-strip to column stiffness ratio when not set",
        doc="factor on 12 E I / h^3 for columns (1 = fixed-fixed); leave unset to derive it")
    column_clear_height: bool = setting(
        True, source="common practice (column flexible length is the clear height between slabs)",
        doc="use the clear height (storey height minus slab thickness) for column stiffness")
    lintel_min_depth_m: float = setting(
        0.4, unit="m", minimum=0, maximum=5,
        source="common practice (a coupling beam or lintel this deep keeps a core cell acting closed)",
        doc="minimum depth of wall left above a door for a core cell to stay closed")
    core_cells: str = setting(
        "auto", choices=("auto", "closed", "open"), source="common practice",
        doc="override the closed/open decision for all core cells")


@dataclass(frozen=True)
class LevelSettings:
    """How storeys become floors, and which are above grade."""

    ground_rule: str = setting(
        "nearest-zero", choices=("nearest-zero", "lowest", "named"), source="common practice",
        doc="ground level: the storey nearest elevation 0, the lowest storey, or the storey named ground_storey")
    ground_storey: str = setting("", source="user choice", doc="storey name used when ground_rule = \"named\"")
    floor_tolerance_m: float = setting(
        0.5, unit="m", minimum=0, maximum=3, source="common practice",
        doc="slabs whose tops lie within this of each other form one physical floor")
    min_slab_thickness_m: float = setting(
        0.06, unit="m", minimum=0, maximum=1, source="common practice (finish and screed layers are 10-50 mm)",
        doc="thinner slab pieces are treated as finishes, not floor plates")
    min_wind_height_m: float = setting(
        30.0, unit="m", minimum=0, maximum=1000, source="common practice (low-rise buildings are not wind-sensitive for comfort)",
        doc="buildings lower than this are reported as not wind-sensitive")


CORE_SECTIONS: dict[str, type] = {
    "materials": MaterialSettings,
    "loads": LoadSettings,
    "stiffness": StiffnessSettings,
    "levels": LevelSettings,
}
