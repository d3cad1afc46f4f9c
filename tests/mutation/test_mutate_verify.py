"""A bounded run of benchmarks/mutate_verify.py: every sampled neuron mutant that changes the
function (decided here by the exhaustive truth table against the reference evaluator) is caught
by every method that claims a decision, and no unchanged mutant is called different."""

from __future__ import annotations

import importlib.util
import io

from tests.benchmark_modules import load_benchmark

mv = load_benchmark("mutate_verify")

METHODS = tuple(m for m in mv.METHODS
                if m != "sat" or importlib.util.find_spec("pysat") is not None)


def test_sampled_mutants_are_caught_by_every_claiming_method():
    out = io.StringIO()
    score = mv.run(every=60, methods=METHODS, time_limit=20.0, out=out)
    assert mv.failures(score) == 0, out.getvalue()
    for method, c in score.items():
        assert c["changed"] >= 10, (method, c)  # the sample holds real changes
        assert c["caught"] >= 1, (method, c)


def test_the_mutation_list_is_fixed_and_complete():
    from thresholdc.ir.network import Network, Neuron, Output

    net = Network(("a", "b"), (Neuron("n", 1, ("a", "b"), (1, 1), -1.5),), (Output("n", "n"),))
    labels = [label for label, _ in mv.mutants(net)]
    # 2 weights x (+1, -1), bias +1/-1, 2 sign flips, one negation
    assert labels == ["n.w[0]+1", "n.w[0]-1", "n.w[1]+1", "n.w[1]-1", "n.bias+1", "n.bias-1",
                      "n.w[0] sign", "n.w[1] sign", "n negated"]


def test_a_method_claiming_equal_on_a_changed_mutant_is_counted(monkeypatch):
    # the score can fail: a verifier that always says "equal" misses every changed mutant
    monkeypatch.setattr(mv, "claim", lambda *a, **k: "equal")
    score = mv.run(every=200, methods=("exhaustive",), out=io.StringIO())
    assert score["exhaustive"]["missed"] == score["exhaustive"]["changed"] > 0
    assert mv.failures(score) > 0
