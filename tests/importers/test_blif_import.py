"""Tests of the BLIF reader: covers, constants, continuations, names, errors."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thresholdc.errors import RuleError
from thresholdc.syntax.importers import parse_bench, parse_blif


def table(n: int) -> np.ndarray:
    """Every assignment of n inputs, row k has x_i = (k >> i) & 1."""
    return ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(bool)


def cover_value(rows: list[str], bit: str, X: np.ndarray) -> np.ndarray:
    """A cover evaluated directly: a row matches where every non-'-' character equals x."""
    hit = np.zeros(len(X), dtype=bool)
    for plane in rows:
        ok = np.ones(len(X), dtype=bool)
        for i, ch in enumerate(plane):
            if ch != "-":
                ok &= X[:, i] == (ch == "1")
        hit |= ok
    return hit if bit == "1" else ~hit


def one_cover(n: int, rows: list[str], bit: str) -> str:
    ins = " ".join(f"x{i}" for i in range(n))
    body = "".join(f"{plane} {bit}\n" if n else f"{bit}\n" for plane in rows)
    return f".model t\n.inputs {ins}\n.outputs y\n.names {ins} y\n{body}.end\n"


# A full adder: sum on-set (odd rows), carry as an off-set cover (at most one input true).
FULL_ADDER = """\
.model full_adder
.inputs a b cin
.outputs sum cout
.names a b cin sum
100 1
010 1
001 1
111 1
.names a b cin cout
00- 0
0-0 0
-00 0
.end
"""


def test_full_adder():
    g = parse_blif(FULL_ADDER, "fa.blif")
    X = table(3).astype(int)
    total = X.sum(axis=1)
    out = g.simulate(X)
    assert np.array_equal(out[:, 0], total % 2 == 1)
    assert np.array_equal(out[:, 1], total >= 2)


def test_full_adder_same_as_bench():
    bench = """INPUT(a)\nINPUT(b)\nINPUT(cin)\nOUTPUT(sum)\nOUTPUT(cout)
sum = XOR(a, b, cin)\nab = AND(a, b)\nx = XOR(a, b)\nxc = AND(x, cin)\ncout = OR(ab, xc)\n"""
    X = table(3)
    want = parse_bench(bench, "f").simulate(X)
    assert np.array_equal(parse_blif(FULL_ADDER, "f").simulate(X), want)


@settings(max_examples=60, deadline=None)
@given(
    n=st.integers(0, 5),
    data=st.data(),
    bit=st.sampled_from("01"),
)
def test_random_covers(n, data, bit):
    plane = st.text(alphabet="01-", min_size=n, max_size=n)
    rows = data.draw(st.lists(plane, min_size=0, max_size=6))
    g = parse_blif(one_cover(n, rows, bit), "r.blif")
    X = table(n)
    want = cover_value(rows, bit, X) if rows else np.zeros(len(X), dtype=bool)
    assert np.array_equal(g.simulate(X)[:, 0], want)


def test_constant_covers():
    X = table(0)
    assert g1(".inputs\n.outputs y\n.names y\n1\n").simulate(X)[:, 0].tolist() == [True]
    assert g1(".outputs y\n.names y\n").simulate(X)[:, 0].tolist() == [False]
    assert g1(".outputs y\n.names y\n0\n").simulate(X)[:, 0].tolist() == [False]
    g = g1(".inputs a\n.outputs y\n.names a y\n- 1\n")
    assert g.gates["y"].op == "const" and g.gates["y"].value == 1


def g1(text: str):
    return parse_blif(text, "c.blif")


def test_continuation_lines_crlf_and_comments():
    text = (
        ".model m # name\r\n.inputs a \\\r\n  b\r\n.outputs \\\r\ny\r\n"
        ".names a \\\r\n b y\r\n# comment\r\n11 1\r\n.end\r\n"
    )
    g = parse_blif(text, "c.blif")
    assert g.inputs == ("a", "b")
    X = table(2)
    assert np.array_equal(g.simulate(X)[:, 0], X[:, 0] & X[:, 1])


def test_out_of_order_names_and_negations():
    text = ".inputs a b\n.outputs y\n.names t b y\n01 1\n.names a b t\n10 1\n01 1\n"
    g = parse_blif(text, "o.blif")
    X = table(2)
    xor = X[:, 0] ^ X[:, 1]
    assert np.array_equal(g.simulate(X)[:, 0], ~xor & X[:, 1])


def test_derived_names_are_unique_and_names_verbatim():
    # The netlist itself uses the names a derived signal would get first.
    text = (
        ".inputs a b y~1 a~n\n.outputs y[0]\n.outputs y~2\n"
        ".names a b y~1 a~n y[0]\n0-11 1\n-00- 1\n"
        ".names a y~2\n0 1\n"
    )
    g = parse_blif(text, "u.blif")
    netlist = {"a", "b", "y~1", "a~n", "y[0]", "y~2"}
    derived = set(g.gates) - netlist
    assert derived and all("~" in d for d in derived)
    assert len(set(g.gates)) == len(g.gates)
    X = table(4)
    a, b, y1, an = X.T
    assert np.array_equal(g.simulate(X)[:, 0], (~a & y1 & an) | (~b & ~y1))
    assert [o for o, _ in g.outputs] == ["y[0]", "y~2"]


def error_of(text: str) -> RuleError:
    with pytest.raises(RuleError) as info:
        parse_blif(text, "e.blif")
    return info.value


def test_latch_is_refused():
    err = error_of(".inputs a\n.outputs q\n  .latch a q re clk 0\n")
    assert (err.line, err.column) == (3, 3) and "sequential" in err.message


@pytest.mark.parametrize("word", [".subckt", ".gate", ".exdc", ".clock", ".foo"])
def test_unknown_constructs(word):
    err = error_of(f".inputs a\n.outputs a\n{word} x y\n")
    assert (err.line, err.column) == (3, 1) and word in err.message


def test_mixed_cover():
    err = error_of(".inputs a b\n.outputs y\n.names a b y\n11 1\n00 0\n")
    assert (err.line, err.column) == (5, 4) and "on-set" in err.message


@pytest.mark.parametrize(
    "rows, line, col",
    [
        ("1 1\n", 4, 1),  # plane too short
        ("1x 1\n", 4, 2),  # bad character
        ("11 2\n", 4, 4),  # bad output bit
        ("11\n", 4, 1),  # missing output bit
        ("11 1 1\n", 4, 6),  # extra token
    ],
)
def test_malformed_rows(rows, line, col):
    err = error_of(f".inputs a b\n.outputs y\n.names a b y\n{rows}")
    assert (err.line, err.column) == (line, col)


def test_structural_errors():
    assert error_of(".inputs a\n.outputs y\n.names a z y\n11 1\n").column == 10  # undefined z
    err = error_of(".inputs a\n.outputs y\n.names a y\n1 1\n.names a y\n0 1\n")
    assert err.line == 5 and "driven twice" in err.message
    err = error_of(".inputs a\n.outputs y\n.names a t y\n11 1\n.names y t\n1 1\n")
    assert "cycle" in err.message and err.line == 3
    assert error_of("11 1\n").line == 1  # a row outside .names
    assert "after .end" in error_of(".outputs y\n.names y\n.end\n.model b\n").message
    assert "second .model" in error_of(".model a\n.model b\n").message
    assert "empty netlist" in error_of(".model a\n.inputs x\n.end\n").message
