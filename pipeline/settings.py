"""Settings: TOML sections, each a frozen dataclass whose fields say their unit and source.

A section is declared as a dataclass whose fields are made with :func:`setting`::

    @dataclass(frozen=True)
    class DriftSettings:
        limit_ratio: float = setting(500.0, unit="-", minimum=1,
            source="common practice", doc="overall drift limit H/limit_ratio")

The core sections (materials, loads, stiffness, levels) live in :mod:`.core_settings`;
each plugin brings its own section (``Plugin.settings_type``). :func:`load_settings`
reads a TOML file, rejects unknown sections and keys and wrong types or ranges
(:class:`~swayscreen.pipeline.errors.SettingsError`, exit 2), and fills defaults.
:func:`template` prints the commented default file for ``swayscreen settings``.
"""
from __future__ import annotations

import dataclasses
import hashlib
import json
import math
import sys
import types
import typing
from collections.abc import Mapping
from pathlib import Path
from typing import Any

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

from .errors import SettingsError

__all__ = ["setting", "Settings", "load_settings", "template", "section_to_dict"]


def setting(
    default: Any,
    *,
    source: str,
    doc: str,
    unit: str = "",
    minimum: float | None = None,
    maximum: float | None = None,
    choices: tuple[str, ...] | None = None,
) -> Any:
    """A dataclass field carrying its unit, source, documentation and valid range."""
    meta = {"source": source, "doc": doc, "unit": unit, "minimum": minimum, "maximum": maximum, "choices": choices}
    if isinstance(default, (dict, list)):
        frozen = dict(default) if isinstance(default, dict) else list(default)
        return dataclasses.field(default_factory=lambda: type(frozen)(frozen), metadata=meta)
    return dataclasses.field(default=default, metadata=meta)


class Settings(Mapping[str, Any]):
    """Read-only mapping of section name -> section dataclass instance."""

    def __init__(self, sections: Mapping[str, Any], source: str = "defaults") -> None:
        self._sections = dict(sections)
        self.source = source

    def __getitem__(self, key: str) -> Any:
        return self._sections[key]

    def __iter__(self):
        return iter(self._sections)

    def __len__(self) -> int:
        return len(self._sections)

    def to_dict(self) -> dict[str, dict[str, Any]]:
        return {name: section_to_dict(sec) for name, sec in sorted(self._sections.items())}

    def digest(self) -> str:
        """SHA-256 (first 16 hex digits) of the effective settings, for write-back and history."""
        text = json.dumps(self.to_dict(), sort_keys=True, default=str)
        return hashlib.sha256(text.encode()).hexdigest()[:16]

    def replace(self, section: str, **changes: Any) -> "Settings":
        """A copy with some fields of one section changed (used by tests and option studies)."""
        new = dict(self._sections)
        new[section] = dataclasses.replace(new[section], **changes)
        return Settings(new, self.source)


def section_to_dict(sec: Any) -> dict[str, Any]:
    return {f.name: getattr(sec, f.name) for f in dataclasses.fields(sec)}


def _type_name(tp: Any) -> str:
    return getattr(tp, "__name__", str(tp))


