"""``diff``: what a trained network computes now, definition by definition, against its rules.

For every definition of the rule file that has a unit named after it:

- the unit read back as rule text (:mod:`thresholdc.explain.readback`);
- its agreement with the rule: the fraction of valid assignments on which the read-back
  definition (the network with every unit rounded to 0/1, composed up to this unit) equals the
  rule definition, counted over every assignment of the columns either depends on when there
  are at most ``max_enumerate`` of them, else over ``samples`` seeded random assignments;
- the antecedents added, dropped or negated against the rule text (names read directly);
- for a definition that no longer agrees, a minimal explanation
  (:mod:`thresholdc.explain.explanation`): the fewest columns whose values force the
  difference, with the values;
- how often the real (unrounded) unit decides as its reading does (``rounding``);
- with the start network, the drift of each unit's weights and bias.

Every output is also compared as the network computes it (unrounded) with the rules.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b", "c"), (
...     Neuron("y", 1, ("a", "b", "c"), (4.0, 0.05, 4.0), -6.0, "sigmoid", origin="y"),),
...     (Output("y", "y"),))
>>> d = diff(net, "input a, b, c\\ny = a and b and c\\n")
>>> d.definitions[0].reading, d.definitions[0].dropped, d.definitions[0].agreement
('a and c', ('b',), 0.875)
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import UsageError
from ..ir.network import Network
from ..ir.program import (
    BinOp,
    Call,
    CategoryTest,
    Compare,
    Definition,
    Expr,
    Ite,
    Name,
    Not,
    Program,
    RealTest,
    sub_expressions,
)
from ..ir.reference import Reference
from ..lazy import lazy_module
from ..logic import evaluate_definitions, load_source, source_from_text
from ..training import rule_network
from ..verification import check_names
from .columns import enumerate_rows, levels, sample_rows, support, unit_rows, value_label
from .explanation import shrink, smallest_forcing
from .printer import expr_text
from .readback import UnitReading, decision_point, read_units

nx = lazy_module("networkx")

__all__ = ["DefinitionDiff", "OutputAgreement", "UnitDrift", "Diff", "diff", "antecedents"]

MAX_ENUMERATE = 1 << 16  # assignments counted exhaustively per definition
SAMPLES = 20_000  # assignments drawn when there are more
_COMPLETIONS = 256  # random completions that must all disagree in a sampled explanation


@dataclass(frozen=True)
class DefinitionDiff:
    """One definition: its rule, the unit's reading and how they differ."""

    name: str
    output: bool
    rule: str
    reading: str | None
    exact_reading: bool
    agreement: float | None
    method: str | None  # "exhaustive" or "sampled"
    assignments: int
    columns: tuple[str, ...]
    added: tuple[str, ...] = ()
    dropped: tuple[str, ...] = ()
    negated: tuple[str, ...] = ()
    explanation: dict[str, Any] | None = None
    rounding: float | None = None


@dataclass(frozen=True)
class OutputAgreement:
    """An output as the network computes it (unrounded) against the rules."""

    name: str
    agreement: float
    method: str
    assignments: int


@dataclass(frozen=True)
class UnitDrift:
    """How far a unit's parameters moved from the start: Euclidean norm of the change of
    weights and bias, that norm over the start's, the largest single weight change."""

    name: str
    change: float
    relative: float | None
    largest_input: str | None
    largest_change: float
    bias_change: float
    new: bool = False


@dataclass
class Diff:
    """The whole comparison; :meth:`to_dict` for JSON (the text report is
    :func:`thresholdc.commands.diff.render`)."""

    definitions: list[DefinitionDiff]
    outputs: list[OutputAgreement]
    drift: list[UnitDrift] | None
    notes: list[str] = field(default_factory=list)
    rules_text: str = ""

    @property
    def changed(self) -> list[DefinitionDiff]:
        """Definitions whose reading no longer agrees everywhere with the rule."""
        return [d for d in self.definitions if d.agreement is not None and d.agreement < 1]

    def to_dict(self) -> dict[str, Any]:
        return {
            "definitions": [asdict(d) for d in self.definitions],
            "outputs": [asdict(o) for o in self.outputs],
            "drift": None if self.drift is None else [asdict(u) for u in self.drift],
            "notes": list(self.notes),
            "rules": self.rules_text,
        }


