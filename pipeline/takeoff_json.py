"""A takeoff as a JSON-able dict (plain dicts, lists, str, float, int, bool, None).

Layout (units in the key names; all lengths metres, world coordinates)::

    {
      "source_path", "schema", "length_unit", "length_scale_m", "true_north_deg",
      "mesh_elements": <count>, "mesh_element_ids": [GlobalId...], "warnings": [str...],
      "buildings": [{
        "name", "global_id", "ground_elevation_m", "warnings": [...],
        "storeys": [{
          "name", "global_id", "elevation_m", "height_m", "above_grade", "usage",
          "slab_area_m2",       # plan union of the floor plates (flat slabs)
          "slab_thickness_m",   # area-weighted thickness of the floor plates
          "slabs":   [{"global_id", "name", "predefined_type", "area_m2", "thickness_m",
                       "top_elevation_m", "sloped", "centroid_m", "material", "storey_id", "from_mesh"}],
          "walls":   [{"global_id", "name", "length_m", "thickness_m", "height_m", "base_elevation_m",
                       "plan_area_m2", "axis_m", "load_bearing", "openings": [{"global_id", "start_m",
                       "end_m", "sill_m", "head_m"}], "material", "storey_id", "from_mesh"}],
          "columns": [{"global_id", "name", "area_m2", "height_m", "base_elevation_m", "centroid_m",
                       "material", "storey_id", "from_mesh"}]
        }]
      }]
    }

``material`` is null or {"name", "category", "density_kg_m3", "youngs_modulus_pa",
"poisson_ratio", "strength_class", "from_model"}. Non-finite numbers become null.
"""
from __future__ import annotations

import math
from typing import Any

from .ifc_floors import floor_plate
from .takeoff import BuildingTakeoff, Column, Material, Slab, Storey, Takeoff, Wall

__all__ = ["takeoff_to_dict", "storey_to_dict"]


def _f(x: float | None) -> float | None:
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def _material(m: Material | None) -> dict[str, Any] | None:
    if m is None:
        return None
    return {"name": m.name, "category": m.category, "density_kg_m3": _f(m.density_kg_m3),
            "youngs_modulus_pa": _f(m.youngs_modulus_pa), "poisson_ratio": _f(m.poisson_ratio),
            "strength_class": m.strength_class, "from_model": m.from_model}


def _xy(p) -> list[float | None]:
    return [_f(p[0]), _f(p[1])]


def _slab(s: Slab) -> dict[str, Any]:
    c = s.centroid_m if not s.footprint.is_empty else (None, None)
    return {"global_id": s.global_id, "name": s.name, "predefined_type": s.predefined_type,
            "area_m2": _f(s.area_m2), "thickness_m": _f(s.thickness_m), "top_elevation_m": _f(s.top_elevation_m),
            "sloped": s.sloped, "centroid_m": _xy(c), "material": _material(s.material),
            "storey_id": s.storey_id, "from_mesh": s.from_mesh}


def _wall(w: Wall) -> dict[str, Any]:
    return {"global_id": w.global_id, "name": w.name, "length_m": _f(w.length_m), "thickness_m": _f(w.thickness_m),
            "height_m": _f(w.height_m), "base_elevation_m": _f(w.base_elevation_m),
            "plan_area_m2": _f(w.plan_area_m2), "axis_m": [_xy(w.axis_m[0]), _xy(w.axis_m[1])],
            "load_bearing": w.load_bearing,
            "openings": [{"global_id": o.global_id, "start_m": _f(o.start_m), "end_m": _f(o.end_m),
                          "sill_m": _f(o.sill_m), "head_m": _f(o.head_m)} for o in w.openings],
            "material": _material(w.material), "storey_id": w.storey_id, "from_mesh": w.from_mesh}


def _column(c: Column) -> dict[str, Any]:
    cen = c.centroid_m if not c.section.is_empty else (None, None)
    return {"global_id": c.global_id, "name": c.name, "area_m2": _f(c.area_m2), "height_m": _f(c.height_m),
            "base_elevation_m": _f(c.base_elevation_m), "centroid_m": _xy(cen), "material": _material(c.material),
            "storey_id": c.storey_id, "from_mesh": c.from_mesh}


def storey_to_dict(s: Storey) -> dict[str, Any]:
    """One storey, with its floor-plate area and area-weighted thickness."""
    _, area, thickness = floor_plate(s.slabs)
    return {"name": s.name, "global_id": s.global_id, "elevation_m": _f(s.elevation_m), "height_m": _f(s.height_m),
            "above_grade": bool(s.above_grade), "usage": s.usage, "slab_area_m2": _f(area),
            "slab_thickness_m": _f(thickness), "slabs": [_slab(x) for x in s.slabs],
            "walls": [_wall(x) for x in s.walls], "columns": [_column(x) for x in s.columns]}


def _building(b: BuildingTakeoff) -> dict[str, Any]:
    return {"name": b.name, "global_id": b.global_id, "ground_elevation_m": _f(b.ground_elevation_m),
            "warnings": list(b.warnings), "storeys": [storey_to_dict(s) for s in b.storeys]}


def takeoff_to_dict(takeoff: Takeoff) -> dict[str, Any]:
    """The whole takeoff as JSON-able data (see the module docstring for the layout)."""
    return {"source_path": takeoff.source_path, "schema": takeoff.schema, "length_unit": takeoff.length_unit,
            "length_scale_m": _f(takeoff.length_scale_m), "true_north_deg": _f(takeoff.true_north_deg),
            "mesh_elements": len(takeoff.mesh_elements), "mesh_element_ids": list(takeoff.mesh_elements),
            "warnings": list(takeoff.warnings), "buildings": [_building(b) for b in takeoff.buildings]}
