"""check_certificate: passes on certificates written by apply_activation, fails on tampering."""

from __future__ import annotations

import copy
from dataclasses import replace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tests.network.step_networks import random_step_network
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.fileformat import dumps, loads
from thresholdc.network.soften import apply_activation
from thresholdc.verification.certificate import check_certificate


def adder() -> Network:
    return Network(
        ("a", "b", "cin"),
        (Neuron("carry", 1, ("a", "b", "cin"), (1, 1, 1), -1.5),
         Neuron("sum", 2, ("a", "b", "cin", "carry"), (1, 1, 1, -2), -0.5)),
        (Output("sum", "sum"), Output("carry", "carry")),
    )


def soft_variants(net: Network) -> list[Network]:
    return [
        apply_activation(net, activation="sigmoid", tolerance=0.01),
        apply_activation(net, activation="sigmoid", tolerance=0.25),
        apply_activation(net, activation="sigmoid", gain=5.0),
        apply_activation(net, activation="tanh", encoding="bipolar", tolerance=0.02),
        apply_activation(net, activation="tanh", encoding="bipolar", gain=3.0),
        apply_activation(net, activation="sigmoid", tolerance=0.05, layered=True),
    ]


def tamper(net: Network, name: str, **changes: float) -> Network:
    """A copy whose certificate entry for neuron ``name`` has ``changes``."""
    cert = copy.deepcopy(net.meta["certificate"])
    cert["neurons"][name].update(changes)
    return net.with_meta(certificate=cert)


# ---------------------------------------------------------------------------- good files
@pytest.mark.parametrize("index", range(6))
def test_good_certificates_pass(index: int) -> None:
    soft = soft_variants(adder())[index]
    check = check_certificate(loads(dumps(soft)))
    assert check.ok, check.problems
    assert check.bound <= soft.meta["certificate"]["bound"] * (1 + 1e-9)
    assert check.margins == "exhaustive"


@given(seed=st.integers(0, 100_000))
@settings(max_examples=20, deadline=None)
def test_random_certificates_pass(seed: int) -> None:
    for soft in soft_variants(random_step_network(seed)):
        check = check_certificate(soft)
        assert check.ok, check.problems


def test_assumed_margins() -> None:
    # Without enumeration the checker only has the 0.5 guarantee of half-integer biases.
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    check = check_certificate(soft, max_inputs=0)
    assert check.ok and check.margins == "assumed"  # every margin of the adder is 0.5
    wide = Network(("a",), (Neuron("y", 1, ("a",), (3,), -1.5),), (Output("y", "y"),))
    soft = apply_activation(wide, activation="sigmoid", tolerance=0.01)
    assert soft.meta["certificate"]["neurons"]["y"]["margin"] == 1.5
    assert check_certificate(soft).ok
    check = check_certificate(soft, max_inputs=0)
    assert not check.ok and any("exceeds the guaranteed 0.5" in p for p in check.problems)


def test_survives_flag_for_a_weak_gain() -> None:
    net = Network(("a", "b", "c"),
                  (Neuron("p", 1, ("a", "b"), (1, 1), -1.5),
                   Neuron("q", 1, ("b", "c"), (1, 1), -1.5),
                   Neuron("r", 1, ("a", "c"), (1, 1), -1.5),
                   Neuron("y", 2, ("p", "q", "r"), (1, 1, 1), -2.5)),
                  (Output("y", "y"),))
    weak = check_certificate(apply_activation(net, activation="sigmoid", gain=1.0))
    assert weak.ok and not weak.survives  # the bound is honest, but too large
    assert check_certificate(apply_activation(net, activation="sigmoid", gain=20.0)).survives


# ---------------------------------------------------------------------------- tampered files
def test_too_low_neuron_bound_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.05)
    bad = tamper(soft, "sum", bound=0.001)
    check = check_certificate(bad)
    assert not check.ok
    assert any("'sum': stated bound 0.001 is below the recomputed" in p for p in check.problems)


