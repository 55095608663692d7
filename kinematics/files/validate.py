"""Small readers that check one value of a parsed JSON document and say where it went wrong.

Every failure raises :class:`kinematics.errors.ValidationError` with the file, the key path
(``routes[1].waypoints[3]``) and what was expected, so the edge can print one clear line.
"""

from __future__ import annotations

import json
import math
from collections.abc import Sequence
from typing import Any

import numpy as np

from kinematics.errors import ValidationError

_MISSING = object()

#: Largest plan coordinate read, metres (1000 km: any site grid's easting; far beyond a
#: building, yet far from where float geometry loses millimetres). Common practice.
MAX_COORD_M = 1.0e6
#: Largest chassis dimension or footprint coordinate read, metres. Common practice: the
#: largest yard and airport tugs are a few tens of metres long.
MAX_BODY_M = 100.0
#: Smallest chassis dimension read, metres (1 mm: nothing rolls on a smaller wheel; smaller
#: numbers, down to denormals, overflowed the wheel-rate algebra). Common practice.
MIN_BODY_M = 1.0e-3
#: Smallest steer limit read, degrees: below it a steered chassis could not turn inside a
#: building (wheelbase / tan(1 deg) is 57 wheelbases). Common practice.
MIN_STEER_DEG = 1.0
#: Largest extent of one route's waypoints, metres (a building route is far shorter; the
#: checks sample every route at centimetre steps). Common practice.
MAX_ROUTE_SPAN_M = 1.0e4
#: Most points of an outline that crosses itself which a reader repairs (the repair's work
#: grows fast with the crossings: 50 random points take 0.4 s, 200 half a minute).
MAX_REPAIR_POINTS = 64
#: Most waypoints one route holds (a building route has tens; the planner and the checks
#: work per corner, so the count bounds their work). Common practice.
MAX_WAYPOINTS = 1000
#: Longest planned route, metres: the checks sample a route every 2 cm, so the length
#: bounds their memory (50 km is far beyond any building). Common practice.
MAX_PLAN_LENGTH_M = 5.0e4


def too_spread(points: list[tuple[float, float]]) -> int | None:
    """Index of the point farthest from the first when ``points`` spread over more than
    :data:`MAX_ROUTE_SPAN_M` in x or y (``None`` when they do not): the waypoint to name."""
    if not points:
        return None
    xs, ys = [p[0] for p in points], [p[1] for p in points]
    if max(max(xs) - min(xs), max(ys) - min(ys)) <= MAX_ROUTE_SPAN_M:
        return None
    return max(range(len(points)),
               key=lambda i: max(abs(xs[i] - xs[0]), abs(ys[i] - ys[0])))


def unencodable(text: str) -> int | None:
    """Index of the first character of ``text`` that UTF-8 cannot encode (a lone surrogate,
    which a JSON ``\\udfff`` escape can produce), or ``None``."""
    try:
        text.encode("utf-8")
    except UnicodeEncodeError as exc:
        return exc.start
    return None


def join(place: str, key: str | int) -> str:
    """Key path ``place`` extended by a key or list index. A key that would not read as one
    in a dotted path (empty, or holding a dot, a bracket, a quote or a space) is written in
    brackets as a JSON string, so a refusal at a key ``""`` still names its place.

    >>> join("chassis", "track_m"), join("routes", 0), join("", ""), join("a", "b.c")
    ('chassis.track_m', 'routes[0]', '[""]', 'a["b.c"]')
    """
    if isinstance(key, int):
        return f"{place}[{key}]"
    if not key or any(c in key for c in '.[]"') or any(c.isspace() for c in key):
        return f"{place}[{json.dumps(key)}]"
    return f"{place}.{key}" if place else key


def _type_name(v: Any) -> str:
    if v is None:
        return "null"
    if isinstance(v, bool):
        return "true/false"
    if isinstance(v, (int, float)):
        return "a number"
    if isinstance(v, str):
        return "text"
    if isinstance(v, list):
        return "a list"
    if isinstance(v, dict):
        return "an object"
    return type(v).__name__


