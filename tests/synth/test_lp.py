"""thresholdc.synth.lp against scipy's public linprog / milp (the second evaluator: the same
HiGHS solver reached through scipy's own wrapper must give the same status and point)."""

from __future__ import annotations

import numpy as np
import pytest

from thresholdc.synth import lp

optimize = pytest.importorskip("scipy.optimize")


def _problem(rng: np.random.Generator) -> tuple[np.ndarray, ...]:
    m, n = int(rng.integers(1, 12)), int(rng.integers(1, 7))
    A = rng.integers(-2, 3, size=(m, n)).astype(float)
    b = rng.integers(-3, 6, size=m).astype(float)
    c = rng.integers(0, 4, size=n).astype(float)
    return c, A, b


@pytest.mark.parametrize("seed", range(40))
def test_linear_programs_match_linprog(seed: int) -> None:
    rng = np.random.default_rng(seed)
    c, A, b = _problem(rng)
    lo, hi = -5.0 * np.ones(c.size), 5.0 * np.ones(c.size)
    ours = lp.solve(c, A, np.full(len(b), -np.inf), b, lo, hi)
    ref = optimize.linprog(c, A_ub=A, b_ub=b, bounds=list(zip(lo, hi)), method="highs")
    assert ours.status == {0: "optimal", 2: "infeasible"}.get(ref.status, "other")
    if ref.status == 0:
        assert ours.x is not None
        assert np.array_equal(ours.x, ref.x)


@pytest.mark.parametrize("seed", range(40))
def test_integer_programs_match_milp(seed: int) -> None:
    rng = np.random.default_rng(1000 + seed)
    c, A, b = _problem(rng)
    lo, hi = -5.0 * np.ones(c.size), 5.0 * np.ones(c.size)
    row_lo = np.where(rng.random(len(b)) < 0.3, b - 4, -np.inf)
    ours = lp.solve(c, A, row_lo, b, lo, hi, integer=True, node_limit=50)
    ref = optimize.milp(c, integrality=np.ones(c.size), bounds=optimize.Bounds(lo, hi),
                        constraints=optimize.LinearConstraint(A, row_lo, b),
                        options={"node_limit": 50})
    assert ours.status == {0: "optimal", 2: "infeasible"}.get(ref.status, "other")
    if ref.status == 0:
        assert ours.x is not None
        assert np.array_equal(ours.x, ref.x)


def test_the_fallback_through_scipy_agrees(monkeypatch: pytest.MonkeyPatch) -> None:
    rng = np.random.default_rng(7)
    for _ in range(20):
        c, A, b = _problem(rng)
        lo, hi = -5.0 * np.ones(c.size), 5.0 * np.ones(c.size)
        for integer in (False, True):
            fast = lp.solve(c, A, np.full(len(b), -np.inf), b, lo, hi, integer=integer)
            monkeypatch.setattr(lp, "_binding", lambda: None)
            slow = lp.solve(c, A, np.full(len(b), -np.inf), b, lo, hi, integer=integer)
            monkeypatch.undo()
            assert fast.status == slow.status
            if fast.status == "optimal":
                assert fast.x is not None and slow.x is not None
                # same optimum value (the point may differ: the fallback states the rows
                # the other way round)
                assert float(c @ fast.x) == pytest.approx(float(c @ slow.x))


def test_an_unbounded_program_is_neither_optimal_nor_infeasible() -> None:
    r = lp.solve(np.array([-1.0]), np.array([[1.0]]), np.array([0.0]), np.array([np.inf]),
                 np.zeros(1), np.full(1, np.inf))
    assert r.status == "other" and r.x is None
