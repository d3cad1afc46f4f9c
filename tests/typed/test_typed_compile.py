"""Typed inputs end to end: categorical one-hot units, real thresholds, the features list.

Every truth table here is compared with an evaluation written in the test itself (plain Python
on the feature values), not with the project's reference evaluator.
"""

from __future__ import annotations

import itertools
import json
import math

import numpy as np
import pytest

from thresholdc.compiler import compile_rules
from thresholdc.errors import RuleError
from thresholdc.export import save_any
from thresholdc.logic.typed import decode_units
from thresholdc.network.fileformat import dumps
from thresholdc.syntax.parser import parse

COLOURS = ("red", "green", "blue")


def unit_row(net, values: dict) -> list[float]:
    """One network input row from feature values, written independently of the package."""
    row = []
    for u in net.inputs:
        if "=" in u:
            name, value = u.split("=", 1)
            row.append(1.0 if str(values[name]) == value else 0.0)
        else:
            row.append(float(values[u]))
    return row


def decide(net, points: list[dict]) -> np.ndarray:
    return net.decide(np.array([unit_row(net, p) for p in points]))


def around(c: float) -> list[float]:
    """Points at, just beside and away from a threshold."""
    return [c, math.nextafter(c, -math.inf), math.nextafter(c, math.inf), c - 0.25, c + 0.25,
            c - 100.0, c + 100.0]


CATEGORICAL = """
input colour: {red, green, blue}, grade: {1, 2, 3}, lit
warm = colour in {red, green} and lit
odd_grade = grade == 1 or grade == 3
not_blue = colour != blue
mix = if lit then grade != 2 else colour == blue
"""


@pytest.mark.parametrize("layered", [False, True])
def test_categorical_truth_table(layered):
    net = compile_rules(CATEGORICAL, layered=layered)
    points = [{"colour": c, "grade": g, "lit": b}
              for c, g, b in itertools.product(COLOURS, ("1", "2", "3"), (0, 1))]
    expected = np.array([
        [p["colour"] in ("red", "green") and p["lit"] == 1,
         p["grade"] in ("1", "3"),
         p["colour"] != "blue",
         (p["grade"] != "2") if p["lit"] else (p["colour"] == "blue")]
        for p in points
    ])
    assert net.output_names == ("warm", "odd_grade", "not_blue", "mix")
    assert (decide(net, points) == expected).all()
    assert net.inputs == ("colour=red", "colour=green", "colour=blue", "grade=1", "grade=2",
                          "grade=3", "lit")


@pytest.mark.parametrize("op", [">", ">=", "<", "<="])
@pytest.mark.parametrize("c", [30.5, -2.0, 0.0, 1e-3, 7.0])
def test_real_threshold_at_and_around(op, c):
    net = compile_rules(f"input temp: real\ny = temp {op} {c!r}\n")
    xs = around(c)
    compare = {">": lambda x: x > c, ">=": lambda x: x >= c, "<": lambda x: x < c,
               "<=": lambda x: x <= c}[op]
    got = decide(net, [{"temp": x} for x in xs])[:, 0]
    assert got.tolist() == [compare(x) for x in xs]


def test_real_neurons_read_only_the_real_unit_in_layer_one():
    net = compile_rules("input temp: real, door\nhot = temp > 30.5 and door\ncool = temp <= 18\n")
    readers = [n for n in net.neurons if "temp" in n.inputs]
    assert readers and all(n.inputs == ("temp",) and n.layer == 1 for n in readers)
    # Only strict tests: z = temp - c or z = c - temp.
    assert sorted((n.weights[0], n.bias) for n in readers) == [(1.0, -30.5), (1.0, -18.0)]


MIXED = """
input zone: {north, south, 7}, temp: real in [-40, 60] scale 0.5, humid: real, fan
alarm = (zone in {north, 7} and temp >= 30.5) or (fan and humid < -3)
dry = not fan and zone != south and humid <= 40
either = temp > 12 xor humid > 12
"""


def test_mixed_truth_table():
    net = compile_rules(MIXED)
    temps = around(30.5) + around(12.0)
    humids = around(-3.0) + around(40.0) + around(12.0)
    points = [{"zone": z, "temp": t, "humid": h, "fan": f}
              for z, t, h, f in itertools.product(("north", "south", "7"), temps, humids, (0, 1))]
    expected = np.array([
        [(p["zone"] in ("north", "7") and p["temp"] >= 30.5) or (p["fan"] == 1 and
                                                                   p["humid"] < -3),
         p["fan"] == 0 and p["zone"] != "south" and p["humid"] <= 40,
         (p["temp"] > 12) != (p["humid"] > 12)]
        for p in points
    ])
    assert (decide(net, points) == expected).all()
    assert net.meta["verification"] == {"method": "exhaustive", "result": "equal"}


