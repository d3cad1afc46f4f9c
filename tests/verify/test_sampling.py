"""The sampling stage of verify_trained against exhaustive enumeration (the outside check).

Sampling only ever reports real counterexamples, finds the outputs that are wrong on a good
share of the domain, and leaves an output wrong on a single assignment to the complete MILP,
which still finds it.
"""

from __future__ import annotations

from tests.verify.retention_cases import cases, is_counterexample, load_trained_like, truth
from thresholdc.compiler import compile_rules
from thresholdc.logic.source import source_from_text
from thresholdc.verification import verify_trained
from thresholdc.verification.domain import boolean_or_typed_domain, typed_domain
from thresholdc.verification.sampling import sample_counterexamples

tl = load_trained_like()


def test_samples_are_real_and_find_frequent_differences():
    hits = 0
    for text, seed in cases(61, 40):
        link, rel = [(0.0, 0.0), (0.3, 0.4), (1.0, 1.0)][seed % 3]
        net = tl.trained_like(text, seed=seed, link=link, rel=rel)
        src = source_from_text(text)
        found = sample_counterexamples(net, src, typed_domain(net, src), rows=4000, seed=seed)
        real = truth(net, text)
        size = boolean_or_typed_domain(src).size
        for o, examples in zip(net.outputs, found):
            for c in examples:
                assert is_counterexample(net, text, o.name, c.assignment), (text, c)
            # wrong on an eighth of the domain or more: 4000 draws (a quarter uniform) find it
            if real[o.name] * 8 >= size:
                assert examples, (text, o.name, real[o.name])
            hits += bool(examples)
    assert hits > 5, hits


def test_a_single_wrong_assignment_is_left_to_the_milp():
    # Pond-survey tally (an invented scenario): twelve transects graded a-d; the "wrong"
    # rule file differs from the network on one assignment of the 4^12 = 16,777,216 only.
    names = [f"t{i}" for i in range(12)]
    point = {n: "abcd"[(3 * i + 1) % 4] for i, n in enumerate(names)}
    text = ("input " + ", ".join(f"{n}: {{a, b, c, d}}" for n in names) + "\n"
            "y = atleast(2, t0 == a, t1 == b, t2 in {a, c})\n")
    odd = " and ".join(f"{n} == {v}" for n, v in point.items())
    wrong = text.replace("y = atleast", f"y = ({odd}) xor atleast")
    net = compile_rules(text, activation="sigmoid")
    src = source_from_text(wrong)
    assert sample_counterexamples(net, src, typed_domain(net, src), rows=20_000) == [[]]
    report = verify_trained(net, src, time_limit=60)
    (o,) = report.outputs
    assert o.verdict == "different" and not report.method.startswith("sample")
    assert [c.assignment for c in o.counterexamples] == [point]


def test_real_inputs_are_drawn_within_the_checked_pieces():
    # Greenhouse vent (an invented scenario): the network opens above 30 degrees, the
    # rules above 20; a soft network is checked outside the bands of ± scale.
    net = compile_rules("input t: real in [0, 50] scale 1\ny = t > 30\n", activation="sigmoid")
    src = source_from_text("input t: real in [0, 50] scale 1\ny = t > 20\n")
    domain = typed_domain(net, src)
    (found,) = sample_counterexamples(net, src, domain, rows=2000)
    assert found
    pieces = domain.continuous[0].pieces
    for c in found:
        t = c.assignment["t"]
        assert any(a <= t <= b for a, b in pieces) and 21 <= t <= 29, t
        assert c.expected is True and c.actual < 0.5
