"""Implementations of the CLI commands (argument parsing lives in :mod:`.cli`)."""
from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

from .errors import EXIT_FLAGGED, EXIT_PASS

__all__ = ["cmd_takeoff", "cmd_screen", "cmd_settings", "cmd_plugins", "cmd_demo", "cmd_batch"]


def _print_json(data: Any) -> None:
    json.dump(data, sys.stdout, indent=2, sort_keys=False, default=str)
    sys.stdout.write("\n")


def exit_code(status: str) -> int:
    return EXIT_PASS if status == "pass" else EXIT_FLAGGED


def cmd_settings(args) -> int:
    from .registry import discover, settings_sections
    from .settings import template

    sys.stdout.write(template(settings_sections(discover())))
    return EXIT_PASS


def cmd_plugins(args) -> int:
    from .registry import describe, discover, order

    rows = describe(order(discover()))
    if args.json:
        _print_json(rows)
        return EXIT_PASS
    from .console import table

    print(table(
        ["plugin", "version", "needs", "provides", "settings"],
        [[r["name"], r["version"], ", ".join(r["needs"] + [f"({w})" for w in r["wants"]]) or "-",
          ", ".join(r["provides"]), r["settings_section"] or "-"] for r in rows],
    ))
    print("(names in brackets are optional inputs, used when available)")
    return EXIT_PASS


def cmd_takeoff(args) -> int:
    from .console import takeoff_text
    from .deriving import derive_stick
    from .reading import read_model
    from .registry import discover, settings_sections
    from .settings import load_settings
    from .takeoff_json import takeoff_to_dict

    settings = load_settings(args.settings, settings_sections(discover()))
    takeoff = read_model(args.model, settings["levels"])
    derived = [derive_stick(b, settings, true_north_deg=takeoff.true_north_deg) for b in takeoff.buildings]
    requirements = None
    if args.requirements:
        from .requirements import check_requirements

        requirements = check_requirements(args.model)
    if args.json:
        from .summary import takeoff_json

        data = takeoff_json(takeoff_to_dict(takeoff), takeoff, derived)
        if requirements is not None:
            data["requirements"] = requirements.to_dict()
        _print_json(data)
    else:
        print(takeoff_text(takeoff, derived))
        if requirements is not None:
            print()
            print(requirements.text())
    if requirements is not None and not requirements.passed:
        return EXIT_FLAGGED
    return EXIT_PASS


def cmd_screen(args) -> int:
    from .console import screening_text
    from .errors import InputError
    from .screening import screen_file

    no_report = args.no_report
    if no_report and not args.out:
        raise InputError("--no-report applies to the files written with --out DIR; give --out as well")
    # With --out the reader's parse is kept for the write-back (released once it is written).
    run = screen_file(args.model, args.settings, keep_source=bool(args.out), freeze_gc=True)
    out_paths = None
    if args.out:
        from .outputs import write_outputs

        out_paths = write_outputs(run, Path(args.out), report=not no_report)
    history_lines: list[str] = []
    if args.history:
        from .history import append_history

        history_lines = append_history(Path(args.history), run)
    if args.json:
        from .summary import build_summary

        _print_json(build_summary(run))
    else:
        print(screening_text(run))
        for line in history_lines:
            print(line)
        if out_paths:
            print()
            print("Outputs written:")
            for label, p in out_paths.items():
                print(f"  {label:<16} {p}")
    return exit_code(run.status)


def cmd_demo(args) -> int:
    """Screen the bundled 60-storey sample on the windy example site and write every output."""
    from swayscreen.sample_models import sample_path

    from .console import screening_text
    from .outputs import write_outputs
    from .screening import screen_file

    model = sample_path("residential_tower_60.ifc")
    settings = sample_path("windy_site.toml")
    print(f"Demo: screening the bundled sample model {model.name} (an invented 60-storey residential tower)")
    print(f"with the example settings {settings.name} (an invented windy waterfront site).")
    print()
    run = screen_file(model, settings, keep_source=True, freeze_gc=True)
    out = Path(args.out).resolve()
    paths = write_outputs(run, out)
    print(screening_text(run))
    print()
    print(f"All outputs are in {out}:")
    for label, p in paths.items():
        print(f"  {label:<16} {p}")
    print(f"Demo finished: the scheme's status is {run.status} "
          "(`swayscreen screen` exits 1 for a flagged scheme; the demo exits 0 when it ran).")
    return EXIT_PASS


def cmd_batch(args) -> int:
    from .batch import run_batch

    return run_batch(args.models, settings_path=args.settings, out_dir=Path(args.out),
                     jobs=args.jobs, scheduler=args.scheduler)
