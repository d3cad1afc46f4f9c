"""Random rule files and their one-place mutants, for per-output verdict tests.

A rule file is built as a small tree per definition (so it can be printed, and changed in one
place): counting calls (``atleast``/``atmost``/``exactly``/``majority``), ``and``/``or``/
``xor``/``iff``, ``not``, weighted comparisons, and names of inputs or earlier definitions.
A mutant changes exactly one of: the ``k`` of a counting call (or the right side of a
comparison), one literal (a name gets or loses a ``not``), one operator (``and``↔``or``,
``xor``↔``iff``, ``atleast``↔``atmost``).  Everything is drawn from ``random.Random(seed)``,
so a seed gives the same file every time.
"""

from __future__ import annotations

import random
from dataclasses import dataclass, field

__all__ = ["RuleTree", "random_rules", "mutate"]

_SWAP = {"and": "or", "or": "and", "xor": "iff", "iff": "xor", "atleast": "atmost",
         "atmost": "atleast", ">=": "<=", "<=": ">="}


@dataclass
class Node:
    kind: str  # name | not | op | call | cmp
    value: str = ""
    k: int = 0
    kids: list[Node] = field(default_factory=list)
    coefs: list[int] = field(default_factory=list)

    def text(self) -> str:
        if self.kind == "name":
            return self.value
        if self.kind == "not":
            return f"(not {self.kids[0].text()})"
        if self.kind == "op":
            return "(" + f" {self.value} ".join(k.text() for k in self.kids) + ")"
        if self.kind == "call":
            args = ", ".join(k.text() for k in self.kids)
            return f"{self.value}({self.k}, {args})" if self.value != "majority" else \
                f"majority({args})"
        terms = " + ".join(f"{c}*{k.text()}" for c, k in zip(self.coefs, self.kids))
        return f"({terms} {self.value} {self.k})"

    def walk(self) -> list[Node]:
        out = [self]
        for k in self.kids:
            out.extend(k.walk())
        return out


@dataclass
class RuleTree:
    inputs: list[str]
    defs: list[tuple[str, Node]]
    outputs: list[str]

    def text(self) -> str:
        lines = [f"input {', '.join(self.inputs)}", f"output {', '.join(self.outputs)}"]
        lines += [f"{name} = {node.text()}" for name, node in self.defs]
        return "\n".join(lines) + "\n"


def _leaf(rng: random.Random, names: list[str]) -> Node:
    node = Node("name", rng.choice(names))
    return Node("not", kids=[node]) if rng.random() < 0.3 else node


def _expr(rng: random.Random, names: list[str], depth: int) -> Node:
    if depth == 0:
        return _leaf(rng, names)
    kind = rng.choice(("op", "op", "call", "call", "cmp"))
    width = rng.randint(2, 4)
    kids = [_expr(rng, names, depth - 1) if rng.random() < 0.4 else _leaf(rng, names)
            for _ in range(width)]
    if kind == "op":
        return Node("op", rng.choice(("and", "or", "xor", "iff")), kids=kids[:2] if
                    width > 2 and rng.random() < 0.5 else kids)
    if kind == "call":
        func = rng.choice(("atleast", "atmost", "exactly", "majority"))
        return Node("call", func, k=rng.randint(1, len(kids) - 1), kids=kids)
    coefs = [rng.randint(1, 3) for _ in kids]
    return Node("cmp", rng.choice((">=", "<=")), k=rng.randint(1, sum(coefs) - 1), kids=kids,
                coefs=coefs)


def random_rules(seed: int, n_inputs: int = 7, n_defs: int = 5) -> RuleTree:
    """A random rule file: shared definitions, and outputs reading them (some outputs read
    the same shared definition, so one change reaches several outputs)."""
    rng = random.Random(seed)
    inputs = [f"x{i}" for i in range(n_inputs)]
    defs: list[tuple[str, Node]] = []
    names = list(inputs)
    for j in range(n_defs):
        name = f"d{j}"
        defs.append((name, _expr(rng, names, rng.randint(1, 2))))
        names.append(name)
    shared = [d for d, _ in defs]
    outputs = []
    for j in range(rng.randint(3, 5)):
        name = f"y{j}"
        read = Node("name", rng.choice(shared))
        other = _leaf(rng, inputs)
        defs.append((name, Node("op", rng.choice(("and", "or", "xor")), kids=[read, other])))
        outputs.append(name)
    return RuleTree(inputs, defs, outputs)


def mutate(tree: RuleTree, seed: int) -> tuple[RuleTree, str]:
    """A copy of ``tree`` changed in one place, and what was changed."""
    rng = random.Random(seed)
    import copy

    new = copy.deepcopy(tree)
    nodes = [n for _, d in new.defs for n in d.walk()]
    what = rng.choice(("k", "literal", "operator"))
    if what == "k":
        calls = [n for n in nodes if n.kind in ("call", "cmp") and n.value != "majority"]
        if calls:
            n = rng.choice(calls)
            top = len(n.kids) if n.kind == "call" else sum(n.coefs)
            choices = [k for k in range(0, top + 1) if k != n.k]
            n.k = rng.choice(choices)
            return new, f"k of {n.value} -> {n.k}"
        what = "literal"
    if what == "operator":
        ops = [n for n in nodes if n.value in _SWAP and n.kind in ("op", "call", "cmp")]
        if ops:
            n = rng.choice(ops)
            n.value = _SWAP[n.value]
            return new, f"operator -> {n.value}"
    # one literal: negate a name, or drop a not
    holders = [(n, i) for n in nodes for i, k in enumerate(n.kids) if k.kind in ("name", "not")
               and (k.kind == "name" or k.kids[0].kind == "name")]
    n, i = rng.choice(holders)
    kid = n.kids[i]
    n.kids[i] = kid.kids[0] if kid.kind == "not" else Node("not", kids=[kid])
    return new, f"literal {n.kids[i].text()}"
