"""The collapsing pass on arithmetic netlists: neurons, depth, limits and time.

Circuits come from ``benchmarks/gen_circuits.py`` (ripple-carry adders of XOR/AND/OR, array
multipliers of AND and NOR full adders, comparators, XOR parity trees) plus some written here:
an array multiplier of XOR/AND/OR full adders, a parity tree whose XOR gates are four NAND
gates each, a single-error-correcting decoder (XOR syndrome trees and AND decoding, also with
NAND XORs) and multiplexer trees (AND/OR, and NAND).  Per circuit, from one run:

* ``gates``: logic gates (inverters and buffers not counted);
* ``base``: the baseline, one neuron per gate with inverters free and XOR/XNOR two neurons;
* ``map``: neurons of the one-construction-per-gate mapping (``map_to_neurons``), the peer;
* ``ours``: neurons after collapsing, and ``ratio`` = ours / base;
* ``depth``: of the mapping, then after collapsing;
* ``fan-in``, ``|w|``: the largest fan-in and |weight| after collapsing;
* ``time``: the collapsing pass alone, and ``check``: the local check of its network
  (``verify_local``), with its result.

The last line sums neurons over all circuits.  Not a timed test.  Usage::

    python3 benchmarks/synthesis_bench.py [--quick] [--cut-size 6] [--max-fan-in N]
                                          [--max-weight W] [--profile]
"""

from __future__ import annotations

import argparse
import pathlib
import sys
import time

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))
sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent.parent))

import gen_circuits as gc  # noqa: E402

from thresholdc.ir.gates import GateGraph  # noqa: E402
from thresholdc.logic.source import source_from_text  # noqa: E402
from thresholdc.synth.collapsing import collapse  # noqa: E402
from thresholdc.synth.mapping import map_to_neurons  # noqa: E402
from thresholdc.verification.local import verify_local  # noqa: E402

BASELINE = {"and": 1, "or": 1, "nand": 1, "nor": 1, "threshold": 1, "xor": 2, "xnor": 2,
            "ite": 2, "equal": 2}


def xor_multiplier(n: int) -> str:
    """An n×n array multiplier of AND partial products and XOR/AND/OR full adders."""
    lines = [f"# {n}x{n} array multiplier, XOR full adders (generated)"]
    a = [f"a{i}" for i in range(n)]
    b = [f"b{i}" for i in range(n)]
    lines += [f"INPUT({x})" for x in a + b] + [f"OUTPUT(p{i})" for i in range(2 * n)]
    count = [0]

    def gate(op: str, *args: str, name: str | None = None) -> str:
        if name is None:
            count[0] += 1
            name = f"w{count[0]}"
        lines.append(f"{name} = {op}({', '.join(args)})")
        return name

    pp = [[gate("AND", a[j], b[i]) for j in range(n)] for i in range(n)]
    gate("BUFF", pp[0][0], name="p0")
    acc = pp[0][1:]
    for i in range(1, n):
        row = pp[i]
        new: list[str] = []
        carry = ""
        for j in range(n):
            top = acc[j] if j < len(acc) else None
            x, y = row[j], (top if top is not None else carry)
            if j == 0 or top is None:  # half adder
                s = gate("XOR", x, y, name=f"p{i}" if j == 0 else None)
                c = gate("AND", x, y)
            else:
                t = gate("XOR", x, top)
                s = gate("XOR", t, carry)
                c = gate("OR", gate("AND", x, top), gate("AND", t, carry))
            carry = c
            if j:
                new.append(s)
        acc = new + [carry]
    for j, sig in enumerate(acc):
        gate("BUFF", sig, name=f"p{n + j}")
    return "\n".join(lines) + "\n"


