"""What parse() returns: inputs, outputs, needed definitions, order, unused."""

from __future__ import annotations

import pytest

from thresholdc.syntax.parser import parse


def _check_order(program):
    """Every definition comes after every definition it uses (checked by a fresh walk)."""
    position = {name: i for i, name in enumerate(program.order)}
    assert set(position) == set(program.definitions)
    for name, d in program.definitions.items():
        stack = [d.expr]
        while stack:
            node = stack.pop()
            for attr in ("left", "right", "operand", "cond", "then", "other"):
                if hasattr(node, attr):
                    stack.append(getattr(node, attr))
            stack.extend(getattr(node, "args", ()))
            stack.extend(t.operand for t in getattr(node, "terms", ()))
            if type(node).__name__ == "Name" and node.id in position:
                assert position[node.id] < position[name], (node.id, name)


def test_design_example():
    text = """\
input soil_dry, rain_due, tank_low        # Boolean inputs, in this order
output open_valve, alarm                  # outputs, in this order
need_water = soil_dry and not rain_due    # an intermediate definition
open_valve = need_water and not tank_low
alarm = atleast(2, soil_dry, tank_low, rain_due)
"""
    program = parse(text, "garden.rules")
    assert program.input_names == ("soil_dry", "rain_due", "tank_low")
    assert program.outputs == ("open_valve", "alarm")
    assert list(program.definitions) == ["need_water", "open_valve", "alarm"]
    assert program.unused == ()
    assert program.file == "garden.rules" and program.text == text
    _check_order(program)


def test_default_outputs_are_the_definitions_nobody_uses():
    program = parse("input a, b\nz = y or a\ny = a and b\nw = not y\n")
    assert program.outputs == ("z", "w")
    assert list(program.definitions) == ["z", "y", "w"]
    assert program.order.index("y") < program.order.index("z")
    _check_order(program)


def test_statements_in_any_order_and_accumulating():
    text = "output q\ny = x and a\ninput a\noutput y\nq = not b\ninput b\nx = b or a\n"
    program = parse(text)
    assert program.input_names == ("a", "b")
    assert program.outputs == ("q", "y")
    assert list(program.definitions) == ["y", "q", "x"]
    assert program.order == ("q", "x", "y")


def test_unused_definitions_with_an_output_statement():
    program = parse("input a, b\noutput y\ny = a\nspare = b\nhelper = spare and a\n")
    assert program.outputs == ("y",)
    assert list(program.definitions) == ["y"]
    assert program.unused == ("spare", "helper")


def test_an_input_may_be_an_output():
    program = parse("input a, b\noutput b, y, a\ny = a xor b\n")
    assert program.outputs == ("b", "y", "a")
    assert list(program.definitions) == ["y"]
    program = parse("input a\noutput a\n")
    assert program.outputs == ("a",) and program.definitions == {} and program.order == ()


def test_unused_inputs_stay_inputs():
    program = parse("input a, b, c\ny = a\n")
    assert program.input_names == ("a", "b", "c")


def test_topological_order_of_a_diamond():
    text = "input a\nd = b and c\nb = not e\nc = e or a\ne = a\n"
    program = parse(text)
    assert program.outputs == ("d",)
    _check_order(program)
    assert program.order[-1] == "d" and program.order[0] == "e"


def test_two_thousand_definitions():
    lines = ["input x"] + [f"d{i} = not d{i + 1}" for i in range(1999)] + ["d1999 = x"]
    program = parse("\n".join(lines))
    assert program.outputs == ("d0",)
    assert program.order[0] == "d1999" and program.order[-1] == "d0"
    assert len(program.order) == 2000


@pytest.mark.parametrize("n", [500])
def test_long_chains_of_every_connective(n):
    names = [f"a{i}" for i in range(n)]
    header = "input " + ", ".join(names) + "\n"
    for op in ("^", "and", "|", "->", "<->"):
        program = parse(header + "y = " + f" {op} ".join(names) + "\n")
        expr = program.definitions["y"].expr
        depth = 0
        while hasattr(expr, "left"):
            expr = expr.right if op == "->" else expr.left
            depth += 1
        assert depth == n - 1, op


def test_long_cycle_is_found_without_recursion():
    from thresholdc.errors import RuleError

    lines = ["input x"] + [f"d{i} = d{i + 1} and x" for i in range(1999)] + ["d1999 = not d0"]
    with pytest.raises(RuleError) as info:
        parse("\n".join(lines))
    err = info.value
    assert (err.line, err.column) == (2, 1)
    names = err.message.removeprefix("cyclic definition: ").split(" -> ")
    assert names == [f"d{i}" for i in range(2000)] + ["d0"]


@pytest.mark.parametrize("seed", range(40))
def test_cycle_components_agree_with_networkx(seed):
    # networkx as the second evaluator of the strongly connected components the rule checker
    # computes itself (so that checking a rule file does not import networkx).
    import random

    nx = pytest.importorskip("networkx")
    from thresholdc.syntax.checks import _components

    rng = random.Random(seed)
    n = rng.randint(1, 30)
    names = [f"d{i}" for i in range(n)]
    deps = {a: rng.sample(names, rng.randint(0, min(3, n))) for a in names}
    component, sizes = _components(dict.fromkeys(names), deps)  # type: ignore[arg-type]
    graph = nx.DiGraph()
    graph.add_nodes_from(names)
    graph.add_edges_from((a, b) for a, bs in deps.items() for b in bs)
    ours = {frozenset(x for x in names if component[x] == c) for c in set(component.values())}
    assert ours == {frozenset(c) for c in nx.strongly_connected_components(graph)}
    assert sorted(sizes) == sorted(len(c) for c in ours)


def test_parsing_a_rule_file_does_not_import_networkx():
    import subprocess
    import sys

    # a lazily bound module not used yet is a stand-in in sys.modules (importlib.util)
    code = ("import sys\nfrom thresholdc.syntax.parser import parse\n"
            "try:\n    parse('input a\\nx = y\\ny = x or a\\n')\nexcept Exception as e:\n"
            "    print(e)\n"
            "m = sys.modules.get('networkx')\n"
            "print(m is not None and type(m).__name__ != '_LazyModule')\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          check=True)
    assert done.stdout.splitlines() == ["<rules>:2:1: cyclic definition: x -> y -> x", "False"]
