"""Reading and writing JSON files: errors with line and column, atomic saves."""

from __future__ import annotations

import gc
import json
import math
import os
import re
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from kinematics.errors import FileReadError


@contextmanager
def collector_held() -> Iterator[None]:
    """Hold off Python's cyclic garbage collector while a file is read and its model built.

    A big floor plan makes hundreds of thousands of lists and tuples, none in a cycle; each
    burst of allocations would start a collection that walks all of them (about half the
    load time of a 20,000-edge plan). Reference counting still frees everything; the
    collector runs again as before once the block ends (nested blocks are fine).
    """
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def read_json(path: str | os.PathLike[str]) -> Any:
    """Read a JSON file; raise :class:`FileReadError` naming line and column on bad JSON.

    NaN and Infinity literals are refused (they are not JSON).
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise FileReadError(str(p), "", "file not found") from None
    except IsADirectoryError:
        raise FileReadError(str(p), "", "is a folder, expected a file") from None
    except UnicodeDecodeError as exc:
        raise FileReadError(str(p), f"byte {exc.start}", "expected UTF-8 text") from None
    except OSError as exc:
        raise FileReadError(str(p), "", f"cannot be read ({exc.strerror})") from None
    return parse_json(text, str(p))


def _refuse_constant(name: str) -> Any:
    raise ValueError(f"{name} is not allowed; expected a finite number")


# A JSON string, or one of the non-JSON constants Python's json module would accept.
_CONSTANT = re.compile(r'"(?:[^"\\]|\\.)*"|(-?Infinity|NaN)')


def _where_constant(text: str) -> str:
    """Line and column of the first NaN / Infinity literal outside a string, or ``""``."""
    for m in _CONSTANT.finditer(text):
        if m.group(1):
            line = text.count("\n", 0, m.start()) + 1
            col = m.start() - (text.rfind("\n", 0, m.start()) + 1) + 1
            return f"line {line}, column {col}"
    return ""


def _int_or_inf(literal: str) -> int | float:
    """An integer literal; one beyond any float's range reads as infinity, so it meets the
    same "expected a finite number" as ``1e999`` does (RFC 8259 section 6 lets a parser limit
    the range of numbers), never an overflow deep inside a computation."""
    if len(literal) > 400:  # surely beyond; spares int() a long conversion
        return -math.inf if literal.startswith("-") else math.inf
    n = int(literal)
    try:
        float(n)
    except OverflowError:
        return -math.inf if n < 0 else math.inf
    return n


def parse_json(text: str, file: str = "<text>") -> Any:
    """Parse JSON text; errors name ``file`` and the line and column.

    Numbers beyond a float's range read as infinity (Python's own reading of ``1e999``), for
    the readers of each file to refuse with the key path (:mod:`kinematics.files.validate`)."""
    try:
        return json.loads(text, parse_constant=_refuse_constant, parse_int=_int_or_inf)
    except json.JSONDecodeError as exc:
        raise FileReadError(file, f"line {exc.lineno}, column {exc.colno}",
                            f"invalid JSON ({exc.msg})") from None
    except ValueError as exc:
        raise FileReadError(file, _where_constant(text), str(exc)) from None
    except RecursionError:
        raise FileReadError(file, "", "JSON nested too deeply") from None


def _final_mode(p: Path) -> int:
    """Mode the new file gets: the old file's, else what a plain create would give (umask)."""
    try:
        return os.stat(p).st_mode & 0o7777
    except OSError:
        return 0o666 & ~_umask()


def _umask() -> int:
    # Read without changing it: os.umask() would briefly alter it for every thread.
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    return 0o022


def atomic_write_text(path: str | os.PathLike[str], text: str) -> None:
    """Write ``text`` to ``path`` atomically: a temporary file beside it, then a rename.

    A crash mid-write leaves the old file intact.
    """
    p = Path(path)
    directory = p.parent if str(p.parent) else Path(".")
    import tempfile  # only saves need it

    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=directory)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, _final_mode(p))  # mkstemp makes 0600; keep the file's usual mode
        os.replace(tmp, p)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes) -> None:
    """Binary twin of :func:`atomic_write_text`."""
    p = Path(path)
    directory = p.parent if str(p.parent) else Path(".")
    import tempfile  # only saves need it

    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=directory)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, _final_mode(p))
        os.replace(tmp, p)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def _clean(obj: Any) -> Any:
    """Round floats for stable, readable files; refuse non-finite numbers."""
    if isinstance(obj, float):
        if not math.isfinite(obj):
            raise ValueError("refusing to write a non-finite number")
        r = round(obj, 9)
        return 0.0 if r == 0 else r
    if isinstance(obj, dict):
        return {k: _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalar
        return _clean(obj.item())
    return obj


def dumps(obj: Any, indent: int | None = 2) -> str:
    """JSON text with floats rounded to 1e-9 and numpy scalars converted."""
    return json.dumps(_clean(obj), indent=indent, allow_nan=False) + "\n"


def write_json(path: str | os.PathLike[str], obj: Any) -> None:
    """Write ``obj`` as JSON atomically."""
    atomic_write_text(path, dumps(obj))
