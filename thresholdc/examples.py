"""Example netlists (``thresholdc example NAME -o FILE``): arithmetic circuits as ISCAS
``.bench`` text, and random rule files.

Standard library only and importing nothing from the rest of thresholdc, so tests can use the
circuits as outside input: each generator returns nothing but text, and :func:`reference`
evaluates the arithmetic meaning of each circuit with plain integers, for checks.
``benchmarks/gen_circuits.py`` re-exports this module.

Circuits (input ``a0..a{n-1}``, ``b0..``, least significant bit first):

* ``adder(n)``: n-bit ripple-carry adder, sum ``s0..s{n}`` (full adders of XOR/AND/OR);
* ``multiplier(n)``: n×n array multiplier, product ``p0..p{2n-1}``: AND partial products and
  rows of ripple-carry adders built from NOR gates only (9 NOR per full adder, 6 per half
  adder), about 2,400 gates for n = 16;
* ``comparator(n)``: ``lt`` (a < b) and ``eq`` (a == b), a ripple chain from the top bit;
* ``parity(n)``: a balanced tree of two-input XOR gates over ``x0..x{n-1}``, output ``odd``.

>>> text = adder(2)
>>> text.count(" = ")
7
>>> reference("adder", 2, {"a0": 1, "a1": 1, "b0": 1, "b1": 0})
{'s0': 0, 's1': 0, 's2': 1}
"""

from __future__ import annotations

import random

__all__ = ["adder", "multiplier", "comparator", "parity", "reference", "random_rules",
           "example", "EXAMPLES"]

#: Example name prefix -> (generator, what it is, the smallest and largest n accepted).
EXAMPLES: dict[str, tuple[str, str, int, int]] = {
    "adder": ("adder", "n-bit ripple-carry adder (XOR/AND/OR)", 1, 256),
    "mult": ("multiplier", "n x n array multiplier (AND partial products, NOR adders)", 1, 64),
    "compare": ("comparator", "n-bit comparator: a < b and a == b", 1, 256),
    "parity": ("parity", "XOR tree over n inputs", 2, 4096),
}


class _Netlist:
    """Accumulates .bench lines with fresh gate names."""

    def __init__(self, title: str) -> None:
        self.lines = [f"# {title} (generated)"]
        self.count = 0
        self.body: list[str] = []

    def inputs(self, names: list[str]) -> None:
        self.lines += [f"INPUT({n})" for n in names]

    def outputs(self, names: list[str]) -> None:
        self.lines += [f"OUTPUT({n})" for n in names]

    def gate(self, op: str, *args: str, name: str | None = None) -> str:
        if name is None:
            self.count += 1
            name = f"n{self.count}"
        self.body.append(f"{name} = {op}({', '.join(args)})")
        return name

    def text(self) -> str:
        return "\n".join(self.lines + self.body) + "\n"


def _full_adder(nl: _Netlist, a: str, b: str, c: str, s: str | None = None,
                co: str | None = None) -> tuple[str, str]:
    x = nl.gate("XOR", a, b)
    sm = nl.gate("XOR", x, c, name=s)
    carry = nl.gate("OR", nl.gate("AND", a, b), nl.gate("AND", x, c), name=co)
    return sm, carry


def adder(n: int) -> str:
    """An n-bit ripple-carry adder (half adder for bit 0)."""
    nl = _Netlist(f"{n}-bit ripple-carry adder")
    a = [f"a{i}" for i in range(n)]
    b = [f"b{i}" for i in range(n)]
    nl.inputs(a + b)
    nl.outputs([f"s{i}" for i in range(n + 1)])
    carry = nl.gate("AND", a[0], b[0])
    nl.gate("XOR", a[0], b[0], name="s0")
    for i in range(1, n):
        _, carry = _full_adder(nl, a[i], b[i], carry, s=f"s{i}",
                               co=f"s{n}" if i == n - 1 else None)
    if n == 1:
        nl.gate("BUFF", carry, name="s1")
    return nl.text()


