"""The non-dominated filter against a brute-force definition (Pareto dominance, minimisation)."""
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from sinkopt.search.pareto import dominates, nondominated_mask


def brute(f):
    return np.array([not any(dominates(f[j], f[i]) for j in range(len(f)) if j != i)
                     for i in range(len(f))])


@settings(max_examples=200, deadline=None)
@given(k=st.integers(1, 5), n=st.integers(1, 40), seed=st.integers(0, 2**31),
       levels=st.sampled_from([3, 6, 1000]))
def test_matches_brute_force(k, n, seed, levels):
    # Few levels force ties and exact duplicates, the cases a sweep gets wrong.
    f = np.random.default_rng(seed).integers(0, levels, size=(n, k)).astype(float)
    np.testing.assert_array_equal(nondominated_mask(f), brute(f))


@pytest.mark.parametrize("k", [2, 3, 4])
def test_large_random_sets(k):
    f = np.random.default_rng(k).random((3000, k))
    mask = nondominated_mask(f)
    front = f[mask]
    # No survivor is dominated by any point, and every rejected point is dominated by a survivor.
    for i in np.random.default_rng(0).choice(len(f), 200, replace=False):
        dominated = np.any(np.all(front <= f[i], axis=1) & np.any(front < f[i], axis=1))
        assert dominated != mask[i]