# ---------------------------------------------------------------------- antecedents
def _polarities(expr: Expr) -> dict[str, int]:
    """Names read directly by an expression: +1 read positively, -1 negated, 0 both or
    neither (categorical and real tests, xor, parity, …)."""
    found: dict[str, set[int]] = {}
    stack: list[tuple[Expr, int]] = [(expr, 1)]
    while stack:
        e, pol = stack.pop()
        if isinstance(e, Name):
            found.setdefault(e.id, set()).add(pol)
        elif isinstance(e, CategoryTest | RealTest):
            found.setdefault(e.var, set()).add(0)
        elif isinstance(e, Not):
            stack.append((e.operand, -pol))
        elif isinstance(e, BinOp):
            if e.op in ("and", "or"):
                stack += [(e.left, pol), (e.right, pol)]
            elif e.op == "implies":
                stack += [(e.left, -pol), (e.right, pol)]
            else:
                stack += [(e.left, 0), (e.right, 0)]
        elif isinstance(e, Ite):
            stack += [(e.cond, 0), (e.then, pol), (e.other, pol)]
        elif isinstance(e, Call):
            sign = {"atleast": 1, "majority": 1, "atmost": -1, "nand": -1, "nor": -1}.get(
                e.func, 0)
            stack += [(a, sign * pol) for a in e.args]
        elif isinstance(e, Compare):
            sign = {">=": 1, ">": 1, "<=": -1, "<": -1}.get(e.op, 0)
            stack += [(t.operand, sign * pol * (1 if t.coef > 0 else -1)) for t in e.terms]
        else:
            stack += [(s, pol) for s in sub_expressions(e)]
    return {k: (v.pop() if len(v) == 1 else 0) for k, v in found.items()}


def _label(name: str, pol: int) -> str:
    return f"not {name}" if pol < 0 else name


def antecedents(rule: Expr, reading: Expr) -> tuple[tuple[str, ...], ...]:
    """``(added, dropped, negated)``: names the reading reads that the rule does not, names
    the rule reads that the reading does not, names read with the opposite sign.

    >>> from thresholdc.syntax.parser import parse
    >>> r = parse("input a, b, c\\ny = a and not b\\nz = not a and c\\n").definitions
    >>> antecedents(r["y"].expr, r["z"].expr)
    (('c',), ('not b',), ('a',))
    """
    pr, pn = _polarities(rule), _polarities(reading)
    added = tuple(_label(n, pn[n]) for n in sorted(pn) if n not in pr)
    dropped = tuple(_label(n, pr[n]) for n in sorted(pr) if n not in pn)
    negated = tuple(n for n in sorted(pr) if n in pn and pr[n] * pn[n] < 0)
    return added, dropped, negated


# ---------------------------------------------------------------------- programs
def _read_program(program: Program, readings: dict[str, UnitReading]) -> Program:
    """The rule file with every definition that has a unit replaced by its reading."""
    defs = {
        n: (Definition(n, readings[n].expr, d.span) if n in readings else d)
        for n, d in program.definitions.items()
    }
    graph = nx.DiGraph()
    graph.add_nodes_from(defs)
    for n, d in defs.items():
        for used in _names(d.expr):
            if used in defs:
                graph.add_edge(used, n)
    order = tuple(nx.lexicographical_topological_sort(graph, key=list(defs).index))
    return replace(program, definitions=defs, order=order)


