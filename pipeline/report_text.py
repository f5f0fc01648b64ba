"""Terminal output of ``swayscreen screen``: periods, peak accelerations against limits,
drift, damper proposal, status and the caution (our own compact layout)."""
from __future__ import annotations

from .console import CAUTION, table

__all__ = ["screening_text"]

_STATUS = {"pass": "PASSES", "flagged": "FLAGGED", "incomplete": "NOT CLEARED (results missing)"}


def _periods(b) -> list[str]:
    modal = b.results.get("modes")
    if modal is None:
        return ["Periods: not computed."]
    rows = [[m.index, f"{m.period_s:.3f}", f"{m.frequency_hz:.4f}", m.kind,
             f"{100 * m.participation.get('x', 0):.1f}", f"{100 * m.participation.get('y', 0):.1f}",
             f"{100 * m.participation.get('twist', 0):.1f}"] for m in modal.modes]
    lines = ["Natural periods (stick model):",
             table(["mode", "period s", "freq Hz", "kind", "x mass %", "y mass %", "twist %"], rows)]
    emp = b.results.get("empirical_periods")
    if emp is not None:
        items = list(getattr(emp, "periods", emp))
        valid = [e.period_s for e in items if e.valid and e.period_s]
        band = f"{min(valid):.2f}-{max(valid):.2f} s" if valid else "none within their validity range"
        lines.append(f"Empirical band (formulas within their range): {band}; T1 from the model "
                     f"{modal.modes[0].period_s:.2f} s")
        lines += [f"  {e.method}: {e.period_s:.2f} s{'' if e.valid else ' (outside its validity range)'}"
                  for e in items if e.period_s]
    if getattr(modal, "p_delta", False):
        lines.append(f"P-Delta included: T1 {modal.t1_without_p_delta_s:.3f} s -> {modal.t1_with_p_delta_s:.3f} s")
    if getattr(modal, "rayleigh_period_s", None):
        lines.append("Rayleigh check from static sway under floor weights: " + ", ".join(
            f"{k} {v:.3f} s" for k, v in modal.rayleigh_period_s.items()))
    return lines


def _checks(b) -> list[str]:
    checks = b.assessment.checks
    if not checks:
        return ["No comfort or drift check could be computed."]
    rows = []
    for c in checks:
        rows.append([c.criterion, c.method, f"{c.return_period_yr:g}" if c.return_period_yr else "-",
                     f"{c.direction_deg:.0f}" if c.direction_deg is not None else "-", c.floor or "-",
                     f"{c.value:.4g}", f"{c.limit:.4g}", c.unit, f"{c.ratio:.2f}",
                     ("ok" if c.passes else "FLAGGED") if c.valid else ("ok*" if c.passes else "above*")])
    lines = ["Checks (worst wind direction for each):",
             table(["criterion", "method", "yr", "from deg", "floor", "value", "limit", "unit", "ratio", "result"], rows)]
    if any(not c.valid for c in checks):
        lines.append("  * method used outside its validity range: shown, but it can neither clear nor flag the "
                     "scheme on its own (wind-tunnel study advised)")
    notes = sorted({c.note for c in checks if c.note})
    lines += [f"  note: {n}" for n in notes]
    return lines


def _damper(b) -> list[str]:
    adv = b.results.get("damping_advice")
    if adv is None:
        return []
    lines = getattr(adv, "summary_lines", None)
    if not lines:
        return []
    return ["Damping and damper proposal:"] + [f"  {x}" for x in lines]


def screening_text(run) -> str:
    out = [f"Model: {run.takeoff.source_path} ({run.takeoff.schema}, {len(run.buildings)} building(s))"]
    for b in run.buildings:
        stick = b.derived.stick
        head = f"Building {b.building.name or b.building.global_id}"
        if stick is not None:
            head += (f": {stick.n_levels} floors above the base, height {stick.height_m:.1f} m, "
                     f"sway mass {stick.total_mass_kg / 1e6:,.1f} kt")
        out += ["", head, ""]
        out += _periods(b)
        out.append("")
        out += _checks(b)
        dl = _damper(b)
        if dl:
            out.append("")
            out += dl
        for r in b.assessment.reasons:
            out.append(f"Note: {r}")
        if b.derived.stick is None and b.skipped:
            names = ", ".join(s.split(":")[0] for s in b.skipped)
            out.append(f"Not computed (no stick model): {names}")
        else:
            for s in b.skipped:
                out.append(f"Skipped: {s}")
        for f in b.failures:
            out.append(f"Estimator failed: {f.plugin}: {f.message}")
        nwarn = len(b.building.warnings) + len(b.derived.warnings)
        if nwarn:
            out.append(f"{nwarn} takeoff warning(s): see `swayscreen takeoff` or the report.")
        gov = b.assessment.governing
        out.append("")
        status = f"STATUS: {_STATUS[b.assessment.status]}"
        if any("not wind-sensitive" in r for r in b.assessment.reasons):
            status += " (not wind-sensitive: below the screening height)"
        if gov is not None:
            status += f" - governing: {gov.criterion} ({gov.method}) {gov.value:.3g} {gov.unit} vs limit {gov.limit:.3g}"
        out.append(status)
    out += ["", CAUTION]
    return "\n".join(out)
