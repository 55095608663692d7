"""Write ``test_room.dxf``: the test room drawn as an architect would, for the DXF importer.

Run from the repository root: ``python sample_floorplans/make_dxf.py``. The drawing is in
millimetres (``$INSUNITS`` 4) with layers WALLS (wall centrelines, open polylines), FIXTURES
(the bench, a block inserted once) and DOORS (a line across the opening and its label); a
door swing arc is drawn too, as plans usually show one, and the importer skips it.
``test_room_dxf.swathe.json`` reads it with
``{"file": "test_room.dxf", "layers": {...}, "units": "mm"}``.
"""

from __future__ import annotations

import sys
from pathlib import Path

import ezdxf

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from make_samples import test_room  # noqa: E402


def main() -> None:
    fp = test_room()
    doc = ezdxf.new("R2010", units=4)  # 4 = millimetres
    doc.layers.add("WALLS", color=7)
    doc.layers.add("FIXTURES", color=3)
    doc.layers.add("DOORS", color=1)
    msp = doc.modelspace()
    for w in fp.walls:
        msp.add_lwpolyline([(x * 1000, y * 1000) for x, y in w.points],
                           dxfattribs={"layer": "WALLS"})
    for ob in fp.obstacles:
        xs = [x for x, _ in ob.points]
        ys = [y for _, y in ob.points]
        x0, y0 = min(xs), min(ys)
        block = doc.blocks.new(ob.label.upper())
        block.add_lwpolyline([((x - x0) * 1000, (y - y0) * 1000) for x, y in ob.points],
                             close=True, dxfattribs={"layer": "0"})
        msp.add_blockref(block.name, (x0 * 1000, y0 * 1000), dxfattribs={"layer": "FIXTURES"})
    for d in fp.doors:
        a = (d.a[0] * 1000, d.a[1] * 1000)
        b = (d.b[0] * 1000, d.b[1] * 1000)
        msp.add_line(a, b, dxfattribs={"layer": "DOORS"})
        msp.add_arc(a, d.width_m * 1000, 0, 90, dxfattribs={"layer": "DOORS"})
        mid = ((a[0] + b[0]) / 2 + 150, (a[1] + b[1]) / 2)
        msp.add_text(d.label, height=100, dxfattribs={"layer": "DOORS", "insert": mid})
    doc.saveas(HERE / "test_room.dxf")


if __name__ == "__main__":
    main()
