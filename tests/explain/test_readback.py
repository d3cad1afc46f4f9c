"""Reading units back as rules: each reading is checked against the unit's own truth table,
computed here with plain Python arithmetic over every 0/1 assignment (exhaustive truth table),
and the read-back text is checked with sympy's logic module as a second evaluator."""

from __future__ import annotations

import itertools

import numpy as np
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from thresholdc.explain.printer import expr_text
from thresholdc.explain.readback import kept_inputs, read_units
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.logic.reference import evaluate_definitions
from thresholdc.syntax.parser import parse


def unit_table(weights, bias, point=0.0):
    """The unit's decision on every 0/1 assignment, by plain arithmetic (first input slowest)."""
    return [sum(w * x for w, x in zip(weights, xs)) + bias > point
            for xs in itertools.product((0, 1), repeat=len(weights))]


def reading_table(names, text):
    """The read-back text evaluated by the rule evaluator on the same assignments."""
    prog = parse(f"input {', '.join(names)}\ny = {text}\n")
    X = np.array(list(itertools.product((0, 1), repeat=len(names))))
    return evaluate_definitions(prog, X)["y"].tolist()


def one_unit(weights, bias, activation="sigmoid"):
    names = tuple("abcdefgh"[: len(weights)])
    return names, Network(names, (Neuron("y", 1, names, tuple(weights), bias, activation),),
                          (Output("y", "y"),))


def test_an_and_unit_whose_antecedent_shrank_reads_back_without_it():
    names, net = one_unit((4.2, 0.03, 3.8, 4.1), -10.0)
    text = expr_text(read_units(net, {"y"})["y"].expr)
    assert text == "a and c and d"
    assert reading_table(names, text) == unit_table((4.2, 0.03, 3.8, 4.1), -10.0)


def test_or_and_counting_units_read_back_as_or_and_atleast():
    _, net = one_unit((4.0, 4.1, 3.9), -2.0)
    assert expr_text(read_units(net, {"y"})["y"].expr) == "a or b or c"
    _, net = one_unit((4.0, 4.1, -3.9), -2.0)  # two of three, the third negated
    assert expr_text(read_units(net, {"y"})["y"].expr) == "atleast(2, a, b, not c)"


def test_unequal_weights_read_back_as_a_weighted_comparison_checked_by_sympy():
    weights, bias = (5.0, 2.1, 2.0, -1.9), -4.5
    names, net = one_unit(weights, bias)
    text = expr_text(read_units(net, {"y"})["y"].expr)
    assert ">=" in text
    # sympy as second evaluator: the truth table of the reading as a sympy Boolean function
    syms = sympy.symbols(names)
    from sympy.logic.boolalg import truth_table
    table = unit_table(weights, bias)
    minterms = [list(xs) for xs, v in zip(itertools.product((0, 1), repeat=4), table) if v]
    f = sympy.logic.SOPform(syms, minterms)
    got = [bool(v) for _, v in truth_table(f, syms)]
    assert got == reading_table(names, text) == table


def test_term_units_are_written_in_place_and_definition_units_by_name():
    net = Network(("a", "b", "c"), (
        Neuron("t", 1, ("a", "b"), (4.0, 4.0), -6.0, "sigmoid"),
        Neuron("y~1", 1, ("b", "c"), (4.0, 4.0), -2.0, "sigmoid"),
        Neuron("y", 2, ("t", "y~1", "a"), (4.0, 4.0, 0.01), -6.0, "sigmoid"),
    ), (Output("y", "y"),))
    got = read_units(net, {"t", "y"})
    assert expr_text(got["t"].expr) == "a and b"
    assert expr_text(got["y"].expr) == "t and (b or c)"
    assert got["y"].kept == ("t", "y~1")


def test_one_hot_units_read_back_as_category_tests():
    units = ("c=red", "c=blue", "a")
    net = Network(units, (Neuron("y", 1, units, (4.0, 0.0, 4.0), -6.0, "sigmoid"),),
                  (Output("y", "y"),),
                  features=({"name": "c", "kind": "categorical", "values": ["red", "blue"],
                             "units": ["c=red", "c=blue"]},
                            {"name": "a", "kind": "bool", "units": ["a"]}))
    assert expr_text(read_units(net, {"y"})["y"].expr) == "c == red and a"


def test_kept_inputs_drops_exactly_the_inputs_that_cannot_change_the_decision():
    w = np.array([3.0, 0.4, 0.3, -2.0])
    kept = kept_inputs(w, -1.0, 0.0)
    table = unit_table(w, -1.0)
    # an input matters when flipping it changes the decision on some assignment
    matters = [i for i in range(4) if any(
        table[k] != table[k ^ (1 << (3 - i))] for k in range(16))]
    assert kept == matters


@settings(max_examples=60, derandomize=True, deadline=None)
@given(st.lists(st.floats(-6, 6, allow_nan=False).map(lambda x: round(x, 2)), min_size=1,
                max_size=6),
       st.floats(-8, 8, allow_nan=False).map(lambda x: round(x, 2) + 0.005),
       st.sampled_from(["sigmoid", "step", "relu"]))
def test_every_reading_computes_its_unit(weights, bias, activation):
    names, net = one_unit(tuple(weights), bias, activation)
    point = {"sigmoid": 0.0, "step": 0.0, "relu": 0.5}[activation]
    text = expr_text(read_units(net, {"y"})["y"].expr)
    assert reading_table(names, text) == unit_table(weights, bias, point)


def test_a_unit_with_too_many_inputs_that_matter_is_read_with_rounded_weights():
    names = tuple(f"x{i}" for i in range(20))
    weights = (4.0, 4.0) + (0.15,) * 18  # the small links together can tip the unit
    net = Network(names, (Neuron("y", 1, names, weights, -6.0, "sigmoid"),),
                  (Output("y", "y"),))
    reading = read_units(net, {"y"})["y"]
    assert kept_inputs(np.array(weights), -6.0, 0.0) is None
    assert reading.exact is False
    assert expr_text(reading.expr) == "x0 and x1"  # the small weights round to 0