def test_features_in_the_file_exactly():
    net = compile_rules("input colour: {red, green, blue}, temp: real in [-40, 60] scale 0.5,"
                        " flag, grade: {1, 2}, humid: real\n"
                        "y = colour == red and temp > 30.5 and flag and grade == 2 "
                        "and humid < 80\n")
    text = dumps(net)
    data = json.loads(text)
    assert list(data)[:4] == ["format", "version", "inputs", "features"]
    assert data["inputs"] == ["colour=red", "colour=green", "colour=blue", "temp", "flag",
                              "grade=1", "grade=2", "humid"]
    assert data["features"] == [
        {"name": "colour", "kind": "categorical", "values": ["red", "green", "blue"],
         "units": ["colour=red", "colour=green", "colour=blue"]},
        {"name": "temp", "kind": "real", "units": ["temp"], "range": [-40, 60], "scale": 0.5},
        {"name": "flag", "kind": "bool", "units": ["flag"]},
        {"name": "grade", "kind": "categorical", "values": ["1", "2"],
         "units": ["grade=1", "grade=2"]},
        {"name": "humid", "kind": "real", "units": ["humid"], "range": None, "scale": 1},
    ]
    # Keys inside each entry in the documented order.
    assert list(data["features"][1]) == ["name", "kind", "units", "range", "scale"]
    # Same input, same bytes.
    again = compile_rules("input colour: {red, green, blue}, temp: real in [-40, 60] scale 0.5,"
                          " flag, grade: {1, 2}, humid: real\n"
                          "y = colour == red and temp > 30.5 and flag and grade == 2 "
                          "and humid < 80\n")
    assert dumps(again) == text


def test_plain_boolean_file_has_no_features():
    data = json.loads(dumps(compile_rules("input a, b\ny = a and b\n")))
    assert "features" not in data


def test_features_survive_a_save_and_load(tmp_path):
    from thresholdc.network.fileformat import load

    net = compile_rules(MIXED)
    path = tmp_path / "mixed.json"
    save_any(net, str(path))
    back = load(str(path))
    assert back.features == net.features
    assert back.inputs == net.inputs


def test_categorical_ordered_comparison_is_an_error():
    with pytest.raises(RuleError, match="unordered"):
        parse("input grade: {1, 2, 3}\ny = grade >= 2\n", "r.rules")


def test_unknown_category_value_is_an_error():
    with pytest.raises(RuleError, match="'purple' is not a value of 'colour'"):
        parse("input colour: {red, blue}\ny = colour == purple\n", "r.rules")


def test_decode_refuses_impossible_one_hot_rows():
    prog = parse("input c: {x, y}\nq = c == x\n")
    with pytest.raises(ValueError, match="exactly one 1"):
        decode_units(prog, [[1, 1]], ["c=x", "c=y"])
    with pytest.raises(ValueError, match="exactly one 1"):
        decode_units(prog, [[0, 0]], ["c=x", "c=y"])


@pytest.mark.parametrize("scale", [0.5, 2.0])
def test_soft_real_neuron_is_within_tolerance_at_one_scale(scale):
    eps = 0.01
    text = f"input temp: real in [-40, 60] scale {scale}, door\ny = temp > 30.5 and door\n"
    soft = compile_rules(text, activation="sigmoid", tolerance=eps)
    step = compile_rules(text)
    real = [n for n in soft.neurons if "temp" in n.inputs]
    assert len(real) == 1
    # The gain is at least ln(1/eps - 1)/scale (within eps at distance >= scale).
    assert abs(real[0].weights[0]) * scale >= math.log(1 / eps - 1) - 1e-9
    xs = [30.5 - scale, 30.5 + scale, -40.0, 60.0, 30.5 + 3 * scale]
    points = [{"temp": x, "door": d} for x in xs for d in (0, 1)]
    rows = np.array([unit_row(soft, p) for p in points])
    dev = np.abs(soft.evaluate(rows) - step.evaluate(rows))
    assert dev.max() <= eps + 1e-12


def test_bipolar_step_network_with_a_real_input():
    text = "input temp: real, door\ny = temp >= 3 or not door\n"
    net = compile_rules(text, encoding="bipolar")
    xs = around(3.0)
    points = [{"temp": x, "door": d} for x in xs for d in (0, 1)]
    rows = np.array([unit_row(net, p) for p in points])
    rows[:, list(net.inputs).index("door")] = 2 * rows[:, list(net.inputs).index("door")] - 1
    got = net.evaluate(rows)[:, 0] > 0
    assert got.tolist() == [p["temp"] >= 3 or p["door"] == 0 for p in points]
