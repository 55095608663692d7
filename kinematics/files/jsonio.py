"""Reading and writing JSON files: errors with line and column, atomic saves."""

from __future__ import annotations

import errno
import gc
import json
import math
import os
import re
import stat
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from kinematics.errors import FileReadError

MAX_INPUT_BYTES = 256 * 2 ** 20
"""Largest file read (256 MiB): a floor plan or project is far smaller; a bigger file is
refused before it is read."""


def one_line(text: str, limit: int = 200) -> str:
    """``text`` as one printable line: line breaks and control characters become spaces,
    text that cannot be encoded (lone surrogates) becomes ``\\udfff`` escapes, and the
    whole is cut to ``limit`` characters."""
    t = str(text).encode("utf-8", "backslashreplace").decode("utf-8")
    t = re.sub(r"[\x00-\x1f\x7f]+", " ", t).strip()
    return t if len(t) <= limit else t[: limit - 3] + "..."


def os_reason(exc: OSError) -> str:
    """A few words on why the file system refused, for a one-line message."""
    if exc.errno == errno.ENAMETOOLONG:
        return "the file name is longer than the file system allows"
    if exc.errno in (errno.EACCES, errno.EPERM):
        return "cannot be read (permission denied)"
    if exc.errno == errno.ENOTDIR:
        return "file not found (a part of the path is not a folder)"
    if exc.errno == errno.ELOOP:
        return "cannot be read (too many symbolic links)"
    return f"cannot be read ({one_line(exc.strerror or str(exc))})"


def check_input_file(path: str | os.PathLike[str], kind: str = "file") -> int:
    """Refuse a path that is not a readable regular file of at most :data:`MAX_INPUT_BYTES`
    with one :class:`FileReadError` line (missing, a folder, a device or pipe, too long a
    name, no permission); return its size in bytes."""
    name = one_line(os.fspath(path), 300)
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise FileReadError(name, "", "file not found") from None
    except (OSError, ValueError) as exc:  # ValueError: an embedded NUL in the name
        reason = os_reason(exc) if isinstance(exc, OSError) else "not a usable file name"
        raise FileReadError(name, "", reason) from None
    if stat.S_ISDIR(st.st_mode):
        raise FileReadError(name, "", f"is a folder, expected a {kind}")
    if not stat.S_ISREG(st.st_mode):
        raise FileReadError(name, "", f"is not a regular file (a device or pipe?); expected "
                                      f"a {kind}")
    if st.st_size > MAX_INPUT_BYTES:
        raise FileReadError(name, "", f"is {st.st_size / 2 ** 20:.0f} MiB; expected a {kind} "
                                      f"of at most {MAX_INPUT_BYTES // 2 ** 20} MiB")
    if not os.access(path, os.R_OK):
        raise FileReadError(name, "", "cannot be read (permission denied)")
    return st.st_size


def read_input_bytes(path: str | os.PathLike[str], kind: str = "file") -> bytes:
    """The bytes of an input file after :func:`check_input_file`; OS failures are one
    :class:`FileReadError` line."""
    check_input_file(path, kind)
    try:
        with open(path, "rb") as fh:
            return fh.read(MAX_INPUT_BYTES + 1)
    except OSError as exc:
        raise FileReadError(one_line(os.fspath(path), 300), "", os_reason(exc)) from None


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

    NaN and Infinity literals are refused (they are not JSON). A leading UTF-8 byte-order
    mark is skipped.
    """
    data = read_input_bytes(path, "JSON file")
    name = one_line(os.fspath(path), 300)
    if data.startswith(b"\xef\xbb\xbf"):  # a UTF-8 byte-order mark, as some editors write
        data = data[3:]
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        col = exc.start - (data.rfind(b"\n", 0, exc.start) + 1) + 1
        raise FileReadError(name, f"line {line}, column {col}", "expected UTF-8 text") from None
    return parse_json(text, name)


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


class _Constant:
    """Stands in for a NaN / Infinity literal while its key path is looked for."""


def _constant_key(text: str) -> str:
    """The key path (``zones[0].speed_mps``) of the first NaN / Infinity literal, or ``""``
    (the text parsed a second time with the literals kept as markers)."""
    try:
        tree = json.loads(text, parse_constant=lambda _n: _Constant(), parse_int=_int_or_inf)
    except (ValueError, RecursionError):
        return ""
    stack: list[tuple[Any, str]] = [(tree, "")]
    while stack:
        node, path = stack.pop()
        if isinstance(node, _Constant):
            return path
        if isinstance(node, dict):
            items = [((f"{path}.{k}" if path else str(k)), v) for k, v in node.items()]
        elif isinstance(node, list):
            items = [(f"{path}[{i}]", v) for i, v in enumerate(node)]
        else:
            continue
        stack.extend((v, kp) for kp, v in reversed(items))
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
        where = _where_constant(text)
        key = _constant_key(text)
        if key:
            where = f"{where} ({key})" if where else key
        raise FileReadError(file, where, str(exc)) from None
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


def _temp_prefix(p: Path) -> str:
    return f".{p.name}."


def _sweep_stale(directory: Path, p: Path) -> None:
    """Remove temporary files a writer of ``p`` left when it was killed mid-write (their
    names carry the writer's process id; a live writer's file is left alone), so killed
    writes never pile up."""
    prefix = _temp_prefix(p)
    try:
        names = [n for n in os.listdir(directory) if n.startswith(prefix) and
                 n.endswith(".tmp")]
    except OSError:
        return
    for n in names:
        parts = n[len(prefix):].split(".")
        if len(parts) < 3 or not parts[0].startswith("pid") or not parts[0][3:].isdigit():
            continue
        pid = int(parts[0][3:])
        if pid == os.getpid():
            continue
        try:
            os.kill(pid, 0)
            continue  # that writer is alive
        except ProcessLookupError:
            pass
        except OSError:
            continue  # alive, owned by someone else
        try:
            os.unlink(directory / n)
        except OSError:
            pass


def _atomic_write(path: str | os.PathLike[str], data: bytes | Iterable[bytes]) -> None:
    p = Path(path)
    directory = p.parent if str(p.parent) else Path(".")
    import tempfile  # only saves need it

    _sweep_stale(directory, p)
    fd, tmp = tempfile.mkstemp(prefix=f"{_temp_prefix(p)}pid{os.getpid()}.", suffix=".tmp",
                               dir=directory)
    try:
        with os.fdopen(fd, "wb") as fh:
            if isinstance(data, bytes):
                fh.write(data)
            else:
                for piece in data:
                    fh.write(piece)
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


def atomic_write_text(path: str | os.PathLike[str], text: str) -> None:
    """Write ``text`` (UTF-8) to ``path`` atomically: a temporary file beside it, flushed to
    disk, then a rename over the old file.

    A crash or kill mid-write leaves the old file intact; the temporary file a killed write
    leaves is removed by the next write of the same file.
    """
    _atomic_write(path, text.encode("utf-8"))


def atomic_write_pieces(path: str | os.PathLike[str], pieces: Iterable[str]) -> None:
    """:func:`atomic_write_text` of ``"".join(pieces)``, each piece encoded and written as
    it comes, so a long text (a schedule's samples) is never held whole, neither as text
    nor as bytes."""
    _atomic_write(path, (piece.encode("utf-8") for piece in pieces))


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes) -> None:
    """Binary twin of :func:`atomic_write_text`."""
    _atomic_write(path, bytes(data))


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
