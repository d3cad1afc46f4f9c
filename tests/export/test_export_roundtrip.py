"""Compiled networks through every export, and the retention round trip:
compile → export → change the weights outside → import → verify, with the verdict both ways."""

from __future__ import annotations

import numpy as np
import pytest

import thresholdc
from tests.export._export_nets import all_rows
from thresholdc.export import load_any, load_dense, save_any

# An invented lending kiosk: lend a book when the card is valid, the book is tagged, nobody
# else reserved it, and fines are paid or a librarian overrides; alert on two warning signs.
RULES = """\
input card_valid, fines_due, book_tagged, reserved, staff_override
output lend, alert, staff_override
lend = card_valid and book_tagged and not reserved and (not fines_due or staff_override)
alert = atleast(2, fines_due, reserved, not card_valid)
"""

OPTIONS = [
    {},
    {"layered": True},
    {"activation": "sigmoid", "layered": True},
    {"activation": "sigmoid", "tolerance": 0.001},
    {"activation": "relu"},
    {"activation": "relu", "layered": True},
    {"activation": "tanh", "encoding": "bipolar", "layered": True},
]


def compiled(**options):
    return thresholdc.compile_rules(RULES, **options)


@pytest.mark.parametrize("options", OPTIONS, ids=lambda o: "-".join(map(str, o.values())) or "step")
def test_every_format_keeps_the_function(tmp_path, options):
    pytest.importorskip("onnx")
    ort = pytest.importorskip("onnxruntime")
    net = compiled(**options)
    X = all_rows(5, bipolar=net.encoding == "bipolar")
    want = net.evaluate(X)
    # ONNX, run by onnxruntime  # onnxruntime as a second runtime
    onnx_path = str(tmp_path / "net.onnx")
    save_any(net, onnx_path)
    session = ort.InferenceSession(onnx_path, providers=["CPUExecutionProvider"])
    got = session.run(None, {"inputs": X.astype(np.float32)})[0]
    np.testing.assert_allclose(got, want, rtol=1e-5, atol=1e-6)
    # The truth table survives (a soft network is read at 0.5, or 0 when bipolar).
    assert np.array_equal(got > net.decision_threshold, net.decide(X))
    # Back from ONNX and from .npz (strict layered networks only for .npz).
    back = load_any(onnx_path, like=net)
    np.testing.assert_allclose(back.evaluate(X), want, atol=1e-6)
    if net.is_strict() or all(n.activation == "step" for n in net.neurons):
        npz_path = str(tmp_path / "net.npz")
        save_any(net, npz_path)
        back = load_dense(npz_path, like=net)
        np.testing.assert_allclose(back.evaluate(X), want, atol=1e-12)
        assert thresholdc.verify(back, RULES).result == "equal"


def test_npz_perturbed_outside_keeps_or_loses_the_rules(tmp_path):
    net = compiled(activation="sigmoid", layered=True)
    path = str(tmp_path / "kiosk.npz")
    save_any(net, path)
    rng = np.random.default_rng(0)
    arrays = dict(np.load(path, allow_pickle=False))
    small = {k: (v + rng.normal(scale=0.05, size=v.shape) if k[0] in "Wb" else v)
             for k, v in arrays.items()}
    np.savez(str(tmp_path / "small.npz"), **small)
    report = thresholdc.verify(load_dense(str(tmp_path / "small.npz"), like=net), RULES)
    assert report.result == "equal"
    # Flip the sign of the row that computes "alert": that output must now disagree.
    L = len(arrays["activations"])
    broken = dict(arrays)
    broken[f"W{L}"] = arrays[f"W{L}"].copy()
    broken[f"b{L}"] = arrays[f"b{L}"].copy()
    broken[f"W{L}"][1] *= -1
    broken[f"b{L}"][1] *= -1
    np.savez(str(tmp_path / "broken.npz"), **broken)
    report = thresholdc.verify(load_dense(str(tmp_path / "broken.npz"), like=net), RULES)
    assert report.result == "different"
    verdict = {o.name: o.agrees for o in report.outputs}
    assert verdict == {"lend": True, "alert": False, "staff_override": True}


@pytest.mark.slow
def test_torch_training_outside_both_ways():
    torch = pytest.importorskip("torch")
    from thresholdc.export import from_torch, to_torch

    net = compiled(activation="sigmoid", layered=True)
    X = torch.as_tensor(all_rows(5), dtype=torch.float32)
    truth = torch.as_tensor(net.decide(all_rows(5)), dtype=torch.float32)

    def trained(target, steps, lr):
        torch.manual_seed(0)
        model = to_torch(net)
        optimiser = torch.optim.Adam(model.parameters(), lr=lr)
        for _ in range(steps):
            optimiser.zero_grad()
            torch.nn.functional.binary_cross_entropy(model(X), target).backward()
            optimiser.step()
        return from_torch(model, like=net)

    # A few steps on data that agrees with the rules: they survive.
    kept = trained(truth, 5, 0.01)
    assert thresholdc.verify(kept, RULES).result == "equal"
    # Training on data where "lend" is always 0: the report says lend no longer agrees.
    wrong = truth.clone()
    wrong[:, 0] = 0.0
    lost = trained(wrong, 60, 0.1)
    report = thresholdc.verify(lost, RULES)
    assert report.result == "different"
    assert {o.name: o.agrees for o in report.outputs}["lend"] is False
