"""Truth tables, structural hashing, cut enumeration and gadgets, each checked against an
evaluation written here (rows enumerated with numpy, gates evaluated by GateGraph.simulate)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thresholdc.ir.gates import Gate, GateGraph
from thresholdc.synth import gadgets, ttable
from thresholdc.synth.cuts import enumerate_cuts, support_cuts
from thresholdc.synth.hashing import hash_gates


def table_of(fn, n: int) -> int:
    """The truth-table integer of a Python predicate on bit tuples."""
    out = 0
    for r in range(1 << n):
        if fn(tuple((r >> i) & 1 for i in range(n))):
            out |= 1 << r
    return out


# ------------------------------------------------------------------------------ ttable


@pytest.mark.parametrize("n", range(1, 6))
def test_variables_swaps_flips_and_expansion_match_their_definitions(n):
    for i in range(n):
        assert ttable.var(n, i) == table_of(lambda x, i=i: x[i], n)
    f = table_of(lambda x: (x[0] & x[-1]) | (sum(x) == 2), n)
    for a, b in itertools.combinations(range(n), 2):
        def swapped(x, a=a, b=b):
            y = list(x)
            y[a], y[b] = y[b], y[a]
            return (y[0] & y[-1]) | (sum(y) == 2)
        assert ttable.swap(f, n, a, b) == table_of(swapped, n)
    for i in range(n):
        def flipped(x, i=i):
            y = list(x)
            y[i] ^= 1
            return (y[0] & y[-1]) | (sum(y) == 2)
        assert ttable.flip(f, n, i) == table_of(flipped, n)
    # a function of variables (0, 2) re-expressed over n + 2 variables at positions (1, n + 1)
    g = table_of(lambda x: x[0] and not x[1], 2)
    assert ttable.expand(g, (1, n + 1), n + 2) == table_of(lambda x: x[1] and not x[n + 1], n + 2)


def test_support_shrink_and_unateness():
    f = table_of(lambda x: x[1] and not x[3], 4)
    assert ttable.support(f, 4) == (1, 3)
    assert ttable.shrink(f, 4, (1, 3)) == table_of(lambda x: x[0] and not x[1], 2)
    assert ttable.unateness(f, 4) == (0, 1, 0, -1)
    assert ttable.unateness(table_of(lambda x: x[0] ^ x[1], 2), 2) is None


@pytest.mark.parametrize("n", range(1, 6))
def test_symmetry_finds_every_function_of_the_count_under_any_polarity(n):
    rng = np.random.default_rng(n)
    for _ in range(20):
        values = tuple(int(v) for v in rng.integers(0, 2, n + 1))
        pol = (0,) + tuple(int(p) for p in rng.integers(0, 2, n - 1))
        f = table_of(lambda x, v=values, q=pol: v[sum(a ^ p for a, p in zip(x, q))], n)
        got = ttable.symmetry(f, n)
        assert got is not None
        p2, v2 = got
        assert f == table_of(lambda x, v=v2, q=p2: v[sum(a ^ p for a, p in zip(x, q))], n)
    # x0 and x1, or x2: not symmetric
    assert ttable.symmetry(table_of(lambda x: (x[0] and x[1]) or x[2], 3), 3) is None


def test_compose_applies_a_local_function_to_argument_tables():
    rng = np.random.default_rng(0)
    for _ in range(50):
        k, n = int(rng.integers(1, 4)), 4
        local = int(rng.integers(0, 1 << (1 << k)))
        args = [int(rng.integers(0, 1 << 16)) for _ in range(k)]
        got = ttable.compose(local, k, args, n)
        for r in range(16):
            idx = sum(((a >> r) & 1) << j for j, a in enumerate(args))
            assert (got >> r) & 1 == (local >> idx) & 1


# ------------------------------------------------------------------------------ gadgets


@pytest.mark.parametrize("n", range(1, 8))
def test_every_counting_construction_computes_its_function(n):
    rng = np.random.default_rng(10 + n)
    for _ in range(15):
        sigma = tuple(int(s) for s in rng.choice([-1, 1], n))
        values = tuple(int(v) for v in rng.integers(0, 2, n + 1))
        want = table_of(
            lambda x, v=values, sg=sigma: v[sum(a if s > 0 else 1 - a for a, s in zip(x, sg))],
            n)
        for g in gadgets.symmetric(sigma, values):
            assert gadgets.evaluate(g, n) == want


@pytest.mark.parametrize("n", range(2, 12))
def test_counting_parity_has_one_neuron_per_bit_of_the_count(n):
    # ⌈log2(n + 1)⌉ neurons, the i-th reading the inputs and the higher bits (common practice)
    g = gadgets.counting((1,) * n, tuple(c % 2 for c in range(n + 1)))
    assert len(g) == n.bit_length()
    assert gadgets.evaluate(g, n) == table_of(lambda x: sum(x) % 2, n)
    assert gadgets.fan_in(g) == n + len(g) - 1


@settings(max_examples=200, deadline=None)
@given(st.lists(st.integers(-4, 4), min_size=1, max_size=6), st.integers(-6, 9),
       st.sampled_from([2, 3, 4]), st.sampled_from([1, 2, None]), st.booleans())
def test_limited_threshold_trees_compute_the_gate_within_the_limits(ws, t, fan_in, weight, eq):
    n = len(ws)
    g = gadgets.limited_threshold(tuple(ws), t, fan_in, weight, equal=eq)
    want = table_of(lambda x: (sum(w * a for w, a in zip(ws, x)) == t) if eq
                    else (sum(w * a for w, a in zip(ws, x)) >= t), n)
    assert gadgets.evaluate(g, n) == want
    assert gadgets.fits(g, fan_in, weight)


@pytest.mark.parametrize("limit", [2, 3, 5])
@pytest.mark.parametrize("n", [2, 5, 9])
def test_parity_and_and_trees_keep_the_fan_in(limit, n):
    g = gadgets.parity_tree(n, limit, None)
    assert gadgets.evaluate(g, n) == table_of(lambda x: sum(x) % 2, n)
    assert gadgets.fan_in(g) <= limit
    sigma = tuple(1 if i % 3 else -1 for i in range(n))
    g = gadgets.and_tree(sigma, limit)
    assert gadgets.evaluate(g, n) == table_of(
        lambda x: all(a if s > 0 else not a for a, s in zip(x, sigma)), n)
    assert gadgets.fan_in(g) <= limit


def test_equal_and_ite_gadgets():
    for ws, t in [((1, 1, 1, 1), 2), ((2, -1, 1), 1), ((3, 1), 3), ((1, 2), 0)]:
        g = gadgets.equal(ws, t)
        assert gadgets.evaluate(g, len(ws)) == table_of(
            lambda x, ws=ws, t=t: sum(w * a for w, a in zip(ws, x)) == t, len(ws))
        assert len(g) <= 2
    for limit in (None, 2):
        want = table_of(lambda x: x[1] if x[0] else x[2], 3)
        assert gadgets.evaluate(gadgets.ite(limit), 3) == want


# ------------------------------------------------------------------------------ hashing and cuts


OPS = ("and", "or", "nand", "nor", "xor", "xnor", "not", "buf", "threshold", "ite")


@st.composite
def graphs(draw) -> GateGraph:
    n_in = draw(st.integers(1, 5))
    inputs = [f"i{k}" for k in range(n_in)]
    signals = list(inputs)
    gates = []
    for k in range(draw(st.integers(1, 14))):
        op = draw(st.sampled_from(OPS))
        pick = st.sampled_from(signals)
        if op in ("not", "buf"):
            gate = Gate(op, (draw(pick),))
        elif op == "ite":
            gate = Gate(op, tuple(draw(pick) for _ in range(3)))
        elif op == "threshold":
            m = draw(st.integers(1, 4))
            gate = Gate(op, tuple(draw(pick) for _ in range(m)),
                        tuple(draw(st.integers(-2, 3)) for _ in range(m)), draw(st.integers(-2, 4)))
        else:
            gate = Gate(op, tuple(draw(pick) for _ in range(draw(st.integers(1, 4)))))
        gates.append((f"g{k}", gate))
        signals.append(f"g{k}")
    return GateGraph.build(inputs, [("o", signals[-1])], gates)


def node_values(h, g: GateGraph, X: np.ndarray) -> dict[int, np.ndarray]:
    """Each hashed node's value on the rows, read from the signals it carries."""
    vals = g.simulate(X, list(g.gates))
    out: dict[int, np.ndarray] = {}
    for j, s in enumerate(g.gates):
        lit = h.lit_of[s]
        v = vals[:, j] ^ bool(lit & 1)
        if lit >> 1 in out:
            assert np.array_equal(out[lit >> 1], v), f"signal {s} disagrees with its node"
        out[lit >> 1] = v
    return out