def test_too_low_overall_bound_fails() -> None:
    soft = apply_activation(adder(), activation="tanh", encoding="bipolar", tolerance=0.05)
    cert = dict(soft.meta["certificate"], bound=0.0001)
    check = check_certificate(soft.with_meta(certificate=cert))
    assert not check.ok and check.problems[0].startswith("stated bound 0.0001 is below")


def test_non_integer_de_gained_weight_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    n = soft.neuron("carry")
    changed = replace(n, weights=(n.weights[0] * 1.1,) + n.weights[1:])
    bad = replace(soft, neurons=(changed,) + soft.neurons[1:])
    check = check_certificate(bad)
    assert not check.ok
    assert any("'carry': weight 1 divided by the gain" in p and "not an integer" in p
               for p in check.problems)


def test_non_half_integer_de_gained_bias_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    n = soft.neuron("sum")
    bad = replace(soft, neurons=soft.neurons[:1] + (replace(n, bias=0.0),))
    check = check_certificate(bad)
    assert not check.ok and any("'sum': the bias" in p for p in check.problems)


def test_bipolar_non_half_weight_fails() -> None:
    soft = apply_activation(adder(), activation="tanh", encoding="bipolar", tolerance=0.01)
    n = soft.neuron("carry")
    changed = replace(n, weights=(n.weights[0] * 1.3,) + n.weights[1:])
    bad = replace(soft, neurons=(changed,) + soft.neurons[1:])
    assert any("not a multiple of 1/2" in p for p in check_certificate(bad).problems)


def test_changed_gain_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    g = soft.meta["certificate"]["neurons"]["carry"]["gain"]
    assert not check_certificate(tamper(soft, "carry", gain=g * 1.5)).ok


def test_too_high_margin_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    check = check_certificate(tamper(soft, "carry", margin=1.5))
    assert not check.ok and any("stated margin 1.5 exceeds" in p for p in check.problems)


def test_bound_above_tolerance_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.2)
    cert = dict(soft.meta["certificate"], tolerance=0.001)
    check = check_certificate(soft.with_meta(certificate=cert))
    assert not check.ok and any("exceeds the stated tolerance" in p for p in check.problems)


def test_missing_and_extra_entries_fail() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    cert = copy.deepcopy(soft.meta["certificate"])
    del cert["neurons"]["sum"]
    cert["neurons"]["ghost"] = {"margin": 0.5, "gain": 1.0, "bound": 0.5}
    check = check_certificate(soft.with_meta(certificate=cert))
    assert not check.ok
    assert any("'ghost'" in p for p in check.problems)
    assert any("'sum' has no margin" in p for p in check.problems)


def test_no_certificate_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    check = check_certificate(Network(soft.inputs, soft.neurons, soft.outputs))
    assert not check.ok and "no certificate" in check.problems[0]


def test_wrong_activation_for_the_encoding_fails() -> None:
    soft = apply_activation(adder(), activation="sigmoid", tolerance=0.01)
    bad = replace(soft, neurons=tuple(replace(n, activation="tanh") for n in soft.neurons))
    assert any("is tanh" in p for p in check_certificate(bad).problems)


def test_typed_network_with_a_real_unit_passes() -> None:
    features = ({"name": "t", "kind": "real", "units": ["t"], "range": None, "scale": 0.25},
                {"name": "b", "kind": "bool", "units": ["b"]})
    net = Network(("t", "b"), (Neuron("hot", 1, ("t",), (1.0,), -3.0),
                               Neuron("y", 2, ("hot", "b"), (1, 1), -1.5)),
                  (Output("y", "y"),), features=features)
    soft = apply_activation(net, activation="sigmoid", tolerance=0.01)
    assert soft.meta["certificate"]["neurons"]["hot"]["margin"] == 0.25
    check = check_certificate(soft)
    assert check.ok and check.margins == "assumed", check.problems
    assert not check_certificate(tamper(soft, "hot", margin=1.0)).ok
