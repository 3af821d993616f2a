"""Non-dominated filtering (all objectives turned into minimisation first)."""
from __future__ import annotations

import bisect

import numpy as np

__all__ = ["to_minimization", "nondominated_mask", "dominates"]

# Rows compared at once in the general (k >= 4) filter: bounds the (block, n, k) temporaries.
_BLOCK = 512


def to_minimization(values: np.ndarray, directions) -> np.ndarray:
    """Flip the sign of maximised objectives so that smaller is better everywhere."""
    sign = np.array([-1.0 if d == "maximize" else 1.0 for d in directions])
    return np.asarray(values, dtype=float) * sign


def dominates(a: np.ndarray, b: np.ndarray) -> bool:
    """True if a is no worse than b everywhere and better somewhere (minimisation)."""
    return bool(np.all(a <= b) and np.any(a < b))


def _mask_2(f: np.ndarray) -> np.ndarray:
    order = np.lexsort((f[:, 1], f[:, 0]))
    best = np.minimum.accumulate(f[order, 1])
    keep = np.empty(len(f), dtype=bool)
    # A point survives if no earlier (smaller or equal f0) point has a smaller-or-equal f1.
    prev = np.concatenate([[np.inf], best[:-1]])
    keep[order] = f[order, 1] < prev
    return keep


def _mask_3(f: np.ndarray) -> np.ndarray:
    """Sweep in lexicographic order keeping a staircase of (f1, f2): O(n log n) comparisons."""
    order = np.lexsort((f[:, 2], f[:, 1], f[:, 0]))
    keep = np.zeros(len(f), dtype=bool)
    xs: list[float] = []  # staircase f1 ascending, with f2 strictly descending
    ys: list[float] = []
    for i in order.tolist():
        x, y = f[i, 1], f[i, 2]
        j = bisect.bisect_right(xs, x)
        if j and ys[j - 1] <= y:
            continue  # an earlier point is no worse in f0 and in both f1 and f2
        keep[i] = True
        k = j
        while k < len(xs) and ys[k] >= y:
            k += 1
        xs[j:k] = [x]
        ys[j:k] = [y]
    return keep


def _mask_general(f: np.ndarray) -> np.ndarray:
    n = len(f)
    keep = np.ones(n, dtype=bool)
    for start in range(0, n, _BLOCK):
        c = f[start:start + _BLOCK]
        le = np.all(f[None, :, :] <= c[:, None, :], axis=2)
        lt = np.any(f[None, :, :] < c[:, None, :], axis=2)
        keep[start:start + _BLOCK] = ~np.any(le & lt, axis=1)
    return keep


def nondominated_mask(f: np.ndarray) -> np.ndarray:
    """Mask of the rows of f (n, k) that no other row dominates (minimisation).

    Exact duplicates of a non-dominated point are all kept.

    >>> nondominated_mask(np.array([[1, 2], [2, 1], [2, 2], [1, 2]])).tolist()
    [True, True, False, True]
    >>> nondominated_mask(np.array([[1, 2, 3], [2, 1, 3], [2, 2, 3], [1, 2, 3], [0, 5, 5]])).tolist()
    [True, True, False, True, True]
    """
    f = np.asarray(f, dtype=float)
    if f.ndim != 2 or len(f) == 0:
        return np.ones(len(f), dtype=bool)
    # Filter unique rows, then give every copy of a survivor its verdict.
    uniq, inverse = np.unique(f, axis=0, return_inverse=True)
    k = uniq.shape[1]
    if k == 1:
        mask = uniq[:, 0] == uniq[:, 0].min()
    elif k == 2:
        mask = _mask_2(uniq)
    elif k == 3:
        mask = _mask_3(uniq)
    else:
        mask = _mask_general(uniq)
    return mask[inverse.ravel()]
