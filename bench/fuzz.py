"""Fuzz Swathe's readers and command line from outside, and report what comes back.

Every sample project and floor plan in ``sample_floorplans/``, the sample DXF drawing plus
generated ones (splines, ellipses, nested and multiple blocks, binary DXF) and generated SVG
files are mutated at random (bytes, characters, DXF group codes, JSON values, encodings) and
fed to the readers in this process, each within its own time and memory watch (no child
process per input, so 10 000 inputs per reader take minutes on one core). Every project the
reader accepts is then run through ``app.cli.main`` in this process (plan, check, schedule,
odd options; SWATHE_DEBUG set, so an internal error surfaces with its type), and ``--cli``
of them through ``python -m app.cli`` (plan, check, schedule, render) in child processes,
with odd options and output paths. Each outcome is one of

- ``accepted``: read (CLI: exit 0 or 1);
- ``refused``: a :class:`~kinematics.errors.SwatheInputError` (CLI: exit 2);
- ``internal``: any other exception (CLI: exit 3, a signal, a traceback);
- ``hang``: more than ``--hang-s`` seconds (20 s);
- ``big memory``: an input whose own peak resident memory passed ``--memory-mb`` (1 GiB;
  the kernel's peak is reset before each input through ``/proc/self/clear_refs`` and read
  from ``VmHWM`` after it), an allocation the address-space limit (1 GiB above the start)
  turned into a MemoryError, or a CLI child whose peak resident memory passed it;
- ``noise``: a refusal on more than one line, or one that names no place in the file, or
  output printed by a library beside Swathe's own message.

Every input that is internal, hang, big memory or noise is saved under
``OUT/findings/`` with the message, for the suite to keep as a fixed example. The summary
gives counts, the slowest input and the input with the largest peak memory, per reader.

Last full runs (2 cores shared with other work, one process):

- seed 11: 10 000 inputs per reader, 0 internal / hang / big memory / noise in the readers;
  1 171 accepted projects through the CLI in process: 2 noise (a chassis limit of 1e301
  m/s2 overflowed the profile with numpy warnings; now refused, tests/test_robust.py);
  300 CLI child runs: 224 accepted, 76 refused, 0 findings. Slowest reader input 0.29 s,
  largest reader peak 40 MB, largest CLI peak 479 MB (in process) / 264 MB (child).
- seed 12 (after that fix): readers 10 000 each, 0 findings; CLI in process 1 163: 1 big
  memory (a 126 000-sample JSON schedule peaked at 1.1 GB: now written a row at a time,
  0.36 GB) and 1 noise (a denormal speed limit overflowed: now refused below 1e-12); 300
  CLI child runs: 219 accepted, 81 refused, 0 findings.
- seed 13 (after both fixes): readers 10 000 each, 0 findings (slowest 0.51 s, largest
  peak 73 MB); CLI in process 1 128: 909 accepted, 217 refused, 2 hangs over 20 s (mecanum
  check and schedule of a route whose body turns along a line of ~10 km; fixed since: the
  body's turn is swept in chunks that do not grow with the length, under the sweep's work
  budget, tests/test_sweep_budget.py); 300 CLI child runs: 235 accepted, 65 refused, 0
  findings (slowest 5.6 s, largest peak 262 MB).
- seed 21: three findings in process, fixed and kept in tests/test_robust.py: refusals at an
  empty key named no place (now ``[""]``, two floor plans and a project), and a pivot of the
  sample train's delivery cart ended ``check`` with a zero-size GEOS answer (the nearest-solid
  query's reach is widened by rounding, with a per-part fallback).
- seed 23 (branch code 0b9165a): readers 10 000 each, 1 184 projects through the CLI in
  process and 300 child runs, 0 findings (slowest input 9.1 s, largest peak 190 MB).
- seed 25 (main 3cff9e1, the harness pinned to one core beside a loaded second core):
  7 500 inputs per reader, 0 findings, then the harness itself stopped with a MemoryError
  while writing a mutated project that repeated a list past the harness's own 1 GiB limit
  (the harness now draws such a mutation again). Rerun with that fix (1b594f1): readers
  10 000 each (project 1 158 accepted, floor plan 1 329, DXF 3 777, SVG 1 175), 1 158
  projects through the CLI in process (924 accepted, 234 refused) and 300 child runs (231
  accepted, 69 refused): 0 internal / hang / big memory / noise. Slowest reader input
  1.3 s, slowest in process 8.0 s (``check --sizing``), largest peaks 101 MB (reader) and
  143 MB (a child ``render`` with plots).

Usage::

    python bench/fuzz.py [--inputs 10000] [--cli 300] [--seconds 3600] [--seed 1] [--out DIR]

It uses one core (run it under ``taskset -c 0`` to pin it). Deterministic for a seed, apart
from which input is slowest.
"""

from __future__ import annotations

