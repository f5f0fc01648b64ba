"""Assessment: pass or flag each criterion, the governing case, and the scheme status.

Collects every :class:`~swayscreen.pipeline.plugin_api.Check` from results whose name
ends in ``_checks``. Status:

* ``"pass"``: every check passes (or the building is below the wind-sensitivity height);
* ``"flagged"``: at least one check fails whose method is used within its validity range;
* ``"incomplete"``: the building is wind-sensitive but no comfort or drift check could be
  computed (for example no lateral system could be read), or an estimator failed; treated
  as flagged by the CLI, because a scheme cannot be cleared on missing results; also when
  the only failing checks come from methods used outside their validity range (their values
  are extrapolations: a wind-tunnel study is needed to clear or confirm them).

The governing check is the worst check whose method is within its range (the worst overall
only when no such check exists).
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from .plugin_api import Check

__all__ = ["Assessment", "assess"]


@dataclass(frozen=True)
class Assessment:
    """Attributes:
    status: "pass", "flagged" or "incomplete".
    checks: all checks, in plugin order.
    governing: the failing check with the largest value/limit ratio, else the passing
        check closest to its limit (None when there are no checks).
    reasons: plain sentences explaining the status (not wind-sensitive, missing results).
    """

    status: str
    checks: tuple[Check, ...]
    governing: Check | None
    reasons: tuple[str, ...] = ()

    @property
    def flagged(self) -> tuple[Check, ...]:
        return tuple(c for c in self.checks if not c.passes)


def assess(
    results: Mapping[str, Any],
    *,
    height_m: float | None,
    min_wind_height_m: float,
    missing: tuple[str, ...] = (),
    failed: tuple[str, ...] = (),
) -> Assessment:
    """Status from the checks; ``failed`` names estimators that raised (never a silent pass)."""
    checks: list[Check] = []
    for name, value in results.items():
        if name.endswith("_checks") and value:
            checks.extend(c for c in value if isinstance(c, Check))
    reasons = list(missing)
    valid_fail = [c for c in checks if c.valid and not c.passes]
    invalid_fail = [c for c in checks if not c.valid and not c.passes]
    pool = valid_fail or [c for c in checks if c.valid] or checks
    governing = max(pool, key=lambda c: c.ratio) if pool else None
    if height_m is not None and height_m < min_wind_height_m:
        reasons.insert(
            0,
            f"height {height_m:.1f} m is below {min_wind_height_m:.0f} m: not wind-sensitive for comfort "
            "(checks shown for information only)",
        )
        return Assessment("pass", tuple(checks), governing, tuple(reasons))
    if invalid_fail:
        names = "; ".join(sorted({f"{c.criterion} ({c.method}) {c.value:.3g} {c.unit} vs {c.limit:.3g}"
                                  for c in invalid_fail}))
        reasons.append("outside their methods' validity range and above the limit (extrapolated; "
                       f"a wind-tunnel study is needed to confirm or clear them): {names}")
    if valid_fail:
        return Assessment("flagged", tuple(checks), governing, tuple(reasons))
    if invalid_fail:
        return Assessment("incomplete", tuple(checks), governing, tuple(reasons))
    if not checks:
        reasons.append("no comfort or drift check could be computed; the scheme cannot be cleared")
        return Assessment("incomplete", (), None, tuple(reasons))
    if failed:
        reasons.append(f"estimator(s) {', '.join(failed)} failed; the scheme cannot be cleared on partial results")
        return Assessment("incomplete", tuple(checks), governing, tuple(reasons))
    return Assessment("pass", tuple(checks), governing, tuple(reasons))
