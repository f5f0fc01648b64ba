"""The ``swayscreen`` command line: a thin layer that parses arguments and calls plain functions.

Exit codes: 0 every check passes; 1 something is flagged (or a wind-sensitive scheme could
not be cleared); 2 unusable input, settings or plugins. A user mistake never prints a
traceback: set ``SWAYSCREEN_DEBUG=1`` to see one for an internal error.
"""
from __future__ import annotations

import os

# The stick model's matrices are small (3 freedoms per floor): a multi-threaded BLAS spends more
# time synchronising its threads than computing, and its timing swings with machine load
# (measured: modal analysis of a 160-storey tower 2.1 s with default threads, 0.06 s with one).
# Set before numpy is first imported; an explicit user setting wins.
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse  # noqa: E402
import sys  # noqa: E402

from . import __version__
from .errors import EXIT_INPUT, EXIT_PASS, InputError, PluginError

__all__ = ["main", "run", "build_parser"]

CAUTION = (
    "CAUTION: swayscreen gives a screening estimate, not a design. Results must be confirmed by a "
    "licensed structural engineer under local codes, and wind-sensitive buildings by a wind specialist."
)


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="swayscreen",
        description="Screen tall-building schemes in IFC models for wind sway, occupant comfort and drift.",
        epilog=CAUTION,
    )
    p.add_argument("--version", action="version", version=f"swayscreen {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True

    t = sub.add_parser("takeoff", help="print what was read from the model: storeys, slabs, walls, cores, masses")
    t.add_argument("model", help="IFC file")
    t.add_argument("--json", action="store_true", help="print JSON to stdout instead of tables")
    t.add_argument("--settings", metavar="FILE", help="settings TOML (see `swayscreen settings`)")
    t.add_argument("--requirements", action="store_true",
                   help="check the model against the bundled IDS file of what a full screening needs")

    s = sub.add_parser("screen", help="screen a model: periods, wind accelerations, comfort, drift, dampers")
    s.add_argument("model", help="IFC file")
    s.add_argument("--settings", metavar="FILE", help="settings TOML (see `swayscreen settings`)")
    s.add_argument("--json", action="store_true", help="print a JSON summary to stdout")
    s.add_argument("--out", metavar="DIR", help="write annotated IFC, report, summary and BCF to DIR")
    s.add_argument("--no-report", action="store_true",
                   help="with --out: write everything except the HTML report (annotated IFC, summary, BCF)")
    s.add_argument("--history", metavar="FILE", help="append key figures to FILE and show the change since the last run")

    sub.add_parser("settings", help="print the commented default settings file")

    pl = sub.add_parser("plugins", help="list installed estimator plugins")
    pl.add_argument("--json", action="store_true")

    d = sub.add_parser("demo", help="screen the bundled sample tower and write every output to a folder")
    d.add_argument("--out", metavar="DIR", default="swayscreen-demo", help="output folder (default: %(default)s)")

    b = sub.add_parser("batch", help="screen several schemes in parallel and rank them")
    b.add_argument("models", nargs="+", help="IFC files")
    b.add_argument("--settings", metavar="FILE")
    b.add_argument("--out", metavar="DIR", default="swayscreen-batch", help="output folder (default: %(default)s)")
    b.add_argument("--jobs", type=int, default=0, help="worker processes (default: all cores)")
    b.add_argument("--scheduler", metavar="ADDRESS",
                   help="send models to a Dask distributed scheduler instead (needs the 'cluster' extra)")
    return p


def run() -> None:
    """The ``swayscreen`` command: :func:`main`, then leave the process at once.

    Every output is closed (written atomically) before :func:`main` returns; what remains is
    the interpreter tearing down the parsed model and the scientific libraries, which takes a
    noticeable share of a short run on a large model and changes nothing. So the standard
    streams are flushed and the process exits with :func:`os._exit`.
    """
    code = main(keep_until_exit=True)
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # a closed pipe: nothing more can be said
            pass
    os._exit(code)


def main(argv: list[str] | None = None, *, keep_until_exit: bool = False) -> int:
    """Parse ``argv`` and run the command; returns the exit code (0 pass, 1 flagged, 2 input).

    ``keep_until_exit`` (used by :func:`run` only) leaves what the one-shot commands parked
    (the open model, the frozen takeoff) for the process exit instead of freeing it here.
    """
    for stream in (sys.stdout, sys.stderr):  # names from damaged files may not be encodable
        try:
            stream.reconfigure(errors="backslashreplace")
        except (AttributeError, ValueError, OSError):
            pass
    args = build_parser().parse_args(argv)
    try:
        from . import commands

        handler = getattr(commands, f"cmd_{args.command}")
        try:
            return int(handler(args))
        finally:
            if not keep_until_exit:  # callers in the same process get their memory back
                from .screening import end_one_shot

                end_one_shot()
    except (InputError, PluginError) as exc:
        print(f"swayscreen: error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("swayscreen: interrupted; no partial output was left", file=sys.stderr)
        return EXIT_INPUT
    except BrokenPipeError:
        return EXIT_PASS
    except Exception as exc:  # pragma: no cover - last line of defence for an unattended step
        if os.environ.get("SWAYSCREEN_DEBUG"):
            raise
        print(f"swayscreen: internal error: {type(exc).__name__}: {exc} "
              "(set SWAYSCREEN_DEBUG=1 for details and please report it)", file=sys.stderr)
        return EXIT_INPUT


if __name__ == "__main__":  # pragma: no cover
    run()
