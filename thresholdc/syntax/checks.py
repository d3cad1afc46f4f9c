"""Whole-file checks of a parsed rule file, ending in a :class:`~thresholdc.ir.program.Program`.

The rules (DESIGN.md section 3): every name used is a declared input or a definition; a name is
declared once and defined once, never both; the declared type decides how ``name == value``
reads; definitions may come in any order but may not depend on themselves; outputs are the
listed ones, or else every definition no other definition uses.  Everything here is iterative,
so a file of thousands of definitions or a chain of hundreds of operators is fine.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Iterable

from ..errors import RuleError
from ..ir.program import (
    BinOp,
    Call,
    CategoryTest,
    Compare,
    Definition,
    Expr,
    InputDecl,
    InputVar,
    Ite,
    Name,
    Not,
    OutputDecl,
    Program,
    RealTest,
    Term,
    sub_expressions,
)
from .lexer import KEYWORDS
from .transform import Number, PendingCompare, PendingIn, Value, error_at

__all__ = ["check_program"]

_ORDERED = (">", ">=", "<", "<=")


def check_program(statements: list, text: str, file: str) -> Program:
    """Check parsed statements as a whole and build the :class:`Program`."""
    if not statements:
        raise RuleError("empty program: no statements", file=file)
    inputs = _collect_inputs(s for s in statements if isinstance(s, InputDecl))
    kinds = {v.name: v for v in inputs}
    definitions = _collect_definitions(
        (s for s in statements if isinstance(s, Definition)), kinds
    )
    resolved: dict[str, Definition] = {}
    deps: dict[str, list[str]] = {}
    for name, d in definitions.items():
        expr, used = _resolve(d.expr, kinds, definitions)
        resolved[name] = Definition(d.name, expr, d.span) if expr is not d.expr else d
        deps[name] = used
    listed = _collect_outputs(
        [s for s in statements if isinstance(s, OutputDecl)], kinds, definitions
    )
    _check_cycles(resolved, deps)

    if listed is None:
        used_by_others = {u for names in deps.values() for u in names}
        outputs = tuple(n for n in resolved if n not in used_by_others)
    else:
        outputs = tuple(listed)
    if not outputs:
        raise RuleError(
            "empty program: nothing to output (no definitions and no output statement)",
            file=file,
        )
    order = _topological(outputs, deps)
    needed = set(order)
    return Program(
        inputs=inputs,
        outputs=outputs,
        definitions={n: d for n, d in resolved.items() if n in needed},
        order=order,
        unused=tuple(n for n in resolved if n not in needed),
        text=text,
        file=file,
    )


# ---- declarations --------------------------------------------------------------------------


def _collect_inputs(decls: Iterable[InputDecl]) -> tuple[InputVar, ...]:
    """All declared inputs in order; a name declared twice is an error at the second."""
    seen: dict[str, InputVar] = {}
    for decl in decls:
        for var in decl.vars:
            if var.name in seen:
                first = seen[var.name].span
                raise error_at(
                    f"input '{var.name}' is declared twice (first on line {first.line})", var.span
                )
            seen[var.name] = var
    return tuple(seen.values())


def _collect_definitions(
    defs: Iterable[Definition], kinds: dict[str, InputVar]
) -> dict[str, Definition]:
    """Definitions by name in source order; a second definition or an input defined is an error."""
    out: dict[str, Definition] = {}
    for d in defs:
        if d.name in kinds:
            raise error_at(
                f"'{d.name}' is declared as an input and cannot also be defined", d.span
            )
        if d.name in out:
            first = out[d.name].span
            raise error_at(f"'{d.name}' is defined twice (first on line {first.line})", d.span)
        out[d.name] = d
    return out


def _collect_outputs(
    decls: list[OutputDecl], kinds: dict[str, InputVar], defs: dict[str, Definition]
) -> list[str] | None:
    """Names listed by ``output`` statements, or None when there is no such statement."""
    if not decls:
        return None
    names: list[str] = []
    seen: set[str] = set()
    for decl in decls:
        for n in decl.names:
            if n.id in seen:
                raise error_at(f"output '{n.id}' is listed twice", n.span)
            if n.id in kinds and kinds[n.id].kind != "bool":
                raise error_at(
                    f"output '{n.id}' is a {kinds[n.id].kind} input; outputs are Boolean", n.span
                )
            if n.id not in kinds and n.id not in defs:
                raise error_at(f"output '{n.id}' is never defined", n.span)
            seen.add(n.id)
            names.append(n.id)
    return names


# ---- names and types inside expressions ----------------------------------------------------




def _rebuild(node: Expr, kids: list) -> Expr:
    """``node`` with new children (the node itself when none changed)."""
    old = sub_expressions(node)
    if all(a is b for a, b in zip(old, kids, strict=True)):
        return node
    if isinstance(node, BinOp):
        return BinOp(node.op, kids[0], kids[1], node.span)
    if isinstance(node, Not):
        return Not(kids[0], node.span)
    if isinstance(node, Ite):
        return Ite(kids[0], kids[1], kids[2], node.span)
    if isinstance(node, Call):
        return Call(node.func, node.k, tuple(kids), node.span, node.k_span)
    assert isinstance(node, Compare)
    terms = tuple(Term(t.coef, k, t.span) for t, k in zip(node.terms, kids, strict=True))
    return Compare(terms, node.op, node.rhs, node.span)


def _resolve(
    expr: Expr, kinds: dict[str, InputVar], defs: dict[str, Definition]
) -> tuple[Expr, list[str]]:
    """Check every name of ``expr`` and resolve typed tests; also return the definitions used.

    Iterative post-order walk: a node is pushed once to expand its children and once to
    rebuild it from their results.
    """
    used: dict[str, None] = {}
    results: list[Expr] = []
    stack: list[tuple[Expr, bool]] = [(expr, False)]
    while stack:
        node, expanded = stack.pop()
        if expanded:
            n = len(sub_expressions(node))
            kids = results[len(results) - n :]
            del results[len(results) - n :]
            results.append(_rebuild(node, kids))
            continue
        if isinstance(node, Name):
            _check_boolean_name(node, kinds, defs, used)
            results.append(node)
        elif isinstance(node, PendingCompare):
            results.append(_resolve_compare(node, kinds, defs, used))
        elif isinstance(node, PendingIn):
            results.append(_resolve_in(node, kinds, defs))
        else:
            kids = sub_expressions(node)  # type: ignore[assignment]
            if not kids:
                results.append(node)
                continue
            stack.append((node, True))
            stack.extend((k, False) for k in reversed(kids))
    assert len(results) == 1
    return results[0], list(used)


def _check_boolean_name(
    name: Name, kinds: dict[str, InputVar], defs: dict[str, Definition], used: dict[str, None]
) -> None:
    """A name used as a Boolean value: a Boolean input or a definition."""
    var = kinds.get(name.id)
    if var is not None:
        if var.kind == "categorical":
            raise error_at(
                f"categorical input '{name.id}' can only be tested, as in "
                f"'{name.id} == {var.values[0]}' or '{name.id} in {{…}}'",  # type: ignore[index]
                name.span,
            )
        if var.kind == "real":
            raise error_at(
                f"real input '{name.id}' can only be compared with a number, as in "
                f"'{name.id} > 0.5'",
                name.span,
            )
        return
    if name.id not in defs:
        raise error_at(f"unknown name '{name.id}'{_name_hint(name.id)}", name.span)
    used.setdefault(name.id, None)


def _resolve_compare(
    node: PendingCompare,
    kinds: dict[str, InputVar],
    defs: dict[str, Definition],
    used: dict[str, None],
) -> Expr:
    """Read ``name OP rhs`` by the declared type of ``name``."""
    var = kinds.get(node.var.id)
    rhs = node.rhs
    if var is not None and var.kind == "categorical":
        if node.op not in ("==", "!="):
            raise error_at(
                f"categorical values are unordered: '{var.name}' can only be tested with "
                "==, != or in",
                node.op_span,
            )
        value = rhs.text
        if value not in (var.values or ()):
            raise error_at(_not_a_value(value, var), rhs.span)
        return CategoryTest(var.name, (value,), node.op == "!=", node.span)
    if var is not None and var.kind == "real":
        if node.op not in _ORDERED:
            raise error_at(
                f"real input '{var.name}' can only be compared with >, >=, < or <=",
                node.op_span,
            )
        if not isinstance(rhs, Number):
            raise error_at(
                f"real input '{var.name}' is compared with a number, found '{rhs.text}'",
                rhs.span,
            )
        return RealTest(var.name, node.op, rhs.value, node.span)
    # A Boolean name: an ordinary weighted comparison with one term.
    _check_boolean_name(node.var, kinds, defs, used)
    if isinstance(rhs, Value):
        if node.op == "==":
            hint = f"write '{node.var.id} <-> {rhs.text}'"
        elif node.op == "!=":
            hint = f"write '{node.var.id} xor {rhs.text}'"
        else:
            hint = "the right side must be an integer"
        raise error_at(f"comparing two Boolean names is not a comparison: {hint}", node.op_span)
    if not rhs.is_integer:
        raise error_at(
            f"the right side of a weighted comparison must be an integer, found {rhs.text}",
            rhs.span,
        )
    return Compare((Term(1, node.var, node.var.span),), node.op, int(rhs.text), node.span)


def _resolve_in(node: PendingIn, kinds: dict[str, InputVar], defs: dict[str, Definition]) -> Expr:
    """``name in {…}`` on a categorical input."""
    var = kinds.get(node.var.id)
    if var is None and node.var.id not in defs:
        raise error_at(f"unknown name '{node.var.id}'", node.var.span)
    if var is None or var.kind != "categorical":
        raise error_at(
            f"'{node.var.id}' is not a categorical input: 'in {{…}}' tests a categorical input",
            node.var.span,
        )
    seen: set[str] = set()
    for v in node.values:
        if v.text not in (var.values or ()):
            raise error_at(_not_a_value(v.text, var), v.span)
        if v.text in seen:
            raise error_at(f"value '{v.text}' is listed twice", v.span)
        seen.add(v.text)
    return CategoryTest(var.name, tuple(v.text for v in node.values), False, node.span)


def _not_a_value(value: str, var: InputVar) -> str:
    """Message for a value a categorical input does not have."""
    return (
        f"'{value}' is not a value of '{var.name}' (its values are "
        f"{', '.join(var.values or ())})"
    )


# ---- cycles and order ----------------------------------------------------------------------


def _check_cycles(defs: dict[str, Definition], deps: dict[str, list[str]]) -> None:
    """Raise at the first definition (in source order) that lies on a cycle.

    A definition lies on a cycle when its strongly connected component has more than one
    member or it uses itself.  The message lists the shortest cycle through it, found by a
    breadth-first search that follows uses in the order they are written.
    """
    component, sizes = _components(defs, deps)
    for name in defs:
        c = component[name]
        if sizes[c] == 1 and name not in deps[name]:
            continue
        path = _shortest_cycle(name, deps, component)
        raise error_at(f"cyclic definition: {' -> '.join(path)}", defs[name].span)


def _components(defs: dict[str, Definition], deps: dict[str, list[str]]
                ) -> tuple[dict[str, int], list[int]]:
    """The strongly connected component of each name (a number) and each component's size.

    Tarjan's algorithm, iterative (a chain of thousands of definitions is fine): a name's
    component is finished when the depth-first search returns to the first member it reached,
    and that member's low link is its own index.  Names used but not defined are their own
    components.
    """
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    component: dict[str, int] = {}
    sizes: list[int] = []
    stack: list[str] = []
    for root in defs:
        if root in index:
            continue
        index[root] = low[root] = len(index)
        stack.append(root)
        work = [(root, iter(deps.get(root, ())))]
        while work:
            node, todo = work[-1]
            for nxt in todo:
                if nxt not in index:
                    index[nxt] = low[nxt] = len(index)
                    stack.append(nxt)
                    work.append((nxt, iter(deps.get(nxt, ()))))
                    break
                if nxt not in component:  # still on the stack: in the current search
                    low[node] = min(low[node], index[nxt])
            else:
                work.pop()
                if work:
                    parent = work[-1][0]
                    low[parent] = min(low[parent], low[node])
                if low[node] == index[node]:
                    size = 0
                    while True:
                        member = stack.pop()
                        component[member] = len(sizes)
                        size += 1
                        if member == node:
                            break
                    sizes.append(size)
    return component, sizes


def _shortest_cycle(start: str, deps: dict[str, list[str]], component: dict[str, int]) -> list:
    """The shortest path start -> ... -> start within start's component."""
    parent: dict[str, str] = {}
    queue = deque([start])
    while queue:
        node = queue.popleft()
        for nxt in deps[node]:
            if component[nxt] != component[start]:
                continue
            if nxt == start:
                path = [node]
                while path[-1] != start:
                    path.append(parent[path[-1]])
                return [*reversed(path), start]
            if nxt not in parent:
                parent[nxt] = node
                queue.append(nxt)
    raise AssertionError("no cycle through a cyclic component")


def _topological(outputs: tuple[str, ...], deps: dict[str, list[str]]) -> tuple[str, ...]:
    """Definitions needed by the outputs, each after every definition it uses.

    Iterative depth-first post-order from the outputs in order, following uses in the order
    they are written, so the result is deterministic.
    """
    order: list[str] = []
    done: set[str] = set()
    for root in outputs:
        if root not in deps or root in done:
            continue
        stack = [(root, iter(deps[root]))]
        done.add(root)
        while stack:
            node, it = stack[-1]
            for nxt in it:
                if nxt not in done:
                    done.add(nxt)
                    stack.append((nxt, iter(deps[nxt])))
                    break
            else:
                stack.pop()
                order.append(node)
    return tuple(order)


def _name_hint(name: str) -> str:
    """A hint for a name that is a keyword or constant written in another case.

    >>> _name_hint("True"), _name_hint("AND"), _name_hint("tank")
    (": the constants are written 'true' and 'false'", ": keywords are lower case: write 'and'", '')
    """
    low = name.lower()
    if low in ("true", "false"):
        return ": the constants are written 'true' and 'false'"
    if low in KEYWORDS:
        return f": keywords are lower case: write '{low}'"
    return ""
