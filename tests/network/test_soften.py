"""Certified sigmoid and tanh gains (thresholdc.network.soften), checked exhaustively.

Every soft network is compared, on every input assignment, with the step network it came from:
each neuron must be within its stated bound (and the tolerance) of its exact step value.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tests.network.step_networks import all_rows, full_adder, random_step_network
from thresholdc.errors import UsageError
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.fileformat import dumps, loads
from thresholdc.network.soften import (
    apply_activation,
    certificate_bound,
    certify_gains,
    deviation,
    neuron_margins,
    survives,
    to_bipolar,
)


def step_values(net: Network, X: np.ndarray) -> np.ndarray:
    """The exact step activation of every neuron, from the step network itself."""
    return net.forward(X)[1]


def soft_deviation(step: Network, soft: Network) -> np.ndarray:
    """The largest deviation of every soft neuron from its step value over all inputs, for
    soft networks whose neurons correspond one to one with the step network's."""
    X = all_rows(len(step.inputs))
    exact = step_values(step, X)
    if soft.encoding == "bipolar":
        _, got = soft.forward(2 * X - 1)
        return np.abs(got - (2 * exact - 1)).max(axis=0)
    _, got = soft.forward(X)
    return np.abs(got - exact).max(axis=0)


def within(dev: np.ndarray, bound: np.ndarray | float) -> bool:
    """``dev <= bound`` up to the rounding of float evaluation near 0 and 1."""
    return bool((dev <= np.asarray(bound) * (1 + 1e-9) + 1e-12).all())


# ---------------------------------------------------------------------------- options
@pytest.mark.parametrize(
    ("options", "message"),
    [
        ({"activation": "tanh"}, "--activation tanh requires --encoding bipolar"),
        ({"activation": "sigmoid", "gain": 4.0, "tolerance": 0.1}, "not both"),
        ({"activation": "sigmoid", "tolerance": 0.5}, "between 0 and 0.5"),
        ({"activation": "sigmoid", "tolerance": 0.0}, "between 0 and 0.5"),
        ({"activation": "sigmoid", "tolerance": -0.1}, "between 0 and 0.5"),
        ({"activation": "sigmoid", "gain": 0.0}, "positive"),
        ({"activation": "sigmoid", "gain": -2.0}, "positive"),
        ({"activation": "sigmoid", "gain": math.inf}, "positive"),
        ({"activation": "step", "gain": 2.0}, "--gain applies to sigmoid and tanh"),
        ({"activation": "relu", "tolerance": 0.1}, "--tolerance applies to sigmoid and tanh"),
        ({"activation": "relu", "encoding": "bipolar"}, "bipolar works with"),
        ({"activation": "softplus"}, "The 'activation' option must be one of step, sigmoid"),
        ({"activation": "step", "encoding": "ternary"}, "The 'encoding' option must be one of"),
    ],
)
def test_bad_options_raise_usage_error(options: dict, message: str) -> None:
    with pytest.raises(UsageError, match=message):
        apply_activation(full_adder(), **options)


def test_tanh_message_is_exact() -> None:
    with pytest.raises(UsageError) as info:
        apply_activation(full_adder(), activation="tanh")
    assert info.value.message == "--activation tanh requires --encoding bipolar"


def test_soft_input_network_is_refused() -> None:
    soft = apply_activation(full_adder(), activation="sigmoid")
    with pytest.raises(UsageError, match="needs a step network"):
        apply_activation(soft, activation="sigmoid")


def test_non_half_integer_bias_is_refused() -> None:
    net = Network(("a",), (Neuron("n", 1, ("a",), (1,), -1.0),), (Output("n", "n"),))
    with pytest.raises(UsageError, match="half-integer"):
        apply_activation(net, activation="sigmoid")


def test_step_default_returns_the_network_unchanged() -> None:
    net = full_adder()
    assert apply_activation(net) == net


# ---------------------------------------------------------------------------- margins
def test_margins_match_a_hand_computation() -> None:
    net = full_adder()
    margins, how = neuron_margins(net)
    assert how == "exhaustive"
    # carry: z = a + b + cin - 1.5 ∈ {-1.5, -0.5, 0.5, 1.5}; sum: z ∈ {-0.5, 0.5} (by hand)
    assert margins.tolist() == [0.5, 0.5]
    wide = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (2, 2), -1.0 + 0.5),),
                   (Output("y", "y"),))
    assert neuron_margins(wide)[0].tolist() == [0.5]
    big = Network(("a",), (Neuron("y", 1, ("a",), (3,), -1.5),), (Output("y", "y"),))
    assert neuron_margins(big)[0].tolist() == [1.5]


