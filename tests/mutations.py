"""Edits that break a valid input file, shared by the suite's property tests and bench/fuzz.py.

The same edits are driven by two sources of choices: hypothesis (``DrawPick``, so a failure
shrinks and a fixed example can be kept with ``@example``) and a seeded ``random.Random``
(``RandomPick``, for the long fuzz run in ``bench/fuzz.py``). Not a test module itself.
"""

from __future__ import annotations

import random
import re
from collections.abc import Callable, Sequence
from typing import Any, Protocol

TEXT_JUNK = '{}[]",:0123456789.-eE truefalsnNaIiy\\\n\x00\u00e9'
BYTE_FLIPS = b"0123456789-.\n xAE\x00\xff"
TEXT_OPS = ("delete", "insert", "replace", "truncate")
BYTE_OPS = ("flip", "delete", "insert", "truncate")
NUMBER = re.compile(r"-?\d+(\.\d+)?(e-?\d+)?")


class Pick(Protocol):
    """Where the choices of an edit come from."""

    def integer(self, lo: int, hi: int) -> int: ...

    def choice(self, options: Sequence[Any]) -> Any: ...

    def text(self, alphabet: str, max_size: int) -> str: ...

    def blob(self, max_size: int) -> bytes: ...


class RandomPick:
    """Choices from a seeded ``random.Random``."""

    def __init__(self, rng: random.Random) -> None:
        self.rng = rng

    def integer(self, lo: int, hi: int) -> int:
        return self.rng.randint(lo, hi)

    def choice(self, options: Sequence[Any]) -> Any:
        return self.rng.choice(options)

    def text(self, alphabet: str, max_size: int) -> str:
        return "".join(self.rng.choice(alphabet) for _ in range(self.rng.randint(0, max_size)))

    def blob(self, max_size: int) -> bytes:
        return bytes(self.rng.randrange(256) for _ in range(self.rng.randint(0, max_size)))


class DrawPick:
    """Choices from a hypothesis ``draw`` (inside an ``@st.composite`` strategy)."""

    def __init__(self, draw: Callable[[Any], Any]) -> None:
        from hypothesis import strategies as st

        self.draw = draw
        self.st = st

    def integer(self, lo: int, hi: int) -> int:
        return self.draw(self.st.integers(lo, hi))

    def choice(self, options: Sequence[Any]) -> Any:
        return self.draw(self.st.sampled_from(list(options)))

    def text(self, alphabet: str, max_size: int) -> str:
        return self.draw(self.st.text(alphabet=alphabet, max_size=max_size))

    def blob(self, max_size: int) -> bytes:
        return self.draw(self.st.binary(max_size=max_size))


def edit_text(pick: Pick, text: str, junk: str = TEXT_JUNK, ops: Sequence[str] = TEXT_OPS,
              numbers: Sequence[Any] = ()) -> str:
    """1-4 character edits: delete, insert junk, replace by junk, cut off, swap a number
    (op ``number``: a number in the text becomes one of ``numbers``)."""
    for _ in range(pick.integer(1, 4)):
        i = pick.integer(0, len(text))
        j = pick.integer(i, min(len(text), i + 12))
        op = pick.choice(ops)
        if op == "delete":
            text = text[:i] + text[j:]
        elif op == "insert":
            text = text[:i] + pick.text(junk, 6) + text[i:]
        elif op == "replace":
            text = text[:i] + pick.text(junk, 6) + text[j:]
        elif op == "truncate":
            text = text[:i]
        elif op == "number" and numbers:
            found = list(NUMBER.finditer(text))
            if found:
                m = pick.choice(found)
                text = text[:m.start()] + repr(pick.choice(numbers)) + text[m.end():]
    return text


def edit_bytes(pick: Pick, data: bytes, flips: bytes = BYTE_FLIPS,
               ops: Sequence[str] = BYTE_OPS) -> bytes:
    """1-6 byte edits: overwrite one byte, delete up to 40, insert up to 8 random, cut off."""
    b = bytearray(data)
    for _ in range(pick.integer(1, 6)):
        i = pick.integer(0, len(b))
        op = pick.choice(ops)
        if op == "flip" and i < len(b):
            b[i] = pick.choice(flips)
        elif op == "delete":
            del b[i:i + pick.integer(1, 40)]
        elif op == "insert":
            b[i:i] = pick.blob(8)
        elif op == "truncate":
            del b[i:]
    return bytes(b)
