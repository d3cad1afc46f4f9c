"""Which inputs an output can depend on: in the rules, in a netlist, in a network.

The support is structural (the inputs an output's definition reaches), so an input outside it
cannot change the output; one inside it may still not matter for a given function.  Rule
supports are read from the AST and never from the network, so the two can be compared.

>>> from thresholdc.logic import source_from_text
>>> src = source_from_text("input a, b, c\\nx = a and b\\ny = x or a\\n", "s.rules")
>>> sorted(source_support(src, "y")), unused_inputs(src)
(['a', 'b'], ('c',))
"""

from __future__ import annotations

from typing import Any

from ..ir import program as ast

__all__ = ["source_support", "network_support", "unused_inputs"]


def _expr_names(expr: Any) -> set[str]:
    """Every name an expression reads (definitions and inputs), with an explicit stack."""
    names: set[str] = set()
    stack = [expr]
    while stack:
        node = stack.pop()
        if isinstance(node, ast.Name):
            names.add(node.id)
        elif isinstance(node, (ast.CategoryTest, ast.RealTest)):
            names.add(node.var)
        else:
            stack.extend(ast.sub_expressions(node))
    return names


def _units_of(program: Any) -> dict[str, list[str]]:
    """Input name -> its input units (``colour`` -> ``colour=red``, …)."""
    out: dict[str, list[str]] = {}
    for v in program.inputs:
        if v.kind == "categorical":
            out[v.name] = [f"{v.name}={val}" for val in v.values or ()]
        else:
            out[v.name] = [v.name]
    return out


def source_support(source: Any, output: str) -> set[str]:
    """The input units that output ``output`` of a Source reaches (rules or netlist).

    >>> from thresholdc.logic import source_from_text
    >>> src = source_from_text("INPUT(a)\\nINPUT(b)\\nOUTPUT(y)\\ny = NOT(a)\\n", "n.bench")
    >>> sorted(source_support(src, "y"))
    ['a']
    """
    if source.netlist is not None:
        graph = source.netlist
        signal = dict(graph.outputs)[output]
        seen, stack = {signal}, [signal]
        while stack:
            for arg in graph.gates[stack.pop()].args:
                if arg not in seen:
                    seen.add(arg)
                    stack.append(arg)
        inputs = set(graph.inputs)
        return {s for s in seen if s in inputs}
    program = source.program
    units = _units_of(program)
    seen, stack, found = {output}, [output], set()
    while stack:
        name = stack.pop()
        if name in units:
            found.update(units[name])
            continue
        definition = program.definitions.get(name)
        if definition is None:
            continue
        for used in _expr_names(definition.expr):
            if used not in seen:
                seen.add(used)
                stack.append(used)
    return found


def network_support(network: Any, output: str) -> set[str]:
    """The input units that output ``output`` of a Network reads, through any path.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 0), -0.5),),
    ...               (Output("y", "y"),))
    >>> sorted(network_support(net, "y"))
    ['a', 'b']
    """
    reads = {u.name: u.inputs for u in network.neurons}
    source = {o.name: o.source for o in network.outputs}[output]
    seen, stack = {source}, [source]
    while stack:
        for arg in reads.get(stack.pop(), ()):
            if arg not in seen:
                seen.add(arg)
                stack.append(arg)
    return seen & set(network.inputs)


def unused_inputs(source: Any) -> tuple[str, ...]:
    """The declared inputs that no output reaches, in declaration order.

    >>> from thresholdc.logic import source_from_text
    >>> unused_inputs(source_from_text("input a, b\\noutput a\\n", "s.rules"))
    ('b',)
    """
    used: set[str] = set()
    for out in source.outputs:
        used |= source_support(source, out)
    if source.netlist is not None:
        return tuple(i for i in source.netlist.inputs if i not in used)
    return tuple(name for name, units in _units_of(source.program).items()
                 if not set(units) & used)
