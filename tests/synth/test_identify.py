"""Tests of threshold-function identification (thresholdc.synth.identify)."""

from __future__ import annotations

import dataclasses
import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thresholdc.synth import identify as ident
from thresholdc.synth.identify import MAX_VARIABLES, Realisation, identify, is_threshold


def points(n: int) -> np.ndarray:
    """All inputs of n variables, row k = input k (x_i = (k >> i) & 1)."""
    return (np.arange(1 << n)[:, None] >> np.arange(n)) & 1


def table_of(weights, threshold) -> np.ndarray:
    """The truth table of [Σ w_i x_i ≥ T], computed here independently of the package."""
    w = np.asarray(weights, dtype=np.int64)
    return (points(len(w)) @ w >= threshold).astype(np.uint8)


def table_from(fn, n: int) -> list[int]:
    """The truth table of a Python predicate of n Boolean arguments."""
    return [int(bool(fn(*((k >> i) & 1 for i in range(n))))) for k in range(1 << n)]


# ----------------------------------------------------------------------------- known functions
# The realisations below are the textbook constructions (common practice); that they are the
# minimal ones is checked independently by the brute-force tests further down.


@pytest.mark.parametrize("n", [1, 2, 3, 5, 8])
def test_and(n):  # common practice: AND of n is [Σx ≥ n]
    r = identify(table_from(lambda *x: all(x), n))
    assert r == Realisation((1,) * n, n)


@pytest.mark.parametrize("n", [1, 2, 3, 5, 8])
def test_or(n):  # common practice: OR of n is [Σx ≥ 1]
    r = identify(table_from(lambda *x: any(x), n))
    assert r == Realisation((1,) * n, 1)