@given(st.integers(0, 10_000))
@settings(max_examples=25, deadline=None)
def test_margins_equal_brute_force(seed: int) -> None:
    net = random_step_network(seed)
    margins, _ = neuron_margins(net)
    Z, _ = net.forward(all_rows(len(net.inputs)))
    assert np.array_equal(margins, np.abs(Z).min(axis=0))
    assert (margins >= 0.5).all()


def test_margin_above_the_local_margin_is_found() -> None:
    # y reads a and h = a and b; the pattern a = 0, h = 1 (z = 0.5) never occurs, so the
    # margin over the inputs is 1.5 although the local margin over (a, h) is 0.5 (by hand).
    net = Network(("a", "b"), (Neuron("h", 1, ("a", "b"), (1, 1), -1.5),
                               Neuron("y", 2, ("a", "h"), (3, 2), -1.5)), (Output("y", "y"),))
    assert neuron_margins(net)[0].tolist() == [0.5, 1.5]
    assert neuron_margins(to_bipolar(net))[0].tolist() == [0.5, 1.5]


def test_float_weights_use_the_float_path() -> None:
    net = Network(("a", "b", "c"), (Neuron("y", 1, ("a", "b", "c"), (0.3, -0.7, 1.1), -0.2),),
                  (Output("y", "y"),))
    Z, _ = net.forward(all_rows(3))
    assert np.allclose(neuron_margins(net)[0], np.abs(Z).min(axis=0), rtol=0, atol=1e-12)


def test_margins_assumed_beyond_the_bound() -> None:
    margins, how = neuron_margins(random_step_network(3, n_inputs=5), max_inputs=4)
    assert how == "assumed" and (margins == 0.5).all()


def test_margins_chunked_over_many_rows(monkeypatch: pytest.MonkeyPatch) -> None:
    import thresholdc.network.soften as soften

    monkeypatch.setattr(soften, "_CHUNK_CELLS", 64)
    net = random_step_network(11, n_inputs=7)
    chunked, _ = soften.neuron_margins(net)
    Z, _ = net.forward(all_rows(7))
    assert np.array_equal(chunked, np.abs(Z).min(axis=0))


# ---------------------------------------------------------------------------- sigmoid
@pytest.mark.parametrize("eps", [0.01, 0.2])
def test_sigmoid_full_adder_within_tolerance(eps: float) -> None:
    net = full_adder()
    soft = apply_activation(net, activation="sigmoid", tolerance=eps)
    cert = soft.meta["certificate"]
    dev = soft_deviation(net, soft)
    stated = np.array([cert["neurons"][n.name]["bound"] for n in net.neurons])
    assert within(dev, stated) and within(dev, eps)
    assert cert["bound"] <= eps and cert["tolerance"] == eps and cert["margins"] == "exhaustive"
    assert (soft.decide(all_rows(3)) == net.decide(all_rows(3))).all()


@pytest.mark.parametrize("eps", [0.01, 0.2])
@given(seed=st.integers(0, 100_000))
@settings(max_examples=30, deadline=None)
def test_sigmoid_random_networks_within_tolerance(eps: float, seed: int) -> None:
    net = random_step_network(seed)
    soft = apply_activation(net, activation="sigmoid", tolerance=eps)
    cert = soft.meta["certificate"]
    dev = soft_deviation(net, soft)
    stated = np.array([cert["neurons"][n.name]["bound"] for n in net.neurons])
    assert within(dev, stated), (dev, stated)
    assert within(dev, eps) and cert["bound"] <= eps
    assert cert["bound"] == max(stated)
    X = all_rows(len(net.inputs))
    assert (soft.decide(X) == net.decide(X)).all()


def test_single_gain_is_the_smallest_that_meets_the_tolerance() -> None:
    # One AND over input units: no input deviation, margin 0.5, so the formula gives
    # g = ln(1/EPS - 1) / 0.5, and the worst case z = ±0.5 reaches the tolerance.
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
    soft = apply_activation(net, activation="sigmoid", tolerance=0.01)
    g = soft.meta["certificate"]["neurons"]["y"]["gain"]
    assert g == pytest.approx(math.log(99) / 0.5, rel=1e-5)
    assert g >= math.log(99) / 0.5
    assert soft_deviation(net, soft)[0] == pytest.approx(0.01, rel=1e-5)


