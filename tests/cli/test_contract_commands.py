"""Contract checks of DESIGN.md §5: the commands, their exit codes and the public Python API.

Network files here are either compiled or written by hand (the example of DESIGN.md §4
verbatim, and copies of it with one field changed); expected verdicts are worked out by hand.
"""

from __future__ import annotations

import itertools
import json
import os

import numpy as np
import pytest

import thresholdc
from thresholdc.cli import COMMANDS, main
from thresholdc.export import save_any

ADDER = "input a, b, cin\noutput sum, carry\nsum = a xor b xor cin\ncarry = majority(a, b, cin)\n"

# DESIGN.md §4, the example network file verbatim (a full adder).
EXAMPLE = """{
  "format": "thresholdc-network",
  "version": 1,
  "inputs": ["a", "b", "cin"],
  "neurons": [
    {"name": "carry", "layer": 1, "inputs": ["a", "b", "cin"], "weights": [1, 1, 1],
     "bias": -1.5, "activation": "step", "role": "gate", "origin": "carry"},
    {"name": "sum", "layer": 2, "inputs": ["a", "b", "cin", "carry"], "weights": [1, 1, 1, -2],
     "bias": -0.5, "activation": "step", "role": "gate", "origin": "sum"}
  ],
  "outputs": [{"name": "sum", "source": "sum"}, {"name": "carry", "source": "carry"}],
  "meta": {"tool": "thresholdc 0.1.0", "source_sha256": "…", "options": {}}
}
"""


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def adder(tmp_path):
    src = tmp_path / "adder.rules"
    src.write_text(ADDER, encoding="utf-8")
    return src


def example(tmp_path, name="example.json", change=None):
    """The §4 example, optionally changed by ``change(dict)``, written to ``name``."""
    data = json.loads(EXAMPLE)
    if change is not None:
        change(data)
    p = tmp_path / name
    p.write_text(EXAMPLE if change is None else json.dumps(data), encoding="utf-8")
    return p


# ---- help -----------------------------------------------------------------------------------


@pytest.mark.parametrize("command", COMMANDS)
def test_every_command_has_help_with_an_example_of_itself(capsys, command):
    # DESIGN.md §5: every command has --help with an example
    with pytest.raises(SystemExit) as info:
        main([command, "--help"])
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert f"example:\n  thresholdc {command} " in out


# ---- compile --------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["net.txt", "net", "net.JSON.bak"])
def test_compile_refuses_an_unknown_suffix_listing_the_supported_ones(tmp_path, capsys, adder,
                                                                      name):
    # DESIGN.md §5: an unknown suffix is exit 2 listing the supported ones
    code, out, err = run(capsys, "compile", adder, "-o", tmp_path / name)
    assert code == 2 and out == ""
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("thresholdc: error: ")
    for suffix in (".json", ".npz", ".onnx"):
        assert suffix in lines[0]
    assert sorted(os.listdir(tmp_path)) == ["adder.rules"]


def test_compile_json_summary_matches_the_file(tmp_path, capsys, adder):
    # DESIGN.md §5: --json where a command reports
    net_path = tmp_path / "n.json"
    code, out, _ = run(capsys, "compile", adder, "-o", net_path, "--json")
    assert code == 0
    summary = json.loads(out)
    net = json.loads(net_path.read_text(encoding="utf-8"))
    assert summary["inputs"] == net["inputs"] == ["a", "b", "cin"]
    assert summary["outputs"] == [o["name"] for o in net["outputs"]] == ["sum", "carry"]
    assert summary["neurons"] == len(net["neurons"])
    weights = sum(len(n["weights"]) for n in net["neurons"])
    assert summary["parameters"]["total"] == weights + len(net["neurons"])
    assert summary["verification"]["result"] == net["meta"]["verification"]["result"] == "equal"


# ---- verify ---------------------------------------------------------------------------------


def _adder_truth(X):
    s = X.sum(axis=1)
    return {"sum": s % 2, "carry": (s >= 2).astype(int)}


def test_verify_the_design_example(tmp_path, capsys, adder):
    # DESIGN.md §4's example computes the full adder: exit 0, names matched
    code, out, _ = run(capsys, "verify", example(tmp_path), adder)
    assert code == 0 and "equal" in out.splitlines()[0]
    code, out, _ = run(capsys, "verify", example(tmp_path), adder, "--json")
    assert code == 0 and json.loads(out)["result"] == "equal"