import argparse
import contextlib
import copy
import json
import logging
import os
import random
import resource
import shutil
import signal
import subprocess
import sys
import tempfile
import time
import warnings
from collections import Counter
from collections.abc import Callable
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
SAMPLES = ROOT / "sample_floorplans"
sys.path.insert(0, str(ROOT))

from tests.mutations import (  # noqa: E402 - after the path
    BYTE_FLIPS,
    TEXT_JUNK,
    TEXT_OPS,
    RandomPick,
    edit_bytes,
    edit_text,
)

NASTY_NUMBERS = [0, -0.0, 1, -1, 0.5, 1e-300, 5e-324, -1e-9, 1e-6, 1e6, 1e9, 1e15, 1e300,
                 -1e300, 2 ** 53 + 1, 2 ** 63, 10 ** 400, 1e308, 3.3, 360, 720, 1e5, 1e-3]
NASTY_VALUES: list[Any] = [None, True, False, "", " ", "\udfff", "\ud800x", "x" * 5000,
                           "é", "\x00", [], {}, [[]], [0], [0, 0], [0, 0, 0], [1e300, 1e300],
                           {"a": 1}, [[0, 0]] * 3, "NaN"]
DXF_NUMBERS = ["0", "-0", "1e15", "-1e15", "1e300", "1e-300", "nan", "inf", "-inf", "1e999",
               "99999999999999999999", "0.000001", "360", "-720", "12.5.6", "", " ", "x",
               "3", "1000", "100000", "7e7", "1e8", "32767", "-32768", "2147483648"]
DXF_TYPES = ["LINE", "LWPOLYLINE", "POLYLINE", "VERTEX", "SEQEND", "ARC", "CIRCLE",
             "ELLIPSE", "SPLINE", "INSERT", "TEXT", "MTEXT", "HATCH", "POINT", "SOLID",
             "3DFACE", "DIMENSION", "XLINE", "RAY", "LEADER", "IMAGE", "BLOCK", "ENDBLK",
             "SECTION", "ENDSEC", "EOF", "LWPOLYLINX", "FOO", "", "ATTRIB", "ATTDEF",
             "MLINE", "REGION", "ACAD_PROXY_ENTITY", "TABLE", "ENDTAB", "LAYER"]
ENCODINGS = ["UTF-E", "utf-8", "UTF-16", "latin-1", "ascii", "utf-32", "cp1252", "", "x" * 80,
             "utf-8-sig", "rot13", "base64", "idna", "punycode", "UTF-7", "zlib", "hex",
             "unicode_escape", "\u00e9", "utf_16_be", "mbcs", "ebcdic"]


# -- seeds ------------------------------------------------------------------------------------
def _rich_dxf(path: Path, binary: bool = False) -> None:
    import ezdxf

    doc = ezdxf.new("R2010", units=4)
    for n in ("WALLS", "FIXTURES", "DOORS"):
        doc.layers.add(n)
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0, 0.3), (3000, 0, 0), (3000, 2000, -0.5), (0, 2000, 0)],
                       format="xyb", close=True, dxfattribs={"layer": "WALLS"})
    msp.add_polyline2d([(0, 3000), (1000, 3000), (1000, 4000)], dxfattribs={"layer": "WALLS"})
    msp.add_polyline3d([(5000, 0, 0), (6000, 0, 10), (6000, 1000, 0)],
                       dxfattribs={"layer": "WALLS"})
    msp.add_circle((1000, 1000), 200, dxfattribs={"layer": "FIXTURES"})
    msp.add_arc((2000, 1000), 300, 10, 250, dxfattribs={"layer": "WALLS"})
    msp.add_ellipse((4000, 1000), major_axis=(500, 100), ratio=0.4,
                    dxfattribs={"layer": "FIXTURES"})
    msp.add_spline([(0, 5000), (1000, 5500), (2000, 5000), (3000, 6000)],
                   dxfattribs={"layer": "WALLS"})
    msp.add_spline_control_frame([(0, 7000), (500, 7500), (1500, 7000), (2500, 8000)],
                                 dxfattribs={"layer": "WALLS"})
    msp.add_line((500, 0), (1315, 0), dxfattribs={"layer": "DOORS"})
    msp.add_text("D-1", height=100, dxfattribs={"layer": "DOORS", "insert": (900, 100)})
    msp.add_mtext("M-2", dxfattribs={"layer": "DOORS", "insert": (900, 300)})
    inner = doc.blocks.new("INNER")
    inner.add_lwpolyline([(0, 0), (100, 0), (100, 50)], close=True)
    inner.add_circle((0, 0), 20)
    outer = doc.blocks.new("OUTER")
    outer.add_blockref("INNER", (10, 10), dxfattribs={"rotation": 15, "xscale": 2})
    outer.add_line((0, 0), (50, 50))
    msp.add_blockref("OUTER", (2000, 500), dxfattribs={"layer": "FIXTURES", "rotation": 30})
    ref = msp.add_blockref("INNER", (6000, 3000), dxfattribs={"layer": "FIXTURES"})
    ref.dxf.column_count = 3
    ref.dxf.row_count = 2
    ref.dxf.column_spacing = 300
    ref.dxf.row_spacing = 200
    msp.add_point((10, 10), dxfattribs={"layer": "WALLS"})
    msp.add_solid([(0, 0), (10, 0), (0, 10)], dxfattribs={"layer": "WALLS"})
    if binary:
        doc.saveas(path, fmt="bin")
    else:
        doc.saveas(path)