def _nor_half(nl: _Netlist, a: str, b: str, s: str | None = None) -> tuple[str, str]:
    """Half adder of 6 NOR gates: n1 = a NOR b, xnor from 3 more, sum, carry."""
    n1 = nl.gate("NOR", a, b)
    n2 = nl.gate("NOR", a, n1)
    n3 = nl.gate("NOR", b, n1)
    xnor = nl.gate("NOR", n2, n3)
    sm = nl.gate("NOR", n1, xnor, name=s)
    carry = nl.gate("NOR", n1, sm)
    return sm, carry


def _nor_full(nl: _Netlist, a: str, b: str, c: str, s: str | None = None) -> tuple[str, str]:
    """Full adder of 9 NOR gates: t = XNOR(a, b) (4), sum = XNOR(t, c) (4), carry = 1."""
    n1 = nl.gate("NOR", a, b)
    t = nl.gate("NOR", nl.gate("NOR", a, n1), nl.gate("NOR", b, n1))
    p1 = nl.gate("NOR", t, c)
    sm = nl.gate("NOR", nl.gate("NOR", t, p1), nl.gate("NOR", c, p1), name=s)
    carry = nl.gate("NOR", n1, p1)
    return sm, carry


def multiplier(n: int) -> str:
    """An n×n array multiplier: AND partial products, rows of NOR ripple-carry adders."""
    nl = _Netlist(f"{n}x{n} array multiplier")
    a = [f"a{i}" for i in range(n)]
    b = [f"b{i}" for i in range(n)]
    nl.inputs(a + b)
    nl.outputs([f"p{i}" for i in range(2 * n)])
    pp = [[nl.gate("AND", a[j], b[i]) for j in range(n)] for i in range(n)]
    if n == 1:
        nl.gate("BUFF", pp[0][0], name="p0")
        nl.gate("AND", pp[0][0], nl.gate("NOT", pp[0][0]), name="p1")
        return nl.text()
    nl.gate("BUFF", pp[0][0], name="p0")
    # acc holds the running sum's bits above the ones already output
    acc = pp[0][1:]
    for i in range(1, n):
        row = pp[i]
        new: list[str] = []
        carry = ""
        for j in range(n):
            top = acc[j] if j < len(acc) else None
            if j == 0:
                assert top is not None  # the running sum has at least n - 1 bits
                s, carry = _nor_half(nl, row[0], top, s=f"p{i}")
            elif top is None:
                s, carry = _nor_half(nl, row[j], carry)
            else:
                s, carry = _nor_full(nl, row[j], top, carry)
            if j:
                new.append(s)
        acc = new + [carry]
    for j, sig in enumerate(acc):
        nl.gate("BUFF", sig, name=f"p{n + j}")
    return nl.text()


def comparator(n: int) -> str:
    """``lt`` = a < b and ``eq`` = a == b for n-bit numbers, chained from the top bit."""
    nl = _Netlist(f"{n}-bit comparator")
    a = [f"a{i}" for i in range(n)]
    b = [f"b{i}" for i in range(n)]
    nl.inputs(a + b)
    nl.outputs(["lt", "eq"])
    lt: str | None = None
    eq: str | None = None
    for i in range(n - 1, -1, -1):
        e = nl.gate("XNOR", a[i], b[i])
        l_ = nl.gate("AND", nl.gate("NOT", a[i]), b[i])
        if lt is None:
            lt, eq = l_, e
        else:
            assert eq is not None
            lt = nl.gate("OR", lt, nl.gate("AND", eq, l_))
            eq = nl.gate("AND", eq, e)
    assert lt is not None and eq is not None  # n >= 1
    nl.gate("BUFF", lt, name="lt")
    nl.gate("BUFF", eq, name="eq")
    return nl.text()


