"""Exceptions raised at the stage boundaries.

A :class:`InputError` is a user mistake (bad file, bad settings): the CLI prints its
one-line message and exits with code 2, never a traceback.
"""
from __future__ import annotations

__all__ = ["InputError", "SettingsError", "PluginError", "EXIT_PASS", "EXIT_FLAGGED", "EXIT_INPUT"]

EXIT_PASS = 0
EXIT_FLAGGED = 1
EXIT_INPUT = 2


class InputError(Exception):
    """Unusable input: the message names the file or element and what is wrong."""


class SettingsError(InputError):
    """A settings file with unknown keys, wrong types or out-of-range values."""


class PluginError(Exception):
    """A plugin that cannot be loaded or ordered (names the plugin)."""
