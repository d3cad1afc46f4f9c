"""The exact rational simplex of synth/exactlp.py: small systems with known answers, agreement
with HiGHS on every threshold test of up to 4 variables and on seeded random 5- and
6-variable functions, and the count of threshold functions against a published sequence."""

from __future__ import annotations

import random
from fractions import Fraction

import numpy as np
import pytest

from thresholdc.synth import exactlp, identify, lp


def test_small_systems_with_known_answers():
    assert exactlp.feasible([[1, 1], [-1, 0]], [4, -3], [0, 0])  # x = 3, y = 0
    assert not exactlp.feasible([[1, 1], [-1, 0]], [2, -3], [0, 0])  # x ≥ 3, x + y ≤ 2
    assert exactlp.feasible([[-1]], [5], [None])  # x ≥ -5, x free
    assert not exactlp.feasible([[1], [-1]], [-1, 0], [None])  # x ≤ -1 and x ≥ 0
    assert exactlp.feasible([], [], [1, None])  # no rows
    # fractions: x ≤ 1/3 and x ≥ 1/3 is the point 1/3; x ≥ 1/2 then is empty
    third = Fraction(1, 3)
    assert exactlp.feasible([[1], [-1]], [third, -third], [0])
    assert not exactlp.feasible([[1], [-1]], [third, Fraction(-1, 2)], [0])
    assert not exactlp.feasible([[Fraction(1, 2)]], [0], [Fraction(1, 10)])
    with pytest.raises(ValueError):
        exactlp.feasible([[1, 2]], [0], [0])


def test_a_degenerate_system_that_cycles_without_an_anti_cycling_rule_ends():
    # Beale's example (E. M. L. Beale, "Cycling in the dual simplex algorithm", Naval Research
    # Logistics Quarterly 2 (1955)), its rows as inequalities: the textbook simplex with the
    # largest-coefficient rule cycles on it; Bland's rule ends.  Plus a row x1 ≥ 1 that needs
    # phase one, with and without a contradicting row.
    rows = [[Fraction(1, 4), -8, -1, 9], [Fraction(1, 2), -12, Fraction(-1, 2), 3],
            [0, 0, 1, 0], [-1, 0, 0, 0]]
    assert exactlp.feasible(rows, [0, 0, 1, -1], [0, 0, 0, 0])
    assert not exactlp.feasible(rows + [[1, 0, 0, 0]], [0, 0, 1, -1, 0], [0, 0, 0, 0])


def _highs_feasible(m: int, g_bits: int, parts: tuple) -> bool:
    """The threshold test's program solved by HiGHS (the path above the exact bound)."""
    A, b = _program(m, g_bits, parts)
    res = lp.solve(np.r_[np.ones(m), 0.0], A, np.full(len(b), -np.inf), b,
                   np.r_[np.ones(m), -np.inf], np.full(m + 1, np.inf))
    assert res.status in ("optimal", "infeasible")
    return res.status == "optimal"


def _program(m: int, g_bits: int, parts: tuple) -> tuple[np.ndarray, np.ndarray]:
    ymin, ymax = identify._system(m, g_bits, parts)
    order = identify._order_rows(m, parts)
    A = np.vstack([np.hstack([-ymin, np.ones((len(ymin), 1))]),
                   np.hstack([ymax, -np.ones((len(ymax), 1))])]
                  + [-coef[None, :] for coef, _ in order])
    b = np.concatenate([np.zeros(len(ymin)), -np.ones(len(ymax))]
                       + [[-bound] for _, bound in order])
    return A, b


@pytest.fixture
def record_programs(monkeypatch):
    """Every program the threshold test decides, with the exact answer it gave."""
    seen: list[tuple[int, int, tuple, bool]] = []
    real = identify._lp_feasible.__wrapped__

    def spy(m, g_bits, parts):
        answer = real(m, g_bits, parts)
        seen.append((m, g_bits, parts, answer))
        return answer

    identify._clear_caches()
    monkeypatch.setattr(identify, "_lp_feasible", spy)
    yield seen
    monkeypatch.undo()
    identify._clear_caches()


