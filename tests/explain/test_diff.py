"""The rules diff on hand-made trained networks whose readback is known.  Agreements are
counted here independently by plain Python over every assignment (exhaustive truth table)."""

from __future__ import annotations

import itertools
import json

import pytest

from thresholdc import compile_rules
from thresholdc.cli import main
from thresholdc.explain import diff
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.syntax.parser import parse

RULES = "input a, b, c, d\noutput y\nt = a and b\ny = t or (c and not d)\n"


def trained(t_weights=(4.0, 4.0, 0.0), y_term=(4.0, 4.0, -4.0), t_bias=-6.0):
    """The rules-structured network of RULES: units t, y~1 (the and-term), y."""
    wa, wb, wc = t_weights
    return Network(("a", "b", "c", "d"), (
        Neuron("t", 1, ("a", "b", "c"), (wa, wb, wc), t_bias, "sigmoid", origin="t"),
        Neuron("y~1", 1, ("c", "d", "a"), (y_term[0], y_term[2], 0.0), -2.0, "sigmoid",
               origin="y"),
        Neuron("y", 2, ("t", "y~1"), (y_term[1], 4.0), -2.0, "sigmoid", origin="y"),
    ), (Output("y", "y"),))


def count_agreement(f, g, n):
    rows = list(itertools.product((0, 1), repeat=n))
    return sum(f(*r) == g(*r) for r in rows) / len(rows)


def test_an_unchanged_network_agrees_everywhere():
    d = diff(trained(), RULES)
    assert [x.name for x in d.definitions] == ["t", "y"]
    assert all(x.agreement == 1.0 and x.explanation is None for x in d.definitions)
    assert d.definitions[0].reading == "a and b"
    assert d.definitions[1].reading == "t or (c and not d)"
    assert [o.agreement for o in d.outputs] == [1.0]


def test_a_dropped_antecedent_is_named_with_its_agreement_and_explanation():
    net = trained(t_weights=(4.0, 0.02, 0.0), t_bias=-2.0)  # b's link shrank: t reads a
    d = diff(net, RULES)
    t = d.definitions[0]
    assert t.reading == "a" and t.dropped == ("b",) and t.added == ()
    assert t.method == "exhaustive" and t.columns == ("a", "b")
    assert t.agreement == count_agreement(lambda a, b: a, lambda a, b: a and b, 2)
    # the smallest set of columns forcing the difference: a=1, b=0 (both needed)
    assert t.explanation["columns"] == {"a": "1", "b": "0"}
    assert t.explanation["unit"] is True and t.explanation["kind"] == "smallest"
    y = d.definitions[1]  # y's own unit is unchanged, but it reads the changed t
    assert y.added == y.dropped == ()
    want = count_agreement(lambda a, b, c, dd: a or (c and not dd),
                           lambda a, b, c, dd: (a and b) or (c and not dd), 4)
    assert y.agreement == want
    # y differs exactly when a=1, b=0 and not (c and not d): two columns cannot force it
    assert len(y.explanation["columns"]) == 3


def test_an_added_antecedent_is_named():
    net = trained(t_weights=(4.0, 4.0, -4.0), t_bias=-6.0)  # t now also needs not c
    t = diff(net, RULES).definitions[0]
    assert t.reading == "a and b and not c"
    assert t.added == ("not c",) and t.dropped == ()
    assert t.explanation["columns"] == {"a": "1", "b": "1", "c": "1"}


def test_a_negated_antecedent_is_named():
    net = trained(y_term=(4.0, 4.0, 4.0))  # the term reads d instead of not d ... c or d
    y = diff(net, RULES).definitions[1]
    assert y.reading == "t or c or d"
    assert y.negated == ("d",)


def test_drift_against_the_start():
    start = trained()
    net = trained(t_weights=(4.0, 1.0, 0.5))
    drift = {u.name: u for u in diff(net, RULES, start=start).drift}
    assert drift["y"].change == 0.0
    assert drift["t"].change == pytest.approx((3.0**2 + 0.5**2) ** 0.5)
    assert drift["t"].largest_input == "b" and drift["t"].largest_change == pytest.approx(-3.0)
    assert drift["t"].relative == pytest.approx(9.25 ** 0.5 / (16 + 16 + 0 + 36) ** 0.5)


def test_a_network_without_a_unit_per_definition_says_so():
    rules = "input a, b, c\nt = a and b\ny = t or c\n"
    net = compile_rules(rules)  # synthesis merges t into y
    assert "t" not in {n.name for n in net.neurons}
    d = diff(net, rules)
    assert d.definitions[0].reading is None and d.definitions[0].agreement is None
    assert any("does not keep a unit per definition" in n for n in d.notes)
    assert d.outputs[0].agreement == 1.0


def test_many_columns_are_sampled_and_labelled_so():
    names = [f"x{i}" for i in range(20)]
    rules = f"input {', '.join(names)}\ny = atleast(10, {', '.join(names)})\n"
    net = Network(tuple(names), (Neuron("y", 1, tuple(names), (1.0,) * 19 + (0.0,), -9.5,
                                        "sigmoid"),), (Output("y", "y"),))
    d = diff(net, rules, samples=4000)
    y = d.definitions[0]
    assert y.method == "sampled" and y.assignments == 4000
    assert y.dropped == ("x19",)
    # exact disagreement: x19 = 0 and exactly 10 of the other 19 true: C(19,10)/2^20
    from math import comb
    assert abs(y.agreement - (1 - comb(19, 10) / 2**20)) < 0.02
    assert y.explanation is not None and "x19" in y.explanation["columns"]


def test_read_back_rules_text_parses_and_the_cli_prints_json(tmp_path, capsys):
    rules = tmp_path / "r.rules"
    rules.write_text(RULES, encoding="utf-8")
    net = tmp_path / "n.json"
    trained(t_weights=(4.0, 0.02, 0.0), t_bias=-2.0).save(str(net))
    out_rules = tmp_path / "back.rules"
    code = main(["diff", str(net), str(rules), "--json", "--write-rules", str(out_rules)])
    data = json.loads(capsys.readouterr().out)
    assert code == 0
    assert data["definitions"][0]["reading"] == "a" and data["definitions"][0]["agreement"] < 1
    back = parse(out_rules.read_text(encoding="utf-8"))
    assert repr(back.definitions["t"]) == "t = a"
    code = main(["diff", str(net), str(rules)])
    text = capsys.readouterr().out
    assert code == 0 and "dropped: b" in text and "differs whenever a=1, b=0" in text


def test_a_netlist_is_refused_with_one_line(tmp_path, capsys):
    bench = tmp_path / "x.bench"
    bench.write_text("INPUT(a)\nOUTPUT(y)\ny = NOT(a)\n", encoding="utf-8")
    net = tmp_path / "n.json"
    compile_rules("input a\ny = not a\n").save(str(net))
    assert main(["diff", str(net), str(bench)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("thresholdc: error:") and "rule file" in err