def test_verify_a_tampered_weight_gives_exit_1_and_true_counterexamples(tmp_path, capsys,
                                                                        adder):
    # DESIGN.md §5: exit 1 when a check ran and failed, with counterexamples
    def tamper(d):
        d["neurons"][0]["weights"][0] = 0  # carry no longer reads a: carry = b and cin

    net = example(tmp_path, "tampered.json", tamper)
    code, out, _ = run(capsys, "verify", net, adder, "--json")
    assert code == 1
    report = json.loads(out)
    assert report["result"] == "different"
    X = np.array(list(itertools.product((0, 1), repeat=3)))
    truth = _adder_truth(X)
    carry = X[:, 1] & X[:, 2]
    network = {"carry": carry, "sum": (X.sum(axis=1) - 2 * carry > 0).astype(int)}
    wrong = {name: {tuple(x) for x, t, g in zip(X, truth[name], network[name]) if t != g}
             for name in truth}
    assert wrong["carry"] == {(1, 1, 0), (1, 0, 1)} and wrong["sum"] == {(1, 1, 0), (1, 0, 1)}
    assert report["counterexamples"]
    for c in report["counterexamples"]:
        row = tuple(c["assignment"][k] for k in ("a", "b", "cin"))
        assert row in wrong[c["output"]]
        assert c["expected"] == truth[c["output"]][int("".join(map(str, row)), 2)]
    for o in report["outputs"]:
        assert o["disagreements"] == len(wrong[o["name"]]) and not o["agrees"]
    code, text, _ = run(capsys, "verify", net, adder)
    assert code == 1 and "counterexamples" in text


@pytest.mark.parametrize(
    "bias,code",
    [(-1.7, 0), (-1.0, 0), (-1.999, 0), (-2.0, 1), (-0.9, 1)],
)
def test_verify_judges_odd_biases_on_what_they_compute(tmp_path, capsys, adder, bias, code):
    # DESIGN.md §5: a network whose biases are not half-integers is judged on what it computes.
    # carry: z = a + b + cin + bias, step is 1 iff z > 0, so carry = atleast(2) iff -2 <= bias < -1.
    def change(d):
        d["neurons"][0]["bias"] = bias

    got, _, err = run(capsys, "verify", example(tmp_path, "odd.json", change), adder)
    assert got == code, err


def test_verify_compares_names_not_positions(tmp_path, capsys, adder):
    # DESIGN.md §5: outputs are matched by name; different names are exit 2
    def swap(d):
        d["outputs"].reverse()

    assert run(capsys, "verify", example(tmp_path, "swapped.json", swap), adder)[0] == 0

    def rename(d):
        d["outputs"][0]["name"] = "total"

    code, out, err = run(capsys, "verify", example(tmp_path, "renamed.json", rename), adder)
    assert code == 2 and out == ""
    assert err.startswith("thresholdc: error: ") and "total" in err and "sum" in err
    other = tmp_path / "other.rules"
    other.write_text(ADDER.replace("cin", "c_in"), encoding="utf-8")
    code, _, err = run(capsys, "verify", example(tmp_path), other)
    assert code == 2 and "cin" in err and "c_in" in err


BAD_NETWORKS = {
    "not_json": "{ this is not json",
    "empty": "",
    "a_list": "[1, 2]",
    "wrong_format": lambda d: d.update(format="other-network"),
    "wrong_version": lambda d: d.update(version=2),
    "unknown_unit": lambda d: d["neurons"][1]["inputs"].__setitem__(0, "zz"),
    "mismatched_weights": lambda d: d["neurons"][1].update(weights=[1, 1]),
    "reader_before_unit": lambda d: d["neurons"].reverse(),
    "wrong_layer": lambda d: d["neurons"][0].update(layer=3),
    "unknown_output_source": lambda d: d["outputs"][0].update(source="nope"),
    "string_weight": lambda d: d["neurons"][0]["weights"].__setitem__(0, "1"),
    "unknown_activation": lambda d: d["neurons"][0].update(activation="softplus"),
    "no_neurons_list": lambda d: d.pop("neurons"),
}


@pytest.mark.parametrize("name", sorted(BAD_NETWORKS))
@pytest.mark.parametrize("command", ["verify", "inspect"])
def test_a_bad_network_file_is_exit_2_with_one_clear_error(tmp_path, capsys, adder, name,
                                                           command):
    # DESIGN.md §5: bad input is exit 2, the §3 error format, no traceback
    bad = BAD_NETWORKS[name]
    if isinstance(bad, str):
        path = tmp_path / "bad.json"
        path.write_text(bad, encoding="utf-8")
    else:
        path = example(tmp_path, "bad.json", bad)
    argv = ["verify", path, adder] if command == "verify" else ["inspect", path]
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == ""
    lines = err.splitlines()
    assert lines[0].startswith(f"thresholdc: error: {path}")
    assert len(lines) in (1, 3)  # one line, or with a position the source line and a caret
    if len(lines) == 3:
        assert lines[2].strip() == "^"