@settings(max_examples=120, deadline=None)
@given(graphs(), st.integers(2, 6))
def test_every_cut_table_is_the_node_as_a_function_of_its_leaves(g, k):
    h = hash_gates(g)
    n = len(g.inputs)
    X = ((np.arange(1 << n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    vals = node_values(h, g, X)
    vals[0] = np.zeros(len(X), dtype=bool)
    cuts = enumerate_cuts(h, k)
    for v, cs in enumerate(cuts):
        for c in cs:
            assert len(c.leaves) <= k and v not in c.leaves
            if not all(x in vals for x in c.leaves) or v not in vals:
                continue
            # on every row of the circuit, the table read at the leaves' values is the node
            assert np.array_equal(read_table(c, vals, len(X)), vals[v])
    for v, c in support_cuts(h, 2, 5).items():
        assert np.array_equal(read_table(c, vals, len(X)), vals[v])


def read_table(c, vals: dict[int, np.ndarray], rows: int) -> np.ndarray:
    """The cut's table read at its leaves' values on every row."""
    bits = np.array([(c.tt >> r) & 1 for r in range(1 << len(c.leaves))], dtype=bool)
    idx = np.zeros(rows, dtype=np.int64)
    for i, x in enumerate(c.leaves):
        idx |= vals[x].astype(np.int64) << i
    return bits[idx]


def test_hashing_merges_duplicates_and_folds_inverters():
    g = GateGraph.build(["a", "b", "c"], [("y", "y")], [
        ("p", Gate("and", ("a", "b"))), ("q", Gate("nand", ("b", "a"))),
        ("r", Gate("not", ("q",))), ("s", Gate("or", ("p", "c"))),
        ("y", Gate("nor", ("r", "c")))])
    h = hash_gates(g)
    assert h.lit_of["p"] == h.lit_of["r"] == h.lit_of["q"] ^ 1
    assert h.lit_of["y"] == h.lit_of["s"] ^ 1  # nor(r, c) = not or(p, c)


def test_xor_chains_are_flattened():
    names = [f"x{i}" for i in range(7)]
    gates = []
    prev = names[0]
    for i, x in enumerate(names[1:]):
        gates.append((f"p{i}", Gate("xor" if i % 2 else "xnor", (prev, x))))
        prev = f"p{i}"
    g = GateGraph.build(names, [("y", prev)], gates)
    h = hash_gates(g)
    assert len(h.flat[h.lit_of[prev] >> 1]) == 7


def run_gadget(g, X: np.ndarray) -> np.ndarray:
    """A gadget's root on the rows ``X`` (rows × leaves), neuron by neuron."""
    vals: list[np.ndarray] = []
    for s in g:
        z = np.zeros(len(X), dtype=np.int64)
        for r, w in zip(s.refs, s.weights):
            z += w * (X[:, r] if r >= 0 else vals[-r - 1])
        vals.append((z >= s.T).astype(np.int64))
    return vals[-1].astype(bool)


@pytest.mark.parametrize("limit, weight", [(2, 1), (4, 4), (8, None)])
def test_wide_parity_trees_within_limits(limit, weight):
    rng = np.random.default_rng(3)
    X = rng.integers(0, 2, (500, 64))
    g = gadgets.parity_tree(64, limit, weight)
    assert gadgets.fits(g, limit, weight)
    assert np.array_equal(run_gadget(g, X), X.sum(axis=1) % 2 == 1)
