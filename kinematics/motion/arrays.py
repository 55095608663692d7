"""Small array helpers shared by the core.

:func:`unique_sorted` is what ``numpy.unique`` returns for a flat array, without the import of
``numpy.ma`` that ``numpy.unique`` makes on first use (about 10 ms of every command's start).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike


def unique_sorted(values: ArrayLike) -> np.ndarray:
    """The sorted distinct values of ``values`` (flattened), as ``numpy.unique`` gives them.

    NaNs are not expected here (they are refused on input); equal values, including ``0.0``
    and ``-0.0``, are kept once, the first after sorting, as ``numpy.unique`` keeps them.

    Examples
    --------
    >>> unique_sorted([3, 1, 3, 2]).tolist()
    [1, 2, 3]
    """
    a = np.sort(np.asarray(values).ravel())
    if a.size < 2:
        return a
    keep = np.empty(a.size, dtype=bool)
    keep[0] = True
    np.not_equal(a[1:], a[:-1], out=keep[1:])
    return a[keep]
