"""Plain-text tables for the terminal (our own layout)."""
from __future__ import annotations

from collections.abc import Sequence
from typing import Any

__all__ = ["table", "takeoff_text", "screening_text"]

CAUTION = (
    "CAUTION: screening estimate, not a design. Confirm with a licensed structural engineer under local codes;\n"
    "wind-sensitive buildings need a wind specialist."
)


def table(headers: Sequence[str], rows: Sequence[Sequence[Any]], align: str | None = None) -> str:
    """A fixed-width table; numbers right-aligned."""
    cells = [[str(h) for h in headers]] + [["" if c is None else str(c) for c in r] for r in rows]
    widths = [max(len(r[i]) for r in cells) for i in range(len(headers))]
    if align is None:
        align = "".join(
            "r" if rows and all(_is_num(r[i]) for r in rows if r[i] not in (None, "", "-")) and any(
                r[i] not in (None, "", "-") for r in rows) else "l"
            for i in range(len(headers))
        )
    out = []
    for n, r in enumerate(cells):
        out.append("  ".join(c.rjust(w) if a == "r" else c.ljust(w) for c, w, a in zip(r, widths, align)).rstrip())
        if n == 0:
            out.append("  ".join("-" * w for w in widths))
    return "\n".join(out)


def _is_num(v: Any) -> bool:
    if isinstance(v, (int, float)):
        return True
    try:
        float(str(v).replace(",", ""))
        return True
    except ValueError:
        return False


def _f(v: float | None, nd: int = 2) -> str:
    return "-" if v is None else f"{v:,.{nd}f}"


def takeoff_text(takeoff, derived_list) -> str:
    lines = [
        f"Model: {takeoff.source_path}",
        f"Schema {takeoff.schema}, length unit {takeoff.length_unit} (x {takeoff.length_scale_m:g} m), "
        f"true north {takeoff.true_north_deg:.1f} deg counter-clockwise from +Y",
    ]
    for b, d in zip(takeoff.buildings, derived_list):
        levels = {lv.storey_id: lv for lv in d.levels}
        centres = {}
        if d.stick and d.stick.stiffness_centres_m:
            centres = {lv.storey_id: c for lv, c in zip(d.stick.levels, d.stick.stiffness_centres_m)}
        lines += ["", f"Building: {b.name or b.global_id}  ({len(b.storeys)} storeys, "
                      f"{len(b.above_grade)} above grade)"]
        rows = []
        for s in reversed(b.storeys):
            floor_slabs = [sl for sl in s.slabs if not sl.sloped]
            area = sum(sl.area_m2 for sl in floor_slabs)
            thick = (sum(sl.area_m2 * sl.thickness_m for sl in floor_slabs) / area) if area > 0 else None
            lv = levels.get(s.global_id)
            c = centres.get(s.global_id)
            rows.append([
                s.name, _f(s.elevation_m), _f(s.height_m), "yes" if s.above_grade else "no",
                _f(area, 1), _f(thick, 3), len(s.walls), _f(sum(w.length_m for w in s.walls), 1), len(s.columns),
                _f(lv.mass_kg / 1000, 1) if lv else "-",
                f"{lv.mass_centre_m[0]:.1f}, {lv.mass_centre_m[1]:.1f}" if lv else "-",
                f"{c[0]:.1f}, {c[1]:.1f}" if c else "-",
            ])
        lines.append(table(
            ["storey", "elev m", "height m", "above", "slab m2", "slab t m", "walls", "wall len m", "columns",
             "mass t", "mass centre", "stiff. centre"], rows))
        if d.levels and d.total_mass_kg > 0:
            total = d.total_mass_kg
            comps: dict[str, float] = {}
            for lv in d.levels:
                for k, v in lv.mass_components_kg:
                    comps[k] = comps.get(k, 0.0) + v
            lines.append("")
            height = d.levels[-1].elevation_m - (d.base_elevation_m or 0.0)
            lines.append(f"Total sway mass {total / 1000:,.0f} t over {len(d.levels)} floors, "
                         f"height {height:.1f} m above the base:")
            for k, v in comps.items():
                lines.append(f"  {k:<24} {v / 1000:>12,.0f} t  ({100 * v / total:4.1f} %)")
            if d.gross_volume_m3 > 0:
                lines.append(f"  building density {total / d.gross_volume_m3:,.0f} kg/m3 of gross volume "
                             f"({d.gross_volume_m3:,.0f} m3)")
        if d.stick:
            if d.stick.cores:
                lines.append("")
                lines.append(table(
                    ["system", "walls", "closed", "area m2", "Ixx m4", "Iyy m4", "J m4", "Cw m6", "note"],
                    [[c.id, len(c.wall_ids), "yes" if c.closed else "no", _f(c.section.area_m2, 2),
                      _f(c.section.ixx_m4, 1), _f(c.section.iyy_m4, 1), _f(c.section.j_m4, 3),
                      _f(c.section.cw_m6, 1) if c.section.cw_m6 else "-", c.note]
                     for c in d.stick.cores]))
        if d.materials_used:
            lines.append("")
            lines.append("Materials used:")
            lines += [f"  {m}" for m in d.materials_used]
        warn = list(b.warnings) + list(d.warnings) + [f"missing: {m}" for m in d.missing]
        if warn:
            lines.append("")
            lines.append("Warnings:")
            lines += [f"  - {w}" for w in warn]
    if takeoff.warnings:
        lines.append("")
        lines.append("File warnings:")
        lines += [f"  - {w}" for w in takeoff.warnings]
    lines += ["", CAUTION]
    return "\n".join(lines)


def screening_text(run) -> str:  # refined once the plugins' results are settled
    from .report_text import screening_text as _impl

    return _impl(run)
