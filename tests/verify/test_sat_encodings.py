"""The CNF encodings of threshold constraints and circuit nodes, checked against numpy.

Every check enumerates all assignments of the constraint's inputs and asks a SAT solver
whether y can be true and whether it can be false under that assignment: exactly the value
numpy computes must be possible.
"""

from __future__ import annotations

import random

import numpy as np
import pytest

pysat_solvers = pytest.importorskip("pysat.solvers")

from thresholdc.verification.sat.circuit import FALSE, TRUE, Circuit, threshold_cnf  # noqa: E402


def table(n: int) -> np.ndarray:
    return ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(bool)


def forced_values(clauses, xs, y, X) -> list[set[bool]]:
    """For each row of X, the set of values y can take (SAT with x fixed)."""
    out = []
    with pysat_solvers.Solver(name="minisat22", bootstrap_with=clauses) as s:
        for row in X:
            fixed = [v if bit else -v for v, bit in zip(xs, row)]
            out.append({val for val in (True, False) if s.solve(fixed + [y if val else -y])})
    return out


def random_constraint(rng: random.Random, n: int, ones: bool):
    weights = [1] * n if ones else [rng.randint(1, 9) for _ in range(n)]
    k = rng.randint(1, sum(weights))
    return weights, k


@pytest.mark.parametrize("method", ["exact", "bdd", "totalizer", "adder"])
def test_threshold_encodings_exhaustive(method):
    rng = random.Random(["exact", "bdd", "totalizer", "adder"].index(method))
    for _trial in range(25):
        n = rng.randint(1, 6 if method == "exact" else 8)
        weights, k = random_constraint(rng, n, ones=(method == "totalizer"))
        cnf, y, xs = threshold_cnf(weights, k, method)
        X = table(n)
        want = (X.astype(int) @ np.array(weights)) >= k
        got = forced_values(cnf.clauses, xs, y, X)
        assert all(g == {bool(w)} for g, w in zip(got, want)), (method, weights, k)


def test_bdd_handles_large_weights():
    # Powers of two (a comparator): the interval BDD stays linear.
    weights = [2**i for i in range(20)]
    k = 0b1011_0110_1100_1010_0111
    cnf, y, xs = threshold_cnf(weights, k, "bdd")
    assert cnf.nvars - xs[-1] < 80  # one node per level, about
    rng = np.random.default_rng(1)
    X = rng.integers(0, 2, size=(200, 20)).astype(bool)
    want = (X.astype(np.int64) @ np.array(weights, dtype=np.int64)) >= k
    got = forced_values(cnf.clauses, xs, y, X)
    assert all(g == {bool(w)} for g, w in zip(got, want))


def circuit_cnf_values(c: Circuit, roots, X):
    """Force the inputs and read each root from a model (the circuit is functional)."""
    cnf = c.to_cnf(roots)
    vals = []
    with pysat_solvers.Solver(name="minisat22", bootstrap_with=cnf.clauses) as s:
        for row in X:
            fixed = [v if bit else -v for v, bit in zip(c.inputs, row)]
            assert s.solve(fixed)
            model = set(s.get_model())
            vals.append([(abs(r) in model) == (r > 0) if abs(r) != TRUE else r == TRUE
                         for r in roots])
    return np.array(vals, dtype=bool)


def test_circuit_nodes_cnf_equals_simulation():
    rng = random.Random(7)
    for _trial in range(20):
        c = Circuit()
        n = 5
        pool = [c.new_input() for _ in range(n)]
        for _ in range(12):
            kind = rng.choice(["and", "or", "xor", "ite", "geq", "geq_tot", "geq_add"])
            args = [rng.choice(pool) * rng.choice((1, -1)) for _ in range(rng.randint(2, 4))]
            if kind == "and":
                lit = c.and_(args)
            elif kind == "or":
                lit = c.or_(args)
            elif kind == "xor":
                lit = c.xor_(args)
            elif kind == "ite":
                lit = c.ite(*args[:3]) if len(args) >= 3 else c.ite(args[0], args[1], -args[0])
            else:
                enc = {"geq": "auto", "geq_tot": "totalizer", "geq_add": "adder"}[kind]
                ws = [rng.randint(-4, 4) for _ in args]
                lit = c.geq(ws, args, rng.randint(-3, 6), enc)
            pool.append(lit)
        roots = pool[n:]
        X = table(n)
        V = c.simulate(X)
        sim = np.stack([V[abs(r)] ^ (r < 0) for r in roots], axis=1)
        assert np.array_equal(circuit_cnf_values(c, roots, X), sim)


