"""Relaxation branch-and-bound verdicts against exhaustive enumeration (the outside check).

Hundreds of seeded random typed rule files, each compiled to a dense soft network and
perturbed (benchmarks/trained_like.py) with a noise level drawn per case, so some networks
still compute their rules and some do not.  Every ``equal`` must be truly equal on every valid
assignment, every counterexample must be real, and on these small domains every output must
be decided.
"""

from __future__ import annotations

import numpy as np
import pytest

from tests.verify.retention_cases import cases, is_counterexample, load_trained_like, truth
from thresholdc.logic.source import source_from_text
from thresholdc.verification.domain import boolean_or_typed_domain
from thresholdc.verification.linear_bounds import LinearBounder
from thresholdc.verification.relax import verify_relax

tl = load_trained_like()


def check_report(net, text, report):
    real = truth(net, text)
    for o in report.outputs:
        assert o.verdict in ("equal", "different"), (text, o)
        if o.verdict == "equal":
            assert real[o.name] == 0, (text, o.name)
        else:
            assert o.counterexamples and o.found == len(o.counterexamples)
            for c in o.counterexamples:
                assert is_counterexample(net, text, o.name, c.assignment), (text, c)
    return real


@pytest.mark.parametrize("activation", ["sigmoid", "tanh"])
def test_relax_matches_enumeration(activation):
    seen = {"equal": 0, "different": 0}
    for text, seed in cases(7 if activation == "sigmoid" else 8, 120):
        rng = np.random.default_rng(seed)
        link, rel = [(0.0, 0.0), (0.05, 0.1), (0.3, 0.4), (1.0, 1.0)][seed % 4]
        net = tl.trained_like(text, seed=seed, link=link, rel=rel, activation=activation,
                              tolerance=float(rng.choice([0.1, 0.25, 0.4])))
        report = verify_relax(net, source_from_text(text), time_limit=30)
        check_report(net, text, report)
        for o in report.outputs:
            seen[o.verdict] += 1
    # the cases exercise both verdicts (a generator that only made one kind proves little)
    assert seen["equal"] > 20 and seen["different"] > 20, seen


def test_bounds_contain_every_point():
    """The network's value at every valid assignment lies inside the bounds of the whole
    domain and of random sub-boxes (soundness of the linear forms)."""
    rng = np.random.default_rng(3)
    for text, seed in cases(11, 40):
        net = tl.trained_like(text, seed=seed, link=0.5, rel=0.5)
        d = boolean_or_typed_domain(source_from_text(text))
        lb = LinearBounder(net, d)
        choice = d.enumerate(0, d.size)
        values = net.evaluate(d.unit_rows(choice))
        M = np.ones((1, lb.n_choices), dtype=bool)
        for _ in range(5):
            out = lb.run(M)
            onehot = np.zeros((len(choice), lb.n_choices), dtype=bool)
            for k in range(len(d.discrete)):
                onehot[np.arange(len(choice)), lb.offsets[k] + choice[:, k]] = True
            inside = (onehot <= M).all(axis=1)
            assert inside.any()
            v = values[inside]
            assert (v >= out.vlo[0] - 1e-12).all() and (v <= out.vhi[0] + 1e-12).all()
            M = M & (rng.random(M.shape) < 0.8)
            for k, f in enumerate(d.discrete):  # keep at least one choice per input
                off = lb.offsets[k]
                if not M[0, off:off + f.size].any():
                    M[0, off + int(rng.integers(f.size))] = True
