"""swayscreen core stages: read IFC, derive the stick model, run plugins, assess, write.

Data flows one way: IFC -> :mod:`takeoff` dataclasses (reading) -> :mod:`stick`
model (deriving) -> plugin results -> assessment -> write-back / report.
"""
from importlib.metadata import PackageNotFoundError, version as _version

try:
    __version__ = _version("swayscreen")
except PackageNotFoundError:  # pragma: no cover - running from an uninstalled tree
    __version__ = "0+unknown"

__all__ = ["__version__"]