RICH_SVG = """<?xml version="1.0" encoding="UTF-8"?>
<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink"
 viewBox="0 0 1000 500" width="100cm" height="50cm">
<defs><rect id="crate" width="40" height="30"/></defs>
<g class="walls" stroke-width="15" transform="translate(5 5) rotate(2)">
<path d="M0 0 H990 V490 H0 Z"/></g>
<g class="obstacles" transform="matrix(1 0 0 1 10 10) scale(1.5) skewX(3)">
<rect x="100" y="100" width="200" height="50" rx="5"/>
<circle cx="500" cy="250" r="30"/>
<ellipse cx="700" cy="300" rx="30" ry="10"/>
<polygon points="800,400 850,400 850,450"/>
<use xlink:href="#crate" x="600" y="50"/>
<use href="#crate" x="650" y="50" transform="rotate(10)"/>
</g>
<path d="M600 400 c10 0 20 10 20 20 s 10 20 30 20 q 5 5 10 0 t 10 0 a 20 10 30 1 0 40 0"/>
<line id="door-1" x1="400" y1="490" x2="481.5" y2="490"/>
<polyline points="700,100 800,100 800,200" style="stroke-width:8"/>
</svg>
"""

SVG_ATTACKS = [
    '<?xml version="1.0"?><!DOCTYPE svg [<!ENTITY a "aaaa">]><svg xmlns="http://www.w3.org/'
    '2000/svg">&a;</svg>',
    '<svg xmlns="http://www.w3.org/2000/svg">' + "<g>" * 3000 + "</g>" * 3000 + "</svg>",
    '<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink">'
    '<defs><g id="a"><use href="#b"/><use href="#b"/></g><g id="b"><use href="#c"/>'
    '<use href="#c"/></g><g id="c"><rect width="1" height="1"/></g></defs>'
    + '<use href="#a"/>' * 50 + "</svg>",
    '<svg xmlns="http://www.w3.org/2000/svg"><g id="l"><use href="#l"/></g></svg>',
    '<svg xmlns="http://www.w3.org/2000/svg"><path d="M0 0 C 1e308 1e308 -1e308 1 2 2"/></svg>',
    '<svg xmlns="http://www.w3.org/2000/svg"><path d="M0 0 A 1e-300 1e-300 0 1 1 1e3 1e3"/>'
    "</svg>",
    '<svg xmlns="http://www.w3.org/2000/svg"><g transform="scale(1e300)"><rect width="1e300"'
    ' height="1"/></g></svg>',
    '<svg xmlns="http://www.w3.org/2000/svg"><g transform="scale(1e-300)"><circle r="1e300"/>'
    "</g></svg>",
    '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 0 0"><rect width="1" height="1"/>'
    "</svg>",
    '<svg xmlns="http://www.w3.org/2000/svg"><path d="' + "l1 1 " * 20000 + '"/></svg>',
    '<svg xmlns="http://www.w3.org/2000/svg"><circle r="1e7" cx="0" cy="0"/></svg>',
]


def _write(path: Path, data: bytes | str) -> Path:
    if isinstance(data, str):
        path.write_text(data, encoding="utf-8", errors="surrogatepass")
    else:
        path.write_bytes(data)
    return path


class Seeds:
    """The inputs to mutate, copied into a working folder beside their floor plans."""

    def __init__(self, work: Path) -> None:
        self.work = work
        for f in SAMPLES.iterdir():
            if f.suffix in (".json", ".dxf"):
                shutil.copy(f, work / f.name)
        _rich_dxf(work / "rich.dxf")
        _rich_dxf(work / "rich_bin.dxf", binary=True)
        self.projects = {f.name: json.loads(f.read_text()) for f in sorted(work.iterdir())
                         if f.name.endswith(".swathe.json")}
        self.floors = {f.name: json.loads(f.read_text()) for f in sorted(work.iterdir())
                       if f.name.endswith(".floor.json")}
        self.dxf = {f.name: f.read_bytes() for f in sorted(work.iterdir()) if f.suffix == ".dxf"}
        self.svg = {"rich.svg": RICH_SVG}
        for i, a in enumerate(SVG_ATTACKS):
            self.svg[f"attack{i}.svg"] = a
        _write(work / "plan.svg", RICH_SVG)


# -- mutators ---------------------------------------------------------------------------------
def mutate_text(rng: random.Random, text: str) -> str:
    """Character edits: delete, insert junk, replace, truncate, swap a number."""
    return edit_text(RandomPick(rng), text, junk=TEXT_JUNK + "<>/=&;#\ud800",
                     ops=TEXT_OPS + ("number", "number"), numbers=NASTY_NUMBERS)


