"""Verification with typed inputs: valid one-hot assignments, real cells, soft networks."""

from __future__ import annotations

import itertools
from dataclasses import replace

import numpy as np
import pytest

import thresholdc
from thresholdc.compiler import compile_rules
from thresholdc.errors import VerificationUndecided
from thresholdc.logic.source import source_from_text
from thresholdc.verification.bounds import verify_bounds
from thresholdc.verification.exhaustive import verify_exhaustive
from thresholdc.verification.typed import verify_typed

MIXED = """
input zone: {north, south, 7}, temp: real in [-40, 60] scale 0.5, humid: real, fan
alarm = (zone in {north, 7} and temp >= 30.5) or (fan and humid < -3)
dry = not fan and zone != south and humid <= 40
either = temp > 12 xor humid > 12
"""


def truth(p: dict) -> list[bool]:
    """MIXED written out in Python, independently of the package."""
    return [
        (p["zone"] in ("north", "7") and p["temp"] >= 30.5) or (p["fan"] == 1 and
                                                                  p["humid"] < -3),
        p["fan"] == 0 and p["zone"] != "south" and p["humid"] <= 40,
        (p["temp"] > 12) != (p["humid"] > 12),
    ]


def row(net, p: dict) -> list[float]:
    """A network input row (binary encoding) from feature values."""
    out = []
    for u in net.inputs:
        if "=" in u:
            name, value = u.split("=", 1)
            out.append(1.0 if str(p[name]) == value else 0.0)
        else:
            out.append(float(p[u]))
    return out


def shift_real_neurons(net, unit: str, delta: float):
    """Move every threshold on ``unit`` by ``delta`` (z = w·x + b becomes w·(x − delta) + b)."""
    neurons = []
    for n in net.neurons:
        if unit in n.inputs:
            w = n.weights[n.inputs.index(unit)]
            n = replace(n, bias=float(n.bias) - float(w) * delta)
        neurons.append(n)
    return replace(net, neurons=tuple(neurons))


def test_step_network_is_exact_on_cells():
    net = compile_rules(MIXED)
    rep = verify_typed(net, source_from_text(MIXED))
    assert rep.result == "equal" and rep.method == "exhaustive"
    # zone 3 × fan 2 × temp 7 points (range ends -40, 60, cuts 12, 30.5, and 3 cells) ×
    # humid 7 points (cuts -3, 12, 40, two cells between and one beyond each end).
    assert rep.assignments == 3 * 2 * 7 * 7
    assert any("one point per cell" in n for n in rep.notes)


def test_strict_and_non_strict_differ_only_on_the_threshold():
    net = compile_rules("input t: real, a\ny = t > 1 and a\n")
    rep = verify_typed(net, source_from_text("input t: real, a\ny = t >= 1 and a\n"))
    assert rep.result == "different"
    assert rep.outputs[0].disagreements == 1
    assert rep.counterexamples[0].assignment == {"t": 1.0, "a": 1}
    assert rep.counterexamples[0].expected is True


def test_categorical_difference_counts_valid_assignments_only():
    net = compile_rules("input c: {red, green, blue}, k: {1, 2}, a\ny = c in {red, green}\n")
    src = source_from_text("input c: {red, green, blue}, k: {1, 2}, a\ny = c == red\n")
    rep = verify_exhaustive(net, src)  # dispatches to the typed verifier
    assert rep.assignments == 3 * 2 * 2  # never an impossible one-hot pattern
    assert rep.outputs[0].disagreements == 2 * 2  # colour green, any k, any a
    for c in rep.counterexamples:
        assert c.assignment["c"] == "green" and set(c.assignment) == {"c", "k", "a"}
        assert c.assignment["k"] in ("1", "2") and c.assignment["a"] in (0, 1)


def test_the_public_verify_reads_typed_rules():
    net = compile_rules(MIXED)
    assert thresholdc.verify(net, MIXED).equal
    assert not thresholdc.verify(net, MIXED.replace("humid <= 40", "humid < 40")).equal


def test_soft_network_checked_outside_the_bands():
    src = source_from_text(MIXED.replace("humid: real", "humid: real in [0, 100] scale 2"))
    soft = compile_rules(src.text, activation="sigmoid")
    rep = verify_typed(soft, src)
    assert rep.result == "equal" and rep.method == "bounds"
    band_note = [n for n in rep.notes if "band" in n]
    assert band_note and "temp in (30, 31)" in band_note[0] and "humid in (38, 42)" in band_note[0]


