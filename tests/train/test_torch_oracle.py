"""Our gradients and Adam steps against PyTorch's autograd and torch.optim.Adam."""

import numpy as np
import pytest

from thresholdc.training.loop import Adam
from thresholdc.training.mlp import loss_and_grad

torch = pytest.importorskip("torch")

ACTS = {"sigmoid": torch.sigmoid, "tanh": torch.tanh, "relu": torch.relu}


def _setup(seed=0):
    rng = np.random.default_rng(seed)
    sizes = (5, 4, 3)
    W = [rng.normal(size=(m, n)) for n, m in zip(sizes[:-1], sizes[1:])]
    b = [rng.normal(size=m) for m in sizes[1:]]
    X = rng.normal(size=(9, 5))
    T = rng.integers(0, 2, size=(9, 2)).astype(float)
    return W, b, X, T, np.array([2, 1])


def _torch_loss(tW, tb, acts, X, T, cols, loss):
    A = torch.tensor(X)
    Z = A
    for w, bb, f in zip(tW, tb, acts):
        Z = A @ w.T + bb
        A = ACTS[f](Z)
    P, T = A[:, cols], torch.tensor(T)
    if loss == "mse":
        return ((P - T) ** 2).sum(dim=1).mean()
    bce = torch.nn.functional.binary_cross_entropy_with_logits(Z[:, cols], T, reduction="none")
    return bce.sum(dim=1).mean()


@pytest.mark.parametrize("acts,loss", [(("tanh", "sigmoid"), "mse"),
                                       (("relu", "sigmoid"), "cross-entropy")])
def test_gradient_equals_autograd(acts, loss):
    # PyTorch autograd as an independent second implementation of backpropagation
    W, b, X, T, cols = _setup()
    tW = [torch.tensor(w, requires_grad=True) for w in W]
    tb = [torch.tensor(x, requires_grad=True) for x in b]
    value = _torch_loss(tW, tb, acts, X, T, torch.tensor(cols), loss)
    value.backward()
    ours, gW, gb = loss_and_grad(W, b, acts, X, T, cols, loss)
    assert ours == pytest.approx(value.item(), rel=1e-12)
    for g, t in zip(gW + gb, tW + tb):
        np.testing.assert_allclose(g, t.grad.numpy(), rtol=1e-10, atol=1e-12)


def test_adam_steps_equal_torch_adam():
    # torch.optim.Adam (no weight decay, no amsgrad) as the reference update rule
    W, b, X, T, cols = _setup(1)
    acts = ("sigmoid", "sigmoid")
    tW = [torch.tensor(w, requires_grad=True) for w in W]
    tb = [torch.tensor(x, requires_grad=True) for x in b]
    topt = torch.optim.Adam(tW + tb, lr=0.01)
    ours = Adam(0.01)
    params = [w.copy() for w in W] + [x.copy() for x in b]
    for _ in range(5):
        topt.zero_grad()
        _torch_loss(tW, tb, acts, X, T, torch.tensor(cols), "mse").backward()
        topt.step()
        _, gW, gb = loss_and_grad(params[:2], params[2:], acts, X, T, cols, "mse")
        ours.step(params, gW + gb)
    for p, t in zip(params, tW + tb):
        np.testing.assert_allclose(p, t.detach().numpy(), rtol=1e-9, atol=1e-12)