def mutate_bytes(rng: random.Random, data: bytes) -> bytes:
    """Byte edits, as the suite's DXF property test makes them (a carriage return too)."""
    return edit_bytes(RandomPick(rng), data, flips=BYTE_FLIPS + b"\r",
                      ops=("flip", "flip", "flip", "delete", "insert", "truncate"))


def _paths(node: Any, here: tuple = ()) -> list[tuple]:
    out = [here]
    if isinstance(node, dict):
        for k, v in node.items():
            out += _paths(v, here + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out += _paths(v, here + (i,))
    return out


def _nasty_value(rng: random.Random, old: Any) -> Any:
    r = rng.random()
    if isinstance(old, (int, float)) and not isinstance(old, bool) and r < 0.5:
        if r < 0.25:
            try:
                return old * 10.0 ** rng.randint(-12, 15)
            except OverflowError:  # an integer beyond any float, put there by an earlier edit
                return old
        return rng.choice(NASTY_NUMBERS) * rng.choice([1, -1])
    if isinstance(old, list) and old and r < 0.5:
        if r < 0.2:
            return old * rng.choice([2, 10, 200, 3000])
        if r < 0.35:
            return old[: rng.randrange(len(old))]
        return old[::-1]
    if r < 0.6:
        return rng.choice(NASTY_NUMBERS)
    return copy.deepcopy(rng.choice(NASTY_VALUES))


def mutate_json(rng: random.Random, doc: Any) -> Any:
    """Value edits: replace, scale, delete, duplicate, add a key, at 1-3 places."""
    doc = copy.deepcopy(doc)
    for _ in range(rng.randint(1, 3)):
        paths = [p for p in _paths(doc) if p]
        if not paths:
            break
        path = rng.choice(paths)
        parent = doc
        for k in path[:-1]:
            parent = parent[k]
        key = path[-1]
        op = rng.random()
        if op < 0.1 and isinstance(parent, dict):
            del parent[key]
        elif op < 0.15 and isinstance(parent, dict):
            parent[rng.choice(["zzz", "extra", "\udfffk", ""])] = _nasty_value(rng, 0)
        else:
            parent[key] = _nasty_value(rng, parent[key])
    return doc


def mutate_dxf(rng: random.Random, data: bytes) -> bytes:
    """Group-code edits on an ASCII DXF (entity names, values, pairs), or byte edits."""
    if data.startswith(b"AutoCAD Binary DXF") or rng.random() < 0.3:
        return mutate_bytes(rng, data)
    lines = data.split(b"\n")
    pairs = [lines[i:i + 2] for i in range(0, len(lines) - 1, 2)]
    # The ENTITIES and BLOCKS sections are where the geometry is: bias edits there.
    start = next((i for i, p in enumerate(pairs) if p[1].strip() == b"BLOCKS"), 0)
    for _ in range(rng.randint(1, 4)):
        if len(pairs) <= start + 1:
            break
        i = rng.randrange(start, len(pairs))
        code, value = pairs[i]
        op = rng.random()
        if code.strip() == b"0" and op < 0.5:
            pairs[i] = [code, rng.choice(DXF_TYPES).encode()]
        elif op < 0.6:
            pairs[i] = [code, rng.choice(DXF_NUMBERS).encode()]
        elif op < 0.7:
            del pairs[i]
        elif op < 0.8:
            j = rng.randrange(start, len(pairs))
            pairs[i:i] = [list(p) for p in pairs[j:j + rng.randint(1, 30)]]
        elif op < 0.9:
            pairs[i] = [rng.choice([b"10", b"20", b"40", b"42", b"50", b"70", b"71", b"72",
                                    b"73", b"74", b"8", b"2", b"5", b"330", b"999", b"1001",
                                    b"62", b"-1", b"x"]), value]
        else:
            pairs[i] = [code, value * rng.randint(2, 50)]
    return b"\n".join(b"\n".join(p) for p in pairs) + b"\n"


def mutate_svg(rng: random.Random, text: str) -> str:
    op = rng.random()
    if op < 0.15:
        enc = rng.choice(ENCODINGS)
        head = f'<?xml version="1.0" encoding="{enc}"?>\n'
        body = text.split("?>", 1)[1] if text.startswith("<?xml") else text
        return head + (mutate_text(rng, body) if rng.random() < 0.3 else body)
    if op < 0.2:
        return text.replace("<svg", "<svg " + rng.choice(
            ['width="1e300mm"', 'viewBox="0 0 1e-300 1e-300"', 'viewBox="nan 0 1 1"',
             'transform="scale(1e200)"', 'style="stroke-width:1e300"']), 1)
    return mutate_text(rng, text)


# -- running one input ------------------------------------------------------------------------
class Hang(BaseException):
    pass


def _on_alarm(signum, frame):  # noqa: ANN001
    raise Hang()


@contextlib.contextmanager
def captured_fds(path: Path, out_path: Path | None = None):
    """Send file descriptors 1 and 2 (and Python's streams) to ``path`` for a while (1 to
    ``out_path`` if given)."""
    sys.stdout.flush()
    sys.stderr.flush()
    saved = os.dup(1), os.dup(2)
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
    fd1 = fd if out_path is None else os.open(out_path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC,
                                              0o600)
    os.dup2(fd1, 1)
    os.dup2(fd, 2)
    os.close(fd)
    if fd1 != fd:
        os.close(fd1)
    try:
        yield
    finally:
        sys.stdout.flush()
        sys.stderr.flush()
        os.dup2(saved[0], 1)
        os.dup2(saved[1], 2)
        os.close(saved[0])
        os.close(saved[1])


class _Records(logging.Handler):
    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.records: list[str] = []

    def emit(self, record: logging.LogRecord) -> None:
        self.records.append(f"{record.name}: {record.getMessage()}")


class Tally:
    def __init__(self, name: str, out: Path) -> None:
        self.name = name
        self.out = out
        self.counts: Counter[str] = Counter()
        self.slowest = (0.0, "")
        self.biggest = (0.0, "")
        self.n = 0
        self.started = time.monotonic()

    def record(self, outcome: str, seconds: float, label: str, data: bytes | str,
               ext: str, message: str, peak_mb: float = 0.0) -> None:
        self.n += 1
        self.counts[outcome] += 1
        if seconds > self.slowest[0]:
            self.slowest = (seconds, label)
        if peak_mb > self.biggest[0]:
            self.biggest = (peak_mb, label)
        if outcome not in ("accepted", "refused"):
            d = self.out / "findings"
            d.mkdir(parents=True, exist_ok=True)
            stem = f"{self.name}-{self.n:05d}-{outcome.replace(' ', '_')}"
            _write(d / (stem + ext), data)
            (d / (stem + ".txt")).write_text(f"{label}\n{message}\n", encoding="utf-8",
                                             errors="backslashreplace")

    def summary(self) -> dict:
        return {"inputs": self.n, **dict(sorted(self.counts.items())),
                "slowest_s": round(self.slowest[0], 3), "slowest_input": self.slowest[1],
                "peak_mb": round(self.biggest[0], 1), "peak_input": self.biggest[1]}


def _status_kb(key: str) -> float:
    with open("/proc/self/status") as fh:
        return next(float(ln.split()[1]) for ln in fh if ln.startswith(key))


def _reset_peak() -> bool:
    """Reset the kernel's peak resident size (VmHWM) of this process; False if it cannot."""
    try:
        with open("/proc/self/clear_refs", "w") as fh:
            fh.write("5")
        return True
    except OSError:
        return False


def run_reader(fn: Callable[[Path], Any], path: Path, hang_s: float, noise_file: Path,
               memory_mb: float = 1024.0) -> tuple[str, float, str, float]:
    """Read one input; outcome, seconds, message and the input's own peak memory in MB
    (the growth of peak resident size over the resident size before it, per input: the
    kernel's peak is reset before each read, /proc/self/clear_refs)."""
    from kinematics.errors import SwatheInputError

    handler = _Records()
    root = logging.getLogger()
    root.addHandler(handler)
    per_input = _reset_peak()
    rss0 = _status_kb("VmRSS:")
    t0 = time.perf_counter()
    outcome, message = "accepted", ""
    signal.setitimer(signal.ITIMER_REAL, hang_s)
    try:
        with captured_fds(noise_file), warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                fn(path)
            except SwatheInputError as exc:
                outcome, message = "refused", exc.message
                one_line = "\n" not in exc.message and "\r" not in exc.message
                if not (one_line and exc.file and exc.message.startswith(exc.file)
                        and exc.place):
                    outcome = "noise"
                try:
                    exc.message.encode("utf-8")
                except UnicodeEncodeError:
                    outcome = "noise"
                    message = exc.message.encode("utf-8", "backslashreplace").decode()
            except MemoryError as exc:
                outcome, message = "big memory", f"MemoryError: {exc}"
            except Hang:
                raise
            except BaseException as exc:  # noqa: BLE001 - that is what is being counted
                outcome, message = "internal", f"{type(exc).__name__}: {exc}"
    except Hang:
        outcome, message = "hang", f"more than {hang_s:g} s"
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        root.removeHandler(handler)
    seconds = time.perf_counter() - t0
    peak_mb = (_status_kb("VmHWM:") - rss0) / 1024.0 if per_input else 0.0
    printed = noise_file.read_text(errors="replace") if noise_file.exists() else ""
    extra = [r for r in handler.records] + [str(w.message) for w in caught] + \
        ([printed.strip()] if printed.strip() else [])
    if extra and outcome in ("accepted", "refused"):
        outcome = "noise"
        message = (message + " | printed/logged: " + " / ".join(extra))[:2000]
    if peak_mb > memory_mb and outcome != "hang":
        outcome, message = "big memory", f"peak {peak_mb:.0f} MB; {message}"
    return outcome, seconds, message, peak_mb


def fuzz_readers(seeds: Seeds, rng: random.Random, count: int, deadline: float,
                 hang_s: float, out: Path, memory_mb: float = 1024.0
                 ) -> tuple[dict[str, Tally], list[Path]]:
    from kinematics.files.dxf_import import import_dxf
    from kinematics.files.loader import load_floorplan
    from kinematics.files.project import load_project
    from kinematics.files.svg_import import import_svg

    work = seeds.work
    noise = out / "printed.txt"
    accepted_projects: list[Path] = []
    tallies = {k: Tally(k, out) for k in ("project", "floorplan", "dxf", "svg")}
    layers = {"walls": ["WALLS"], "obstacles": ["FIXTURES"], "doors": ["DOORS"]}

    def dumps_mutated(doc: Any, indent: int | None) -> str:
        # A mutation that repeats a list can outgrow the address-space limit this process
        # sets for the readers; that is the harness's own input, not a finding: draw again
        # (seed 25 ended here after 7 500 inputs per reader with 0 findings).
        for _ in range(5):
            try:
                return json.dumps(mutate_json(rng, doc), indent=indent)
            except MemoryError:
                continue
        return json.dumps(doc, indent=indent)

    def one(kind: str, i: int) -> None:
        if kind == "project":
            name, doc = rng.choice(list(seeds.projects.items()))
            if rng.random() < 0.7:
                data: bytes | str = dumps_mutated(doc, 1)
            else:
                data = mutate_text(rng, json.dumps(doc, indent=1))
            path = _write(work / f"fuzz{i % 50}.swathe.json", data)
            outcome, secs, msg, mb = run_reader(load_project, path, hang_s, noise, memory_mb)
            if outcome == "accepted" and len(accepted_projects) < 5000:
                keep = _write(work / f"ok{len(accepted_projects)}.swathe.json", data)
                accepted_projects.append(keep)
            tallies[kind].record(outcome, secs, f"{name} mutation {i}", data, ".swathe.json",
                                 msg, mb)
        elif kind == "floorplan":
            name, doc = rng.choice(list(seeds.floors.items()))
            data = (dumps_mutated(doc, None) if rng.random() < 0.7
                    else mutate_text(rng, json.dumps(doc, indent=1)))
            path = _write(work / "fuzz.floor.json", data)
            outcome, secs, msg, mb = run_reader(load_floorplan, path, hang_s, noise,
                                                memory_mb)
            tallies[kind].record(outcome, secs, f"{name} mutation {i}", data, ".floor.json",
                                 msg, mb)
        elif kind == "dxf":
            name, raw = rng.choice(list(seeds.dxf.items()))
            data = mutate_dxf(rng, raw)
            path = _write(work / "fuzz.dxf", data)
            use_layers = name == "test_room.dxf" and rng.random() < 0.5

            def read(p: Path) -> Any:
                return import_dxf(p, layers=layers) if use_layers else import_dxf(p)

            outcome, secs, msg, mb = run_reader(read, path, hang_s, noise, memory_mb)
            tallies[kind].record(outcome, secs, f"{name} mutation {i}", data, ".dxf", msg, mb)
        else:
            name, text = rng.choice(list(seeds.svg.items()))
            data = mutate_svg(rng, text) if rng.random() < 0.95 else text
            path = _write(work / "fuzz.svg", data)
            outcome, secs, msg, mb = run_reader(import_svg, path, hang_s, noise, memory_mb)
            tallies[kind].record(outcome, secs, f"{name} mutation {i}", data, ".svg", msg, mb)

    for i in range(count):
        if time.monotonic() > deadline:
            break
        for kind in tallies:
            one(kind, i)
        if (i + 1) % 500 == 0:
            print(f"  readers: {i + 1} inputs each, "
                  + ", ".join(f"{k} {dict(t.counts)}" for k, t in tallies.items()),
                  flush=True)
    return tallies, accepted_projects


def fuzz_cli_in_process(rng: random.Random, projects: list[Path], seeds: Seeds, deadline: float,
                        hang_s: float, memory_mb: float, out: Path) -> Tally:
    """Every project the loader accepted, through ``app.cli.main`` in this process (plan,
    check, schedule; render needs Qt and is left to the child processes). SWATHE_DEBUG is
    set, so an internal error raises here with its type instead of becoming exit 3."""
    import app.cli

    tally = Tally("cli_in_process", out)
    err = out / "cli_err.txt"
    stdout = out / "cli_out.txt"
    os.environ["SWATHE_DEBUG"] = "1"
    cwd = os.getcwd()
    os.chdir(seeds.work)
    try:
        for i, project in enumerate(projects):
            if time.monotonic() > deadline:
                break
            args = _cli_args(rng, project, seeds.work)
            if args[0] == "render":
                args = ["check", *args[1:2]]
            codes: list[int] = []

            def run(_p: Path, args: list[str] = args, codes: list[int] = codes) -> None:
                with captured_fds(err, stdout):
                    try:
                        codes.append(app.cli.main(args))
                    except SystemExit as exc:  # argparse's refusal: one line, exit 2
                        codes.append(exc.code if isinstance(exc.code, int) else 3)

            outcome, secs, msg, mb = run_reader(run, project, hang_s, out / "printed.txt",
                                                memory_mb)
            lines = [ln for ln in err.read_text(errors="replace").splitlines() if ln.strip()]
            rc = codes[0] if codes else None
            if outcome == "accepted":
                if rc == 2:
                    outcome = "refused" if len(lines) == 1 and lines[0].startswith(
                        "swathe") else "noise"
                elif rc not in (0, 1) or len(lines) > (1 if rc == 1 else 0):
                    outcome = "noise"
                msg = f"exit {rc}: " + " / ".join(lines)[:2000]
            label = "swathe " + " ".join(args)
            tally.record(outcome, secs, label, project.read_text(errors="replace"),
                         ".swathe.json", f"{msg}", mb)
            if (i + 1) % 500 == 0:
                print(f"  cli in process: {i + 1} runs, {dict(tally.counts)}", flush=True)
    finally:
        os.chdir(cwd)
        os.environ.pop("SWATHE_DEBUG", None)
    return tally


# -- the command line -------------------------------------------------------------------------
def _cli_args(rng: random.Random, project: Path, work: Path) -> list[str]:
    try:
        doc = json.loads(project.read_text())
        names = [r.get("name") for r in doc.get("routes", []) if isinstance(r, dict)]
    except Exception:  # noqa: BLE001
        names = []
    names = [n for n in names if isinstance(n, str) and n] or ["no-such-route"]
    route = rng.choice(names + ["no-such-route"]) if rng.random() < 0.1 else rng.choice(names)
    proj = str(project)
    if rng.random() < 0.05:
        proj = rng.choice([str(work), str(work / ("x" * 300 + ".swathe.json")),
                           str(work / "missing.swathe.json"), "/dev/null",
                           str(work / ("d/" * 3) / "p.swathe.json")])

    def output(ext: str) -> str:
        r = rng.random()
        if r < 0.08:
            return rng.choice([str(work), str(work / ("y" * 300 + ext)),
                               str(work / "nofolder" / ("o" + ext)), "/proc/version",
                               str(work / ("o" + ext) / "under"), "/"])
        return str(work / f"out{rng.randrange(3)}{ext}")

    sub = rng.choices(["plan", "check", "schedule", "render"], weights=[3, 4, 4, 1])[0]
    args = [sub, proj]
    if sub == "plan":
        if rng.random() < 0.5:
            args.append("--json")
        if rng.random() < 0.3:
            args += ["--route", route]
    elif sub == "check":
        if rng.random() < 0.5:
            args.append("--json")
        if rng.random() < 0.3:
            args += ["--route", route]
        if rng.random() < 0.2:
            args += ["--tolerance-mm", rng.choice(["2", "0.01", "1e-9", "1000", "nan", "-1"])]
        if rng.random() < 0.1:
            args.append("--sizing")
    elif sub == "schedule":
        args += ["--route", route, "--format", rng.choice(["csv", "json"])]
        if rng.random() < 0.4:
            args += ["--dt", rng.choice(["0.1", "0.01", "1e-3", "1e-6", "1e-300", "60", "0",
                                         "nan", "inf", "abc"])]
        if rng.random() < 0.5:
            args += ["-o", output(".csv")]
    else:
        args += ["-o", output(".png"), "--width", rng.choice(["400", "200", "150", "1000"]),
                 "--height", rng.choice(["300", "150", "400"])]
        if rng.random() < 0.3:
            args += ["--route", route]
        if rng.random() < 0.3:
            args += ["--plots", output(".png")]
    return args


def fuzz_cli(rng: random.Random, projects: list[Path], seeds: Seeds, runs: int,
             deadline: float, hang_s: float, memory_mb: float, out: Path) -> Tally:
    tally = Tally("cli", out)
    env = dict(os.environ, PYTHONPATH=str(ROOT), QT_QPA_PLATFORM="offscreen")
    env.pop("SWATHE_DEBUG", None)
    pool = projects or [seeds.work / n for n in seeds.projects]
    samples = [seeds.work / n for n in seeds.projects]
    for i in range(runs):
        if time.monotonic() > deadline:
            break
        project = rng.choice(samples) if rng.random() < 0.1 else rng.choice(pool)
        args = _cli_args(rng, project, seeds.work)
        with tempfile.TemporaryFile() as err, tempfile.TemporaryFile() as outf, \
                tempfile.NamedTemporaryFile("r") as rss:
            # Peak memory of the child itself: this process's own peak would be inherited
            # by a forked child's ru_maxrss, so /usr/bin/time (small) measures it instead.
            timer = ["/usr/bin/time", "-q", "-f", "%M", "-o", rss.name] \
                if os.path.exists("/usr/bin/time") else []
            t0 = time.perf_counter()
            proc = subprocess.Popen([*timer, sys.executable, "-m", "app.cli", *args],
                                    cwd=seeds.work, env=env, stdout=outf, stderr=err,
                                    start_new_session=True)
            timed_out = False
            try:
                proc.wait(timeout=hang_s)
            except subprocess.TimeoutExpired:
                os.killpg(proc.pid, signal.SIGKILL)  # the session: time and its child
                proc.wait()
                timed_out = True
            secs = time.perf_counter() - t0
            err.seek(0)
            stderr = err.read().decode("utf-8", "replace")
            try:
                peak_mb = float(rss.read().split()[-1]) / 1024.0
            except (ValueError, IndexError):
                peak_mb = 0.0
        rc = proc.returncode
        if timer and rc == 128 + 9:
            rc = -9
        lines = [ln for ln in stderr.splitlines() if ln.strip()]
        label = "swathe " + " ".join(args)
        if timed_out:
            outcome = "hang"
        elif peak_mb > memory_mb:
            outcome = "big memory"
        elif rc in (0, 1):
            outcome = "accepted" if len(lines) <= (1 if rc == 1 else 0) else "noise"
        elif rc == 2:
            outcome = "refused" if len(lines) == 1 and lines[0].startswith("swathe") \
                else "noise"
        else:
            outcome = "internal"
        data = project.read_text(errors="replace") if project.is_file() else ""
        tally.record(outcome, secs, label, data, ".swathe.json",
                     f"exit {rc}, peak {peak_mb:.0f} MB\n{stderr[-3000:]}", peak_mb)
        if (i + 1) % 50 == 0:
            print(f"  cli: {i + 1} runs, {dict(tally.counts)}", flush=True)
    return tally


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--inputs", type=int, default=10_000, help="inputs per reader (10000)")
    ap.add_argument("--cli", type=int, default=300, help="command-line runs (300)")
    ap.add_argument("--seconds", type=float, default=3600.0,
                    help="stop each stage after this long (default 3600 s)")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--hang-s", type=float, default=20.0)
    ap.add_argument("--memory-mb", type=float, default=1024.0)
    ap.add_argument("--out", type=Path, default=Path(tempfile.gettempdir()) / "swathe-fuzz")
    args = ap.parse_args(argv)
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    shutil.rmtree(args.out, ignore_errors=True)
    args.out.mkdir(parents=True)
    work = args.out / "work"
    work.mkdir()
    rng = random.Random(args.seed)
    seeds = Seeds(work)
    # Import everything once, then cap the address space: an allocation that would take the
    # process more than --memory-mb past this point fails as a MemoryError (counted).
    import kinematics.files.loader  # noqa: F401
    import kinematics.files.project  # noqa: F401

    with open("/proc/self/status") as fh:
        vm_kb = next(int(ln.split()[1]) for ln in fh if ln.startswith("VmSize:"))
    limit = int(vm_kb * 1024 + args.memory_mb * 2 ** 20)
    resource.setrlimit(resource.RLIMIT_AS, (limit, resource.RLIM_INFINITY))
    signal.signal(signal.SIGALRM, _on_alarm)
    t0 = time.monotonic()
    rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    tallies, accepted = fuzz_readers(seeds, rng, args.inputs, t0 + args.seconds, args.hang_s,
                                     args.out, args.memory_mb)
    t_readers = time.monotonic() - t0
    t2 = time.monotonic()
    inproc = fuzz_cli_in_process(rng, accepted, seeds, t2 + args.seconds, args.hang_s,
                                 args.memory_mb, args.out)
    t_inproc = time.monotonic() - t2
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    resource.setrlimit(resource.RLIMIT_AS, (resource.RLIM_INFINITY, resource.RLIM_INFINITY))
    t1 = time.monotonic()
    cli = fuzz_cli(rng, accepted, seeds, args.cli, t1 + args.seconds, args.hang_s,
                   args.memory_mb, args.out)
    t_cli = time.monotonic() - t1
    report = {"seed": args.seed, "readers_s": round(t_readers, 1),
              "cli_in_process_s": round(t_inproc, 1), "cli_s": round(t_cli, 1),
              "reader_peak_rss_mb": round(rss, 1), "reader_start_rss_mb": round(rss0, 1),
              "per_input_memory": _reset_peak(),
              **{k: t.summary() for k, t in tallies.items()},
              "cli_in_process": inproc.summary(), "cli": cli.summary()}
    (args.out / "report.json").write_text(json.dumps(report, indent=2))
    print(json.dumps(report, indent=2))
    bad = sum(t.counts[k] for t in [*tallies.values(), inproc, cli]
              for k in ("internal", "hang", "big memory", "noise"))
    print(f"findings: {bad} (saved under {args.out / 'findings'})")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