def test_soft_network_with_a_moved_threshold_fails_outside_the_band():
    text = "input temp: real in [-40, 60] scale 0.5, door\nhot = temp > 30.5 and door\n"
    src = source_from_text(text)
    soft = compile_rules(text, activation="sigmoid")
    # Within the band: still equal (the band is excluded on purpose).
    assert verify_typed(shift_real_neurons(soft, "temp", 0.3), src).result == "equal"
    moved = shift_real_neurons(soft, "temp", 3.0)  # now flips near 33.5
    rep = verify_typed(moved, src)
    assert rep.result == "different"
    for c in rep.counterexamples:
        t, door = c.assignment["temp"], c.assignment["door"]
        assert abs(t - 30.5) >= 0.5 and -40 <= t <= 60
        expected = t > 30.5 and door == 1
        got = moved.decide(np.array([row(moved, c.assignment)]))[0, 0]
        assert c.expected == expected and bool(got) != expected


def test_soft_network_needs_a_declared_range():
    text = "input temp: real, door\nhot = temp > 30.5 and door\n"
    soft = compile_rules(text, activation="sigmoid", verify="none")
    with pytest.raises(VerificationUndecided, match="range is needed"):
        verify_typed(soft, source_from_text(text))


def test_range_is_respected_by_the_cells():
    # The rules and the network differ only below -50, outside the declared range.
    net = compile_rules("input t: real in [-40, 60]\ny = t > -50 and t < 10\n")
    rep = verify_typed(net, source_from_text("input t: real in [-40, 60]\ny = t < 10\n"))
    assert rep.result == "equal"


def perturb(net, sigma, rng):
    neurons = []
    for n in net.neurons:
        size = max([abs(w) for w in n.weights] + [abs(n.bias), 1.0])
        w = np.asarray(n.weights, float) + rng.normal(0, sigma * size, len(n.weights))
        neurons.append(replace(n, weights=tuple(w.tolist()),
                               bias=float(n.bias) + rng.normal(0, sigma * size)))
    return replace(net, neurons=tuple(neurons))


CATS = """
input c: {red, green, blue, 4}, k: {x, y, z}, a, b
p = (c in {red, 4} and a) or (k == z and not b)
q = atleast(2, c == green, k != x, a, b)
"""


def test_bounds_equals_enumeration_on_perturbed_categorical_networks():
    src = source_from_text(CATS)
    rng = np.random.default_rng(7)
    seen = set()
    for trial in range(16):
        base = compile_rules(CATS, activation="sigmoid", layered=bool(trial % 2),
                             verify="none")
        net = perturb(base, [0.02, 0.3, 0.7, 1.2][trial % 4], rng)
        ex = verify_typed(net, src)
        bb = verify_typed(net, src, max_inputs=0)  # force the branch-and-bound
        assert (ex.method, bb.method) == ("exhaustive", "bounds")
        assert ex.result == bb.result
        assert [o.disagreements for o in ex.outputs] == [o.disagreements for o in bb.outputs]
        seen.add(ex.result)
        for c in bb.counterexamples:
            k = net.output_names.index(c.output)
            p = dict(c.assignment)
            got = net.decide(np.array([row(net, p)]))[0, k]
            want = {
                "p": (p["c"] in ("red", "4") and p["a"]) or (p["k"] == "z" and not p["b"]),
                "q": sum([p["c"] == "green", p["k"] != "x", p["a"], p["b"]]) >= 2,
            }[c.output]
            assert bool(got) != bool(want) and c.expected == bool(want)
    assert seen == {"equal", "different"}


def test_bounds_on_perturbed_real_networks_match_dense_sampling():
    text = ("input zone: {north, south}, temp: real in [-10, 40] scale 1, fan\n"
            "alarm = zone == north and temp >= 25 or fan and temp < 0\n")
    src = source_from_text(text)
    base = compile_rules(text, activation="sigmoid", verify="none")
    rng = np.random.default_rng(11)
    temps = np.linspace(-10, 40, 2001)
    temps = temps[(np.abs(temps - 25) >= 1) & (np.abs(temps) >= 1)]  # outside the bands
    points = [{"zone": z, "temp": t, "fan": f}
              for z, t, f in itertools.product(("north", "south"), temps, (0, 1))]
    want = np.array([(p["zone"] == "north" and p["temp"] >= 25) or (p["fan"] and p["temp"] < 0)
                     for p in points])
    verdicts = set()
    for sigma in (0.01, 0.05, 0.2, 0.4):
        net = perturb(base, sigma, rng)
        rep = verify_bounds(net, src)
        got = net.decide(np.array([row(net, p) for p in points]))[:, 0]
        if rep.result == "equal":
            assert (got == want).all()
        else:
            assert not rep.outputs[0].agrees and rep.counterexamples
            for c in rep.counterexamples:
                p = c.assignment
                expected = (p["zone"] == "north" and p["temp"] >= 25) or (
                    p["fan"] == 1 and p["temp"] < 0)
                assert bool(net.decide(np.array([row(net, p)]))[0, 0]) != expected
        verdicts.add(rep.result)
    assert "equal" in verdicts