def test_geq_normalisation_against_numpy():
    rng = random.Random(11)
    X = table(4)
    for _ in range(200):
        c = Circuit()
        xs = [c.new_input() for _ in range(4)]
        lits = [rng.choice(xs) * rng.choice((1, -1)) for _ in range(rng.randint(1, 5))]
        lits += rng.choice([[], [TRUE], [FALSE]])
        ws = [rng.randint(-5, 5) for _ in lits]
        k = rng.randint(-6, 8)
        y = c.geq(ws, lits, k)
        V = c.simulate(X)
        cols = np.stack([V[abs(lit)] ^ (lit < 0) for lit in lits], axis=1).astype(int)
        want = cols @ np.array(ws) >= k
        assert np.array_equal(V[abs(y)] ^ (y < 0), want)


def test_structural_hashing_shares_nodes():
    c = Circuit()
    a, b = c.new_input(), c.new_input()
    assert c.and_([a, b]) == c.and_([b, a])
    assert c.or_([a, -b]) == -c.and_([-a, b])
    assert c.xor_([a, -b]) == -c.xor_([b, a])
    assert c.and_([a, -a]) == FALSE and c.xor_([a, a]) == FALSE
    d = Circuit(share=False)
    a, b = d.new_input(), d.new_input()
    d.side = 0
    x = d.and_([a, b])
    d.side = 1
    assert d.and_([a, b]) != x


def test_builders_with_constants_against_numpy():
    # and/or/xor/ite over literals, constants among them, against numpy's own operators
    rng = random.Random(13)
    X = table(3)
    for _ in range(300):
        c = Circuit()
        xs = [c.new_input() for _ in range(3)]
        pool = xs + [-x for x in xs] + [TRUE, FALSE]
        lits = [rng.choice(pool) for _ in range(rng.randint(1, 4))]
        V = c.simulate(X)

        def val(lit, V=V):
            return V[abs(lit)] ^ (lit < 0)

        cols = [val(lit) for lit in lits]
        kind = rng.randrange(4)
        if kind == 0:
            got, want = c.and_(lits), np.logical_and.reduce(cols)
        elif kind == 1:
            got, want = c.or_(lits), np.logical_or.reduce(cols)
        elif kind == 2:
            got, want = c.xor_(lits), np.logical_xor.reduce(cols)
        else:
            a, b, d = (lits + [rng.choice(pool) for _ in range(3)])[:3]
            got, want = c.ite(a, b, d), np.where(val(a), val(b), val(d))
        V2 = c.simulate(X)  # again, now with the new node
        assert np.array_equal(V2[abs(got)] ^ (got < 0), want), (kind, lits)


def test_packed_simulation_matches_plain():
    rng = random.Random(17)
    c = Circuit()
    pool = [c.new_input() for _ in range(6)]
    for _ in range(40):
        args = [rng.choice(pool) * rng.choice((1, -1)) for _ in range(3)]
        kind = rng.randrange(4)
        lit = [c.and_(args), c.xor_(args), c.ite(*args),
               c.geq([rng.randint(-3, 3) for _ in args], args, rng.randint(-2, 4))][kind]
        pool.append(lit)
    X = np.random.default_rng(3).integers(0, 2, size=(203, 6)).astype(bool)
    V = c.simulate(X)
    P = c.simulate_packed(X)
    unpacked = np.unpackbits(P, axis=1, count=203, bitorder="little").astype(bool)
    assert np.array_equal(unpacked, V)