def _inline(expr: Expr, program: Program, keep: dict[str, UnitReading]) -> Expr:
    """``expr`` with every definition that has no unit written in place (by its rule), so
    that its antecedents compare with a unit that reads what that definition read."""
    def walk(e: Expr) -> Expr:
        if isinstance(e, Name):
            if e.id in program.definitions and e.id not in keep:
                return walk(program.definitions[e.id].expr)
            return e
        if isinstance(e, Not):
            return Not(walk(e.operand))
        if isinstance(e, BinOp):
            return BinOp(e.op, walk(e.left), walk(e.right))
        if isinstance(e, Ite):
            return Ite(walk(e.cond), walk(e.then), walk(e.other))
        if isinstance(e, Call):
            return Call(e.func, e.k, tuple(walk(a) for a in e.args))
        if isinstance(e, Compare):
            return Compare(tuple(replace(t, operand=walk(t.operand)) for t in e.terms), e.op,
                           e.rhs)
        return e

    return walk(expr)


def _names(expr: Expr) -> set[str]:
    out: set[str] = set()
    stack = [expr]
    while stack:
        e = stack.pop()
        if isinstance(e, Name):
            out.add(e.id)
        stack.extend(sub_expressions(e))
    return out


def rules_text(program: Program, readings: dict[str, UnitReading]) -> str:
    """The network read back as a rule file (definitions without a unit as in the rules)."""
    decls = []
    for v in program.inputs:
        if v.kind == "categorical":
            decls.append(f"{v.name}: {{{', '.join(v.values or ())}}}")
        elif v.kind == "real":
            rng = "" if v.range is None else f" in [{v.range[0]:g}, {v.range[1]:g}]"
            decls.append(f"{v.name}: real{rng}")
        else:
            decls.append(v.name)
    lines = ["# read back from a trained network by thresholdc diff", f"input {', '.join(decls)}",
             f"output {', '.join(program.outputs)}"]
    for n, d in program.definitions.items():
        if n in readings:
            mark = "" if readings[n].exact else "  # weights rounded: more than 16 inputs"
            lines.append(f"{n} = {expr_text(readings[n].expr)}{mark}")
        else:
            lines.append(f"{n} = {expr_text(d.expr)}  # no unit: as in the rules")
    return "\n".join(lines) + "\n"


# ---------------------------------------------------------------------- comparison
class _Domain:
    """The valid assignments one definition is compared on."""

    def __init__(self, program: Program, samples: int, seed: int, max_enumerate: int):
        self.program = program
        self.levels = dict(zip(program.input_names, levels(program)))
        self.samples, self.seed, self.max_enumerate = samples, seed, max_enumerate
        self._sample: np.ndarray | None = None

    def sample(self) -> np.ndarray:
        if self._sample is None:
            rng = np.random.default_rng(self.seed)
            self._sample = sample_rows(self.program, self.samples, rng)
        return self._sample

    def enumerable(self, columns: list[str]) -> bool:
        sizes = [self.levels[c] for c in columns]
        if any(s is None for s in sizes):
            return False
        return math.prod(int(s) for s in sizes if s is not None) <= self.max_enumerate


def _compare_one(name: str, rules: Program, read: Program, dom: _Domain
                 ) -> tuple[float, str, int, tuple[str, ...], dict[str, Any] | None]:
    cols = [c for c in rules.input_names if c in support(rules, name) | support(read, name)]
    if dom.enumerable(cols):
        X, method = enumerate_rows(rules, cols), "exhaustive"
    else:
        X, method = dom.sample(), "sampled"
    want = evaluate_definitions(rules, X)[name]
    got = evaluate_definitions(read, X)[name]
    bad = want != got
    agreement = float(1.0 - bad.mean()) if len(X) else 1.0
    explanation = None
    if bad.any():
        explanation = _explain(name, rules, read, dom, cols, X, bad, method)
    return agreement, method, int(len(X)), tuple(cols), explanation


