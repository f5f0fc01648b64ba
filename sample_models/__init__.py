"""Our own invented sample buildings (IFC files made by ``generate.py``), shipped with the package."""
from pathlib import Path

__all__ = ["SAMPLE_DIR", "sample_path"]

SAMPLE_DIR = Path(__file__).resolve().parent


def sample_path(name: str) -> Path:
    """Path of a bundled sample file, e.g. ``sample_path("office_tower_40.ifc")``."""
    return SAMPLE_DIR / name
