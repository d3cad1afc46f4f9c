"""SAT for typed step networks: one-hot groups with exactly-one, reals as ordered atoms.

Two invented rule sets (``tests/verify/fixtures``): a parcel-sorting hall of 57 conveyor
segments with 4 states each (held out: written for this test only, not used to build the
method), and an orchard of 60 plots with 8 ripeness stages and a real temperature.  Their
domains (4^57, 8^60 × cells) are far beyond enumeration; the typed SAT miter decides them.
Planted one-place differences must be found on exactly the outputs that read the changed
definition, with counterexamples in the user's column names and values, each checked here
with the reference evaluator (``thresholdc/logic/reference.py``).  Small random typed files
are compared with the exhaustive enumeration of the valid assignments, output by output.
"""

from __future__ import annotations

import random
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("pysat.solvers")

from thresholdc.compiler import compile_source  # noqa: E402
from thresholdc.errors import RuleError  # noqa: E402
from thresholdc.ir.network import Network, Neuron, Output  # noqa: E402
from thresholdc.ir.reference import Reference
from thresholdc.logic import (
    reference,  # noqa: E402
    source_from_text,  # noqa: E402
)
from thresholdc.verification.auto import verify_network  # noqa: E402
from thresholdc.verification.sat.typed import verify_typed_sat  # noqa: E402
from thresholdc.verification.typed import verify_typed  # noqa: E402

FIXTURES = Path(__file__).parent / "fixtures"


def load(name: str) -> tuple[str, Reference]:
    text = (FIXTURES / name).read_text()
    return text, source_from_text(text, name)


@pytest.fixture(scope="module")
def hall():
    text, src = load("sorting_hall.rules")
    return text, src, compile_source(src, verify="none").network


@pytest.fixture(scope="module")
def orchard():
    text, src = load("orchard_plots.rules")
    return text, src, compile_source(src, verify="none").network


def really_differs(src: Reference, net: Network, c) -> bool:
    """Evaluate the rules (reference evaluator) and the network at a {feature: value} row."""
    program = src.program
    row = []
    for v in program.inputs:
        x = c.assignment[v.name]
        row.append(list(v.values).index(x) if v.kind == "categorical" else float(x))
    expected = reference.evaluate(program, np.array([row], dtype=float))[
        0, list(src.outputs).index(c.output)]
    units = []
    for u in net.inputs:
        name, _, value = u.partition("=")
        units.append(float(c.assignment[name] == value) if value else float(c.assignment[u]))
    got = net.decide(np.array([units]))[0, net.output_names.index(c.output)]
    return bool(expected) == c.expected and bool(got) != bool(expected)


def test_held_out_hall_is_proven(hall):
    _, src, net = hall
    assert len(src.program.inputs) == 57
    assert all(len(v.values) == 4 for v in src.program.inputs)
    rep = verify_network(net, src)
    assert (rep.result, rep.method) == ("equal", "sat")
    assert all(o.verdict == "equal" for o in rep.outputs)


def test_orchard_is_proven(orchard):
    _, src, net = orchard
    kinds = [v.kind for v in src.program.inputs]
    assert kinds.count("categorical") == 60 and kinds.count("real") == 1
    rep = verify_network(net, src)
    assert (rep.result, rep.method) == ("equal", "sat")


def test_planted_literal_in_the_hall(hall):
    text, _, net = hall
    # one literal of jam_north: seg05 == jammed becomes seg05 == busy
    wrong = source_from_text(text.replace("seg05 == jammed", "seg05 == busy", 1), "w.rules")
    rep = verify_network(net, wrong)
    assert rep.verdicts() == {"reroute_north": "different", "reroute_south": "different",
                              "slow_intake": "equal", "call_crew": "equal",
                              "halt_hall": "different"}
    for o in rep.outputs:
        assert o.disagreements is None if o.verdict == "different" else o.disagreements == 0
        for c in o.counterexamples:
            assert set(c.assignment) == {f"seg{i:02d}" for i in range(1, 58)}
            assert all(v in ("clear", "busy", "jammed", "offline")
                       for v in c.assignment.values())
            assert really_differs(wrong, net, c)


