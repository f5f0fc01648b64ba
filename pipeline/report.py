"""The HTML report: one self-contained file (inline SVG plots, inline CSS, no network).

Layout (our own): the scheme's key numbers first, then the checks, then the plots (mode
shapes, acceleration against frequency on the comfort curves, storey mass and stiffness
profiles, plan of the governing storey, damper effect when proposed), then assumptions,
settings, warnings and the caution. Plots use per-storey data only, so the report's cost
does not grow with the number of elements in the model.
"""
from __future__ import annotations

import html
import io
import math
import warnings
from datetime import datetime, timezone
from typing import Any

from . import __version__
from .console import CAUTION

__all__ = ["render_report"]

_CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;margin:0;color:#1d232a;background:#fafafa}
main{max-width:1040px;margin:0 auto;padding:24px}
h1{font-size:1.6em;margin:0 0 4px}h2{font-size:1.2em;margin:28px 0 8px;border-bottom:1px solid #ccd;padding-bottom:4px}
.sub{color:#555;margin:0 0 16px}.caution{border-left:4px solid #8a6d00;background:#fff8e0;padding:10px 14px;margin:14px 0}
.status{display:inline-block;padding:4px 12px;border-radius:3px;font-weight:600;letter-spacing:.03em}
.s-pass{background:#dcefe4;color:#145c32}.s-flagged{background:#f6dede;color:#7d1818}.s-incomplete{background:#eee4cf;color:#6a4b00}
.cards{display:flex;flex-wrap:wrap;gap:12px;margin:12px 0}.card{background:#fff;border:1px solid #dde;border-radius:4px;padding:10px 14px;min-width:150px}
.card .v{font-size:1.4em;font-weight:600}.card .l{color:#555;font-size:.85em}
table{border-collapse:collapse;width:100%;background:#fff;font-size:.9em;margin:6px 0}
th,td{border:1px solid #dde;padding:4px 8px;text-align:left}td.n{text-align:right;font-variant-numeric:tabular-nums}
tr.fail td{background:#fbecec}.plot{background:#fff;border:1px solid #dde;margin:8px 0;padding:4px}
.plot svg{width:100%;height:auto}.note{color:#555;font-size:.85em}ul{margin:4px 0}
"""


def _e(v: Any) -> str:
    return html.escape(str(v))


def _fmt(v: Any, nd: int = 2) -> str:
    if v is None:
        return "-"
    if isinstance(v, float):
        if not math.isfinite(v):
            return "-"
        return f"{v:,.{nd}f}"
    return _e(v)


def _svg(fig) -> str:
    buf = io.StringIO()
    fig.savefig(buf, format="svg")  # layout="constrained"-free: fixed margins, one draw pass
    text = buf.getvalue()
    start = text.find("<svg")
    return f'<div class="plot">{text[start:]}</div>'


class _Figures:
    """The two pyplot calls the plots use, on bare Figure objects (no pyplot import, no global
    figure registry, nothing to close)."""

    @staticmethod
    def subplots(nrows: int = 1, ncols: int = 1, *, figsize=(6.4, 4.8), sharey: bool = False):
        from matplotlib.figure import Figure

        fig = Figure(figsize=figsize)
        fig.subplots_adjust(left=0.12, right=0.97, bottom=0.13, top=0.88, wspace=0.25)
        axes = fig.subplots(nrows, ncols, sharey=sharey)
        return fig, axes


def _plots_available():
    import matplotlib

    matplotlib.rcParams["svg.fonttype"] = "none"  # text as text: smaller, searchable
    matplotlib.rcParams["svg.hashsalt"] = "swayscreen"  # deterministic ids
    return _Figures


def _mode_plot(plt, b) -> str | None:
    modal = b.results.get("modes")
    stick = b.derived.stick
    if modal is None or stick is None:
        return None
    z = [lv.elevation_m - stick.base_elevation_m for lv in stick.levels]
    radii = [math.sqrt(lv.polar_moment_kg_m2 / lv.mass_kg) if lv.mass_kg > 0 else 0.0 for lv in stick.levels]
    fig, axes = plt.subplots(1, 3, figsize=(10, 4.2), sharey=True)
    comps = [("x translation", 0), ("y translation", 1), ("twist x radius of gyration", 2)]
    for ax, (title, k) in zip(axes, comps):
        for m in modal.modes[:6]:
            vals = [m.shape[i][k] * (radii[i] if k == 2 else 1.0) for i in range(len(z))]
            ax.plot([0.0] + vals, [0.0] + z, marker=".", ms=3, lw=1.2,
                    label=f"{m.index}: {m.period_s:.2f} s ({m.kind})")
        ax.axvline(0, color="#999", lw=0.6)
        ax.set_title(title, fontsize=10)
        ax.set_xlim(-1.05, 1.05)
        ax.grid(alpha=0.3)
    axes[0].set_ylabel("height above base (m)")
    axes[2].legend(fontsize=7, loc="lower right")
    fig.suptitle("Mode shapes (normalised, first modes)", fontsize=11)
    return _svg(fig)


def _comfort_plot(plt, b) -> str | None:
    accel = b.results.get("accel_en")
    if accel is None:
        return None
    try:
        from swayscreen.plugins.comfort import melbourne_palmer_peak_m_s2
    except ImportError:  # pragma: no cover - comfort plugin not installed
        melbourne_palmer_peak_m_s2 = None
    fig, ax = plt.subplots(figsize=(7.5, 4.5))
    f = [0.05 * 1.05**i for i in range(60) if 0.05 * 1.05**i <= 1.0]
    if melbourne_palmer_peak_m_s2 is not None:
        for rp, style in ((1.0, "-"), (10.0, "--")):
            ax.plot(f, [1000 * melbourne_palmer_peak_m_s2(x, rp) / 9.81 for x in f], style, color="#555",
                    lw=1, label=f"Melbourne-Palmer, {rp:g}-year")
    for c in b.assessment.checks:
        if c.unit == "mg" and c.return_period_yr and c.return_period_yr >= 5 and "10-year" in c.criterion:
            ax.axhline(c.limit, color="#8a6d00", lw=0.8, ls=":")
            ax.text(1.0, c.limit, f" {c.criterion}: {c.limit:g} mg", fontsize=7, va="bottom", ha="right")
            break
    marks = {1.0: ("o", "#1f5fa8"), 10.0: ("s", "#b5432a")}
    seen = set()
    for res_key in ("accel_en", "accel_nbcc"):
        res = b.results.get(res_key)
        if res is None:
            continue
        for case in res.cases:
            mk, col = marks.get(case.return_period_yr, ("^", "#444"))
            label = f"{case.return_period_yr:g}-year, {case.method}"
            face = col if res_key == "accel_en" else "none"
            ax.plot(case.frequency_hz, case.peak_mg, mk, mec=col, mfc=face, ms=5, alpha=0.8,
                    label=None if label in seen else label)
            seen.add(label)
    ax.set_xscale("log")
    ax.set_yscale("log")
    from matplotlib.ticker import FuncFormatter

    def label(v: float, _pos: int) -> str:  # 1, 2, 3, 5 x 10^k only: readable log axes
        lead = f"{v:.0e}"[0]
        return f"{v:g}" if lead in "1235" else ""

    for axis in (ax.xaxis, ax.yaxis):
        axis.set_major_formatter(FuncFormatter(label))
        axis.set_minor_formatter(FuncFormatter(label))
    ax.set_xlabel("frequency of the responding mode (Hz)")
    ax.set_ylabel("peak acceleration, top occupied floor (mg)")
    ax.grid(alpha=0.3, which="both")
    ax.legend(fontsize=7)
    ax.set_title("Peak accelerations against comfort curves (each point: one direction)", fontsize=10)
    return _svg(fig)


def _profile_plot(plt, b) -> str | None:
    stick = b.derived.stick
    if stick is None:
        return None
    z = [lv.elevation_m - stick.base_elevation_m for lv in stick.levels]
    mass_t = [lv.mass_kg / 1000 for lv in stick.levels]
    n = len(z)
    ei_x, ei_y, kx, ky = [0.0] * n, [0.0] * n, [0.0] * n, [0.0] * n
    for seg in stick.segments:
        i = seg.level_index
        if seg.kind == "frame":
            kx[i] += seg.k_x_n_m
            ky[i] += seg.k_y_n_m
        else:  # flexural rigidity against sway in x is E I about the y axis
            ei_x[i] += seg.ei_yy_nm2
            ei_y[i] += seg.ei_xx_nm2
    fig, (a1, a2, a3) = plt.subplots(1, 3, figsize=(10, 4.2), sharey=True)
    a1.step(mass_t, z, where="mid", color="#1f5fa8")
    a1.set_xlabel("floor mass (t)")
    a1.set_ylabel("height above base (m)")
    a2.step([v / 1e9 for v in ei_x], z, where="mid", label="sway in x", color="#1f5fa8")
    a2.step([v / 1e9 for v in ei_y], z, where="mid", label="sway in y", color="#b5432a")
    a2.set_xlabel("cores and walls: flexural rigidity EI (GN m2)")
    a2.legend(fontsize=8)
    a3.step([v / 1e6 for v in kx], z, where="mid", label="x", color="#1f5fa8")
    a3.step([v / 1e6 for v in ky], z, where="mid", label="y", color="#b5432a")
    a3.set_xlabel("columns: storey shear stiffness (MN/m)")
    a3.legend(fontsize=8)
    for ax in (a1, a2, a3):
        ax.grid(alpha=0.3)
    fig.suptitle("Storey mass and stiffness profiles", fontsize=11)
    return _svg(fig)


def _governing_level(b) -> int | None:
    stick = b.derived.stick
    if stick is None or not stick.levels:
        return None
    gov = b.assessment.governing
    if gov is not None and gov.floor:
        for i, lv in enumerate(stick.levels):
            if lv.name == gov.floor:
                return i
    return len(stick.levels) - 1


def _plan_plot(plt, b) -> str | None:
    stick = b.derived.stick
    i = _governing_level(b)
    if i is None:
        return None
    lv = stick.levels[i]
    storey = next((s for s in b.building.storeys if s.global_id == lv.storey_id), None)
    fig, ax = plt.subplots(figsize=(6.5, 6.5))

    def draw(shape, **kw):
        geoms = getattr(shape, "geoms", [shape])
        for g in geoms:
            if g.is_empty or not hasattr(g, "exterior"):
                continue
            x, y = g.exterior.xy
            ax.fill(x, y, **kw)
            for hole in g.interiors:
                hx, hy = hole.xy
                ax.fill(hx, hy, color="white", lw=0.6, ec=kw.get("ec", "#333"))

    if lv.plate is not None:
        draw(lv.plate, fc="#e8edf2", ec="#55606b", lw=1.0, label="floor plate")
    # the walls and columns of the storey below this floor carry it
    below = None
    if storey is not None:
        idx = b.building.storeys.index(storey)
        below = b.building.storeys[idx - 1] if idx > 0 else storey
    if below is not None:
        for w in below.walls:
            draw(w.footprint, fc="#6d7680", ec="#333", lw=0.4)
        for c in below.columns:
            draw(c.section, fc="#333", ec="#333", lw=0.4)
    ax.plot(*lv.mass_centre_m, "o", ms=9, mfc="#1f5fa8", mec="white", label="mass centre")
    if stick.stiffness_centres_m and i < len(stick.stiffness_centres_m):
        ax.plot(*stick.stiffness_centres_m[i], "D", ms=8, mfc="#b5432a", mec="white", label="stiffness centre")
    ax.set_aspect("equal")
    ax.set_xlabel("model x (m)")
    ax.set_ylabel("model y (m)")
    ax.grid(alpha=0.25)
    ax.legend(fontsize=8, loc="upper right")
    north = math.radians(stick.true_north_deg)
    x0, x1 = ax.get_xlim()
    y0, y1 = ax.get_ylim()
    L = 0.08 * max(x1 - x0, y1 - y0)
    cx, cy = x0 + 1.2 * L, y0 + 1.2 * L
    ax.annotate("N", xy=(cx - L * math.sin(north), cy + L * math.cos(north)), xytext=(cx, cy),
                arrowprops={"arrowstyle": "->", "lw": 1.2}, fontsize=9, ha="center")
    ax.set_title(f"Plan at {lv.name}: cores, walls and columns below, mass and stiffness centres", fontsize=10)
    return _svg(fig)


def _damper_plot(plt, b) -> str | None:
    adv = b.results.get("damping_advice")
    curve = getattr(adv, "curve", None) if adv is not None else None
    if not curve:
        return None
    fig, ax = plt.subplots(figsize=(7, 4))
    xs = [p[0] * 100 for p in curve.points]
    ys = [p[1] for p in curve.points]
    ax.plot(xs, ys, color="#1f5fa8", label="peak from the response model")
    ax.axhline(curve.limit_mg, color="#b5432a", ls="--", lw=1, label=f"limit {curve.limit_mg:.3g} mg")
    if getattr(curve, "proposed_added_damping", None) is not None:
        ax.axvline(curve.proposed_added_damping * 100, color="#555", ls=":", lw=1, label="proposed damper")
    ax.set_xlabel("added damping (% of critical)")
    ax.set_ylabel("peak acceleration (mg)")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, loc="upper right")
    ax.set_title(f"Peak acceleration against added damping: {curve.label}", fontsize=9)
    return _svg(fig)


def _checks_table(checks) -> str:
    rows = []
    for c in checks:
        rows.append(
            f'<tr class="{"" if c.passes else "fail"}"><td>{_e(c.criterion)}</td><td>{_e(c.method)}</td>'
            f'<td class="n">{c.value:.4g}</td><td class="n">{c.limit:.4g}</td><td>{_e(c.unit)}</td>'
            f'<td class="n">{_fmt(c.ratio)}</td><td>{("passes" if c.passes else "FLAGGED") if c.valid else ("within limit, method out of range" if c.passes else "above limit, method out of range")}</td>'
            f'<td>{_fmt(c.return_period_yr, 0)}</td><td>{_fmt(c.direction_deg, 0)}</td><td>{_e(c.floor or "-")}</td>'
            f'<td class="note">{_e(c.note)}</td></tr>'
        )
    return ("<table><tr><th>criterion</th><th>method</th><th>value</th><th>limit</th><th>unit</th><th>ratio</th>"
            "<th>result</th><th>return period (yr)</th><th>wind from (deg)</th><th>floor</th><th>notes</th></tr>"
            + "".join(rows) + "</table>")


def _modes_table(b) -> str:
    modal = b.results.get("modes")
    if modal is None:
        return "<p>No modal results (see missing results below).</p>"
    rows = "".join(
        f"<tr><td class='n'>{m.index}</td><td class='n'>{m.period_s:.3f}</td><td class='n'>{m.frequency_hz:.4f}</td>"
        f"<td>{_e(m.kind)}</td><td class='n'>{100 * m.participation.get('x', 0):.1f}</td>"
        f"<td class='n'>{100 * m.participation.get('y', 0):.1f}</td>"
        f"<td class='n'>{100 * m.participation.get('twist', 0):.1f}</td>"
        f"<td class='n'>{m.generalized_mass_kg / 1000:,.0f}</td></tr>"
        for m in modal.modes
    )
    emp = b.results.get("empirical_periods")
    emp_html = ""
    if emp is not None:
        items = getattr(emp, "periods", emp)
        emp_html = "<p>Empirical periods (plausibility band, not design values):</p><table><tr><th>method</th>" \
                   "<th>period (s)</th><th>within its validity range</th><th>source</th><th>note</th></tr>" + "".join(
            f"<tr><td>{_e(e.method)}</td><td class='n'>{_fmt(e.period_s, 3)}</td><td>{'yes' if e.valid else 'no'}</td>"
            f"<td>{_e(e.source)}</td><td class='note'>{_e(e.note)}</td></tr>" for e in items) + "</table>"
    extra = ""
    if getattr(modal, "rayleigh_period_s", None):
        extra = "<p class='note'>Rayleigh check (static sway under floor weights applied laterally): " + ", ".join(
            f"{k}: {v:.3f} s" for k, v in modal.rayleigh_period_s.items()) + \
            f". P-Delta {'included' if modal.p_delta else 'not included'}: T1 {modal.t1_without_p_delta_s:.3f} s " \
            f"without, {modal.t1_with_p_delta_s:.3f} s with.</p>"
    return ("<table><tr><th>mode</th><th>period (s)</th><th>frequency (Hz)</th><th>kind</th><th>x mass %</th>"
            "<th>y mass %</th><th>twist %</th><th>generalized mass (t)</th></tr>" + rows + "</table>" + extra + emp_html)


def _damper_html(b) -> str:
    adv = b.results.get("damping_advice")
    if adv is None or not getattr(adv, "needed", True):
        return ""
    text = getattr(adv, "explanation", "") or ""
    lines = getattr(adv, "summary_lines", ()) or ()
    parts = ["<h2>Damping and damper proposal</h2>"]
    if text:
        parts.append(f"<p>{_e(text)}</p>")
    if lines:
        parts.append("<ul>" + "".join(f"<li>{_e(x)}</li>" for x in lines) + "</ul>")
    return "".join(parts)


def render_report(run, *, when: datetime | None = None) -> str:
    """The whole report as one HTML string."""
    plt = _plots_available()
    when = when or datetime.now(timezone.utc)
    tk = run.takeoff
    out = [
        "<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>",
        f"<title>swayscreen report: {_e(tk.source_path.split('/')[-1])}</title><style>{_CSS}</style></head><body><main>",
        f"<h1>Wind sway screening: {_e(tk.source_path.split('/')[-1])}</h1>",
        f"<p class='sub'>swayscreen {__version__}, {when:%Y-%m-%d %H:%M} UTC, settings {_e(run.settings.source)} "
        f"(digest {run.settings.digest()}), schema {tk.schema}, unit {tk.length_unit}</p>",
        f"<div class='caution'>{_e(CAUTION)}</div>",
    ]
    for b in run.buildings:
        st = b.assessment.status
        stick = b.derived.stick
        modal = b.results.get("modes")
        gov = b.assessment.governing
        out.append(f"<h2>{_e(b.building.name or b.building.global_id)} &mdash; "
                   f"<span class='status s-{st}'>{ {'pass': 'PASSES', 'flagged': 'FLAGGED', 'incomplete': 'NOT CLEARED'}[st]}</span></h2>")
        cards = []
        if stick is not None:
            cards.append(("height above base", f"{stick.height_m:.1f} m"))
            cards.append(("sway mass", f"{stick.total_mass_kg / 1e6:,.1f} kt"))
        if modal is not None:
            for m in modal.modes[:3]:
                cards.append((f"T{m.index} ({m.kind})", f"{m.period_s:.2f} s"))
        for rp in (1.0, 10.0):
            cands = [c for c in b.assessment.checks if c.unit == "mg" and c.return_period_yr == rp]
            valid = [c for c in cands if c.valid] or cands
            if valid:
                w = max(valid, key=lambda c: c.ratio)
                cards.append((f"{rp:g}-year peak, {w.method}", f"{w.value:.1f} mg / limit {w.limit:.1f}"))
        if gov is not None:
            cards.append((f"governing: {gov.criterion} ({gov.method})",
                          f"{gov.value:.3g} {'' if gov.unit == '-' else gov.unit} vs {gov.limit:.3g} "
                          f"(ratio {gov.ratio:.2f})"))
        out.append("<div class='cards'>" + "".join(
            f"<div class='card'><div class='v'>{_e(v)}</div><div class='l'>{_e(k)}</div></div>" for k, v in cards)
            + "</div>")
        for r in b.assessment.reasons:
            out.append(f"<p class='note'>{_e(r)}</p>")
        out.append("<h2>Checks</h2>" + (_checks_table(b.assessment.checks) if b.assessment.checks
                                         else "<p>No checks could be computed.</p>"))
        out.append(_damper_html(b))
        out.append("<h2>Natural periods</h2>" + _modes_table(b))
        out.append("<h2>Plots</h2>")
        for maker in (_mode_plot, _comfort_plot, _damper_plot, _profile_plot, _plan_plot):
            with warnings.catch_warnings():
                # SVG keeps text as text (svg.fonttype none): the browser draws glyphs such as CJK
                # storey names that matplotlib's bundled font lacks, so its warning is moot here.
                warnings.filterwarnings("ignore", message=r"Glyph .* missing from font")
                svg = maker(plt, b)
            if svg:
                out.append(svg)
        out.append("<h2>Assumptions and warnings</h2>")
        items = list(b.derived.materials_used)
        if items:
            out.append("<p>Materials used:</p><ul>" + "".join(f"<li>{_e(x)}</li>" for x in items) + "</ul>")
        warns = list(b.building.warnings) + list(b.derived.warnings) + list(b.skipped) + \
            [f"{f.plugin}: {f.message}" for f in b.failures]
        if b.derived.missing:
            out.append("<p>Missing results:</p><ul>" + "".join(f"<li>{_e(x)}</li>" for x in b.derived.missing) + "</ul>")
        if warns:
            out.append("<p>Warnings from the takeoff and the estimates:</p><ul>"
                       + "".join(f"<li>{_e(w)}</li>" for w in warns) + "</ul>")
    out.append("<h2>Settings used</h2><table><tr><th>section</th><th>key</th><th>value</th></tr>")
    for sec, vals in run.settings.to_dict().items():
        for k, v in vals.items():
            out.append(f"<tr><td>{_e(sec)}</td><td>{_e(k)}</td><td>{_e(v)}</td></tr>")
    out.append("</table>")
    if tk.warnings:
        out.append("<p>File warnings:</p><ul>" + "".join(f"<li>{_e(w)}</li>" for w in tk.warnings) + "</ul>")
    out.append(f"<div class='caution'>{_e(CAUTION)}</div></main></body></html>")
    return "\n".join(out)