class Reader:
    """Checks values of one file's parsed JSON; every error names ``file`` and the key path."""

    def __init__(self, file: str) -> None:
        self.file = str(file)

    def fail(self, place: str, expected: str) -> ValidationError:
        return ValidationError(self.file, place, expected)

    def obj(self, value: Any, place: str) -> dict:
        if not isinstance(value, dict):
            raise self.fail(place or "top level", f"expected an object, got {_type_name(value)}")
        return value

    def get(self, d: dict, key: str, place: str, default: Any = _MISSING) -> Any:
        if key in d:
            return d[key]
        if default is _MISSING:
            raise self.fail(join(place, key), "missing; this key is required")
        return default

    def number(self, value: Any, place: str, *, positive: bool = False,
               non_negative: bool = False, minimum: float | None = None,
               maximum: float | None = None) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(place, f"expected a number, got {_type_name(value)}")
        v = float(value)
        if not math.isfinite(v):
            raise self.fail(place, "expected a finite number, got NaN or infinity")
        if positive and v <= 0:
            raise self.fail(place, f"expected a positive number, got {v:g}")
        if non_negative and v < 0:
            raise self.fail(place, f"expected zero or a positive number, got {v:g}")
        if minimum is not None and v < minimum:
            raise self.fail(place, f"expected at least {minimum:g}, got {v:g}")
        if maximum is not None and v > maximum:
            raise self.fail(place, f"expected at most {maximum:g}, got {v:g}")
        return v

    def extras(self, d: dict, known: set[str] | frozenset[str], place: str) -> dict:
        """The keys of ``d`` this version does not read (kept for a newer writer), refused if
        any number inside is not finite: it could never be written back as JSON."""

        def walk(v: Any, where: str) -> None:
            if isinstance(v, float) and not math.isfinite(v):
                raise self.fail(where, "expected a finite number, got NaN or infinity")
            if isinstance(v, str) and unencodable(v) is not None:
                self.text(v, where)
            if isinstance(v, dict):
                for k, x in v.items():
                    self.text(k, join(where, "<key>"))
                    walk(x, join(where, str(k)))
            elif isinstance(v, list):
                for i, x in enumerate(v):
                    walk(x, join(where, i))

        out = {k: v for k, v in d.items() if k not in known}
        for k, v in out.items():
            self.text(k, join(place, "<key>"))
            walk(v, join(place, k))
        return out

    def opt_number(self, d: dict, key: str, place: str, default: float | None = None,
                   **kw: Any) -> float | None:
        if key not in d or d[key] is None:
            return default
        return self.number(d[key], join(place, key), **kw)

    def text(self, value: Any, place: str) -> str:
        if not isinstance(value, str):
            raise self.fail(place, f"expected text, got {_type_name(value)}")
        bad = unencodable(value)
        if bad is not None:
            raise self.fail(place, f"expected text that can be written as UTF-8; character "
                                   f"{bad + 1} is a lone surrogate "
                                   f"(\\u{ord(value[bad]):04x})")
        return value

    def boolean(self, value: Any, place: str) -> bool:
        if not isinstance(value, bool):
            raise self.fail(place, f"expected true or false, got {_type_name(value)}")
        return value

    def lst(self, value: Any, place: str, min_len: int = 0) -> list:
        if not isinstance(value, list):
            raise self.fail(place, f"expected a list, got {_type_name(value)}")
        if len(value) < min_len:
            raise self.fail(place, f"expected at least {min_len} entries, got {len(value)}")
        return value

    def point(self, value: Any, place: str, limit_m: float = MAX_COORD_M
              ) -> tuple[float, float]:
        """A point ``[x, y]`` in metres, each coordinate within ``limit_m`` of zero."""
        if not isinstance(value, list) or len(value) != 2:
            raise self.fail(place, "expected a point [x, y] in metres")
        return (self.number(value[0], join(place, 0), minimum=-limit_m, maximum=limit_m),
                self.number(value[1], join(place, 1), minimum=-limit_m, maximum=limit_m))

    def points(self, value: Any, place: str, min_len: int, limit_m: float = MAX_COORD_M
               ) -> tuple[tuple[float, float], ...]:
        items = self.lst(value, place, min_len)
        return tuple(self.point(p, join(place, i), limit_m) for i, p in enumerate(items))

    def version(self, d: dict, key: str, supported: int) -> int:
        v = self.get(d, key, "")
        if isinstance(v, bool) or not isinstance(v, int):
            raise self.fail(key, f"expected the format version as a whole number, got {v!r}")
        if v > supported:
            raise self.fail(key, f"format version {v} is newer than this Swathe reads "
                                 f"(up to {supported}); update Swathe")
        if v < 1:
            raise self.fail(key, f"expected format version 1..{supported}, got {v}")
        return v


def point_lists(r: Reader, lists: Sequence[list], places: Sequence[str],
                limit_m: float = MAX_COORD_M) -> tuple[np.ndarray, np.ndarray, int | None]:
    """Read many point lists ``[[x, y], ...]`` at once (each already a list).

    Returns the coordinates of all of them in one ``(M, 2)`` float array, the offsets
    (``(K + 1,)``: list ``k`` is rows ``offsets[k]:offsets[k + 1]``) and ``None``; or, when a
    point is bad, the coordinates and offsets of the lists before the first bad one and the
    index of the list holding it. :meth:`Reader.point` of the bad point then raises exactly
    the message a point-by-point read gives (:func:`raise_bad_point`). The checks are the
    same as :meth:`Reader.point`'s, made over arrays: a quick look at types, then finite and
    within ``limit_m`` for all coordinates together.
    """
    counts = np.fromiter((len(v) for v in lists), dtype=np.int64, count=len(lists))
    offsets = np.zeros(len(lists) + 1, dtype=np.int64)
    np.cumsum(counts, out=offsets[1:])
    flat = [p for v in lists for p in v]
    good_shape = all(type(p) is list and len(p) == 2 for p in flat)
    arr = None
    if good_shape and {type(c) for p in flat for c in p} <= {int, float}:
        try:
            arr = np.array(flat, dtype=float).reshape(-1, 2)
        except OverflowError:  # a whole number too large for a float: read one by one
            arr = None
    if arr is not None:
        bad = ~(np.isfinite(arr) & (np.abs(arr) <= limit_m)).all(axis=1)
        if not bad.any():
            return arr, offsets, None
        first = int(np.argmax(bad))
    else:
        first = None
        for k, v in enumerate(lists):
            for i, p in enumerate(v):
                try:
                    r.point(p, join(places[k], i), limit_m)
                except ValidationError:
                    first = int(offsets[k]) + i
                    break
            if first is not None:
                break
        if first is None:  # pragma: no cover - the quick look refused only what point refuses
            raise r.fail(places[0], "expected points [x, y] in metres")
    k = int(np.searchsorted(offsets, first, side="right") - 1)
    good = np.array(flat[:int(offsets[k])], dtype=float).reshape(-1, 2)
    return good, offsets[:k + 1], k


def raise_bad_point(r: Reader, points: list, place: str, limit_m: float = MAX_COORD_M
                    ) -> None:
    """Raise the :meth:`Reader.point` error of the first bad point of ``points``."""
    for i, p in enumerate(points):
        r.point(p, join(place, i), limit_m)
    raise r.fail(place, "expected points [x, y] in metres")  # pragma: no cover
