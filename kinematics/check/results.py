"""What a route check answers: :class:`RouteCheck` with its :class:`Violation` and
:class:`DoorPass` entries, and their ``check --json`` objects.

Messages count waypoints from 1 as the window and the rendered picture do ("waypoint 3" is the
route's third); ``segment`` fields and the segment numbers in messages are 0-based indices
into the plan's segments, as in ``plan --json``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray
from shapely.geometry.base import BaseGeometry

from kinematics.check.sweep import union_parts
from kinematics.motion.segments import Segment


@dataclass(frozen=True)
class Violation:
    """Something on the route that is in the way or cannot be driven.

    Attributes
    ----------
    kind : {"collision", "clearance", "turn_radius", "infeasible", "waypoint_blocked", "jackknife"}
    segment : int or None
        Index of the segment where it starts.
    station_m : float
        Distance along the route where it starts, metres.
    x, y : float
        Where it starts, plan frame, metres.
    amount_m : float
        Overlap depth, missing clearance or missing radius, metres (the worst of the stretch).
    message : str
    solid : str
        Name of the wall or obstacle (empty where none is involved).
    body : str
        Which body of a train (``"trailer 2 (linen cart)"``); empty for a lone chassis.
    hitch_deg : float or None
        ``jackknife``: the largest hitch angle reached, degrees.
    """

    kind: str
    segment: int | None
    station_m: float
    x: float
    y: float
    amount_m: float
    message: str
    solid: str = ""
    body: str = ""
    hitch_deg: float | None = None

    def to_dict(self) -> dict:
        d = {"kind": self.kind, "segment": self.segment, "station_m": self.station_m,
             "x": self.x, "y": self.y, "amount_m": self.amount_m, "message": self.message}
        if self.solid:
            d["solid"] = self.solid
        if self.body:
            d["body"] = self.body
        if self.hitch_deg is not None:
            d["hitch_deg"] = self.hitch_deg
        return d


@dataclass(frozen=True)
class DoorPass:
    """A door the swept footprint passes through, with its least clearance near the door.

    ``segment`` and ``station_m`` are where the chassis reference point crosses the door line
    (where it does not cross, where it comes nearest); ``min_clearance_station_m`` is the
    station of the least clearance inside the door's box (``None`` with no solid near).
    """

    label: str
    min_clearance_m: float | None
    door: int
    segment: int
    station_m: float
    width_m: float
    min_clearance_station_m: float | None = None

    def to_dict(self) -> dict:
        return {"label": self.label, "min_clearance_m": self.min_clearance_m,
                "door": self.door, "segment": self.segment, "station_m": self.station_m,
                "width_m": self.width_m,
                "min_clearance_station_m": self.min_clearance_station_m}


@dataclass
class RouteCheck:
    """The swept-footprint check of one route.

    ``min_clearance_m`` is ``None`` only when the floor plan has no solids at all.
    ``pieces`` holds one conservative swept region per segment; ``swept`` is their union.
    """

    name: str
    clear: bool
    min_clearance_m: float | None
    min_clearance_at: dict | None
    violations: list[Violation]
    doors: list[DoorPass]
    tolerance_m: float
    margin_m: float
    segments: tuple[Segment, ...] = ()
    sizing: dict | None = None
    _parts: tuple[Any, ...] = field(default=(), repr=False)
    _swept: BaseGeometry | None = field(default=None, repr=False)
    #: A train's trace, trailer chunks and per-body clearances
    #: (:class:`kinematics.check.train.TrainResult`); ``None`` for a lone chassis.
    train: Any = field(default=None, repr=False)
    #: The fleet member that drives the route (empty where not given).
    chassis_name: str = ""

    @property
    def pieces(self) -> tuple[BaseGeometry, ...]:
        """One swept region per segment (each made on first use and kept with the segment's
        cached result)."""
        return tuple(p.union for p in self._parts)

    @property
    def piece_parts(self) -> tuple[NDArray[np.object_], ...]:
        """Per segment, the polygons whose union is its swept piece (no union made): what a
        view filling them with a non-zero winding rule needs."""
        return tuple(p.parts for p in self._parts)

    @property
    def swept(self) -> BaseGeometry | None:
        """The union of the swept pieces (computed on first use)."""
        if self._swept is None and self._parts:
            self._swept = union_parts(np.array(self.pieces, dtype=object))
        return self._swept

    def to_dict(self) -> dict:
        """The contract's ``check --json`` route object, plus location, tolerance, sizing."""
        d: dict[str, Any] = {
            "name": self.name,
            "clear": self.clear,
            "min_clearance_m": self.min_clearance_m,
            "violations": [v.to_dict() for v in self.violations],
            "doors": [p.to_dict() for p in self.doors],
            "min_clearance_at": self.min_clearance_at,
            "margin_m": self.margin_m,
            "tolerance_m": self.tolerance_m,
        }
        if self.sizing is not None:
            d["sizing"] = self.sizing
        if self.chassis_name:
            d["chassis"] = self.chassis_name
        if self.train is not None:
            d["bodies"] = self.train.bodies
        return d