def _table(n: int, bits: int) -> np.ndarray:
    return np.array([(bits >> k) & 1 for k in range(1 << n)], dtype=np.uint8)


def test_exact_and_highs_agree_on_every_function_of_up_to_4_variables(record_programs):
    # the count is OEIS A000609, "number of threshold functions of n or fewer variables":
    # 2, 4, 14, 104, 1882 for n = 0..4 (https://oeis.org/A000609)
    counts = []
    for n in range(5):
        counts.append(sum(identify.is_threshold(_table(n, bits)) for bits in range(1 << (1 << n))))
    assert counts == [2, 4, 14, 104, 1882]
    assert identify.EXACT_LP_MAX >= 4  # so every program above was decided exactly
    assert len(record_programs) > 1000
    for m, g_bits, parts, answer in record_programs:
        assert answer == _highs_feasible(m, g_bits, parts), (m, g_bits, parts)


def _random_function(rng: random.Random, n: int, shuffle: bool = True) -> np.ndarray:
    """A threshold function, or an OR/AND of two with the same weight order (unate and often
    2-monotonic but not threshold), on random inputs with random polarities."""
    pts = identify._points(n)
    w = sorted((rng.randint(1, 3 * n) for _ in range(n)), reverse=True)
    f = pts @ np.array(w) >= rng.randint(1, sum(w))
    if rng.random() < 0.6:
        w2 = sorted((rng.randint(1, 3 * n) for _ in range(n)), reverse=True)
        g = pts @ np.array(w2) >= rng.randint(1, sum(w2))
        f = f | g if rng.random() < 0.5 else f & g
    if not shuffle:
        return f.astype(np.uint8)
    flip = rng.getrandbits(n)
    perm = rng.sample(range(n), n)
    index = ((pts[:, perm] ^ ((flip >> np.arange(n)) & 1)) @ (1 << np.arange(n)))
    return f[index].astype(np.uint8)


@pytest.mark.parametrize("n", [5, 6])
def test_exact_and_highs_agree_on_random_5_and_6_variable_functions(record_programs, n):
    rng = random.Random(1200 + n)
    for _ in range(400):
        identify.is_threshold(_random_function(rng, n))
    # every 2-monotonic function of up to 8 variables is a threshold function (S. Muroga,
    # "Threshold Logic and its Applications", Wiley 1971; from memory), so the programs the
    # filters let through are all feasible here: the raw-program test below has both answers
    assert len(record_programs) > 300
    assert max(m for m, *_ in record_programs) == n <= identify.EXACT_LP_MAX
    for m, g_bits, parts, answer in record_programs:
        assert answer == _highs_feasible(m, g_bits, parts), (m, g_bits, parts)


def _agree_on_raw_programs(m: int, tables) -> tuple[int, int]:
    """Exact against HiGHS on the program of each table ``g_bits`` (any table: the program is
    an ordinary linear program whatever the function), with singleton classes and with one
    class of all positions; the numbers of feasible and infeasible programs."""
    answers = []
    for g_bits in tables:
        for parts in (tuple(((p,),) for p in range(m)), ((tuple(range(m)),),)):
            A, b = _program(m, g_bits, parts)
            exact = exactlp.feasible(A.astype(np.int64).tolist(), b.astype(np.int64).tolist(),
                                     [1] * m + [None])
            assert exact == _highs_feasible(m, g_bits, parts), (m, g_bits, parts)
            answers.append(exact)
    return answers.count(True), answers.count(False)


def test_exact_and_highs_agree_on_raw_programs_of_up_to_6_variables():
    rng = random.Random(12)
    for m in (1, 2, 3):
        yes, no = _agree_on_raw_programs(m, range(1 << (1 << m)))
        assert yes and no
    for m in (4, 5, 6):
        tables = [identify._to_bits(_random_function(rng, m, shuffle=False).astype(bool))
                  for _ in range(300)]
        yes, no = _agree_on_raw_programs(m, tables + [rng.getrandbits(1 << m) for _ in range(30)])
        assert yes > 10 and no > 10, (m, yes, no)

