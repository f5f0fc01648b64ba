"""Project units and the model's coordinate context, read from an open IFC file.

Everything the reader hands on is SI: lengths in metres, angles in radians internally
(degrees where a field name says so). The IFC file states its own units in
``IfcProject.UnitsInContext`` (an ``IfcUnitAssignment``):

* ``IfcSIUnit`` with an optional prefix (``MILLI`` = 1e-3, ``CENTI`` = 1e-2, ...);
  ISO 10303-41 / IFC ``IfcSIPrefix``.
* ``IfcConversionBasedUnit`` (FOOT, INCH, DEGREE, ...) whose ``ConversionFactor`` is an
  ``IfcMeasureWithUnit``: value x the factor of its own unit component.

The true-north angle follows the IFC convention of ``IfcGeometricRepresentationContext.TrueNorth``:
a 2D direction (-sin a, cos a) in the model's plan means north lies ``a`` counter-clockwise
from the model's +Y axis.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .errors import InputError
from .ifc_geometry import attr

__all__ = ["Units", "read_units", "ModelContext", "read_context", "SI_PREFIX"]

SI_PREFIX: dict[str | None, float] = {
    None: 1.0, "EXA": 1e18, "PETA": 1e15, "TERA": 1e12, "GIGA": 1e9, "MEGA": 1e6, "KILO": 1e3,
    "HECTO": 1e2, "DECA": 1e1, "DECI": 1e-1, "CENTI": 1e-2, "MILLI": 1e-3, "MICRO": 1e-6,
    "NANO": 1e-9, "PICO": 1e-12, "FEMTO": 1e-15, "ATTO": 1e-18,
}
"""ISO 10303-41 SI prefixes (IFC ``IfcSIPrefix``)."""

# Exact definitions: international foot/inch/yard/mile (1959 agreement), US survey foot.
_KNOWN_LENGTHS = {"FOOT": 0.3048, "FEET": 0.3048, "FT": 0.3048, "INCH": 0.0254, "IN": 0.0254,
                  "YARD": 0.9144, "MILE": 1609.344, "US SURVEY FOOT": 1200.0 / 3937.0}
_KNOWN_ANGLES = {"DEGREE": math.pi / 180.0, "DEG": math.pi / 180.0, "GRAD": math.pi / 200.0,
                 "GON": math.pi / 200.0}
# SI base factors of the named SI units, relative to kg, m, s, N, Pa.
_SI_BASE = {"METRE": 1.0, "GRAM": 1e-3, "SECOND": 1.0, "NEWTON": 1.0, "PASCAL": 1.0,
            "RADIAN": 1.0, "SQUARE_METRE": 1.0, "CUBIC_METRE": 1.0}
_SI_POWER = {"SQUARE_METRE": 2, "CUBIC_METRE": 3}
_LENGTH_NAMES = {1.0: "METRE", 1e-3: "MILLIMETRE", 1e-2: "CENTIMETRE", 1e-1: "DECIMETRE", 1e3: "KILOMETRE"}


@dataclass(frozen=True)
class Units:
    """Length and plane-angle units of a model.

    Attributes:
        length_name: "METRE", "MILLIMETRE", "FOOT", ... (conversion-based units keep their name).
        length_m: metres per file length unit.
        angle_rad: radians per file plane-angle unit (1 for RADIAN, pi/180 for DEGREE).
        density_kg_m3: factor from the file's mass-density unit to kg/m^3.
        modulus_pa: factor from the file's modulus-of-elasticity unit to Pa.
        warnings: what was assumed.
    """

    length_name: str
    length_m: float
    angle_rad: float = 1.0
    density_kg_m3: float = 1.0
    modulus_pa: float = 1.0
    warnings: tuple[str, ...] = ()


def _wrapped(value) -> float | None:
    """A float from an IFC measure (wrapped select value) or a plain number."""
    if value is None:
        return None
    v = getattr(value, "wrappedValue", value)
    try:
        return float(v)
    except (TypeError, ValueError):
        return None


def _unit_factor(unit, where: str, depth: int = 0) -> float:
    """SI factor of a named unit (IfcSIUnit, IfcConversionBasedUnit or IfcDerivedUnit)."""
    if depth > 8:
        raise InputError(f"{where}: unit definitions nest too deeply")
    if unit is None:
        return 1.0
    if unit.is_a("IfcSIUnit"):
        name = str(unit.Name)
        prefix = SI_PREFIX.get(unit.Prefix)
        if prefix is None or name not in _SI_BASE:
            return float("nan")
        return (prefix ** _SI_POWER.get(name, 1)) * _SI_BASE[name]
    if unit.is_a("IfcConversionBasedUnit"):
        cf = unit.ConversionFactor
        value = _wrapped(cf.ValueComponent) if cf is not None else None
        if value is not None and cf.UnitComponent is not None:
            factor = value * _unit_factor(cf.UnitComponent, where, depth + 1)
            if math.isfinite(factor) and factor > 0:
                return factor
        name = str(unit.Name or "").strip().upper()
        return _KNOWN_LENGTHS.get(name) or _KNOWN_ANGLES.get(name) or float("nan")
    if unit.is_a("IfcDerivedUnit"):
        f = 1.0
        try:
            for el in unit.Elements or ():
                f *= _unit_factor(el.Unit, where, depth + 1) ** int(el.Exponent)
        except (OverflowError, ZeroDivisionError):  # absurd exponents: not understood
            return float("nan")
        return f
    return float("nan")


def _assignment(model):
    projects = model.by_type("IfcProject")
    for p in projects:
        if attr(p, "UnitsInContext") is not None:
            return attr(p, "UnitsInContext")
    found = model.by_type("IfcUnitAssignment")
    return found[0] if found else None


def read_units(model, where: str) -> Units:
    """Read the project's length, angle, density and modulus units.

    Raises:
        InputError: naming ``where`` (the file) and the unit when the length unit is not
            a length or cannot be converted.
    """
    warnings: list[str] = []
    ua = _assignment(model)
    units = list(ua.Units or ()) if ua is not None else []
    length_unit = angle_unit = density_unit = modulus_unit = None
    for u in units:
        utype = attr(u, "UnitType")
        if utype == "LENGTHUNIT":
            length_unit = u
        elif utype == "PLANEANGLEUNIT":
            angle_unit = u
        elif utype == "MASSDENSITYUNIT":
            density_unit = u
        elif utype == "MODULUSOFELASTICITYUNIT":
            modulus_unit = u

    if length_unit is None:
        warnings.append(f"{where}: no project length unit assigned; metres assumed")
        name, scale = "METRE", 1.0
    elif length_unit.is_a("IfcSIUnit"):
        if length_unit.Name != "METRE" or length_unit.Prefix not in SI_PREFIX:
            raise InputError(f"{where}: unknown length unit {length_unit.Prefix or ''}{length_unit.Name} "
                             f"(#{length_unit.id()})")
        scale = SI_PREFIX[length_unit.Prefix]
        name = _LENGTH_NAMES.get(scale, f"{length_unit.Prefix}METRE")
        if not 1e-6 <= scale <= 1e4:
            raise InputError(f"{where}: implausible length unit {name} (#{length_unit.id()}); "
                             "micrometres to kilometres are accepted")
    elif length_unit.is_a("IfcConversionBasedUnit"):
        scale = _unit_factor(length_unit, where)
        name = str(length_unit.Name or "").strip().upper() or "UNNAMED"
        if not (math.isfinite(scale) and 1e-6 < scale < 1e4):
            raise InputError(f"{where}: unknown length unit '{length_unit.Name}' (#{length_unit.id()}) "
                             "with no usable conversion factor")
    else:
        raise InputError(f"{where}: unknown length unit {length_unit.is_a()} (#{length_unit.id()})")

    angle = 1.0
    if angle_unit is not None:
        f = _unit_factor(angle_unit, where)
        if math.isfinite(f) and f > 0:
            angle = f
        else:
            warnings.append(f"{where}: plane angle unit '{attr(angle_unit, 'Name') or '?'}' not understood; "
                            "radians assumed")

    def _derived(unit, label: str) -> float:
        if unit is None:
            return 1.0
        f = _unit_factor(unit, where)
        if math.isfinite(f) and f > 0:
            return f
        warnings.append(f"{where}: {label} unit not understood; SI assumed")
        return 1.0

    return Units(length_name=name, length_m=float(scale), angle_rad=angle,
                 density_kg_m3=_derived(density_unit, "mass density"),
                 modulus_pa=_derived(modulus_unit, "modulus of elasticity"),
                 warnings=tuple(warnings))


@dataclass(frozen=True)
class ModelContext:
    """The model representation context: world coordinate system and true north.

    Attributes:
        wcs: 4x4 matrix of the context's WorldCoordinateSystem (translation in metres);
            identity when absent.
        true_north_deg: angle counter-clockwise from the model's +Y axis to north (degrees,
            in (-180, 180]); 0 when TrueNorth is absent or not a usable direction.
        warnings: what was assumed (a damaged TrueNorth).
    """

    wcs: np.ndarray
    true_north_deg: float
    warnings: tuple[str, ...] = ()


def _model_context(model):
    contexts = [c for c in model.by_type("IfcGeometricRepresentationContext")
                if c.is_a() == "IfcGeometricRepresentationContext"]
    for c in contexts:
        if str(c.ContextType or "").strip().lower() == "model":
            return c
    return contexts[0] if contexts else None


def read_context(model, axis2_matrix) -> ModelContext:
    """World coordinate system and true north of the 3D model context.

    ``axis2_matrix`` turns an IfcAxis2Placement into a 4x4 matrix in metres. TrueNorth is
    expressed in the context's coordinate system, so it is rotated by the WCS before the
    angle is taken.
    """
    ctx = _model_context(model)
    if ctx is None:
        return ModelContext(np.eye(4), 0.0)
    wcs = axis2_matrix(ctx.WorldCoordinateSystem) if ctx.WorldCoordinateSystem is not None else np.eye(4)
    tn = attr(ctx, "TrueNorth")
    angle = 0.0
    if tn is not None and tn.DirectionRatios:
        r = [float(v) for v in tn.DirectionRatios] + [0.0, 0.0]
        big = max(abs(x) for x in r[:3])
        if not math.isfinite(big):  # damaged: no usable direction, as if absent
            return ModelContext(wcs, 0.0, (f"TrueNorth #{tn.id()} has non-finite ratios; north taken as model +Y",))
        v = wcs[:3, :3] @ (np.array(r[:3]) / (big if big > 1.0 else 1.0))
        if math.hypot(v[0], v[1]) > 1e-12:
            angle = math.degrees(math.atan2(-v[0], v[1]))
            if angle <= -180.0:
                angle += 360.0
            if abs(angle) < 1e-12:
                angle = 0.0
    return ModelContext(wcs, angle)