def nand_parity(n: int) -> str:
    """A balanced parity tree whose XOR gates are written as four NAND gates."""
    lines = [f"# {n}-input parity tree of NAND gates (generated)"]
    xs = [f"x{i}" for i in range(n)]
    lines += [f"INPUT({x})" for x in xs] + ["OUTPUT(odd)"]
    count = [0]

    def nand(p: str, q: str, name: str | None = None) -> str:
        if name is None:
            count[0] += 1
            name = f"q{count[0]}"
        lines.append(f"{name} = NAND({p}, {q})")
        return name

    def xor(p: str, q: str, name: str | None = None) -> str:
        m = nand(p, q)
        return nand(nand(p, m), nand(q, m), name=name)

    level = xs
    while len(level) > 2:
        nxt = [xor(level[i], level[i + 1]) for i in range(0, len(level) - 1, 2)]
        if len(level) % 2:
            nxt.append(level[-1])
        level = nxt
    xor(level[0], level[1], name="odd")
    return "\n".join(lines) + "\n"


class _Bench:
    """.bench lines with fresh gate names; ``nand=True`` writes XOR as four NANDs and a 2:1
    multiplexer as three NANDs and an inverter."""

    def __init__(self, title: str, nand: bool = False) -> None:
        self.lines = [f"# {title} (generated)"]
        self.count = 0
        self.nand = nand

    def gate(self, op: str, *args: str, name: str | None = None) -> str:
        if name is None:
            self.count += 1
            name = f"u{self.count}"
        self.lines.append(f"{name} = {op}({', '.join(args)})")
        return name

    def xor(self, p: str, q: str, name: str | None = None) -> str:
        if not self.nand:
            return self.gate("XOR", p, q, name=name)
        m = self.gate("NAND", p, q)
        return self.gate("NAND", self.gate("NAND", p, m), self.gate("NAND", q, m), name=name)

    def mux(self, s: str, a: str, b: str, name: str | None = None) -> str:
        """``a`` when ``s``, else ``b``."""
        if not self.nand:
            return self.gate("OR", self.gate("AND", s, a),
                             self.gate("AND", self.gate("NOT", s), b), name=name)
        return self.gate("NAND", self.gate("NAND", s, a),
                         self.gate("NAND", self.gate("NOT", s), b), name=name)

    def text(self) -> str:
        return "\n".join(self.lines) + "\n"


def sec(n_data: int = 32, n_check: int = 8, nand: bool = False) -> str:
    """A single-error-correcting decoder: syndromes are XOR trees over the data bits of each
    check group and the received check bit; each data bit is flipped when the syndrome equals
    its column (an AND of syndrome literals)."""
    import itertools

    b = _Bench(f"{n_data}-bit single-error-correcting decoder", nand)
    d = [f"d{i}" for i in range(n_data)]
    c = [f"c{j}" for j in range(n_check)]
    b.lines += [f"INPUT({x})" for x in d + c] + [f"OUTPUT(o{i})" for i in range(n_data)]
    codes = list(itertools.combinations(range(n_check), 3))[:n_data]
    syn = []
    for j in range(n_check):
        terms = [d[i] for i, code in enumerate(codes) if j in code] + [c[j]]
        while len(terms) > 1:
            terms = [b.xor(terms[k], terms[k + 1]) if k + 1 < len(terms) else terms[k]
                     for k in range(0, len(terms), 2)]
        syn.append(terms[0])
    neg = [b.gate("NOT", x) for x in syn]
    for i, code in enumerate(codes):
        err = b.gate("AND", *[syn[j] if j in code else neg[j] for j in range(n_check)])
        b.xor(d[i], err, name=f"o{i}")
    return b.text()


def mux_tree(select: int, nand: bool = False) -> str:
    """A 2**select : 1 multiplexer as a tree of 2:1 multiplexers."""
    b = _Bench(f"{1 << select}:1 multiplexer tree", nand)
    d = [f"d{i}" for i in range(1 << select)]
    s = [f"s{j}" for j in range(select)]
    b.lines += [f"INPUT({x})" for x in d + s] + ["OUTPUT(y)"]
    level = d
    for j in range(select):
        level = [b.mux(s[j], level[k + 1], level[k],
                       name="y" if len(level) == 2 else None) for k in range(0, len(level), 2)]
    return b.text()