def _check_value(section: str, fld: dataclasses.Field, value: Any, hints: dict[str, Any]) -> Any:
    where = f"[{section}] {fld.name}"
    tp = hints[fld.name]
    origin = typing.get_origin(tp)
    meta = fld.metadata

    def number(v: Any, what: str) -> float:
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            raise SettingsError(f"settings {where}: expected a number for {what}, got {v!r}")
        v = float(v)
        if not math.isfinite(v):
            raise SettingsError(f"settings {where}: {what} must be finite, got {v!r}")
        lo, hi = meta.get("minimum"), meta.get("maximum")
        if lo is not None and v < lo:
            raise SettingsError(f"settings {where}: {what} = {v:g} is below the minimum {lo:g}")
        if hi is not None and v > hi:
            raise SettingsError(f"settings {where}: {what} = {v:g} is above the maximum {hi:g}")
        return v

    if tp is float:
        return number(value, "the value")
    if tp is int:
        if isinstance(value, bool) or not isinstance(value, int):
            raise SettingsError(f"settings {where}: expected an integer, got {value!r}")
        number(value, "the value")
        return value
    if tp is bool:
        if not isinstance(value, bool):
            raise SettingsError(f"settings {where}: expected true or false, got {value!r}")
        return value
    if tp is str:
        if not isinstance(value, str):
            raise SettingsError(f"settings {where}: expected a string, got {value!r}")
        choices = meta.get("choices")
        if choices and value not in choices:
            raise SettingsError(f"settings {where}: {value!r} is not one of {', '.join(choices)}")
        return value
    if origin in (types.UnionType, typing.Union):  # "str | None" style optional
        args = [a for a in typing.get_args(tp) if a is not type(None)]
        if len(args) == 1:
            sub = dataclasses.field(metadata=meta)
            sub.name = fld.name
            return _check_value(section, sub, value, {fld.name: args[0]})
    if origin is list:
        (item,) = typing.get_args(tp)
        if not isinstance(value, list):
            raise SettingsError(f"settings {where}: expected a list, got {value!r}")
        if item is float:
            return [number(v, "each item") for v in value]
        if item is str:
            if not all(isinstance(v, str) for v in value):
                raise SettingsError(f"settings {where}: expected a list of strings")
            return list(value)
    if origin is dict:
        _, item = typing.get_args(tp)
        if not isinstance(value, dict):
            raise SettingsError(f"settings {where}: expected a table, got {value!r}")
        default = fld.default_factory() if fld.default_factory is not dataclasses.MISSING else {}
        out = dict(default)
        for k, v in value.items():
            if default and k not in default:
                raise SettingsError(
                    f"settings {where}: unknown key {k!r} (known: {', '.join(sorted(default))})"
                )
            out[k] = number(v, k) if item is float else v
        return out
    raise SettingsError(f"settings {where}: unsupported setting type {_type_name(tp)}")  # pragma: no cover


def build_section(name: str, cls: type, raw: Mapping[str, Any]) -> Any:
    """Validate one TOML table against its dataclass and return the instance."""
    hints = typing.get_type_hints(cls)
    fields = {f.name: f for f in dataclasses.fields(cls)}
    unknown = sorted(set(raw) - set(fields))
    if unknown:
        raise SettingsError(
            f"settings [{name}]: unknown key(s) {', '.join(unknown)} (known: {', '.join(sorted(fields))})"
        )
    values = {k: _check_value(name, fields[k], v, hints) for k, v in raw.items()}
    return cls(**values)


def load_settings(path: str | Path | None, sections: Mapping[str, type]) -> Settings:
    """Read a TOML settings file (or none: all defaults) against the declared sections."""
    raw: dict[str, Any] = {}
    if path is not None:
        p = Path(path)
        try:
            raw = tomllib.loads(p.read_text(encoding="utf-8"))
        except FileNotFoundError:
            raise SettingsError(f"{p}: settings file not found") from None
        except (OSError, UnicodeDecodeError) as exc:
            raise SettingsError(f"{p}: cannot read settings file ({exc})") from None
        except tomllib.TOMLDecodeError as exc:
            raise SettingsError(f"{p}: not valid TOML ({exc})") from None
    unknown = sorted(set(raw) - set(sections))
    if unknown:
        raise SettingsError(
            f"settings: unknown section(s) [{'], ['.join(unknown)}] (known: {', '.join(sorted(sections))})"
        )
    built = {}
    for name, cls in sections.items():
        table = raw.get(name, {})
        if not isinstance(table, dict):
            raise SettingsError(f"settings: [{name}] must be a table")
        built[name] = build_section(name, cls, table)
    return Settings(built, str(path) if path else "defaults")


def _toml_value(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, float):
        return repr(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{k} = {_toml_value(x)}" for k, x in v.items()) + " }"
    if v is None:
        return '""'
    return str(v)


def template(sections: Mapping[str, type]) -> str:
    """The commented default settings file: every key with its unit, meaning and source."""
    lines = [
        "# swayscreen settings (TOML). Every value below is the default; delete what you do not change.",
        "# Each key names its unit and where the default comes from. A screening estimate, not a design:",
        "# confirm results with a licensed structural engineer under local codes.",
        "",
    ]
    for name, cls in sections.items():
        doc = (cls.__doc__ or "").strip().splitlines()[0] if cls.__doc__ else ""
        lines.append(f"[{name}]")
        if doc:
            lines.append(f"# {doc}")
        inst = cls()
        for f in dataclasses.fields(cls):
            m = f.metadata
            unit = f" [{m['unit']}]" if m.get("unit") else ""
            lines.append(f"# {m.get('doc', '')}{unit}. Source: {m.get('source', 'unspecified')}")
            val = getattr(inst, f.name)
            if val is None:
                lines.append(f"# {f.name} =   (not set)")
            else:
                lines.append(f"{f.name} = {_toml_value(val)}")
        lines.append("")
    return "\n".join(lines)