def _explain(name: str, rules: Program, read: Program, dom: _Domain, cols: list[str],
             X: np.ndarray, bad: np.ndarray, method: str) -> dict[str, Any]:
    pos = {c: j for j, c in enumerate(rules.input_names)}
    if method == "exhaustive":
        sizes = [int(dom.levels[c] or 0) for c in cols]
        table = bad.reshape(sizes[::-1]).transpose(tuple(range(len(cols)))[::-1])
        found = smallest_forcing(table)
        assert found is not None
        fixed_axes, kind = found
        fixed = {cols[a]: float(v) for a, v in fixed_axes.items()}
    else:
        rng = np.random.default_rng(dom.seed + 1)
        base = sample_rows(rules, _COMPLETIONS, rng)

        def forces(f: dict[str, float]) -> bool:
            Y = base.copy()
            for c, v in f.items():
                Y[:, pos[c]] = v
            return bool(np.all(evaluate_definitions(rules, Y)[name]
                               != evaluate_definitions(read, Y)[name]))

        first = X[int(np.argmax(bad))]
        fixed = shrink({c: float(first[pos[c]]) for c in cols}, forces)
        kind = "irreducible (sampled completions)"
    row = np.zeros((1, len(rules.inputs)))
    for c, v in fixed.items():
        row[0, pos[c]] = v
    unit_says = bool(evaluate_definitions(read, row)[name][0])
    return {
        "columns": {c: value_label(rules, c, v) for c, v in fixed.items()},
        "unit": unit_says,
        "rule": not unit_says,
        "kind": kind,
        "counterexamples": int(bad.sum()),
    }


def _global_rows(program: Program, dom: _Domain) -> tuple[np.ndarray, str]:
    if dom.enumerable(list(program.input_names)):
        return enumerate_rows(program, list(program.input_names)), "exhaustive"
    return dom.sample(), "sampled"


def _drift(net: Network, start: Network) -> list[UnitDrift]:
    before = {n.name: n for n in start.neurons}
    out = []
    for n in net.neurons:
        s = before.get(n.name)
        now = dict(zip(n.inputs, map(float, n.weights)))
        if s is None:
            out.append(UnitDrift(n.name, 0.0, None, None, 0.0, 0.0, new=True))
            continue
        was = dict(zip(s.inputs, map(float, s.weights)))
        keys = sorted(set(now) | set(was), key=lambda k: (list(n.inputs) + list(s.inputs))
                      .index(k))
        delta = np.array([now.get(k, 0.0) - was.get(k, 0.0) for k in keys])
        db = float(n.bias) - float(s.bias)
        change = float(np.sqrt((delta ** 2).sum() + db * db))
        size = float(np.sqrt(sum(w * w for w in was.values()) + float(s.bias) ** 2))
        i = int(np.argmax(np.abs(delta))) if len(delta) else -1
        out.append(UnitDrift(
            n.name, change, change / size if size > 0 else None,
            keys[i] if i >= 0 else None, float(delta[i]) if i >= 0 else 0.0, db))
    return out


def _recorded_start(net: Network, src: Reference, notes: list[str]) -> Network | None:
    """The rule-structured start rebuilt from what a training run recorded in ``meta``: the
    same rule file and ω (its small random links count as 0)."""
    training = (net.meta or {}).get("training") or {}
    recorded = (net.meta or {}).get("rules") or {}
    if training.get("init") != "rules" or recorded.get("sha256") != src.sha256:
        return None
    assert src.program is not None
    weight = float(training["weight"])
    notes.append(f"drift against the rule-structured start rebuilt from the rules (ω = "
                 f"{weight:g}; its small random links count as 0)")
    return rule_network(src.program, weight=weight)


def _as_source(source: Reference | str | Path) -> Reference:
    if isinstance(source, Path):
        src = load_source(str(source))
    elif isinstance(source, str):
        src = source_from_text(source, "<rules>", kind="rules")
    else:
        src = source
    if src.program is None:
        raise UsageError("diff needs a rule file (a netlist has no definitions to compare)",
                         file=src.file)
    return src


