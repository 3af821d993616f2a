"""Non-dominated filtering (all objectives turned into minimisation first)."""
from __future__ import annotations

import numpy as np

__all__ = ["to_minimization", "nondominated_mask", "dominates"]


def to_minimization(values: np.ndarray, directions) -> np.ndarray:
    """Flip the sign of maximised objectives so that smaller is better everywhere."""
    sign = np.array([-1.0 if d == "maximize" else 1.0 for d in directions])
    return np.asarray(values, dtype=float) * sign


def dominates(a: np.ndarray, b: np.ndarray) -> bool:
    """True if a is no worse than b everywhere and better somewhere (minimisation)."""
    return bool(np.all(a <= b) and np.any(a < b))


def nondominated_mask(f: np.ndarray) -> np.ndarray:
    """Mask of the rows of f (n, k) that no other row dominates (minimisation).

    Duplicates of a non-dominated point are all kept.

    >>> nondominated_mask(np.array([[1, 2], [2, 1], [2, 2], [1, 2]])).tolist()
    [True, True, False, True]
    """
    f = np.asarray(f, dtype=float)
    n = f.shape[0]
    keep = np.ones(n, dtype=bool)
    order = np.lexsort(f.T[::-1])
    for i in order:
        if not keep[i]:
            continue
        le = np.all(f[i] <= f, axis=1) & np.any(f[i] < f, axis=1)
        keep &= ~le
    return keep