def test_budget_shrinks_for_a_reader_with_many_soft_inputs() -> None:
    # y reads ten soft ORs: each OR's budget is min(EPS, 0.5 / (2 * 10)) = 0.025 at EPS = 0.2.
    ins = tuple(f"x{i}" for i in range(10))
    ors = tuple(Neuron(f"o{i}", 1, (ins[i], ins[(i + 1) % 10]), (1, 1), -0.5)
                for i in range(10))
    y = Neuron("y", 2, tuple(o.name for o in ors), (1,) * 10, -9.5)
    net = Network(ins, ors + (y,), (Output("y", "y"),))
    cert = apply_activation(net, activation="sigmoid", tolerance=0.2).meta["certificate"]
    assert cert["neurons"]["o0"]["bound"] <= 0.025
    assert cert["neurons"]["o0"]["bound"] == pytest.approx(0.025, rel=1e-5)
    assert cert["neurons"]["y"]["bound"] <= 0.2
    # A forward choice with EPS everywhere would leave y no margin: 10 * 0.2 > 0.5.
    assert 10 * 0.2 > 0.5


def test_layered_sigmoid_gives_relays_gains() -> None:
    net = full_adder()
    soft = apply_activation(net, activation="sigmoid", tolerance=0.01, layered=True)
    assert soft.is_strict()
    relays = [n for n in soft.neurons if n.role == "relay"]
    assert relays and all(n.activation == "sigmoid" for n in relays)
    cert = soft.meta["certificate"]
    assert all(cert["neurons"][n.name]["gain"] > 0 for n in relays)
    X = all_rows(3)
    out = soft.evaluate(X)
    exact = net.evaluate(X)
    assert np.abs(out - exact).max() <= 0.01
    assert all(a == "sigmoid" for _, _, a in soft.dense_layers())


@given(seed=st.integers(0, 100_000))
@settings(max_examples=15, deadline=None)
def test_layered_sigmoid_random_outputs_within_tolerance(seed: int) -> None:
    net = random_step_network(seed)
    soft = apply_activation(net, activation="sigmoid", tolerance=0.05, layered=True)
    X = all_rows(len(net.inputs))
    assert soft.is_strict()
    assert np.abs(soft.evaluate(X) - net.evaluate(X)).max() <= 0.05


# ---------------------------------------------------------------------------- fixed gains
@pytest.mark.parametrize("gain", [2.0, 4.0, 12.0])
@given(seed=st.integers(0, 100_000))
@settings(max_examples=15, deadline=None)
def test_fixed_gain_bound_holds(gain: float, seed: int) -> None:
    net = random_step_network(seed)
    soft = apply_activation(net, activation="sigmoid", gain=gain)
    cert = soft.meta["certificate"]
    assert cert["tolerance"] is None
    assert all(e["gain"] == gain for e in cert["neurons"].values())
    for n, s in zip(net.neurons, soft.neurons, strict=True):
        assert s.weights == tuple(w * gain for w in n.weights) and s.bias == n.bias * gain
    stated = np.array([cert["neurons"][n.name]["bound"] for n in net.neurons])
    assert within(soft_deviation(net, soft), stated)
    if survives(soft):
        X = all_rows(len(net.inputs))
        assert (soft.decide(X) == net.decide(X)).all()


def test_too_small_a_gain_is_detected() -> None:
    # Three chained ANDs read by an AND of fan-in 3: gain 1 leaves the bound above 0.5.
    net = Network(
        ("a", "b", "c"),
        (
            Neuron("p", 1, ("a", "b"), (1, 1), -1.5),
            Neuron("q", 1, ("b", "c"), (1, 1), -1.5),
            Neuron("r", 1, ("a", "c"), (1, 1), -1.5),
            Neuron("y", 2, ("p", "q", "r"), (1, 1, 1), -2.5),
        ),
        (Output("y", "y"),),
    )
    weak = apply_activation(net, activation="sigmoid", gain=1.0)
    assert certificate_bound(weak) >= 0.5 and not survives(weak)
    strong = apply_activation(net, activation="sigmoid", gain=20.0)
    assert certificate_bound(strong) < 0.5 and survives(strong)


