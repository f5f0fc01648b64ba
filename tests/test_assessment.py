"""Assessment rules (the project's own contract, documented in pipeline/assessment.py)."""
from __future__ import annotations

from swayscreen.pipeline.assessment import assess
from swayscreen.pipeline.plugin_api import Check


def chk(value, limit, unit="mg"):
    return Check("10-year peak acceleration (office)", "m", value, limit, unit, value <= limit)


def test_flagged_when_any_check_fails_and_governing_is_worst_ratio():
    a = assess({"comfort_checks": (chk(10, 25), chk(30, 25)), "drift_checks": (chk(0.003, 0.002, "-"),)},
               height_m=150, min_wind_height_m=30)
    assert a.status == "flagged"
    assert a.governing.value == 0.003  # drift ratio 1.5 beats the acceleration ratio 1.2
    assert len(a.flagged) == 2


def test_pass_needs_checks():
    assert assess({}, height_m=150, min_wind_height_m=30).status == "incomplete"
    assert assess({"comfort_checks": (chk(10, 25),)}, height_m=150, min_wind_height_m=30).status == "pass"


def test_failed_estimator_never_passes_silently():
    a = assess({"comfort_checks": (chk(10, 25),)}, height_m=150, min_wind_height_m=30, failed=("drift",))
    assert a.status == "incomplete" and "drift" in a.reasons[-1]


def test_low_building_is_not_wind_sensitive():
    # common practice: below 30 m (settings [levels] min_wind_height_m) comfort screening is not needed
    a = assess({"comfort_checks": (chk(30, 25),)}, height_m=12, min_wind_height_m=30)
    assert a.status == "pass" and "not wind-sensitive" in a.reasons[0]


def test_out_of_range_estimates_cannot_clear_or_govern_alone():
    valid_ok = chk(10, 25)
    extrapolated = Check("10-year peak acceleration (office)", "NBCC", 60, 25, "mg", False, valid=False)
    a = assess({"comfort_checks": (valid_ok, extrapolated)}, height_m=150, min_wind_height_m=30)
    assert a.status == "incomplete" and "wind-tunnel" in a.reasons[-1]
    a = assess({"comfort_checks": (chk(30, 25), extrapolated)}, height_m=150, min_wind_height_m=30)
    assert a.status == "flagged" and a.governing.value == 30  # the valid failing check governs
