"""The value sets, the piece lines and the step-shadow proof, against exact evaluation.

* ``form_values`` / ``merge_intervals``: every value an affine form takes on a small domain
  (enumerated exhaustively) lies in the value set;
* ``piece_lines``: the lines lie below and above the true sigmoid / tanh at random points of
  random pieces (hypothesis, seeded);
* ``network_value_sets`` and ``prove_shadow``: at every valid assignment of small random typed
  rule sets (dense perturbed sigmoid networks, benchmarks/trained_like.py), each neuron's ``z``
  lies in its pieces, and each proven unit has its step shadow's sign and respects its bounds;
* ``verify_trained`` on dense sigmoid networks decides every output, both ways, as the
  exhaustive truth tables say, and the shadow proof is what decides some of them.
"""

from __future__ import annotations

import re

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tests.verify.retention_cases import cases, is_counterexample, load_trained_like, truth
from thresholdc.export.dense import dense_form
from thresholdc.logic.source import source_from_text
from thresholdc.verification import verify_trained
from thresholdc.verification.domain import boolean_or_typed_domain, network_rows
from thresholdc.verification.linear_bounds import LinearBounder
from thresholdc.verification.shadow import prove_shadow, step_shadow
from thresholdc.verification.typed import typed_domain
from thresholdc.verification.value_sets import (
    form_values,
    merge_intervals,
    network_value_sets,
    piece_lines,
)

tl = load_trained_like()


