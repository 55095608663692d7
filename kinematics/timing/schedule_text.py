"""The timed samples of a schedule as JSON and CSV text, written in vectorised chunks.

A near-limit schedule has 200,000 samples of 20-40 numbers each. Encoding each sample as a
Python dict through :func:`kinematics.files.jsonio.dumps` (``json`` with ``indent``, which is
the pure-Python encoder) took 20-50 s; holding every row at once took over 1 GB. Here the
text of one row is a ``%``-format template made once from the same encoder, and the numbers
of a block of rows are rounded together with numpy and filled in by the C formatter, so the
text is byte for byte what the row-at-a-time encoder writes, a block at a time.

Exact rounding (:func:`round9`): :func:`kinematics.files.jsonio.dumps` writes
``repr(round(v, 9))``. CPython's ``round(v, 9)`` is the double nearest to ``v`` correctly
rounded to 9 decimals (half to even on ``v``'s exact binary value; ``double_round`` in
CPython's ``Objects/floatobject.c``). With ``p = v * 1e9`` rounded once (error at most half
an ulp of ``p``, IEEE 754 section 4.3) and ``n = rint(p)``, ``n`` is that decimal's integer
unless the true ``v * 1e9`` can sit on the other side of a half-integer, which needs the
fraction ``|p - n|`` within an ulp of 0.5; ``n / 1e9`` is then the nearest double to
``n * 10**-9`` because IEEE division is correctly rounded and ``1e9`` and ``n`` (below
2**53) are exact. The few values near a tie, and every value of magnitude 1e6 or more, are
rounded by Python itself.
"""

from __future__ import annotations

import json
import math
from collections.abc import Iterator

import numpy as np
from numpy.typing import NDArray

from kinematics.motion.arrays import unique_sorted

#: Rows formatted per block: the block's text and its Python numbers stay a few MB.
CHUNK_ROWS = 4096

_DEG = 180.0 / math.pi  # math.degrees(x) is x * (180 / pi) (CPython Modules/mathmodule.c)

#: Below this magnitude ``rint(v * 1e9)`` is exact in a double (1e15 < 2**53).
_FAST_LIMIT = 1e6


def round9(values: NDArray[np.float64]) -> NDArray[np.float64]:
    """``round(v, 9)`` of each value, ``0.0`` for a result of zero (never ``-0.0``): the
    numbers :func:`kinematics.files.jsonio.dumps` writes, for finite ``values``.

    Examples
    --------
    >>> round9(np.array([0.1234567895, -1e-12, 2.5e-10])).tolist()
    [0.12345679, 0.0, 0.0]
    """
    a = np.asarray(values, dtype=np.float64)
    with np.errstate(over="ignore", invalid="ignore"):  # huge values are Python's to round
        p = a * 1e9
        n = np.rint(p)
        q = n / 1e9
        # The true v * 1e9 is within half an ulp of p: it rounds the other way only near .5.
        near_tie = np.abs(np.abs(p - n) - 0.5) <= 2.0 * np.spacing(np.abs(p))
    slow = ~(np.abs(a) < _FAST_LIMIT) | near_tie
    for i in np.flatnonzero(slow).tolist():
        q[i] = round(float(a[i]), 9)
    q[q == 0.0] = 0.0
    return q


def check_finite(columns: list[NDArray]) -> None:
    """Refuse a non-finite number as :func:`kinematics.files.jsonio.dumps` does."""
    for c in columns:
        if c.dtype.kind == "f" and not np.isfinite(c).all():
            raise ValueError("refusing to write a non-finite number")


def _template(row: dict, marks: list[str], kinds: list[str]) -> str | None:
    """The ``%``-format text of one sample row as the schedule JSON indents it, the
    ``marks`` (strings standing for the numbers) replaced by ``%r`` / ``%d``; ``None``
    when a mark's encoding is not found exactly once (a name that looks like one)."""
    from kinematics.files.jsonio import dumps

    text = dumps(row).rstrip("\n").replace("\n", "\n    ").replace("%", "%%")
    for mark, kind in zip(marks, kinds):
        code = json.dumps(mark)
        if text.count(code) != 1:
            return None
        text = text.replace(code, "%d" if kind == "i" else "%r")
    return text


def sample_curvature(s) -> NDArray[np.float64]:
    """Signed path curvature (1/m) at each sample of a schedule (0 in pivots and on holonomic
    lines). Here rather than in :mod:`kinematics.timing.schedule`, which imports this module,
    so that the two make no import circle."""
    sm = s.samples
    out = np.zeros(sm.t_s.size)
    p = s.profile
    for i in unique_sorted(sm.segment):
        seg = p.segments[int(i)]
        m = sm.segment == i
        if seg.kind in ("arc", "clothoid"):
            out[m] = seg.curvature_at(np.clip(sm.station_m[m] - p.station0_m[int(i)], 0.0,
                                              seg.length_m))
    return out


