"""inspect: integer weights x gain, --top / --min-weight, wrapped lines; counterexamples cut
down to the inputs that matter."""

import itertools
import json

import pytest

from thresholdc import compile_rules
from thresholdc.cli import main
from thresholdc.export import save_any
from thresholdc.forcing import inputs_that_matter
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.logic import source_from_text

RULES = "input a, b, c\noutput y, z\ny = a and not b\nz = atleast(2, a, b, c)\n"


def _run(capsys, *argv):
    code = main([str(a) for a in argv])
    return code, capsys.readouterr().out


def test_sigmoid_network_shows_the_step_weights_and_the_gain(tmp_path, capsys):
    step = compile_rules(RULES)
    soft = compile_rules(RULES, activation="sigmoid")
    path = tmp_path / "soft.json"
    save_any(soft, str(path))
    code, out = _run(capsys, "inspect", path, "--json")
    assert code == 0
    data = json.loads(out)
    by_name = {n["name"]: n for layer in data["layers"] for n in layer["neurons"]}
    for u in step.neurons:  # the shown integers are the step network's own weights
        shown = by_name[u.name]
        assert shown["integer_weights"] == [int(w) for w in u.weights]
        assert shown["integer_bias"] == u.bias
        gain = soft.meta["certificate"]["neurons"][u.name]["gain"]
        assert shown["gain"] == pytest.approx(gain)
    code, text = _run(capsys, "inspect", path)
    assert "gain" in text.splitlines()[4] and "-1.5" in text


def test_fixed_gain_without_certificate_is_found_by_division(tmp_path, capsys):
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (8.0, -16.0), -12.0,
                                      activation="sigmoid"),), (Output("y", "y"),))
    path = tmp_path / "g.json"
    save_any(net, str(path))
    code, out = _run(capsys, "inspect", path, "--json")
    n = json.loads(out)["layers"][0]["neurons"][0]
    assert (n["gain"], n["integer_weights"], n["integer_bias"]) == (8.0, [1, -2], -1.5)



@pytest.mark.parametrize("meta", [
    {"certificate": {"neurons": {"y": 3}}},  # a neuron's entry that is not an object
    {"certificate": {"neurons": [1, 2]}},
    {"certificate": {"neurons": {"y": {"gain": "high"}}}},
])
def test_free_form_meta_is_read_defensively(tmp_path, capsys, meta):
    # meta is free-form in a network file: odd shapes there must not break inspect (found by
    # the fuzz campaign: an int where an object was expected was an internal error, exit 3)
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (8.0, -16.0), -12.0,
                                      activation="sigmoid"),), (Output("y", "y"),), meta=meta)
    path = tmp_path / "m.json"
    save_any(net, str(path))
    code, out = _run(capsys, "inspect", path, "--json")
    assert code == 0
    n = json.loads(out)["layers"][0]["neurons"][0]
    assert (n["gain"], n["integer_weights"]) == (8.0, [1, -2])  # the common gain still fits

def _wide():
    names = tuple(f"input_number_{k}" for k in range(40))
    weights = tuple(round((k + 1) ** 1.5 / 1000, 6) * (-1) ** k for k in range(40))
    return Network(names, (Neuron("y", 1, names, weights, 0.1, activation="sigmoid"),),
                   (Output("y", "y"),))


def test_lines_wrap_and_small_weights_can_be_left_out(tmp_path, capsys):
    path = tmp_path / "w.json"
    save_any(_wide(), str(path))
    code, out = _run(capsys, "inspect", path)
    assert code == 0
    body = out.splitlines()[:-1]  # the totals line is a fixed sentence
    assert max(len(line) for line in body) <= 110
    assert sum("*input_number_" in line for line in body) > 5  # wrapped onto several lines
    code, out = _run(capsys, "inspect", path, "--top", "3")
    shown = [w for line in out.splitlines() for w in line.split() if "*input_number_" in w]
    assert shown == ["-0.252982*input_number_39", "0.243555*input_number_38",
                     "-0.234248*input_number_37"]
    assert "(+37 smaller)" in out and "37 weights left out (--top 3)" in out
    code, out = _run(capsys, "inspect", path, "--min-weight", "0.23")
    shown = [w for line in out.splitlines() for w in line.split() if "*input_number_" in w]
    assert len(shown) == 3 and "(+37 smaller)" in out
    assert main(["inspect", str(path), "--top", "-1"]) == 2


def _rule_y(a, b, c, d):
    """The rules of the test below, in plain Python (a second evaluator)."""
    return (a + b + c >= 2) and not d


def test_counterexample_keeps_a_minimal_forcing_set():
    rules = "input a, b, c, d, e\ny = atleast(2, a, b, c) and not d\n"
    wrong = compile_rules("input a, b, c, d, e\ny = atleast(2, a, b, c)\n")
    src = source_from_text(rules, "r.rules")
    names = ["a", "b", "c", "d", "e"]
    for values in itertools.product((0, 1), repeat=5):
        x = dict(zip(names, values, strict=True))
        net_y = bool(wrong.decide([list(values)])[0, 0])
        if net_y == _rule_y(*values[:4]):
            continue  # not a counterexample
        kept, complete = inputs_that_matter(wrong, src, x, "y")
        assert complete
        free = [n for n in names if n not in kept]

        def forced(free_names, x=x):
            for fill in itertools.product((0, 1), repeat=len(free_names)):
                y = dict(x, **dict(zip(free_names, fill, strict=True)))
                v = [y[n] for n in names]
                if bool(wrong.decide([v])[0, 0]) == _rule_y(*v[:4]):
                    return False
            return True

        assert forced(free)
        for k in kept:  # minimal: no kept input can be freed as well
            assert not forced(free + [k])
        assert "e" not in kept


def test_counterexample_of_a_forty_input_network_names_two_inputs():
    names = [f"x{k}" for k in range(40)]
    decl = "input " + ", ".join(names) + "\n"
    src = source_from_text(decl + "y = x3 and x7\n" + "z = x0 or x1\n", "r.rules")
    net = compile_rules(decl + "y = x3 or x7\n" + "z = x0 or x1\n", verify="none")
    x = {n: 1 for n in names} | {"x3": 1, "x7": 0}
    kept, complete = inputs_that_matter(net, src, x, "y")
    assert (kept, complete) == (["x3", "x7"], True)


def test_verify_prints_the_reduced_counterexamples(tmp_path, capsys):
    decl = "input " + ", ".join(f"x{k}" for k in range(10)) + "\n"
    (tmp_path / "r.rules").write_text(decl + "y = x3 and x7\n", encoding="utf-8")
    save_any(compile_rules(decl + "y = x3 or x7\n"), str(tmp_path / "n.json"))
    code, out = _run(capsys, "verify", tmp_path / "n.json", tmp_path / "r.rules")
    assert code == 1
    lines = [line.strip() for line in out.splitlines() if "expected" in line]
    assert lines[0].startswith("x3=1 x7=0 (and 8 other inputs, any value): y expected 0")
    assert len(lines) == len(set(lines))  # the same reduced case is printed once
