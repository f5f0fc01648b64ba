"""Peak acceleration at the corners of the top occupied floor plate (translation plus twist).

Plugin ``corners``: needs ``modes`` and ``accel_en``, wants ``accel_nbcc``, provides
``accel_corners`` (a :class:`CornerResult`).

Each acceleration case carries the peak of its mode's generalized coordinate
(``details["modal_peak_m_s2"]``). The mode's plan acceleration at a point p of a rigid floor
is that peak times the modal plan displacement (ux - theta (py - oy), uy + theta (px - ox))
(sign convention of :mod:`swayscreen.pipeline.stick`), so a coupled lateral-torsional mode
gives the two lateral directions and the twist together. Cases of one method, return period
and direction (along- and across-wind, different modes) are combined as uncorrelated
resonant responses, square root of the sum of the squared magnitudes (common practice; the
methods sheet section 5). The points checked are the vertices of the convex hull of the top
occupied floor's plate; the governing point is the one with the largest resultant.
"""
from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.plugin_api import BasicPlugin, Context
from swayscreen.pipeline.stick import StickModel

from .wind_common import MG, AccelerationCase, AccelerationResult, level_plate, plan_points, point_displacement

__all__ = ["CornerCase", "CornerResult", "point_accelerations", "corner_accelerations", "PLUGIN"]


@dataclass(frozen=True)
class CornerCase:
    """Resultant peak acceleration at the plate corners for one method, return period and direction.

    Attributes:
        method: the acceleration method of the combined cases.
        return_period_yr: return period (yr).
        direction_deg: wind direction (from), degrees clockwise from true north.
        responses: the responses combined, e.g. ("along", "across").
        mode_indices: the modes used, in the order of ``responses``.
        floor: storey name of the floor checked (top occupied floor).
        level_index: its index.
        point_m: governing plate corner (model x, y; m).
        peak_mg: resultant peak at the governing corner (mg).
        centre_peak_mg: resultant peak at the plate centroid (mg).
        corner_peaks_mg: resultant peak at every hull vertex, in hull order (mg).
        points_m: the hull vertices.
        twist_peak_mrad_s2: peak twist acceleration of the floor, combined (milli-rad/s^2).
    """

    method: str
    return_period_yr: float
    direction_deg: float
    responses: tuple[str, ...]
    mode_indices: tuple[int, ...]
    floor: str
    level_index: int
    point_m: tuple[float, float]
    peak_mg: float
    centre_peak_mg: float
    corner_peaks_mg: tuple[float, ...]
    points_m: tuple[tuple[float, float], ...]
    twist_peak_mrad_s2: float

    @property
    def amplification(self) -> float:
        """Corner over centroid resultant (1 for pure translation)."""
        return self.peak_mg / self.centre_peak_mg if self.centre_peak_mg > 0 else float("inf")


@dataclass(frozen=True)
class CornerResult:
    """All corner cases."""

    cases: tuple[CornerCase, ...]

    def for_method(self, method: str, return_period_yr: float) -> tuple[CornerCase, ...]:
        return tuple(c for c in self.cases
                     if c.method == method and abs(c.return_period_yr - return_period_yr) < 1e-9)

    def governing(self, method: str, return_period_yr: float) -> CornerCase | None:
        cases = self.for_method(method, return_period_yr)
        return max(cases, key=lambda c: c.peak_mg) if cases else None


def point_accelerations(shape_row: np.ndarray, modal_peak_m_s2: float, points: np.ndarray,
                        origin: Sequence[float]) -> np.ndarray:
    """Peak plan acceleration vectors (k, 2) in m/s^2 at points of one floor for one mode.

    ``shape_row`` is the floor's (x m, y m, twist rad) modal displacement.
    """
    pts = np.atleast_2d(np.asarray(points, dtype=float))
    row = np.broadcast_to(np.asarray(shape_row, dtype=float), (pts.shape[0], 3))
    return modal_peak_m_s2 * point_displacement(row, pts, origin)


def _modes_by_index(modes: Iterable[Any]) -> dict[int, Any]:
    return {int(m.index): m for m in modes}


def corner_accelerations(stick: StickModel, modes: Sequence[Any],
                         results: Iterable[AccelerationResult]) -> CornerResult:
    """Combine the cases of each result per (return period, direction) at the top-floor plate corners."""
    by_index = _modes_by_index(modes)
    out: list[CornerCase] = []
    for res in results:
        groups: dict[tuple[float, float], list[AccelerationCase]] = {}
        for case in res.cases:
            if "modal_peak_m_s2" not in case.details:
                continue
            groups.setdefault((case.return_period_yr, case.direction_deg), []).append(case)
        for (rp, direction), cases in groups.items():
            level_index = cases[0].top_index
            level = stick.levels[level_index]
            plate = level_plate(level)
            pts = plan_points(plate)
            centre = np.array([[plate.centroid.x, plate.centroid.y]])
            sq_corner = np.zeros(len(pts))
            sq_centre = 0.0
            sq_twist = 0.0
            for case in cases:
                mode = by_index.get(case.mode_index)
                if mode is None:
                    raise InputError(f"corners: mode {case.mode_index} of {case.method} is not in the modal results")
                row = np.asarray(mode.shape, dtype=float)[level_index]
                q = float(case.details["modal_peak_m_s2"])
                a = point_accelerations(row, q, pts, stick.origin_m)
                sq_corner += np.sum(a * a, axis=1)
                ac = point_accelerations(row, q, centre, stick.origin_m)
                sq_centre += float(np.sum(ac * ac))
                sq_twist += (q * row[2]) ** 2
            corner = np.sqrt(sq_corner) / MG
            k = int(np.argmax(corner))
            out.append(CornerCase(
                res.method, rp, direction, tuple(c.response for c in cases), tuple(c.mode_index for c in cases),
                level.name, level_index, (float(pts[k, 0]), float(pts[k, 1])), float(corner[k]),
                math.sqrt(sq_centre) / MG, tuple(float(v) for v in corner),
                tuple((float(x), float(y)) for x, y in pts), 1000.0 * math.sqrt(sq_twist)))
    return CornerResult(tuple(out))


def _run(ctx: Context) -> dict[str, Any]:
    from .wind_en import _modes_of, _stick_of

    stick = _stick_of(ctx, "corners")
    results = [ctx.need("accel_en")]
    if "accel_nbcc" in ctx.results:
        results.append(ctx.results["accel_nbcc"])
    return {"accel_corners": corner_accelerations(stick, _modes_of(ctx), results)}


PLUGIN = BasicPlugin(
    name="corners",
    version="0.1.0",
    func=_run,
    needs=("modes", "accel_en"),
    wants=("accel_nbcc",),
    provides=("accel_corners",),
)