@pytest.mark.parametrize("n", [3, 5, 7, 11])
def test_majority(n):  # common practice: majority of an odd n is [Σx ≥ (n + 1) / 2]
    r = identify(table_from(lambda *x: sum(x) > n // 2, n))
    assert r == Realisation((1,) * n, (n + 1) // 2)


@pytest.mark.parametrize("n, k", [(4, 2), (5, 3), (6, 4), (7, 2)])
def test_at_least_k(n, k):  # common practice: at least k of n is [Σx ≥ k]
    r = identify(table_from(lambda *x: sum(x) >= k, n))
    assert r == Realisation((1,) * n, k)


def test_and_not():  # x0 and not x1 is [x0 - x1 ≥ 1]
    assert identify([0, 1, 0, 0]) == Realisation((1, -1), 1)


def test_nand_and_nor():  # common practice: NAND is [-Σx ≥ 1 - n], NOR is [-Σx ≥ 0]
    assert identify(table_from(lambda a, b, c: not (a and b and c), 3)) == Realisation(
        (-1, -1, -1), -2)
    assert identify(table_from(lambda a, b: not (a or b), 2)) == Realisation((-1, -1), 0)


def test_at_most():  # at most 1 of 3 is [-Σx ≥ -1]
    assert identify(table_from(lambda *x: sum(x) <= 1, 3)) == Realisation((-1, -1, -1), -1)


def test_weighted_and_or():  # x0 and (x1 or x2) is [2x0 + x1 + x2 ≥ 3]
    assert identify(table_from(lambda a, b, c: a and (b or c), 3)) == Realisation((2, 1, 1), 3)


def test_irrelevant_variables_get_zero_weight():
    assert identify(table_from(lambda a, b, c: b, 3)) == Realisation((0, 1, 0), 1)
    assert identify(table_from(lambda a, b, c, d: not d, 4)) == Realisation((0, 0, 0, -1), 0)


@pytest.mark.parametrize("n", [0, 1, 3, 6])
def test_constants(n):
    # f ≡ 1: weights 0, threshold 0 (cost 0, nothing smaller).  f ≡ 0: cost 0 is impossible
    # (it is true at x = 0), so cost 1: weights 0 with T = 1 is the only cost-1 candidate
    # that is false at x = 0 and everywhere else.
    assert identify([1] * (1 << n)) == Realisation((0,) * n, 0)
    assert identify([0] * (1 << n)) == Realisation((0,) * n, 1)


def test_one_variable():
    assert identify([0, 1]) == Realisation((1,), 1)
    assert identify([1, 0]) == Realisation((-1,), 0)


def test_xor_and_parity_are_not_threshold():
    assert identify([0, 1, 1, 0]) is None
    assert identify([1, 0, 0, 1]) is None
    assert identify(table_from(lambda *x: sum(x) % 2, 3)) is None
    assert not is_threshold([0, 1, 1, 0])


def test_two_summable_function_is_not_threshold():
    # x0x1 or x2x3 is unate in every variable but not threshold: the true points 1100 and
    # 0011 have the same sum as the false points 1010 and 0101.
    f = table_from(lambda a, b, c, d: (a and b) or (c and d), 4)
    assert identify(f) is None
    assert not is_threshold(f)


def test_largest_bound():
    n = MAX_VARIABLES
    r = identify(np.ones(1 << n, dtype=np.uint8))
    assert r == Realisation((0,) * n, 0)
    f = np.zeros(1 << n, dtype=np.uint8)
    f[-1] = 1  # AND of all variables
    assert identify(f) == Realisation((1,) * n, n)


# --------------------------------------------------------------------------------- input forms


def test_accepts_lists_tuples_and_arrays():
    f = [0, 0, 0, 1, 0, 1, 1, 1]
    expected = Realisation((1, 1, 1), 2)
    for form in (f, tuple(f), np.array(f), np.array(f, dtype=bool), np.array(f, dtype=np.int8),
                 np.array(f, dtype=">i4"), [bool(v) for v in f], np.array(f, dtype=float),
                 np.repeat(f, 2)[::2]):
        assert identify(form) == expected


def test_accepts_long_tables_given_as_lists():
    f = table_of([3, -2, 2, 1, 1, -1, 1, 1, 1], 3)  # 512 entries: longer than any fast path
    r = identify(f.tolist())
    np.testing.assert_array_equal(table_of(r.weights, r.threshold), f)


@pytest.mark.parametrize("bad, match", [
    ([0, 1, 1], r"length 2\*\*n .*Got length 3"),
    ([], r"Got length 0"),
    ([0, 2], r"values 0 or 1\. Got 2 at index 1"),
    ([0, 1, -1, 0], r"Got -1 at index 2"),
    (np.array([0, 1, 1, 256]), r"Got 256 at index 3"),
    ([0, 0.5], r"Got 0\.5 at index 1"),
    (["0", "1"], r"values 0 or 1 \(ints or bools\)\. Got values of type"),
    ([[0, 1], [1, 1]], r"1-D .*shape \(2, 2\)"),
    ([[0], [1, 1]], r"1-D sequence"),
    (np.zeros(1 << (MAX_VARIABLES + 1), dtype=np.uint8), rf"at most {MAX_VARIABLES} variables"),
])
def test_bad_input_raises_value_error(bad, match):
    with pytest.raises(ValueError, match=match):
        identify(bad)
    with pytest.raises(ValueError, match=match):
        is_threshold(bad)


def test_realisation_is_frozen_with_short_repr():
    r = identify([0, 1, 0, 0])
    assert repr(r) == "Realisation(weights=(1, -1), threshold=1)"
    assert r.cost == 3 and r.n == 2
    with pytest.raises(dataclasses.FrozenInstanceError):
        r.threshold = 0
    np.testing.assert_array_equal(r.truth_table(), [0, 1, 0, 0])


# -------------------------------------------------------------------- minimality, brute force


def l1_ball(dims: int, radius: int) -> np.ndarray:
    """Every integer vector of ``dims`` entries with Σ|entries| ≤ radius."""
    rows = np.zeros((1, 0), dtype=np.int64)
    for _ in range(dims):
        used = np.abs(rows).sum(axis=1)
        grown = [np.hstack([rows[used + abs(v) <= radius],
                            np.full((int((used + abs(v) <= radius).sum()), 1), v)])
                 for v in range(-radius, radius + 1)]
        rows = np.vstack(grown)
    return rows


def brute_force_minima(n: int, radius: int) -> dict[int, tuple[tuple[int, ...], int, int]]:
    """Function (as an integer) -> (weights, threshold, cost) of its best realisation of cost
    ≤ radius, by the rule: smallest cost, then |T|, then weights lexicographically."""
    R = l1_ball(n + 1, radius)
    W, T = R[:, :n], R[:, n]
    tables = (W @ points(n).T >= T[:, None]).astype(np.int64)
    key = tables @ (np.int64(1) << np.arange(1 << n))
    cost = np.abs(R).sum(axis=1)
    order = np.lexsort(tuple(W[:, i] for i in reversed(range(n))) + (np.abs(T), cost, key))
    k = key[order]
    first = order[np.r_[True, k[1:] != k[:-1]]]
    return {int(key[o]): (tuple(int(v) for v in W[o]), int(T[o]), int(cost[o])) for o in first}


# radius: the box holds every realisation of cost ≤ radius, so a brute-force minimum of cost
# ≤ radius is the true minimum; the test asserts every threshold function is covered.
@pytest.mark.parametrize("n, radius", [(0, 2), (1, 3), (2, 5), (3, 8), (4, 14)])
def test_minimal_against_brute_force(n, radius):
    best = brute_force_minima(n, radius)
    for F in range(1 << (1 << n)):
        table = [(F >> k) & 1 for k in range(1 << n)]
        r = identify(table)
        if r is None:
            assert F not in best
            continue
        assert F in best and best[F][2] <= radius, (table, r)
        assert (r.weights, r.threshold) == best[F][:2], table


@pytest.fixture
def ilp_only(monkeypatch):
    """Force the ILP path (no enumeration) with empty caches, and empty them afterwards."""
    ident._clear_caches()
    monkeypatch.setattr(ident, "_ENUM_BUDGET", 0)
    yield
    ident._clear_caches()


@pytest.mark.slow
def test_ilp_path_against_brute_force(ilp_only):
    best = brute_force_minima(3, 8)
    for F in range(256):
        table = [(F >> k) & 1 for k in range(8)]
        r = identify(table)
        assert (r is None) == (F not in best)
        if r is not None:
            assert (r.weights, r.threshold) == best[F][:2], table


def test_ilp_path_agrees_with_enumeration():
    rng = np.random.default_rng(7)
    tables = [table_of(rng.integers(-4, 5, n), int(rng.integers(-4, 5)))
              for n in (5, 6, 6, 7) for _ in range(3)]
    enumerated = [identify(t) for t in tables]
    ident._clear_caches()
    saved = ident._ENUM_BUDGET
    ident._ENUM_BUDGET = 0
    try:
        by_ilp = [identify(t) for t in tables]
    finally:
        ident._ENUM_BUDGET = saved
        ident._clear_caches()
    assert by_ilp == enumerated


def test_lexmin_orders_weights_inside_symmetric_parts():
    # a made-up analysis: positions 0, 1 are one symmetric class of positive variables
    # (original 2 and 0), position 2 a class of one negative variable (original 1)
    an = ident._Analysis(n=3, order=(2, 0, 1), negative=(False, False, True),
                         classes=((0, 1), (2,)), g_bits=0, f_zero=0)
    parts = ident._parts(an)
    # two optimal vectors up to permutation: (3, 1 | 1) and (2, 2 | 1)
    r = ident._lexmin(an, parts, (((3, 1, 1), 2), ((2, 2, 1), 2)))
    assert r == Realisation((1, -1, 3), 2)  # smallest weight first among x0, x2


def test_symmetric_variables_of_mixed_polarity():
    # x0 + x1 - x2 - x3 ≥ 1 : the positive form is symmetric in all four variables
    f = table_of([1, 1, -1, -1], 1)
    assert identify(f) == Realisation((1, 1, -1, -1), 1)


# ------------------------------------------------------------------------------- random checks


@st.composite
def weighted_functions(draw):
    n = draw(st.integers(1, 7))
    w = draw(st.lists(st.integers(-6, 6), min_size=n, max_size=n))
    T = draw(st.integers(-12, 12))
    return w, T


@settings(max_examples=60, deadline=None)
@given(weighted_functions())
def test_random_realisations_reproduce_and_cost_no_more(case):
    w, T = case
    f = table_of(w, T)
    r = identify(f)
    assert r is not None and is_threshold(f)
    np.testing.assert_array_equal(table_of(r.weights, r.threshold), f)
    assert r.cost <= sum(abs(v) for v in w) + abs(T)


@settings(max_examples=40, deadline=None)
@given(st.integers(2, 6).flatmap(
    lambda n: st.lists(st.integers(0, 1), min_size=1 << n, max_size=1 << n)))
def test_random_tables_classified_consistently(table):
    r = identify(table)
    assert (r is not None) == is_threshold(table)
    if r is not None:
        np.testing.assert_array_equal(table_of(r.weights, r.threshold), table)


def test_negating_inputs_keeps_threshold_status():
    # a function and its input-negated copies are threshold functions together
    rng = np.random.default_rng(3)
    X = points(4)
    for _ in range(40):
        table = rng.integers(0, 2, 16)
        for mask in range(16):
            flipped = table[(X @ (1 << np.arange(4))) ^ mask]
            assert is_threshold(flipped) == is_threshold(table)


def test_cache_returns_equal_results():
    f = table_of([2, 1, 1], 2)
    assert identify(f) == identify(f.tolist()) == identify(tuple(f))


def test_all_permutations_of_a_function():
    # permuting the variables of [3a + 2b + c + d ≥ 4] permutes the minimal weights
    base = identify(table_of([3, 2, 1, 1], 4))
    for perm in itertools.permutations(range(4)):
        w = [base.weights[p] for p in perm]
        r = identify(table_of(w, base.threshold))
        assert r.cost == base.cost and sorted(r.weights) == sorted(base.weights)
        np.testing.assert_array_equal(table_of(r.weights, r.threshold),
                                      table_of(w, base.threshold))


def plain_lp_is_threshold(table: np.ndarray) -> bool:
    """A second formulation: an LP over every point of the table, with no filters at all."""
    from scipy.optimize import linprog

    n = int(np.log2(len(table)))
    X = points(n).astype(float)
    t = np.asarray(table).astype(bool)
    A = np.vstack([np.hstack([-X[t], np.ones((t.sum(), 1))]),
                   np.hstack([X[~t], -np.ones(((~t).sum(), 1))])])
    b = np.r_[np.zeros(t.sum()), -np.ones((~t).sum())]
    res = linprog(np.zeros(n + 1), A_ub=A, b_ub=b, bounds=[(None, None)] * (n + 1),
                  method="highs")
    return res.status == 0


def test_is_threshold_agrees_with_a_plain_lp_on_unate_functions():
    # random monotone sums of products, with random inputs negated: unate, so only the
    # later steps (dominance, reduced constraints, LP) can tell threshold functions apart
    rng = np.random.default_rng(11)
    seen = {True: 0, False: 0}
    for _ in range(80):
        n = int(rng.integers(5, 8))
        X = points(n).astype(bool)
        f = np.zeros(1 << n, dtype=bool)
        for _ in range(int(rng.integers(1, 5))):
            f |= X[:, rng.random(n) < rng.uniform(0.2, 0.6)].all(axis=1)
        f = f[np.arange(1 << n) ^ int(rng.integers(0, 1 << n))]
        expected = plain_lp_is_threshold(f)
        seen[expected] += 1
        assert is_threshold(f) == expected, f.astype(int).tolist()
        if expected:
            r = identify(f)
            np.testing.assert_array_equal(table_of(r.weights, r.threshold), f)
    assert seen[True] and seen[False]  # both kinds were exercised


def test_docstring_examples_hold():
    import doctest

    assert doctest.testmod(ident).failed == 0
