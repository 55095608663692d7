"""The swept band is one scene primitive (app.scene.band_pieces): per segment, the polygons
whose union is what the segment sweeps, oriented alike, which the canvas keeps per segment and
the picture fills per route, both with a non-zero winding rule."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import shapely

from app import scene
from kinematics.analysis.results import compute_results, vehicle_of
from kinematics.check.sweep import swept_parts
from kinematics.files.project import load_project

SAMPLES = Path(__file__).resolve().parent.parent / "sample_floorplans"


def _union(pieces) -> shapely.Geometry:
    return shapely.union_all(np.concatenate([np.asarray(p, dtype=object) for p in pieces]))


def test_band_pieces_are_the_checks_swept_area_oriented_alike():
    # Source: shapely's union_all (the check's swept area is the union of its pieces) and
    # the non-zero winding rule (exteriors counter-clockwise, holes clockwise fill the union
    # once: Foley, van Dam et al., Computer Graphics, polygon filling).
    for name in ("demo", "clinic_train", "depot_ackermann_smooth"):
        project = load_project(SAMPLES / f"{name}.swathe.json")
        plans, checks, _errors = compute_results(project)
        for route, plan in plans.items():
            chk = checks[route]
            fp = vehicle_of(project, project.route(route)).footprint
            pieces = scene.band_pieces(fp, plan.segments, chk)
            assert len(pieces) == len(plan.segments)
            area = chk.swept.area
            diff = shapely.symmetric_difference(_union(pieces), chk.swept).area
            # Unions taken in another order differ by rounding only (~1e-7 m2 on ~10 m2).
            assert diff <= 1e-7 * max(area, 1.0), (name, route, diff)
            for piece in pieces:
                for poly in shapely.get_parts(piece):
                    assert shapely.is_ccw(poly.exterior)
                    assert not any(shapely.is_ccw(r) for r in poly.interiors)


def test_band_pieces_without_a_check_are_swept_now():
    # Source: kinematics.check.sweep.swept_parts, the same sweep the check runs.
    project = load_project(SAMPLES / "demo.swathe.json")
    plans, _checks, _errors = compute_results(project)
    route = next(iter(plans))
    segs = plans[route].segments
    fp = project.chassis.footprint
    pieces = scene.band_pieces(fp, segs)
    for seg, piece in zip(segs, pieces):
        want = shapely.union_all(np.asarray(swept_parts(fp, seg), dtype=object))
        assert shapely.symmetric_difference(shapely.union_all(piece), want).area <= 1e-12
    b = scene.band_bounds(pieces)
    assert b == tuple(float(v) for v in shapely.total_bounds(_union(pieces)))
    assert scene.band_bounds([]) is None


def test_forced_labels_of_a_small_picture_do_not_pile_up(monkeypatch):
    # Source: common practice (map labelling: a label that must show moves further out on a
    # leader rather than cover another). The report's plan picture of the demo is small for
    # its door and violation names; they used to be drawn over one another there.
    from app import painting, render
    from app.report import report_bytes

    placed = []
    orig = painting._Labels.place

    def spy(self, *args, **kwargs):
        r = orig(self, *args, **kwargs)
        if r is not None:
            placed.append((args[2], r))  # (painter, anchor, text, ...)
        return r

    monkeypatch.setattr(painting._Labels, "place", spy)
    render.ensure_app()
    project = load_project(SAMPLES / "demo.swathe.json")
    assert report_bytes(project, "png")[:4] == b"\x89PNG"
    texts = [t for t, _r in placed]
    assert any("sluice" in t for t in texts) and any("short of margin" in t for t in texts)
    for i, (ta, ra) in enumerate(placed):
        for tb, rb in placed[i + 1:]:
            assert not ra.intersects(rb), (ta, tb)