def parity(n: int) -> str:
    """A balanced tree of two-input XOR gates."""
    nl = _Netlist(f"{n}-input parity tree")
    xs = [f"x{i}" for i in range(n)]
    nl.inputs(xs)
    nl.outputs(["odd"])
    level = xs
    while len(level) > 2:
        nxt = [nl.gate("XOR", level[i], level[i + 1]) for i in range(0, len(level) - 1, 2)]
        if len(level) % 2:
            nxt.append(level[-1])
        level = nxt
    nl.gate("XOR", *level, name="odd") if len(level) == 2 else nl.gate("BUFF", level[0],
                                                                       name="odd")
    return nl.text()


def reference(kind: str, n: int, x: dict[str, int]) -> dict[str, int]:
    """The arithmetic meaning of a generated circuit on one assignment (plain integers)."""
    if kind == "parity":
        return {"odd": sum(x[f"x{i}"] for i in range(n)) % 2}
    A = sum(x[f"a{i}"] << i for i in range(n))
    B = sum(x[f"b{i}"] << i for i in range(n))
    if kind == "adder":
        return {f"s{i}": (A + B) >> i & 1 for i in range(n + 1)}
    if kind == "multiplier":
        return {f"p{i}": (A * B) >> i & 1 for i in range(2 * n)}
    if kind == "comparator":
        return {"lt": int(A < B), "eq": int(A == B)}
    raise ValueError(kind)


def random_rules(seed: int, n_inputs: int, n_defs: int) -> str:
    """A random rule file (Boolean inputs, connectives, counting calls, comparisons) in an
    invented scenario of sensor flags ``f0..``; every definition feeds a later one or is
    an output."""
    rng = random.Random(seed)
    names = [f"f{i}" for i in range(n_inputs)]
    lines = [f"# random rule set {seed}: invented sensor flags", "input " + ", ".join(names)]
    pool = list(names)
    for k in range(n_defs):
        pick = rng.sample(pool, min(len(pool), rng.randint(2, 5)))
        form = rng.randrange(7)
        if form == 0:
            expr = " and ".join(pick)
        elif form == 1:
            expr = " or ".join(f"not {p}" if rng.random() < 0.3 else p for p in pick)
        elif form == 2:
            expr = " ^ ".join(pick)
        elif form == 3:
            expr = f"atleast({rng.randint(1, len(pick))}, {', '.join(pick)})"
        elif form == 4:
            terms = " + ".join(f"{rng.randint(1, 5)}*{p}" for p in pick)
            expr = f"{terms} >= {rng.randint(1, 3 * len(pick))}"
        elif form == 5:
            expr = f"if {pick[0]} then {pick[1]} else ({' or '.join(pick[1:])})"
        else:
            expr = f"majority({', '.join(pick)})"
        name = f"d{k}"
        lines.append(f"{name} = {expr}")
        pool.append(name)
    outs = pool[-min(4, n_defs):]
    lines.insert(2, "output " + ", ".join(outs))
    return "\n".join(lines) + "\n"


def example(name: str) -> str:
    """The ``.bench`` text of an example netlist: ``adderN``, ``multN``, ``compareN`` or
    ``parityN`` (for instance ``mult16``, 2,385 gates).

    Raises ValueError (with the valid names) for any other name.

    >>> example("adder2") == adder(2)
    True
    >>> example("mult16").count(" = ")
    2385
    """
    for prefix, (func, _, low, high) in EXAMPLES.items():
        digits = name[len(prefix):]
        if name.startswith(prefix) and digits.isdigit() and not digits.startswith("0"):
            n = int(digits)
            if not low <= n <= high:
                raise ValueError(f"{name}: n must be between {low} and {high} for {prefix}N")
            return str(globals()[func](n))
    names = ", ".join(f"{p}N" for p in EXAMPLES)
    raise ValueError(f"unknown example {name!r}; the examples are {names} (e.g. mult16)")
