"""Effective material properties for masses and stiffness, with a record of what was used.

Each element's :class:`~swayscreen.pipeline.takeoff.Material` (from the model, possibly
``None``) is resolved into a :class:`ResolvedMaterial` with SI values:

* category: the model's category; when "unknown", recognised from the name (concrete,
  steel, timber, masonry keywords and EN class names such as "C40/50" or "S355"); else
  ``MaterialSettings.unknown_material``.
* density: the model's density when given and plausible (100-20 000 kg/m^3), else the
  category's unit weight from settings turned into a mass density,
  rho = gamma * 1000 / g (kg/m^3 from kN/m^3, g = 9.81 m/s^2 as in the settings).
* modulus E (static), in this order: the model's Young's modulus when given and plausible
  (1e8-1e12 Pa); for concrete, the strength class named by the model (the material's
  ``strength_class``, else parsed from its name) through EN 1992-1-1 Table 3.1,
  E_cm = 22 (f_cm/10)^0.3 GPa with f_cm = f_ck + 8 MPa; then ``concrete_modulus_pa`` from
  settings; then the settings' ``concrete_class`` through the same formula. Steel, timber
  and masonry take the settings' moduli.
* Poisson's ratio: the model's when given (0-0.5), else the settings' (concrete, steel);
  timber 0.3 and masonry 0.2 (common practice, used only for G).
* concrete only: E is multiplied by ``dynamic_modulus_factor`` (applied to whichever static
  modulus was found); G = E / (2 (1 + nu)) from the effective E.

:class:`MaterialBook` caches the resolutions and records, per element role ("walls",
"columns", "slabs"), which material was used for how many elements; its :meth:`lines`
are the plain sentences the takeoff command prints.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass

from .core_settings import G as G_SETTINGS
from .core_settings import MaterialSettings
from .takeoff import Material

__all__ = [
    "ResolvedMaterial",
    "MaterialBook",
    "concrete_modulus_pa",
    "parse_concrete_class",
    "density_from_unit_weight",
    "resolve_material",
]

_CLASS_RE = re.compile(r"(?<![A-Za-z0-9])C\s?(\d{2,3})\s?[/_\-]\s?(\d{2,3})(?![0-9])", re.IGNORECASE)
_KEYWORDS: tuple[tuple[str, re.Pattern[str]], ...] = (
    ("concrete", re.compile(r"concrete|b[eé]ton|beton|cement|\brc\b|\bc\d{2,3}/\d{2,3}\b|precast|in[- ]situ", re.I)),
    ("steel", re.compile(r"steel|stahl|acier|\bs(235|275|355|420|450|460)\b|\bgrade ?50\b|a992", re.I)),
    ("timber", re.compile(r"timber|wood|glulam|\bclt\b|\blvl\b|holz|lumber|\bgl\d{2}[hc]?\b", re.I)),
    ("masonry", re.compile(r"masonry|brick|blockwork|\bblock\b|mauerwerk|\bcmu\b", re.I)),
)
_OTHER_POISSON = {"timber": 0.3, "masonry": 0.2}  # common practice; only used for G


def density_from_unit_weight(unit_weight_kn_m3: float, g: float = G_SETTINGS) -> float:
    """Mass density (kg/m^3) from a unit weight (kN/m^3): rho = gamma * 1000 / g.

    Example: 25 kN/m^3 -> 2548.4 kg/m^3 with g = 9.81 m/s^2.
    """
    return unit_weight_kn_m3 * 1000.0 / g


def parse_concrete_class(text: str | None) -> str | None:
    """The EN 206 / EN 1992-1-1 strength class named in ``text`` ("C40/50"), or None.

    Accepts "C40/50", "C 40/50", "C40_50", "c40-50" inside longer names; the cylinder
    strength must be 12-100 MPa and not above the cube strength.
    """
    if not text:
        return None
    m = _CLASS_RE.search(text)
    if not m:
        return None
    fck, fcube = int(m.group(1)), int(m.group(2))
    if not (12 <= fck <= 100) or fcube < fck:
        return None
    return f"C{fck}/{fcube}"


def concrete_modulus_pa(strength_class: str) -> float:
    """Secant modulus E_cm (Pa) of a concrete class by EN 1992-1-1 Table 3.1.

    E_cm = 22 (f_cm / 10)^0.3 GPa with f_cm = f_ck + 8 MPa (quartzite aggregates).
    Example: C40/50 -> 35.22e9 Pa.

    Raises:
        ValueError: the text names no recognisable class.
    """
    cls = parse_concrete_class(strength_class)
    if cls is None:
        raise ValueError(f"not a concrete strength class: {strength_class!r} (expected e.g. 'C40/50')")
    fck = float(cls[1:].split("/")[0])
    return 22.0e9 * ((fck + 8.0) / 10.0) ** 0.3


def _category(material: Material | None) -> str | None:
    if material is None:
        return None
    if material.category and material.category != "unknown":
        return material.category
    text = " ".join(x for x in (material.name, material.strength_class or "") if x)
    if parse_concrete_class(text):
        return "concrete"
    for cat, pat in _KEYWORDS:
        if pat.search(text):
            return cat
    return None


@dataclass(frozen=True)
class ResolvedMaterial:
    """Effective properties of one material, SI units.

    Attributes:
        category: "concrete", "steel", "timber" or "masonry".
        label: short description, e.g. "concrete C40/50".
        density_kg_m3: mass density.
        e_pa: effective elastic modulus (concrete: static modulus x dynamic factor).
        g_pa: shear modulus E / (2 (1 + nu)).
        poisson: Poisson's ratio used.
        origin: how it was found, e.g. "from model material 'Concrete C40/50'".
        notes: problems met (implausible values ignored), one sentence each.
    """

    category: str
    label: str
    density_kg_m3: float
    e_pa: float
    g_pa: float
    poisson: float
    origin: str
    notes: tuple[str, ...] = ()

    def describe(self) -> str:
        what = self.origin if "assumed" in self.origin else f"{self.label} {self.origin}"
        return (f"{what} (E = {self.e_pa / 1e9:.1f} GPa, G = {self.g_pa / 1e9:.1f} GPa, "
                f"{self.density_kg_m3:,.0f} kg/m^3)")


def _unit_weight(cat: str, s: MaterialSettings) -> float:
    return {
        "concrete": s.concrete_unit_weight_kn_m3,
        "steel": s.steel_unit_weight_kn_m3,
        "timber": s.timber_unit_weight_kn_m3,
        "masonry": s.masonry_unit_weight_kn_m3,
    }[cat]


def resolve_material(material: Material | None, settings: MaterialSettings) -> ResolvedMaterial:
    """Effective properties of ``material`` (None = not given in the model); see the module doc."""
    notes: list[str] = []
    cat = _category(material)
    name = material.name if material is not None else ""
    if material is None:
        cat = settings.unknown_material
        origin = f"no material in model, default {cat} assumed"
    elif cat is None:
        cat = settings.unknown_material
        origin = f"model material '{name}' not recognised, default {cat} assumed"
    elif material.from_model:
        origin = f"from model material '{name}'"
    else:
        origin = f"default '{name}'"
    if cat not in ("concrete", "steel", "timber", "masonry"):
        notes.append(f"material '{name}' has category '{cat}', treated as {settings.unknown_material}")
        cat = settings.unknown_material

    density = density_from_unit_weight(_unit_weight(cat, settings))
    if material is not None and material.density_kg_m3 is not None:
        if math.isfinite(material.density_kg_m3) and 100.0 <= material.density_kg_m3 <= 20000.0:
            density = float(material.density_kg_m3)
        else:
            notes.append(f"material '{name}': density {material.density_kg_m3!r} kg/m^3 is implausible, ignored")

    model_e = None
    if material is not None and material.youngs_modulus_pa is not None:
        if math.isfinite(material.youngs_modulus_pa) and 1e8 <= material.youngs_modulus_pa <= 1e12:
            model_e = float(material.youngs_modulus_pa)
        else:
            notes.append(f"material '{name}': Young's modulus {material.youngs_modulus_pa!r} Pa is implausible, ignored")

    label = cat
    if cat == "concrete":
        cls = None
        if material is not None:
            cls = parse_concrete_class(material.strength_class) or parse_concrete_class(material.name)
        if model_e is not None:
            e_static = model_e
            label = f"concrete {cls}" if cls else "concrete"
            origin += ", modulus from the model"
        elif cls is not None:
            e_static = concrete_modulus_pa(cls)
            label = f"concrete {cls}"
        elif settings.concrete_modulus_pa is not None:
            e_static = float(settings.concrete_modulus_pa)
            label = "concrete (modulus from settings)"
        else:
            default_cls = parse_concrete_class(settings.concrete_class)
            if default_cls is None:
                notes.append(f"settings concrete_class {settings.concrete_class!r} is not a class; C40/50 used")
                default_cls = "C40/50"
            e_static = concrete_modulus_pa(default_cls)
            label = f"concrete {default_cls}"
            if material is not None and material.from_model:
                origin += f", class not named: {default_cls} from settings"
        e = e_static * settings.dynamic_modulus_factor
        nu = settings.concrete_poisson
    elif cat == "steel":
        e = model_e if model_e is not None else settings.steel_modulus_pa
        nu = settings.steel_poisson
    elif cat == "timber":
        e = model_e if model_e is not None else settings.timber_modulus_pa
        nu = _OTHER_POISSON["timber"]
    else:
        e = model_e if model_e is not None else settings.masonry_modulus_pa
        nu = _OTHER_POISSON["masonry"]
    if material is not None and material.poisson_ratio is not None:
        if math.isfinite(material.poisson_ratio) and 0.0 <= material.poisson_ratio <= 0.5:
            nu = float(material.poisson_ratio)
        else:
            notes.append(f"material '{name}': Poisson's ratio {material.poisson_ratio!r} is implausible, ignored")
    if cat == "concrete" and settings.dynamic_modulus_factor != 1.0:
        origin += f", dynamic modulus factor {settings.dynamic_modulus_factor:g}"
    origin = origin.replace(f"default {cat} assumed", f"default {label} assumed")
    return ResolvedMaterial(cat, label, density, e, e / (2.0 * (1.0 + nu)), nu, origin, tuple(notes))


class MaterialBook:
    """Resolves materials once each and records which was used for which element role."""

    def __init__(self, settings: MaterialSettings) -> None:
        self.settings = settings
        self._cache: dict[Material | None, ResolvedMaterial] = {}
        self._usage: dict[tuple[str, str], int] = {}
        self._order: list[tuple[str, str]] = []
        # by object identity (entries hold the objects, so ids stay unique): a model's elements
        # share a few material objects, and hashing one or formatting its description per
        # element cost more than the rest of the per-element work of a derive
        self._by_id: dict[int, tuple[Material | None, ResolvedMaterial]] = {}
        self._described: dict[int, tuple[ResolvedMaterial, str]] = {}

    def get(self, material: Material | None, role: str | None = None) -> ResolvedMaterial:
        """The resolved material; counts one use under ``role`` ("walls", "columns", "slabs") if given."""
        seen = self._by_id.get(id(material))
        if seen is not None and seen[0] is material:
            res = seen[1]
        else:
            try:
                res = self._cache[material]
            except KeyError:
                res = resolve_material(material, self.settings)
                self._cache[material] = res
                self._by_id[id(material)] = (material, res)
            except TypeError:  # unhashable property values: resolve without caching
                res = resolve_material(material, self.settings)
            else:
                self._by_id[id(material)] = (material, res)
        if role is not None:
            told = self._described.get(id(res))
            if told is None or told[0] is not res:
                told = self._described[id(res)] = (res, res.describe())
            key = (role, told[1])
            if key not in self._usage:
                self._usage[key] = 0
                self._order.append(key)
            self._usage[key] += 1
        return res

    def lines(self) -> list[str]:
        """One sentence per (role, material), e.g. "walls (24): concrete C40/50 from model material ...".

        Roles in the order walls, columns, slabs, then any other; materials in order of first use.
        """
        rank = {"walls": 0, "columns": 1, "slabs": 2}
        keys = sorted(self._order, key=lambda k: (rank.get(k[0], 9), k[0], self._order.index(k)))
        return [f"{role} ({self._usage[(role, desc)]}): {desc}" for role, desc in keys]

    def notes(self) -> list[str]:
        """Problems met while resolving (implausible model values), deduplicated."""
        out: list[str] = []
        for res in self._cache.values():
            for n in res.notes:
                if n not in out:
                    out.append(n)
        return out