def test_planted_literal_and_threshold_in_the_orchard(orchard):
    text, _, net = orchard
    wrong = source_from_text(text.replace("plot05 == ripe", "plot05 == blush", 1)
                             .replace("temp < 32", "temp <= 32"), "w.rules")
    rep = verify_network(net, wrong)
    assert rep.verdicts() == {"pick_today": "different", "frost_cover": "equal",
                              "thin_fruit": "equal", "call_pickers": "different",
                              "sell_juice": "equal"}
    for c in rep.counterexamples:
        assert isinstance(c.assignment["plot05"], str) and isinstance(c.assignment["temp"], float)
        assert really_differs(wrong, net, c)
    only_temp = source_from_text(text.replace("temp < 32", "temp <= 32"), "t.rules")
    rep = verify_typed_sat(net, only_temp, time_limit=30)
    (c,) = rep.outputs[0].counterexamples[:1]
    assert rep.verdicts()["pick_today"] == "different" and c.assignment["temp"] == 32.0
    assert really_differs(only_temp, net, c)


def test_exactly_one_and_ordered_atoms_are_needed():
    # The network reads both one-hot units of c and two real tests; it equals the rules on
    # every valid assignment, but not on impossible unit patterns (both units of c at 1) or
    # impossible atom values (t > 2 without t > 1): without the domain constraints the miter
    # would report those.
    src = source_from_text("input c: {a, b}, t: real\ny = c == a and t > 2\n", "t.rules")
    feats = ({"name": "c", "kind": "categorical", "values": ["a", "b"], "units": ["c=a", "c=b"]},
             {"name": "t", "kind": "real", "units": ["t"], "range": None, "scale": 1})
    net = Network(("c=a", "c=b", "t"), (
        Neuron("t1", 1, ("t",), (1.0,), -1.0), Neuron("t2", 1, ("t",), (1.0,), -2.0),
        Neuron("y", 2, ("c=a", "c=b", "t1", "t2"), (1, -1, 1, 1), -2.5)),
        (Output("y", "y"),), features=feats)
    assert verify_typed(net, src).result == "equal"  # enumeration of the valid assignments
    assert verify_typed_sat(net, src, time_limit=30).result == "equal"


def _random_typed(rng: random.Random) -> str:
    cats = {f"c{i}": [f"v{j}" for j in range(rng.randint(2, 4))] for i in range(3)}
    bools = ["b0", "b1"]
    lines = ["input " + ", ".join(f"{k}: {{{', '.join(v)}}}" for k, v in cats.items()),
             "input t: real in [0, 10], " + ", ".join(bools)]

    def atom() -> str:
        r = rng.random()
        if r < 0.4:
            k = rng.choice(list(cats))
            vals = rng.sample(cats[k], rng.randint(1, len(cats[k]) - 1))
            return f"{k} in {{{', '.join(vals)}}}" if len(vals) > 1 else f"{k} == {vals[0]}"
        if r < 0.7:
            return f"t {rng.choice(['<', '<=', '>', '>='])} {rng.choice([2, 3.5, 5, 7.25])}"
        return rng.choice(bools)

    for j in range(3):
        parts = [atom() for _ in range(rng.randint(2, 4))]
        if rng.random() < 0.5:
            lines.append(f"y{j} = atleast({rng.randint(1, len(parts))}, {', '.join(parts)})")
        else:
            lines.append(f"y{j} = " + f" {rng.choice(['and', 'or', 'xor'])} ".join(parts))
    return "\n".join(lines) + "\n"


def _mutate(text: str, rng: random.Random) -> str:
    import re

    spots = [m for m in re.finditer(r"== v\d|<=|>=|< |> |atleast\(\d| and | or ", text)
             if m.start() > text.index("y0")]
    m = rng.choice(spots)
    s = m.group()
    new = {"<=": "<", ">=": ">", "< ": "<= ", "> ": ">= ", " and ": " or ", " or ": " and "}
    if s.startswith("== v"):
        rep = "== v" + str(1 - int(s[-1]) if s[-1] in "01" else 0)
    elif s.startswith("atleast("):
        rep = f"atleast({max(1, int(s[-1]) - 1) if int(s[-1]) > 1 else 2}"
    else:
        rep = new[s]
    return text[:m.start()] + rep + text[m.end():]


@pytest.mark.parametrize("seed", range(12))
def test_random_typed_against_enumeration(seed):
    rng = random.Random(seed)
    text = _random_typed(rng)
    net = compile_source(source_from_text(text, "r.rules"), verify="none").network
    for k in range(3):
        try:
            src = source_from_text(_mutate(text, rng) if k else text, "m.rules")
        except RuleError:  # a mutant out of range (atleast(k) with k above its arguments)
            continue
        truth = verify_typed(net, src)  # every valid assignment, exact counts
        assert truth.method == "exhaustive"
        rep = verify_typed_sat(net, src, time_limit=30)
        assert rep.verdicts() == truth.verdicts(), text
        for c in rep.counterexamples:
            assert really_differs(src, net, c)
