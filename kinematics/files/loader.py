"""Pick the reader for a floor-plan file by its extension.

The readers (JSON in :mod:`~kinematics.files.floorplan`, DXF, SVG) depend on the model; this
small module depends on them, so the model never imports a reader.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from kinematics.files.floorplan import FloorPlan, floorplan_from_dict
from kinematics.files.jsonio import collector_held, read_json


def load_floorplan(path: str | Path, **import_options: Any) -> FloorPlan:
    """Read a floor plan: ``*.floor.json`` natively, ``*.dxf`` and ``*.svg`` by import.

    ``import_options`` go to the importer (``layers``, ``units``, ``wall_thickness_m`` for
    DXF; ``metres_per_unit`` for SVG).
    """
    p = Path(path)
    suffix = p.suffix.lower()
    # Each reader is imported when a file needs it (ezdxf and the XML parser are slow to load).
    if suffix == ".dxf":
        from kinematics.files.dxf_import import import_dxf

        return import_dxf(p, **import_options)
    if suffix == ".svg":
        from kinematics.files.svg_import import import_svg

        return import_svg(p, **import_options)
    with collector_held():
        return floorplan_from_dict(read_json(p), str(p), "", str(p))
