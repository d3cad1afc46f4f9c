"""The reference evaluator on typed inputs (categorical, real, Boolean)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from thresholdc.errors import DataError
from thresholdc.logic.reference import evaluate, evaluate_columns
from thresholdc.syntax.parser import parse

RULES = """\
input colour: {red, green, blue}, grade: {1, 2, 3}
input temp: real in [-40, 60] scale 0.5, door
warm_red = colour == red and temp > 30.5
not_green = colour != green
cool = colour in {green, blue} or temp <= -3
top = grade == 3 and door
"""
COLOURS = ("red", "green", "blue")
GRADES = ("1", "2", "3")
TEMPS = (-40.0, -3.0, -2.5, 30.5, 30.75, 60.0)


def _all_rows():
    """Every combination of the test values: colour, grade, temp, door."""
    return list(itertools.product(COLOURS, GRADES, TEMPS, (0, 1)))


def _expected(row):
    colour, grade, temp, door = row
    return [
        colour == "red" and temp > 30.5,
        colour != "green",
        colour in ("green", "blue") or temp <= -3,
        grade == "3" and door == 1,
    ]


def test_columns_exhaustively():
    program = parse(RULES)
    rows = _all_rows()
    columns = {
        "colour": np.array([r[0] for r in rows]),
        "grade": np.array([r[1] for r in rows]),
        "temp": np.array([r[2] for r in rows]),
        "door": np.array([r[3] for r in rows]),
        "ignored": np.zeros(len(rows)),
    }
    got = evaluate_columns(program, columns)
    assert list(got) == ["warm_red", "not_green", "cool", "top"]
    want = np.array([_expected(r) for r in rows])
    assert (np.column_stack(list(got.values())) == want).all()


def test_matrix_form_uses_value_indices():
    program = parse(RULES)
    rows = _all_rows()
    X = np.array(
        [[COLOURS.index(c), GRADES.index(g), t, d] for c, g, t, d in rows], dtype=float
    )
    want = np.array([_expected(r) for r in rows])
    assert (evaluate(program, X) == want).all()


def test_values_are_trimmed_and_unknown_values_refused():
    program = parse(RULES)
    base = {"grade": np.array(["1"]), "temp": np.array([0.0]), "door": np.array([1])}
    out = evaluate_columns(program, {**base, "colour": np.array(["  green "])})
    assert out["not_green"].tolist() == [False]
    with pytest.raises(DataError, match="unknown value 'purple' for 'colour'"):
        evaluate_columns(program, {**base, "colour": np.array(["purple"])})
    with pytest.raises(DataError, match="missing column 'colour'"):
        evaluate_columns(program, base)


def test_integer_categories_match_as_strings():
    program = parse("input grade: {1, 2, 10}\ny = grade in {2, 10}\n")
    out = evaluate_columns(program, {"grade": np.array(["1", "2", "10", " 10"])})
    assert out["y"].tolist() == [False, True, True, True]
    with pytest.raises(DataError, match="unknown value '02'"):
        evaluate_columns(program, {"grade": np.array(["02"])})


def test_index_out_of_range_is_refused():
    program = parse("input c: {a, b}\ny = c == a\n")
    with pytest.raises(ValueError, match="out of range"):
        evaluate(program, np.array([[2]]))
