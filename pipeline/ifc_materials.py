"""Materials of IFC elements: what the model names, classified into our categories.

An element's material comes from ``IfcRelAssociatesMaterial`` on the occurrence, else on
its type (``IfcRelDefinesByType``). Every IFC material select is understood:
IfcMaterial, IfcMaterialLayerSetUsage / IfcMaterialLayerSet / IfcMaterialLayer,
IfcMaterialProfileSetUsage / IfcMaterialProfileSet / IfcMaterialProfile, IfcMaterialList,
IfcMaterialConstituentSet / IfcMaterialConstituent.

For a composite (layers, constituents, lists) the representative material is the
thickest layer of a recognised structural category (concrete, steel, timber, masonry),
else the thickest layer, else the first listed.

Category from the material name (and the IFC4 ``Category`` attribute), case-insensitive:
concrete (concrete, beton, cement, reinforced, RC, C30/37-style classes), steel (steel,
stahl, acier, S235...S690 grades), timber (timber, wood, holz, glulam, CLT, lumber,
plywood, OSB), masonry (masonry, brick, block, CMU, mauerwerk, ziegel, kalksand, stone),
else "unknown". Strength classes are the EN 206 ``C../..`` (``LC../..``) and EN 10025
``S...`` names.

Mechanical data: IFC4 ``IfcMaterialProperties`` sets (Pset_MaterialCommon.MassDensity,
Pset_MaterialMechanical.YoungModulus / PoissonRatio) and the IFC2X3 entities
IfcGeneralMaterialProperties.MassDensity and IfcMechanicalMaterialProperties.YoungModulus /
PoissonRatio, converted with the project's units. Values outside plausible ranges
(density 10..30 000 kg/m^3, E 1 MPa..1000 GPa, Poisson 0..0.5) are dropped with a warning.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

from .ifc_geometry import attr
from .takeoff import Material

__all__ = ["classify", "MaterialReader", "MaterialInfo"]

_RULES = [
    ("concrete", re.compile(r"concrete|beton|b\u00e9ton|cement|reinforced|\brc\b|\bl?c\s?\d{2,3}\s?/\s?\d{2,3}\b")),
    ("steel", re.compile(r"steel|stahl|acier|\bs\s?(235|275|355|420|450|460|500|550|690)\b")),
    ("timber", re.compile(r"timber|wood|holz|glulam|\bclt\b|lumber|plywood|\bosb\b|\bgl\s?\d{2}")),
    ("masonry", re.compile(r"masonry|brick|block|\bcmu\b|mauerwerk|ziegel|kalksand|stone")),
]
_CONCRETE_CLASS = re.compile(r"\b(l?c)\s?(\d{2,3})\s?/\s?(\d{2,3})\b", re.IGNORECASE)
_STEEL_GRADE = re.compile(r"\bs\s?(235|275|355|420|450|460|500|550|690)\b", re.IGNORECASE)
_STRUCTURAL = ("concrete", "steel", "timber", "masonry")


def classify(name: str | None, category: str | None = None) -> tuple[str, str | None]:
    """Category and strength class from a material name (and optional IFC4 Category).

    >>> classify("Concrete C30/37")
    ('concrete', 'C30/37')
    >>> classify("Structural steel S355")
    ('steel', 'S355')
    """
    text = " ".join(t for t in (name, category) if t).lower()
    cat = "unknown"
    for label, rx in _RULES:
        if rx.search(text):
            cat = label
            break
    strength = None
    if cat == "concrete":
        m = _CONCRETE_CLASS.search(text)
        if m:
            strength = f"{m.group(1).upper()}{m.group(2)}/{m.group(3)}"
    elif cat == "steel":
        m = _STEEL_GRADE.search(text)
        if m:
            strength = f"S{m.group(1)}"
    return cat, strength


@dataclass(frozen=True)
class MaterialInfo:
    """The material read for one element.

    Attributes:
        material: the representative material (None when the element has none).
        layer_total_m: total layer-set thickness (m) when a layer set (usage) is assigned.
        layer_set_usage: True when the assignment is an IfcMaterialLayerSetUsage.
    """

    material: Material | None
    layer_total_m: float | None = None
    layer_set_usage: bool = False


def _val(v):
    if v is None:
        return None
    v = getattr(v, "wrappedValue", v)
    try:
        return float(v)
    except (TypeError, ValueError):
        return None


_UNSEEN = object()

class MaterialReader:
    """Resolves element materials with one pass over the association relationships.

    Args:
        model: the open ifcopenshell file.
        types: element id -> type object (from IfcRelDefinesByType).
        scale: metres per file length unit (layer thicknesses).
        density_factor, modulus_factor: file unit -> kg/m^3 and -> Pa.
    """

    def __init__(self, model, types: dict[int, object], scale: float,
                 density_factor: float = 1.0, modulus_factor: float = 1.0, *, index_all: bool = True) -> None:
        self.types = types
        self.scale = scale
        self.density_factor = density_factor
        self.modulus_factor = modulus_factor
        # Material selects by object. ``index_all``: list every association of the model
        # once (cheapest when most associated objects are asked about, as in a structural
        # model); otherwise found per object when first asked, through its HasAssociations
        # inverse (cheapest in a large model, where facades and furniture carry most of the
        # associations and are never asked about). Both take, of several associations with a
        # material, the first in the file.
        self._assoc: dict[int, object | None] = {}
        self._rel_material: dict[int, object | None] = {}  # relation id -> its material (None: not one)
        self._indexed = index_all
        if index_all:
            for rel in sorted(model.by_type("IfcRelAssociatesMaterial"), key=lambda r: r.id()):
                mat = attr(rel, "RelatingMaterial")
                for obj in (attr(rel, "RelatedObjects") or ()) if mat is not None else ():
                    if obj is not None:  # a reference to a missing instance (damaged file)
                        self._assoc.setdefault(obj.id(), mat)
        self._props: dict[int, dict[str, float]] = {}
        for props in model.by_type("IfcMaterialProperties"):
            self._read_props(props)
        self._cache: dict[int, Material] = {}
        self._info: dict[int, MaterialInfo] = {}
        self.dropped: list[str] = []

    # -- properties -----------------------------------------------------------------
    def _read_props(self, props) -> None:
        mat = attr(props, "Material")
        if mat is None:
            return
        d = self._props.setdefault(mat.id(), {})
        for name in ("MassDensity", "YoungModulus", "PoissonRatio"):
            if attr(props, name) is not None:
                v = _val(attr(props, name))
                if v is not None:
                    d.setdefault(name, v)
        plist = attr(props, "Properties") or attr(props, "ExtendedProperties") or ()
        for p in plist:
            if p.is_a("IfcPropertySingleValue") and p.Name in ("MassDensity", "YoungModulus", "PoissonRatio"):
                v = _val(p.NominalValue)
                if v is not None:
                    d.setdefault(p.Name, v)

    def _material(self, m) -> Material:
        hit = self._cache.get(m.id())
        if hit is not None:
            return hit
        name = str(m.Name or "").strip() or f"material #{m.id()}"
        cat, strength = classify(name, attr(m, "Category"))
        p = self._props.get(m.id(), {})
        rho = p.get("MassDensity")
        e = p.get("YoungModulus")
        nu = p.get("PoissonRatio")
        if rho is not None:
            rho *= self.density_factor
            if not 10.0 <= rho <= 30000.0:
                self.dropped.append(f"'{name}' mass density {rho:g} kg/m^3")
                rho = None
        if e is not None:
            e *= self.modulus_factor
            if not 1e6 <= e <= 1e12:
                self.dropped.append(f"'{name}' Young's modulus {e:g} Pa")
                e = None
        if nu is not None and not 0.0 <= nu <= 0.5:
            self.dropped.append(f"'{name}' Poisson's ratio {nu:g}")
            nu = None
        mat = Material(name=name, category=cat, density_kg_m3=rho, youngs_modulus_pa=e, poisson_ratio=nu,
                       strength_class=strength, from_model=True)
        self._cache[m.id()] = mat
        return mat

    # -- selects --------------------------------------------------------------------
    def _parts(self, sel) -> tuple[list[tuple[object, float]], float | None, bool]:
        """(IfcMaterial, thickness in metres) pairs, layer-set total, and whether a usage."""
        if sel is None:
            return [], None, False
        if sel.is_a("IfcMaterial"):
            return [(sel, 0.0)], None, False
        if sel.is_a("IfcMaterialLayerSetUsage"):
            parts, total, _ = self._parts(sel.ForLayerSet)
            return parts, total, True
        if sel.is_a("IfcMaterialLayerSet"):
            parts = []
            total = 0.0
            for layer in sel.MaterialLayers or ():
                t = (_val(layer.LayerThickness) or 0.0) * self.scale
                if not 0.0 <= t <= 100.0:  # IfcNonNegativeLengthMeasure; no layer is 100 m thick
                    name = attr(layer.Material, "Name") if layer.Material is not None else None
                    self.dropped.append(f"layer #{layer.id()} ('{name or '?'}') thickness {t:g} m")
                    t = 0.0
                total += t
                if layer.Material is not None:
                    parts.append((layer.Material, t))
            return parts, total, False
        if sel.is_a("IfcMaterialLayer"):
            t = (_val(sel.LayerThickness) or 0.0) * self.scale
            if not 0.0 <= t <= 100.0:
                self.dropped.append(f"layer #{sel.id()} thickness {t:g} m")
                t = 0.0
            return ([(sel.Material, t)] if sel.Material is not None else []), t, False
        if sel.is_a("IfcMaterialProfileSetUsage"):
            return self._parts(sel.ForProfileSet)
        if sel.is_a("IfcMaterialProfileSet"):
            return [(p.Material, 0.0) for p in sel.MaterialProfiles or () if p.Material is not None], None, False
        if sel.is_a("IfcMaterialProfile"):
            return ([(sel.Material, 0.0)] if sel.Material is not None else []), None, False
        if sel.is_a("IfcMaterialList"):
            return [(m, 0.0) for m in sel.Materials or ()], None, False
        if sel.is_a("IfcMaterialConstituentSet"):
            return [(c.Material, _val(attr(c, "Fraction")) or 0.0)
                    for c in sel.MaterialConstituents or () if c.Material is not None], None, False
        if sel.is_a("IfcMaterialConstituent"):
            return ([(sel.Material, 0.0)] if sel.Material is not None else []), None, False
        return [], None, False

    def _assoc_of(self, obj) -> object | None:
        """The material select associated with ``obj``: of its IfcRelAssociatesMaterial
        relations with a material, the first in the file (lowest id); memoised."""
        key = obj.id()
        if self._indexed or key in self._assoc:
            return self._assoc.get(key)
        best_id, sel = -1, None
        for rel in getattr(obj, "HasAssociations", None) or ():
            if rel is None:
                continue
            rid = rel.id()
            mat = self._rel_material.get(rid, _UNSEEN)
            if mat is _UNSEEN:
                mat = attr(rel, "RelatingMaterial") if rel.is_a("IfcRelAssociatesMaterial") else None
                self._rel_material[rid] = mat
            if mat is not None and (best_id < 0 or rid < best_id):
                best_id, sel = rid, mat
        self._assoc[key] = sel
        return sel

    def for_element(self, element) -> MaterialInfo:
        """Material of an occurrence, else of its type (memoised per material select)."""
        sel = self._assoc_of(element)
        if sel is None:
            t = self.types.get(element.id())
            if t is not None:
                sel = self._assoc_of(t)
        key = sel.id() if sel is not None else 0
        hit = self._info.get(key)
        if hit is None:
            hit = self._select_info(sel)
            self._info[key] = hit
        return hit

    def _select_info(self, sel) -> MaterialInfo:
        parts, total, usage = self._parts(sel)
        if not parts:
            return MaterialInfo(None, total, usage)
        mats = [(self._material(m), t) for m, t in parts]
        structural = [(m, t) for m, t in mats if m.category in _STRUCTURAL]
        pool = structural or mats
        best = max(pool, key=lambda mt: mt[1])  # max keeps the first of equal thicknesses
        return MaterialInfo(best[0], total if total and total > 0 else None, usage)
