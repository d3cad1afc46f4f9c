"""Counts of threshold functions against published values, by classifying every function.

Every function of n ≤ 4 variables is passed to ``identify``; the number found to be threshold
functions is compared with the published counts, and every realisation returned is checked
against its truth table.
"""

from __future__ import annotations

import numpy as np
import pytest

from thresholdc.synth.identify import identify, is_threshold


def all_tables(n: int) -> np.ndarray:
    """Every truth table of n variables, one per row: row F has entry k = bit k of F."""
    size = 1 << n
    F = np.arange(1 << size, dtype=np.int64)
    return ((F[:, None] >> np.arange(size)) & 1).astype(np.uint8)


def depends_on_all(tables: np.ndarray, n: int) -> np.ndarray:
    """For each row, whether the function depends on every one of its n variables."""
    rows = len(tables)
    dep = np.ones(rows, dtype=bool)
    for i in range(n):
        cube = tables.reshape(rows, -1, 2, 1 << i)  # axis 2 is x_i
        dep &= (cube[:, :, 0, :] != cube[:, :, 1, :]).any(axis=(1, 2))
    return dep


@pytest.fixture(scope="module")
def classified():
    """n -> (tables, list of identify results)."""
    return {n: (t, [identify(row) for row in t]) for n in range(5) for t in [all_tables(n)]}


# OEIS A000609; Muroga, Threshold Logic and Its Applications, 1971, Table 2.3.2
@pytest.mark.parametrize("n, count", [(0, 2), (1, 4), (2, 14), (3, 104), (4, 1882)])
def test_threshold_functions_of_n_or_fewer_variables(classified, n, count):
    _, results = classified[n]
    assert sum(r is not None for r in results) == count


# OEIS A000615
@pytest.mark.parametrize("n, count", [(0, 2), (1, 2), (2, 8), (3, 72), (4, 1536)])
def test_threshold_functions_of_exactly_n_variables(classified, n, count):
    tables, results = classified[n]
    found = np.array([r is not None for r in results])
    assert int((found & depends_on_all(tables, n)).sum()) == count


@pytest.mark.parametrize("n", range(5))
def test_every_realisation_reproduces_its_table(classified, n):
    tables, results = classified[n]
    keep = [k for k, r in enumerate(results) if r is not None]
    W = np.array([results[k].weights for k in keep], dtype=np.int64).reshape(len(keep), n)
    T = np.array([results[k].threshold for k in keep], dtype=np.int64)
    X = (np.arange(1 << n)[:, None] >> np.arange(n)) & 1
    realised = (W @ X.T >= T[:, None]).astype(np.uint8)
    np.testing.assert_array_equal(realised, tables[keep])


def test_is_threshold_agrees_with_identify(classified):
    for n in range(4):
        tables, results = classified[n]
        assert [is_threshold(t) for t in tables] == [r is not None for r in results]