def circuits(quick: bool) -> list[tuple[str, str]]:
    """(name, .bench text) of every benchmark circuit."""
    if quick:
        return [("adder8", gc.adder(8)), ("mult4", gc.multiplier(4)),
                ("xmult4", xor_multiplier(4)), ("cmp8", gc.comparator(8)),
                ("parity16", gc.parity(16)), ("nparity16", nand_parity(16)),
                ("sec16", sec(16, 6)), ("nmux16", mux_tree(4, nand=True))]
    return [
        ("adder16", gc.adder(16)), ("adder32", gc.adder(32)), ("adder64", gc.adder(64)),
        ("mult8", gc.multiplier(8)), ("mult12", gc.multiplier(12)),
        ("mult16", gc.multiplier(16)), ("xmult8", xor_multiplier(8)),
        ("xmult16", xor_multiplier(16)), ("cmp16", gc.comparator(16)),
        ("cmp32", gc.comparator(32)), ("parity32", gc.parity(32)),
        ("parity64", gc.parity(64)), ("nparity32", nand_parity(32)),
        ("sec32", sec(32, 8)), ("nsec32", sec(32, 8, nand=True)),
        ("mux64", mux_tree(6)), ("nmux64", mux_tree(6, nand=True)),
    ]


def baseline(g: GateGraph) -> int:
    """One neuron per gate, inverters and buffers free, XOR/XNOR two neurons."""
    return sum(BASELINE.get(x.op, 0) for x in g.gates.values())


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small circuits only")
    ap.add_argument("--cut-size", type=int, default=6)
    ap.add_argument("--max-fan-in", type=int, default=None)
    ap.add_argument("--max-weight", type=int, default=None)
    ap.add_argument("--no-check", action="store_true", help="skip the local check")
    ap.add_argument("--profile", action="store_true", help="profile the largest circuit")
    args = ap.parse_args(argv)
    head = (f"{'circuit':<10} {'gates':>6} {'base':>6} {'map':>6} {'ours':>6} {'ratio':>6} "
            f"{'depth':>9} {'fan-in':>6} {'|w|':>4} {'time':>7} {'check':>12}")
    print(f"cut_size={args.cut_size} max_fan_in={args.max_fan_in} "
          f"max_weight={args.max_weight}")
    print(head)
    print("-" * len(head))
    tot_base = tot_ours = tot_map = 0
    worst = None
    for name, text in circuits(args.quick):
        src = source_from_text(text, f"{name}.bench")
        g = src.gates()
        mapped = map_to_neurons(g, reserved=src.names)
        t0 = time.perf_counter()
        net = collapse(g, cut_size=args.cut_size, max_fan_in=args.max_fan_in,
                       max_weight=args.max_weight, reserved=src.names)
        dt = time.perf_counter() - t0
        if worst is None or len(g) > worst[2]:
            worst = (name, text, len(g))
        check = "-"
        if not args.no_check:
            t1 = time.perf_counter()
            rep = verify_local(net, src)
            check = f"{rep.result} {time.perf_counter() - t1:.2f}s"
        base = baseline(g)
        ours = len(net.neurons)
        tot_base += base
        tot_ours += ours
        tot_map += len(mapped.neurons)
        fan = max((n.fan_in for n in net.neurons), default=0)
        wmax = max((abs(w) for n in net.neurons for w in n.weights), default=0)
        print(f"{name:<10} {g.logic_gates():>6} {base:>6} {len(mapped.neurons):>6} {ours:>6} "
              f"{ours / base:>6.3f} {mapped.depth:>4}->{net.depth:<4} {fan:>6} {wmax:>4g} "
              f"{dt:>6.2f}s {check:>12}")
    print("-" * len(head))
    print(f"{'total':<10} {'':>6} {tot_base:>6} {tot_map:>6} {tot_ours:>6} "
          f"{tot_ours / tot_base:>6.3f}   (ours / baseline, summed over circuits)")
    if args.profile and worst is not None:
        import cProfile
        import pstats

        src = source_from_text(worst[1], f"{worst[0]}.bench")
        g = src.gates()
        pr = cProfile.Profile()
        pr.enable()
        collapse(g, cut_size=args.cut_size)
        pr.disable()
        pstats.Stats(pr).sort_stats("cumulative").print_stats(25)
    return 0


if __name__ == "__main__":
    sys.exit(main())