def _sample_fields(s) -> tuple[dict, list[str], list[str], list[NDArray]]:
    """A sample row with marks for its numbers, in the key order of the row-at-a-time
    encoder (:func:`kinematics.timing.schedule._sample_dicts`), with the marks, their kinds
    (``i`` integer, ``f`` float) and one array per mark over all samples."""
    sm = s.samples
    marks: list[str] = []
    kinds: list[str] = []
    cols: list[NDArray] = []

    def field(values: NDArray, kind: str = "f") -> str:
        mark = f"\x00{len(marks)}\x00"
        marks.append(mark)
        kinds.append(kind)
        cols.append(np.asarray(values, dtype=np.int64 if kind == "i" else np.float64))
        return mark

    row: dict = {}
    seg = np.asarray(sm.segment, dtype=np.int64)
    if s.pieces is not None:
        plan = np.asarray(s.pieces.plan_segment, dtype=np.int64)
        row["plan_segment"] = field(plan[seg] if seg.size else seg, "i")
    row.update({
        "t_s": field(sm.t_s), "segment": field(seg, "i"), "station_m": field(sm.station_m),
        "x": field(sm.x), "y": field(sm.y), "heading_deg": field(sm.heading_rad * _DEG),
        "v_mps": field(sm.v_mps), "yaw_rate_dps": field(sm.omega_radps * _DEG),
        "x_m": field(sm.x), "y_m": field(sm.y), "curvature_per_m": field(sample_curvature(s)),
    })
    wheels: dict = {}
    for n in s.drive.wheel_names:
        w = {"rate_radps": field(sm.rate_radps[n])}
        if n in s.drive.steered_wheels:
            w["angle_deg"] = field(sm.angle_rad[n] * _DEG)
        wheels[n] = w
    row["wheels"] = wheels
    tr = sm.trailers
    if tr is not None:
        row["trailers"] = [{"name": name, "x": field(tr[:, j, 0]), "y": field(tr[:, j, 1]),
                            "heading_deg": field(tr[:, j, 2] * _DEG),
                            "hitch_deg": field(tr[:, j, 3] * _DEG)}
                           for j, name in enumerate(sm.trailer_names)]
    return row, marks, kinds, cols


def sample_rows_json(s) -> Iterator[str] | None:
    """The schedule JSON's ``samples`` array (``[`` ... ``]``, rows indented as inside the
    whole document) as text pieces, a block of :data:`CHUNK_ROWS` rows each; ``None`` when
    the fast template cannot be made (the caller encodes row by row).

    Raises ``ValueError`` on a non-finite number before any text is made."""
    row, marks, kinds, cols = _sample_fields(s)
    check_finite(cols)
    fmt = _template(row, marks, kinds)
    if fmt is None:
        return None
    total = int(s.samples.t_s.size)

    def pieces() -> Iterator[str]:
        if total == 0:
            yield "[]"
            return
        yield "[\n    "
        for k0 in range(0, total, CHUNK_ROWS):
            block = [(c[k0:k0 + CHUNK_ROWS] if k == "i" else round9(c[k0:k0 + CHUNK_ROWS]))
                     .tolist() for c, k in zip(cols, kinds)]
            text = ",\n    ".join([fmt % t for t in zip(*block)])
            yield text if k0 == 0 else ",\n    " + text
        yield "\n  ]"

    return pieces()


def sample_rows_csv(s) -> Iterator[str]:
    """The sampled CSV's data rows (after its header) as text pieces, a block of
    :data:`CHUNK_ROWS` rows each: every float as ``format(v, ".9g")``, the segment as an
    integer, as the csv module writes them (no cell needs quoting)."""
    sm = s.samples
    cols: list[NDArray] = [sm.t_s, np.asarray(sm.segment, dtype=np.int64), sm.station_m, sm.x,
                           sm.y, sm.heading_rad * _DEG, sm.v_mps, sm.omega_radps * _DEG,
                           sample_curvature(s)]
    cols += [sm.rate_radps[n] for n in s.drive.wheel_names]
    cols += [sm.angle_rad[n] * _DEG for n in s.drive.steered_wheels]
    tr = sm.trailers
    if tr is not None:
        for j in range(tr.shape[1]):
            cols += [tr[:, j, 0], tr[:, j, 1], tr[:, j, 2] * _DEG, tr[:, j, 3] * _DEG]
    fmt = ",".join("%d" if i == 1 else "%.9g" for i in range(len(cols))) + "\n"
    total = int(sm.t_s.size)
    for k0 in range(0, total, CHUNK_ROWS):
        block = [np.asarray(c[k0:k0 + CHUNK_ROWS]).tolist() for c in cols]
        yield "".join([fmt % t for t in zip(*block)])
