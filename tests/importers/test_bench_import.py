"""Tests of the ISCAS .bench reader: functions, order, names, errors, size."""

from __future__ import annotations

import random

import numpy as np
import pytest

from thresholdc.errors import RuleError
from thresholdc.syntax.importers import parse_bench


def table(n: int) -> np.ndarray:
    """Every assignment of n inputs, row k has x_i = (k >> i) & 1."""
    return ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(bool)


# ISCAS-85 benchmark c17, from memory: 5 inputs, 2 outputs, 6 NAND gates.
C17 = """\
# c17
INPUT(1)
INPUT(2)
INPUT(3)
INPUT(6)
INPUT(7)

OUTPUT(22)
OUTPUT(23)

10 = NAND(1, 3)
11 = NAND(3, 6)
16 = NAND(2, 11)
19 = NAND(11, 7)
22 = NAND(10, 16)
23 = NAND(16, 19)
"""


def c17_reference(X: np.ndarray) -> np.ndarray:
    """c17's outputs written out by hand from its published gate list (sum-of-products form)."""
    x1, x2, x3, x6, x7 = X.T
    not36 = ~(x3 & x6)
    out22 = (x1 & x3) | (x2 & not36)
    out23 = not36 & (x2 | x7)
    return np.stack([out22, out23], axis=1)


def test_c17_truth_table():
    g = parse_bench(C17, "c17.bench")
    assert g.inputs == ("1", "2", "3", "6", "7")
    assert g.outputs == (("22", "22"), ("23", "23"))
    assert g.logic_gates() == 6
    X = table(5)
    assert np.array_equal(g.simulate(X), c17_reference(X))


def test_c17_any_gate_order_and_crlf():
    lines = C17.splitlines()
    gates = [ln for ln in lines if "=" in ln]
    rest = [ln for ln in lines if "=" not in ln]
    random.Random(3).shuffle(gates)
    text = "\r\n".join(rest + list(reversed(gates))) + "\r\n"
    g = parse_bench(text, "c17.bench")
    X = table(5)
    assert np.array_equal(g.simulate(X), c17_reference(X))
    # topological: every gate's arguments come earlier
    seen: set[str] = set()
    for name, gate in g.gates.items():
        assert all(a in seen for a in gate.args)
        seen.add(name)


@pytest.mark.parametrize(
    "op, ref",
    [
        ("AND", lambda a, b, c: a & b & c),
        ("nand", lambda a, b, c: ~(a & b & c)),
        ("Or", lambda a, b, c: a | b | c),
        ("NOR", lambda a, b, c: ~(a | b | c)),
        ("XOR", lambda a, b, c: a ^ b ^ c),
        ("xnor", lambda a, b, c: ~(a ^ b ^ c)),
    ],
)
def test_three_input_ops(op, ref):
    g = parse_bench(f"INPUT(a)\nINPUT(b)\nINPUT(c)\nOUTPUT(y)\ny = {op}(a, b, c)\n", "t.bench")
    X = table(3)
    assert np.array_equal(g.simulate(X)[:, 0], ref(*X.T))


def test_not_buf_buff_and_comments():
    text = "INPUT(a)   # the input\nOUTPUT(n)\nOUTPUT(b1)\nOUTPUT(b2)\n# a comment line\n" \
           "n = not(a)\nb1 = BUF(a)\nb2 = BUFF(n)  # trailing\n"
    g = parse_bench(text, "t.bench")
    X = table(1)
    out = g.simulate(X)
    assert np.array_equal(out[:, 0], ~X[:, 0])
    assert np.array_equal(out[:, 1], X[:, 0])
    assert np.array_equal(out[:, 2], ~X[:, 0])


def test_names_kept_verbatim():
    names = ["a[0]", "b.q~1", "x=y", "n$3", "G1'"]
    text = "".join(f"INPUT({n})\n" for n in names[:2])
    text += f"OUTPUT({names[2]})\nOUTPUT({names[4]})\n"
    text += f"{names[3]} = AND({names[0]},{names[1]})\n"
    text += f"{names[2]} = NOT({names[3]})\n{names[4]}=OR({names[0]}, {names[2]})\n"
    g = parse_bench(text, "t.bench")
    assert g.inputs == ("a[0]", "b.q~1")
    assert [o for o, _ in g.outputs] == ["x=y", "G1'"]
    X = table(2)
    nand = ~(X[:, 0] & X[:, 1])
    assert np.array_equal(g.simulate(X), np.stack([nand, X[:, 0] | nand], axis=1))


def test_output_may_be_an_input():
    g = parse_bench("INPUT(a)\nOUTPUT(a)\n", "t.bench")
    assert np.array_equal(g.simulate(table(1))[:, 0], [False, True])