def inside(values: np.ndarray, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
    """Per value, whether it lies in one of the intervals ``[lo_i, hi_i]``."""
    return ((values[:, None] >= lo[None, :]) & (values[:, None] <= hi[None, :])).any(axis=1)


@given(seed=st.integers(0, 10_000), cap=st.integers(1, 12))
@settings(max_examples=60, deadline=None, derandomize=True)
def test_form_values_hold_every_value(seed: int, cap: int) -> None:
    rng = np.random.default_rng(seed)
    sizes = [int(rng.integers(1, 5)) for _ in range(int(rng.integers(1, 6)))]
    offsets = np.cumsum([0] + sizes[:-1])
    form = np.concatenate([rng.normal(0, 3, sum(sizes)), [rng.normal()]])
    lo, hi = form_values(form, offsets, sizes, np.zeros((0, 2)), max_intervals=cap)
    assert len(lo) <= cap and (lo <= hi).all() and (hi[:-1] < lo[1:]).all()
    grids = np.meshgrid(*[np.arange(s) for s in sizes], indexing="ij")
    choice = np.stack([g.ravel() for g in grids], axis=1)
    values = form[-1] + sum(form[offsets[k] + choice[:, k]] for k in range(len(sizes)))
    assert inside(values, lo, hi).all()


@given(seed=st.integers(0, 10_000))
@settings(max_examples=40, deadline=None, derandomize=True)
def test_merge_intervals_contains_inputs(seed: int) -> None:
    rng = np.random.default_rng(seed)
    lo = rng.normal(0, 5, 30)
    hi = lo + rng.exponential(1, 30)
    a, b = merge_intervals(lo, hi, int(rng.integers(1, 8)))
    ends = np.concatenate([lo, hi, (lo + hi) / 2])
    assert inside(ends, a, b).all()


@given(seed=st.integers(0, 100_000), name=st.sampled_from(["sigmoid", "tanh"]))
@settings(max_examples=200, deadline=None, derandomize=True)
def test_piece_lines_contain_the_activation(seed: int, name: str) -> None:
    """Sound: on every piece, the true activation lies between the two lines."""
    rng = np.random.default_rng(seed)
    pts = np.sort(rng.normal(0, float(rng.choice([0.5, 3.0, 20.0])), int(rng.integers(2, 7))))
    pieces = [(float(a), float(b)) for a, b in zip(pts[:-1:2], pts[1::2])]
    kl, bl, ku, bu = piece_lines(name, pieces)
    f = (lambda z: 1 / (1 + np.exp(-z))) if name == "sigmoid" else np.tanh
    for lo, hi in pieces:
        z = np.concatenate([[lo, hi], rng.uniform(lo, hi, 200)])
        assert (kl * z + bl <= f(z)).all() and (f(z) <= ku * z + bu).all(), (pieces, name)
    assert kl >= 0 and ku >= 0


def all_z(net, text):
    """Every valid assignment's pre-activations of the network and of its step shadow
    (neuron order), and the domain and its unit rows."""
    src = source_from_text(text)
    d = boolean_or_typed_domain(src)
    X = d.unit_rows(d.enumerate(0, d.size))
    Xn = network_rows(net, d, X).astype(float)
    form = dense_form(net)
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    Z = np.zeros((len(X), len(net.neurons)))
    ZS = np.zeros_like(Z)
    h, hs = Xn, Xn
    for (W, b, _), names in zip(form.layers, form.names):
        z, zs = h @ W.T + b, hs @ W.T + b
        for c, name in enumerate(names):
            if name in pos:
                Z[:, pos[name]], ZS[:, pos[name]] = z[:, c], zs[:, c]
        with np.errstate(over="ignore"):
            h = 1 / (1 + np.exp(-z))
        hs = (zs > 0).astype(float)
    return Z, ZS


def test_value_sets_and_shadow_bounds_hold_at_every_point():
    proven_seen = 0
    for text, seed in cases(21, 30):
        link, rel = [(0.0, 0.0), (0.01, 0.02), (0.1, 0.2)][seed % 3]
        net = tl.trained_like(text, seed=seed, link=link, rel=rel)
        src = source_from_text(text)
        Z, ZS = all_z(net, text)
        d = boolean_or_typed_domain(src)
        sets = network_value_sets(LinearBounder(net, d))
        for j, pieces in sets.items():
            lo = np.array([p[0] for p in pieces])
            hi = np.array([p[1] for p in pieces])
            assert inside(Z[:, j], lo, hi).all(), (text, j)
        proof = prove_shadow(net, src, typed_domain(net, src), time_limit=20)
        for j in proof.proven:
            g_minus, g_plus = proof.gaps[j]
            on = ZS[:, j] > 0
            assert (np.sign(Z[:, j]) == np.sign(ZS[:, j])).all(), (text, j)
            if g_plus is not None:
                assert (Z[on, j] >= g_plus).all(), (text, j)
            else:
                assert not on.any()
            if g_minus is not None:
                assert (Z[~on, j] <= g_minus).all(), (text, j)
            else:
                assert on.all()
            proven_seen += 1
    assert proven_seen > 50, proven_seen


@pytest.mark.parametrize("activation,count", [("sigmoid", 40), ("tanh", 16)])
def test_verify_trained_dense_soft_both_ways(activation, count):
    """Every verdict as the exhaustive truth says; some decided by the shadow proof, some
    different (networks with enough noise lose their rules)."""
    seen = {"equal": 0, "different": 0, "shadow": 0}
    for text, seed in cases(23 if activation == "sigmoid" else 29, count):
        link, rel = [(0.0, 0.0), (0.005, 0.01), (0.3, 0.4), (1.0, 1.0)][seed % 4]
        net = tl.trained_like(text, seed=seed, link=link, rel=rel, activation=activation)
        src = source_from_text(text)
        report = verify_trained(net, src, time_limit=30, sample=False)
        real = truth(net, text)
        for o in report.outputs:
            assert o.verdict in ("equal", "different"), (text, o)
            if o.verdict == "equal":
                assert real[o.name] == 0, (text, o.name)
            else:
                assert real[o.name] > 0 and o.counterexamples, (text, o.name)
                for c in o.counterexamples:
                    assert is_counterexample(net, text, o.name, c.assignment), (text, c)
            seen[o.verdict] += 1
        seen["shadow"] += any("step shadow" in p for p in report.proofs)
        # a proof's text is part of the output, which repeats byte for byte: no clock in it
        assert not any(re.search(r"\d s\b", p) for p in report.proofs), report.proofs
    assert seen["equal"] > count // 4 and seen["different"] > count // 8, seen
    assert seen["shadow"] > count // 8, seen


def test_step_shadow_keeps_weights():
    text = "input c: {r, g, b}, a\ny = c == r and a\n"
    net = tl.trained_like(text, link=0.01, rel=0.02)
    shadow = step_shadow(net)
    assert [n.weights for n in shadow.neurons] == [n.weights for n in net.neurons]
    assert {n.activation for n in shadow.neurons} == {"step"}