def test_certificate_bound_of_exact_and_uncertified_networks() -> None:
    assert certificate_bound(full_adder()) == 0.0
    soft = apply_activation(full_adder(), activation="sigmoid")
    bare = Network(soft.inputs, soft.neurons, soft.outputs)
    with pytest.raises(ValueError, match="no certificate"):
        certificate_bound(bare)


# ---------------------------------------------------------------------------- tanh, bipolar
def test_bipolar_step_agrees_with_binary() -> None:
    net = random_step_network(5, n_inputs=6)
    bip = apply_activation(net, encoding="bipolar")
    assert bip.encoding == "bipolar"
    X = all_rows(6)
    assert (bip.decide(2 * X - 1) == net.decide(X)).all()
    assert set(np.unique(bip.evaluate(2 * X - 1))) <= {-1.0, 1.0}


@pytest.mark.parametrize("eps", [0.01, 0.3])
@given(seed=st.integers(0, 100_000))
@settings(max_examples=20, deadline=None)
def test_tanh_bipolar_sign_agreement(eps: float, seed: int) -> None:
    net = random_step_network(seed)
    soft = apply_activation(net, activation="tanh", encoding="bipolar", tolerance=eps)
    assert soft.encoding == "bipolar" and all(n.activation == "tanh" for n in soft.neurons)
    cert = soft.meta["certificate"]
    dev = soft_deviation(net, soft)
    stated = np.array([cert["neurons"][n.name]["bound"] for n in net.neurons])
    assert within(dev, stated) and within(dev, eps)
    X = all_rows(len(net.inputs))
    out = soft.evaluate(2 * X - 1)
    expect = net.evaluate(X)
    assert (np.sign(out) == 2 * expect - 1).all()
    assert (soft.decide(2 * X - 1) == net.decide(X)).all()


def test_tanh_gain_formula_for_one_neuron() -> None:
    # 1 - tanh(g * m) = EPS with m = 0.5: g = atanh(1 - EPS) / 0.5.
    net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    soft = apply_activation(net, activation="tanh", encoding="bipolar", tolerance=0.01)
    g = soft.meta["certificate"]["neurons"]["n"]["gain"]
    assert g == pytest.approx(math.atanh(0.99) / 0.5, rel=1e-5)
    # w' = w / 2 = -0.5, b' = b + Σ w / 2 = 0, then times the gain
    assert soft.neurons[0].weights == pytest.approx((-0.5 * g,))
    assert soft.neurons[0].bias == pytest.approx(0.0)


def test_to_bipolar_keeps_every_pre_activation() -> None:
    net = random_step_network(17, n_inputs=5)
    X = all_rows(5)
    Z, _ = net.forward(X)
    Zb, _ = to_bipolar(net).forward(2 * X - 1)
    assert np.allclose(Z, Zb)


# ---------------------------------------------------------------------------- general
def test_deviation_functions() -> None:
    assert deviation(0.0, "sigmoid") == 0.5
    assert deviation(math.log(3), "sigmoid") == pytest.approx(0.25)
    assert deviation(0.0, "tanh") == 1.0
    assert deviation(1.0, "tanh") == pytest.approx(1 - math.tanh(1.0))
    assert deviation(1000.0, "sigmoid") == 0.0 and deviation(-1000.0, "sigmoid") == 1.0


def test_same_input_gives_identical_bytes_and_input_is_untouched() -> None:
    net = random_step_network(99, n_inputs=6)
    before = dumps(net)
    a = dumps(apply_activation(net, activation="sigmoid", tolerance=0.03))
    b = dumps(apply_activation(random_step_network(99, n_inputs=6), activation="sigmoid",
                               tolerance=0.03))
    assert a == b
    assert dumps(net) == before and "certificate" not in net.meta


def test_certificate_survives_the_file_round_trip() -> None:
    soft = apply_activation(full_adder(), activation="sigmoid", tolerance=0.02)
    again = loads(dumps(soft))
    assert again.meta["certificate"] == soft.meta["certificate"]
    assert again == soft


def test_certify_gains_numbers_are_rounded() -> None:
    soft = certify_gains(random_step_network(8, n_inputs=5), tolerance=0.01)
    for e in soft.meta["certificate"]["neurons"].values():
        assert len(repr(e["gain"]).replace(".", "").lstrip("0")) <= 7
        assert (e["margin"] * 2) % 2 == 1  # a half-integer
