"""What a model needs for a full screening, stated in the open IDS standard (buildingSMART
Information Delivery Specification), and a check of a model against it with ifctester.

The bundled file ``pipeline/data/screening-requirements.ids`` is made by :func:`build_ids`
(run ``python -m swayscreen.pipeline.requirements`` to rewrite it); design teams can check
their exports against it in any IDS-capable tool. ``swayscreen takeoff --requirements``
checks a model and lists what is missing, per requirement, in plain words.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .errors import InputError

__all__ = ["IDS_PATH", "build_ids", "check_requirements", "RequirementsResult"]

IDS_PATH = Path(__file__).resolve().parent / "data" / "screening-requirements.ids"
_VERSIONS = ["IFC2X3", "IFC4", "IFC4X3_ADD2"]

# (name, plain explanation of why swayscreen needs it)
SPECS = [
    ("Storeys with elevations", "Every IfcBuildingStorey states its Elevation, so floors and heights can be read."),
    ("Floor slabs", "At least one IfcSlab of type FLOOR: floor plates give the floor masses and plan shapes."),
    ("Slabs with materials", "Each IfcSlab has a material, for its weight and stiffness."),
    ("Walls say whether they are load-bearing", "Each IfcWall carries Pset_WallCommon.LoadBearing, so the lateral system can be told from partitions."),
    ("Walls with materials", "Each IfcWall has a material, for its stiffness and weight."),
    ("Columns with materials", "Each IfcColumn has a material, for its stiffness and weight."),
    ("A length unit", "The IfcProject assigns units (IfcUnitAssignment), so lengths convert to metres."),
    ("True north", "The model context states TrueNorth, so wind directions map onto the building's axes."),
]


def build_ids():
    """The IDS document (an ifctester ``Ids``) stating the requirements above."""
    from ifctester import ids

    doc = ids.Ids(title="swayscreen: what a model needs for a full wind-sway screening",
                  author="swayscreen@example.org", version="1.0",
                  description="Storeys, floor slabs, load-bearing walls and columns with materials, a length unit and true north.",
                  purpose="Concept-stage wind sway and comfort screening")
    mk = {}
    for name, desc in SPECS:
        mk[name] = ids.Specification(name=name, ifcVersion=_VERSIONS, description=desc, minOccurs=0)
    s = mk["Storeys with elevations"]
    s.minOccurs = 1
    s.applicability.append(ids.Entity(name="IFCBUILDINGSTOREY"))
    s.requirements.append(ids.Attribute(name="Elevation"))
    s = mk["Floor slabs"]
    s.minOccurs = 1
    s.applicability.append(ids.Entity(name="IFCSLAB", predefinedType="FLOOR"))
    s.requirements.append(ids.Attribute(name="GlobalId"))
    s = mk["Slabs with materials"]
    s.applicability.append(ids.Entity(name="IFCSLAB"))
    s.requirements.append(ids.Material())
    s = mk["Walls say whether they are load-bearing"]
    s.applicability.append(ids.Entity(name="IFCWALL"))
    s.requirements.append(ids.Property(propertySet="Pset_WallCommon", baseName="LoadBearing", dataType="IFCBOOLEAN"))
    s = mk["Walls with materials"]
    s.applicability.append(ids.Entity(name="IFCWALL"))
    s.requirements.append(ids.Material())
    s = mk["Columns with materials"]
    s.applicability.append(ids.Entity(name="IFCCOLUMN"))
    s.requirements.append(ids.Material())
    s = mk["A length unit"]
    s.minOccurs = 1
    s.applicability.append(ids.Entity(name="IFCPROJECT"))
    s.requirements.append(ids.Attribute(name="UnitsInContext"))
    s = mk["True north"]
    s.minOccurs = 1
    s.applicability.append(ids.Entity(name="IFCGEOMETRICREPRESENTATIONCONTEXT"))
    s.applicability.append(ids.Attribute(name="ContextType", value="Model"))
    s.requirements.append(ids.Attribute(name="TrueNorth"))
    doc.specifications.extend(mk[name] for name, _ in SPECS)
    return doc


@dataclass(frozen=True)
class RequirementOutcome:
    name: str
    passed: bool
    explanation: str
    applicable: int
    failing: int
    examples: tuple[str, ...]


@dataclass(frozen=True)
class RequirementsResult:
    model: str
    outcomes: tuple[RequirementOutcome, ...]

    @property
    def passed(self) -> bool:
        return all(o.passed for o in self.outcomes)

    def text(self) -> str:
        lines = [f"Requirements for a full screening ({IDS_PATH.name}, buildingSMART IDS):"]
        for o in self.outcomes:
            if o.passed:
                lines.append(f"  ok       {o.name}")
                continue
            what = (f"{o.failing} of {o.applicable} elements do not meet it" if o.applicable
                    else "nothing in the model meets it")
            ex = f" (e.g. {', '.join(o.examples)})" if o.examples else ""
            lines.append(f"  MISSING  {o.name}: {what}{ex}. {o.explanation}")
        lines.append("All requirements met." if self.passed else
                     "Some requirements are not met: the screening will use defaults or report missing results.")
        return "\n".join(lines)

    def to_dict(self) -> dict[str, Any]:
        return {"ids": IDS_PATH.name, "passed": self.passed, "requirements": [
            {"name": o.name, "passed": o.passed, "applicable": o.applicable, "failing": o.failing,
             "examples": list(o.examples), "explanation": o.explanation} for o in self.outcomes]}


def check_requirements(model_path: str | Path, ids_path: Path = IDS_PATH) -> RequirementsResult:
    """Check a model against the IDS file (needs ifctester, a dependency of the test and 'requirements' extras)."""
    try:
        from ifctester import ids
    except ImportError:
        raise InputError("--requirements needs ifctester: pip install 'swayscreen[requirements]'") from None
    import ifcopenshell

    try:
        model = ifcopenshell.open(str(model_path))
    except Exception as exc:
        raise InputError(f"{model_path}: cannot be read as IFC ({exc})") from None
    spec = ids.open(str(ids_path))
    spec.validate(model)
    explanations = dict(SPECS)
    outcomes = []
    for s in spec.specifications:
        failed = sorted(s.failed_entities, key=lambda e: e.id())
        examples = tuple(
            f"{e.is_a()} {getattr(e, 'Name', None) or ''} {getattr(e, 'GlobalId', '')}".replace("  ", " ").strip()
            for e in failed[:3])
        outcomes.append(RequirementOutcome(s.name, bool(s.status), explanations.get(s.name, s.description or ""),
                                           len(s.applicable_entities), len(failed), examples))
    return RequirementsResult(str(model_path), tuple(outcomes))


if __name__ == "__main__":  # pragma: no cover - regenerates the bundled IDS file
    IDS_PATH.write_text(build_ids().to_string(), encoding="utf-8")
    print(f"wrote {IDS_PATH}")
