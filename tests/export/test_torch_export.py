"""PyTorch export and import (skipped without torch)."""

from __future__ import annotations

import numpy as np
import pytest

from tests.export._export_nets import all_rows, full_adder, random_network, strict_xor
from thresholdc.errors import UsageError
from thresholdc.network.soften import apply_activation

torch = pytest.importorskip("torch")
from torch import nn  # noqa: E402

from thresholdc.export.torch import Step, from_torch, to_torch  # noqa: E402


def run(model, X: np.ndarray) -> np.ndarray:
    with torch.no_grad():
        return model(torch.as_tensor(X, dtype=torch.float32)).numpy()


@pytest.mark.parametrize("make, bipolar", [
    (full_adder, False),
    (strict_xor, False),
    (lambda: random_network(7, n_inputs=5, n_neurons=9), False),
    (lambda: apply_activation(full_adder(), encoding="bipolar"), True),
], ids=["adder", "xor", "random", "bipolar"])
def test_step_networks_give_the_same_outputs_on_every_row(make, bipolar):
    net = make()
    X = all_rows(len(net.inputs), bipolar=bipolar)
    model = to_torch(net)
    assert any(isinstance(m, Step) for m in model)
    assert run(model, X).tolist() == net.evaluate(X).tolist()


def test_soft_networks_match_within_float32():
    for net, bipolar in (
        (apply_activation(full_adder(), activation="sigmoid", layered=True), False),
        (apply_activation(full_adder(), activation="tanh", encoding="bipolar", layered=True), True),
        (apply_activation(full_adder(), activation="relu", layered=True), False),
    ):
        X = all_rows(3, bipolar=bipolar)
        np.testing.assert_allclose(run(to_torch(net), X), net.evaluate(X), atol=1e-6)


def test_one_gradient_step_runs_and_lowers_the_loss():
    net = apply_activation(full_adder(), activation="sigmoid", tolerance=0.05, layered=True)
    model = to_torch(net)
    X = torch.as_tensor(all_rows(3), dtype=torch.float32)
    target = 1.0 - torch.as_tensor(full_adder().evaluate(all_rows(3)), dtype=torch.float32)
    optimiser = torch.optim.SGD(model.parameters(), lr=0.05)
    before = [p.detach().clone() for p in model.parameters()]
    loss = nn.functional.mse_loss(model(X), target)
    optimiser.zero_grad()
    loss.backward()
    assert all(p.grad is not None and torch.isfinite(p.grad).all() for p in model.parameters())
    optimiser.step()
    after = nn.functional.mse_loss(model(X), target)
    assert after.item() < loss.item()
    assert any(not torch.equal(a, b) for a, b in zip(before, model.parameters(), strict=True))


def test_from_torch_round_trip_keeps_names():
    net = apply_activation(full_adder(), activation="sigmoid", layered=True)
    back = from_torch(to_torch(net), like=net)
    assert back.inputs == net.inputs and back.output_names == net.output_names
    assert [n.name for n in back.neurons if n.layer == 1] == [
        n.name for n in net.neurons if n.layer == 1]
    X = all_rows(3)
    np.testing.assert_allclose(back.evaluate(X), net.evaluate(X), atol=1e-6)


def test_from_torch_after_training_steps_still_builds():
    net = apply_activation(full_adder(), activation="sigmoid", layered=True)
    model = to_torch(net)
    optimiser = torch.optim.SGD(model.parameters(), lr=0.5)
    X = torch.as_tensor(all_rows(3), dtype=torch.float32)
    for _ in range(3):
        optimiser.zero_grad()
        model(X).sum().backward()
        optimiser.step()
    back = from_torch(model, like=net)
    np.testing.assert_allclose(back.evaluate(all_rows(3)), run(model, all_rows(3)), atol=1e-6)


def test_nested_sequentials_dropout_and_a_linear_last_layer():
    like = strict_xor()
    model = nn.Sequential(nn.Sequential(nn.Linear(2, 3), nn.ReLU()), nn.Dropout(0.1),
                          nn.Linear(3, 2))
    model.eval()
    back = from_torch(model, like=like)
    assert [n.activation for n in back.neurons] == ["relu"] * 3 + ["linear"] * 2
    X = all_rows(2)
    np.testing.assert_allclose(back.evaluate(X), run(model, X), atol=1e-6)


def test_shape_mismatch_and_unsupported_modules():
    like = strict_xor()
    with pytest.raises(UsageError, match="layer 1 reads 3 columns but there are 2 input units"):
        from_torch(nn.Sequential(nn.Linear(3, 2), nn.Sigmoid()), like=like)
    with pytest.raises(UsageError, match=r"last layer \(layer 2\) has 4 units"):
        from_torch(nn.Sequential(nn.Linear(2, 3), nn.Sigmoid(), nn.Linear(3, 4)), like=like)
    with pytest.raises(UsageError, match="Softmax"):
        from_torch(nn.Sequential(nn.Linear(2, 2), nn.Softmax(dim=1)), like=like)
    with pytest.raises(UsageError, match="does not follow a Linear"):
        from_torch(nn.Sequential(nn.Sigmoid(), nn.Linear(2, 2)), like=like)
