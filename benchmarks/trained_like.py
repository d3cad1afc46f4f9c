"""Trained-like networks for the retention tests and benchmarks (stdlib + numpy + thresholdc).

``trained_like(text, …)`` compiles a rule file to its strict layered soft form (certified
gains with the training start's tolerance 0.25), makes it dense and perturbs it as a short
fine-tuning would, deterministically from ``seed``:

* every link the rules do not use gets a small weight, normal with scale ``link``;
* every weight and bias the rules use is scaled by ``1 + N(0, rel)``.

``sample_rows`` draws valid typed assignments (each categorical input's first value with
probability ``p_first``), for training data and spot checks.
"""

from __future__ import annotations

import numpy as np

from thresholdc.compiler import compile_rules
from thresholdc.export.dense import dense_form, network_from_layers
from thresholdc.logic.source import source_from_text
from thresholdc.network import to_relu
from thresholdc.verification.domain import boolean_or_typed_domain


def trained_like(text: str, *, seed: int = 0, link: float = 0.02, rel: float = 0.05,
                 activation: str = "sigmoid", tolerance: float = 0.25):
    """A dense perturbed soft network of the rules ``text`` (see the module docstring)."""
    opts = {"activation": activation, "layered": True, "tolerance": tolerance,
            "verify": "none"}
    if activation == "tanh":
        opts["encoding"] = "bipolar"
    net = compile_rules(text, **opts)
    return _perturbed(net, seed, link, rel)


def step_like(text: str, *, seed: int = 0, link: float = 0.02, rel: float = 0.05,
              relu: bool = False):
    """A perturbed dense step (or, with ``relu``, exact-ReLU-form) network of ``text``."""
    net = compile_rules(text, layered=True, verify="none")
    if relu:
        net = to_relu(net, layered=True)
    return _perturbed(net, seed, link, rel)


def _perturbed(net, seed: int, link: float, rel: float):
    """``net`` in its dense form with every weight perturbed (see the module docstring)."""
    form = dense_form(net)
    rng = np.random.default_rng(seed)
    layers = []
    for W, b, f in form.layers:
        used = W != 0
        W2 = np.where(used, W * (1 + rng.normal(0, rel, W.shape)), rng.normal(0, link, W.shape))
        b2 = b * (1 + rng.normal(0, rel, b.shape))
        layers.append((W2, b2, f))
    return network_from_layers(layers, like=net, names=form.names, roles=form.roles,
                               origins=form.origins)


def sample_rows(text: str, rows: int, *, seed: int = 0, p_first: float = 0.8):
    """``(X units, y labels)`` of ``rows`` valid assignments of the rules ``text``."""
    src = source_from_text(text)
    d = boolean_or_typed_domain(src, real_points={v.name: [0.0] for v in
                                                  (src.program.inputs if src.program else ())
                                                  if v.kind == "real"})
    rng = np.random.default_rng(seed)
    cols = []
    for f in d.discrete:
        p = np.full(f.size, (1 - p_first) / max(f.size - 1, 1))
        p[0] = p_first if f.size > 1 else 1.0
        cols.append(rng.choice(f.size, rows, p=p / p.sum()))
    X = d.unit_rows(np.stack(cols, axis=1))
    return X, src.evaluate(X).astype(float)
