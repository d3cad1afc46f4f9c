"""to_torch of a step network: exact forward values and a documented surrogate gradient."""

import itertools

import numpy as np
import pytest

torch = pytest.importorskip("torch")

from thresholdc import compile_rules  # noqa: E402
from thresholdc.export.torch import to_torch  # noqa: E402

RULES = "input a, b, c\noutput y, z\ny = a and not b\nz = atleast(2, a, b, c)\n"


def test_step_network_trains_backward_with_exact_forward_values():
    net = compile_rules(RULES)
    model = to_torch(net)
    X = np.array(list(itertools.product((0, 1), repeat=3)), dtype=np.float32)
    out = model(torch.from_numpy(X))
    assert out.tolist() == net.evaluate(X).tolist()  # forward is the exact step
    loss = ((out - 0.5) ** 2).sum()
    loss.backward()  # a step network used to fail here (no gradient)
    grads = [p.grad for p in model.parameters()]
    assert all(g is not None for g in grads)
    assert any(float(g.abs().sum()) > 0 for g in grads)


def test_straight_through_gradient_is_the_clipped_identity():
    from thresholdc.export.torch import Step

    z = torch.linspace(-3, 3, 61, requires_grad=True)
    Step(bipolar=True)(z).sum().backward()
    inside = (z.detach().abs() <= 1).float()
    assert torch.equal(z.grad, inside)
