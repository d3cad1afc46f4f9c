"""No evaluator guesses a function it does not know: each raises the same error."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from thresholdc.ir.program import Call
from thresholdc.logic import evaluate, lower_to_gates, source_from_text
from thresholdc.verification.domain import boolean_or_typed_domain
from thresholdc.verification.sat.circuit import Circuit
from thresholdc.verification.sat.encode import encode_program
from thresholdc.verification.ternary import rules_ternary

MESSAGE = "unknown function 'median'; the rule language has atleast"


def _with_unknown_call():
    """A parsed program whose one call is renamed to a function the language lacks."""
    src = source_from_text("input a, b, c\ny = parity(a, b, c)\n", "u.rules")
    program = src.program
    d = program.definitions["y"]
    assert isinstance(d.expr, Call) and d.expr.func == "parity"  # the parser built a call
    bad = dataclasses.replace(d, expr=dataclasses.replace(d.expr, func="median"))
    return src, dataclasses.replace(program, definitions={"y": bad})


def test_the_reference_evaluator_refuses_an_unknown_function():
    _, program = _with_unknown_call()
    with pytest.raises(ValueError, match=MESSAGE):
        evaluate(program, np.array([[1, 0, 0]]))


def test_lowering_refuses_an_unknown_function():
    _, program = _with_unknown_call()
    with pytest.raises(ValueError, match=MESSAGE):
        lower_to_gates(program, simplify_support=0)


def test_the_sat_encoding_refuses_an_unknown_function():
    _, program = _with_unknown_call()
    c = Circuit()
    with pytest.raises(ValueError, match=MESSAGE):
        encode_program(c, program, {u: c.new_input() for u in ("a", "b", "c")})


def test_the_three_valued_checker_refuses_an_unknown_function():
    # It used to read any unknown function as parity.
    src, program = _with_unknown_call()
    bad = dataclasses.replace(src, program=program)
    domain = boolean_or_typed_domain(bad)
    masks = [np.ones((1, 2), dtype=bool) for _ in domain.discrete]
    with pytest.raises(ValueError, match=MESSAGE):
        rules_ternary(bad, domain, masks, None, None)