def random_netlist(rng: random.Random, n_inputs: int, n_gates: int) -> tuple[str, list]:
    """A random bench netlist (lines shuffled) and its gate list for the oracle below."""
    ops = ["AND", "NAND", "OR", "NOR", "XOR", "XNOR", "NOT", "BUFF"]
    signals = [f"i{k}" for k in range(n_inputs)]
    gates = []
    for k in range(n_gates):
        op = rng.choice(ops)
        arity = 1 if op in ("NOT", "BUFF") else rng.randint(1, 4)
        args = [rng.choice(signals) for _ in range(arity)]
        gates.append((f"g{k}", op, args))
        signals.append(f"g{k}")
    lines = [f"{name} = {op}({', '.join(args)})" for name, op, args in gates]
    rng.shuffle(lines)
    outs = sorted(rng.sample(signals[n_inputs:], 3))
    head = [f"INPUT(i{k})" for k in range(n_inputs)] + [f"OUTPUT({o})" for o in outs]
    return "\n".join(head + lines) + "\n", gates, outs


def oracle(gates: list, outs: list, X: np.ndarray) -> np.ndarray:
    """Evaluate the gate list directly, in creation order (independent of the reader)."""
    val = {f"i{k}": X[:, k] for k in range(X.shape[1])}
    for name, op, args in gates:
        cols = [val[a] for a in args]
        if op in ("AND", "NAND"):
            v = np.all(cols, axis=0)
        elif op in ("OR", "NOR"):
            v = np.any(cols, axis=0)
        elif op in ("XOR", "XNOR"):
            v = np.sum(cols, axis=0) % 2 == 1
        else:
            v = cols[0]
        val[name] = ~v if op in ("NAND", "NOR", "XNOR", "NOT") else v
    return np.stack([val[o] for o in outs], axis=1)


@pytest.mark.parametrize("seed", range(8))
def test_random_netlists_exhaustive(seed):
    rng = random.Random(seed)
    text, gates, outs = random_netlist(rng, 6, 40)
    g = parse_bench(text, "r.bench")
    X = table(6)
    assert np.array_equal(g.simulate(X), oracle(gates, outs, X))


def test_large_netlist_reversed():
    # A chain of 30,000 inverters written in reverse order: no recursion limit (the speed of
    # the pass is measured in benchmarks/, not asserted here).
    n = 30_000
    lines = ["INPUT(x)", f"OUTPUT(s{n})"]
    lines += [f"s{k} = NOT(s{k - 1})" for k in range(n, 1, -1)] + ["s1 = NOT(x)"]
    g = parse_bench("\n".join(lines), "chain.bench")
    assert len(g) == n + 1
    out = g.simulate(table(1))[:, 0]
    assert np.array_equal(out, [False, True])  # an even number of inversions


def error_of(text: str) -> RuleError:
    with pytest.raises(RuleError) as info:
        parse_bench(text, "e.bench")
    return info.value


def test_dff_is_refused_with_position():
    err = error_of("INPUT(a)\nOUTPUT(q)\nq = DFF(a)\n")
    assert (err.line, err.column) == (3, 5)
    assert "sequential" in err.message and "DFF" in err.message
    assert err.render().splitlines()[1:] == ["q = DFF(a)", "    ^"]


def test_unknown_op():
    err = error_of("INPUT(a)\nOUTPUT(q)\nq = MUX(a)\n")
    assert (err.line, err.column) == (3, 5) and "MUX" in err.message


def test_undefined_signal_at_its_use():
    err = error_of("INPUT(a)\nOUTPUT(q)\nq = AND(a,  zz)\n")
    assert (err.line, err.column) == (3, 13) and "'zz'" in err.message


def test_undefined_output():
    err = error_of("INPUT(a)\nOUTPUT(q)\n")
    assert (err.line, err.column) == (2, 8) and "'q'" in err.message


def test_driven_twice_at_second_driver():
    err = error_of("INPUT(a)\nOUTPUT(q)\nq = NOT(a)\n  q = BUF(a)\n")
    assert (err.line, err.column) == (4, 3) and "driven twice" in err.message


def test_input_driven_by_gate():
    err = error_of("INPUT(a)\nOUTPUT(a)\na = NOT(a)\n")
    assert err.line == 3 and "'a'" in err.message


def test_input_and_output_listed_twice():
    assert error_of("INPUT(a)\nINPUT(a)\nOUTPUT(a)\n").line == 2
    assert error_of("INPUT(a)\nOUTPUT(a)\nOUTPUT(a)\n").line == 3


def test_cycle_named_at_first_member():
    err = error_of("INPUT(a)\nOUTPUT(y)\ny = AND(a, q)\nq = NOT(p)\np = OR(y, a)\n")
    assert (err.line, err.column) == (3, 1)
    assert "cycle" in err.message and "y -> p -> q -> y" in err.message


def test_self_loop():
    err = error_of("INPUT(a)\nOUTPUT(y)\ny = AND(a, y)\n")
    assert err.line == 3 and "y -> y" in err.message


def test_empty_netlists():
    for text in ["", "# nothing\n", "INPUT(a)\n"]:
        err = error_of(text)
        assert err.line is None and "empty netlist" in err.message


@pytest.mark.parametrize(
    "line, col",
    [
        ("q = NOT(a, a)", 5),
        ("q = AND(a,,a)", 11),
        ("q = AND(a b)", 11),
        ("INPUT(a b)", 9),
        ("q AND(a)", 1),
        ("  garbage", 3),
    ],
)
def test_malformed_lines(line, col):
    err = error_of(f"INPUT(a)\nOUTPUT(q)\n{line}\n")
    assert (err.line, err.column) == (3, col)