# ---- inspect --------------------------------------------------------------------------------


def test_inspect_the_design_example(tmp_path, capsys):
    # DESIGN.md §4 example: 2 neurons, 7 weights + 2 biases, depth 2, counted by hand
    code, out, _ = run(capsys, "inspect", example(tmp_path))
    assert code == 0
    assert out.splitlines()[-1] == (
        "totals: 2 neurons (2 gates, 0 relays, 0 extra), 9 parameters (7 weights + 2 biases), "
        "depth 2, direct connections across layers"
    )
    code, out, _ = run(capsys, "inspect", example(tmp_path), "--json")
    data = json.loads(out)
    assert code == 0
    assert [[n["name"] for n in layer["neurons"]] for layer in data["layers"]] == [["carry"],
                                                                                  ["sum"]]
    assert data["layers"][1]["neurons"][0]["weights"] == [1, 1, 1, -2]
    assert data["layers"][1]["neurons"][0]["bias"] == -0.5
    t = data["totals"]
    assert (t["neurons"], t["weights"], t["biases"], t["parameters"], t["depth"]) == (2, 7, 2, 9,
                                                                                      2)
    assert t["strict"] is False


def test_inspect_counts_in_the_singular(tmp_path, capsys):
    src = tmp_path / "one.rules"
    src.write_text("input a, b\ny = a and b\n", encoding="utf-8")
    net = tmp_path / "one.json"
    assert run(capsys, "compile", src, "-o", net)[0] == 0
    code, out, _ = run(capsys, "inspect", net)
    assert code == 0
    assert "layer 1 (1 neuron)" in out
    assert out.splitlines()[-1] == (
        "totals: 1 neuron (1 gate, 0 relays, 0 extra), 3 parameters (2 weights + 1 bias), "
        "depth 1, strict layered"
    )


# ---- the Python API -------------------------------------------------------------------------


def test_python_api_end_to_end(tmp_path, capsys, adder):
    # DESIGN.md §5: compile_rules, load, Network.save, Network.evaluate, dense_layers, verify
    net = thresholdc.compile_rules(ADDER)
    X = np.array(list(itertools.product((0, 1), repeat=3)))
    truth = _adder_truth(X)
    want = np.stack([truth["sum"], truth["carry"]], axis=1)
    got = net.evaluate(X)
    assert got.shape == (8, 2)
    np.testing.assert_array_equal(got, want)

    path = tmp_path / "api.json"
    save_any(net, str(path))
    cli_path = tmp_path / "cli.json"
    assert run(capsys, "compile", adder, "-o", cli_path)[0] == 0
    assert path.read_bytes() == cli_path.read_bytes()  # same rules and options, same bytes
    back = thresholdc.load(str(path))
    np.testing.assert_array_equal(back.evaluate(X), want)

    report = thresholdc.verify(back, ADDER)
    assert report.result == "equal" and report.equal
    wrong = thresholdc.verify(back, ADDER.replace("majority(a, b, cin)", "a and b"))
    assert wrong.result == "different" and wrong.counterexamples
    for c in wrong.counterexamples:  # majority and `a and b` differ where exactly a or b, cin
        assert c.output == "carry" and c.assignment["cin"] == 1
        assert c.assignment["a"] + c.assignment["b"] == 1

    layered = thresholdc.compile_rules(ADDER, layered=True)
    h = X.astype(float)
    for W, b, activation in layered.dense_layers():
        assert activation == "step"
        h = (h @ W.T + b > 0).astype(float)
    last = [n.name for n in layered.neurons if n.layer == layered.depth]
    np.testing.assert_array_equal(h[:, [last.index(o.source) for o in layered.outputs]], want)


def test_api_errors_are_thresholdc_errors():
    with pytest.raises(thresholdc.RuleError) as info:
        thresholdc.compile_rules("input a\ny = a and b\n")
    assert (info.value.line, info.value.column) == (2, 11)
    with pytest.raises(thresholdc.ThresholdcError):
        thresholdc.compile_rules("input a\ny = a\n", no_such_option=1)