def diff(
    network: Network,
    source: Reference | str | Path,
    *,
    start: Network | None = None,
    samples: int = SAMPLES,
    seed: int = 0,
    max_enumerate: int = MAX_ENUMERATE,
) -> Diff:
    """Compare a trained network with its rule file, definition by definition.

    Parameters
    ----------
    network : Network
        The trained (or any) network in the binary encoding, with the rules' input and
        output names.
    source : Reference (a loaded rule file), rule text or Path
        The rule file.
    start : Network, optional
        The network training started from; gives the drift of every unit.
    samples : int
        Assignments drawn (seeded) where the columns a definition depends on are too many to
        enumerate.
    seed : int
        Seed of those draws.
    max_enumerate : int
        Largest number of assignments counted exhaustively per definition.

    Returns
    -------
    Diff

    Raises
    ------
    UsageError
        For a netlist, a bipolar network, or input and output names that differ.

    Examples
    --------
    >>> from thresholdc import compile_rules
    >>> rules = "input a, b\\ny = a or b\\n"
    >>> diff(compile_rules(rules), rules).definitions[0].agreement
    1.0
    """
    src = _as_source(source)
    program = src.program
    assert program is not None
    check_names(network, src)
    units = {n.name for n in network.neurons} & set(program.definitions)
    readings = read_units(network, units)
    read = _read_program(program, readings)
    dom = _Domain(program, samples, seed, max_enumerate)
    notes: list[str] = []
    missing = [d for d in program.definitions if d not in readings]
    if missing:
        notes.append(
            f"this network does not keep a unit per definition: {len(missing)} of "
            f"{len(program.definitions)} definitions have no unit named after them "
            f"({', '.join(missing[:8])}{', …' if len(missing) > 8 else ''}); they are "
            "compared only through the outputs (a synthesised network merges definitions; "
            "train from the rule file to keep one unit per definition)"
        )
    # the real units against their readings, on the whole domain
    Xg, gmethod = _global_rows(program, dom)
    U = unit_rows(program, Xg, network.inputs)
    Z, _ = network.run_units(U)
    row = {n.name: j for j, n in enumerate(network.neurons)}
    read_vals = evaluate_definitions(read, Xg)
    rule_vals = evaluate_definitions(program, Xg)

    defs: list[DefinitionDiff] = []
    for name, d in program.definitions.items():
        rule_txt = expr_text(d.expr)
        is_out = name in program.outputs
        r = readings.get(name)
        if r is None:
            defs.append(DefinitionDiff(name, is_out, rule_txt, None, False, None, None, 0, ()))
            continue
        agreement, method, count, cols, expl = _compare_one(name, program, read, dom)
        added, dropped, negated = antecedents(_inline(d.expr, program, readings), r.expr)
        n = network.neurons[row[name]]
        decided = Z[row[name]] > decision_point(n.activation)
        rounding = float((decided == read_vals[name]).mean()) if len(Xg) else 1.0
        defs.append(DefinitionDiff(
            name, is_out, rule_txt, expr_text(r.expr), r.exact, agreement, method, count,
            cols, added, dropped, negated, expl, rounding))
    decided = network.decide(U)
    outs = []
    for j, o in enumerate(network.outputs):
        agree = float((decided[:, j] == rule_vals[o.name]).mean()) if len(Xg) else 1.0
        outs.append(OutputAgreement(o.name, agree, gmethod, int(len(Xg))))
    if gmethod == "sampled":
        notes.append(f"the outputs and the rounding check use {len(Xg)} sampled assignments "
                     f"(seed {seed}): the domain is too large to enumerate")
    if start is None:
        start = _recorded_start(network, src, notes)
    drift = _drift(network, start) if start is not None else None
    if start is None:
        notes.append("no start network given: weight drift not computed")
    return Diff(defs, outs, drift, notes, rules_text(program, readings))
