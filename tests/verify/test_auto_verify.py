"""verify_network: method choice, combined reports, refusals, and the command line."""

from __future__ import annotations

import json
from dataclasses import replace

import numpy as np
import pytest

from tests.verify.threshold_builders import gate_for_gate, load_gen_circuits
from thresholdc.cli import main
from thresholdc.compiler import compile_source
from thresholdc.errors import UsageError, VerificationUndecided
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.ir.reference import Reference
from thresholdc.logic.source import source_from_text
from thresholdc.verification.auto import verify_network

gc = load_gen_circuits()


def adder_source(n: int) -> Reference:
    return source_from_text(gc.adder(n), f"adder{n}.bench")


def buggy(net: Network, k: int) -> Network:
    n = net.neurons[k]
    return replace(net, neurons=net.neurons[:k] + (replace(n, bias=n.bias + 1),)
                   + net.neurons[k + 1:])


def integer_check(report, n):
    """Each counterexample against integer addition (Python's own)."""
    for c in report.counterexamples:
        want = gc.reference("adder", n, c.assignment)[c.output]
        assert c.expected == bool(want)


def test_small_sources_are_checked_exhaustively():
    src = source_from_text("input a, b, c\ny = atleast(2, a, b, c)\n", "m.rules")
    net = compile_source(src, verify="none").network
    report = verify_network(net, src)
    assert (report.result, report.method, report.assignments) == ("equal", "exhaustive", 8)


def test_above_the_bound_local_decides_a_netlist():
    src = adder_source(16)  # 32 inputs
    net = gate_for_gate(src.gates())
    report = verify_network(net, src, max_inputs=24)
    assert (report.result, report.method) == ("equal", "local")
    assert len(report.proofs) == 2


def test_above_the_bound_with_the_compiler(tmp_path):
    src = adder_source(13)
    for synthesis in (False, True):
        net = compile_source(src, synthesis=synthesis, verify="none").network
        report = verify_network(net, src)
        assert report.result == "equal", report.notes
        assert report.method in ("local", "local+sat")


def test_local_undecided_falls_back_to_sat():
    pytest.importorskip("pysat.solvers")
    src = adder_source(13)
    net = gate_for_gate(src.gates())
    net = replace(net, meta={})  # no cone records: local cannot decide
    report = verify_network(net, src)
    assert (report.result, report.method) == ("equal", "local+sat")
    assert any(p.startswith("sat:") for p in report.proofs)
    assert any("no gate cones" in n for n in report.notes)


def test_a_bug_above_the_bound_is_found():
    n = 13
    src = adder_source(n)
    net = gate_for_gate(src.gates())
    report = verify_network(buggy(net, len(net.neurons) // 2), src)
    assert report.result == "different"
    integer_check(report, n)
    without_cones = replace(buggy(net, 7), meta={})
    report = verify_network(without_cones, src)
    assert report.result == "different"
    integer_check(report, n)


def test_soft_network_above_the_bound_is_not_an_error():
    xs = [f"x{i}" for i in range(30)]
    src = source_from_text(f"input {', '.join(xs)}\ny = {' or '.join(xs)}\n", "s.rules")
    net = Network(tuple(xs), (Neuron("y", 1, tuple(xs), (8.0,) * 30, -4.0, "sigmoid"),),
                  (Output("y", "y"),))
    report = verify_network(net, src)  # another method than local/SAT takes it
    # branch-and-bound decides it: one input fixed to 1 gives z ≥ 4, all at 0 give z = -4
    assert report.result == "equal" and report.method == "bounds"
    with pytest.raises(UsageError, match="step network"):
        verify_network(net, src, method="sat")


def test_refusals():
    src = source_from_text("input a, b\ny = a and b\n", "t.rules")
    net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
    with pytest.raises(UsageError, match="unknown verification method"):
        verify_network(net, src, method="guess")
    with pytest.raises(UsageError, match="time limit"):
        verify_network(net, src, time_limit=0)
    other = replace(net, outputs=(Output("z", "y"),))
    with pytest.raises(UsageError, match="only in the network: z; only in the source: y"):
        verify_network(other, src)
    big = adder_source(13)
    with pytest.raises(VerificationUndecided):
        verify_network(gate_for_gate(big.gates()), big, method="exhaustive")


def test_methods_agree_on_a_small_circuit():
    src = adder_source(4)
    net = gate_for_gate(src.gates())
    pytest.importorskip("pysat.solvers")
    for method in ("exhaustive", "local", "sat", "auto"):
        assert verify_network(net, src, method=method).result == "equal", method
        assert verify_network(buggy(net, 3), src, method=method).result == "different", method


def test_command_line(tmp_path, capsys):
    pytest.importorskip("pysat.solvers")
    bench = tmp_path / "adder.bench"
    bench.write_text(gc.adder(14))
    out = tmp_path / "adder.json"
    assert main(["compile", str(bench), "-o", str(out), "--no-synthesis"]) == 0
    assert "verification" in capsys.readouterr().out
    for method in ("auto", "local", "sat"):
        assert main(["verify", str(out), str(bench), "--method", method, "--json"]) == 0
        report = json.loads(capsys.readouterr().out)
        assert report["result"] == "equal"
    data = json.loads(out.read_text())
    k = len(data["neurons"]) // 2
    data["neurons"][k]["bias"] += 1
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(data))
    assert main(["verify", str(bad), str(bench), "--json"]) == 1
    report = json.loads(capsys.readouterr().out)
    assert report["result"] == "different" and report["counterexamples"]
    from thresholdc.network.fileformat import load

    c = report["counterexamples"][0]
    net = load(str(bad))
    got = net.decide(np.array([[c["assignment"][u] for u in net.inputs]]))[0]
    assert bool(got[net.output_names.index(c["output"])]) != bool(c["expected"])
    assert c["expected"] == gc.reference("adder", 14, c["assignment"])[c["output"]]


def test_big_tables_within_the_bound_go_local_first(monkeypatch):
    src = source_from_text(gc.multiplier(8), "m8.bench")  # 16 inputs, 544 gates
    net = gate_for_gate(src.gates())
    report = verify_network(net, src)
    assert (report.result, report.method) == ("equal", "local")
    # when local and SAT cannot decide, the exhaustive check still does (within the bound)
    import thresholdc.verification.auto as auto_module
    from thresholdc.verification.report import Report

    # the package is thresholdc.verification, so the module import is not shadowed by the
    # function thresholdc.verify
    monkeypatch.setattr(auto_module, "verify_sat",
                        lambda *a, **k: Report("undecided", "sat", 0, [], notes=["x"]))
    report = verify_network(replace(net, meta={}), src)
    assert (report.result, report.method) == ("equal", "local+sat+exhaustive")
    assert "local: the network records no gate cones (meta.cones)" in report.notes


def test_verification_modules_import_as_modules():
    # thresholdc.verify is the public function; the package is thresholdc.verification, so
    # `import … as` of its modules is not shadowed by it
    import thresholdc
    import thresholdc.verification.auto as auto_module
    import thresholdc.verification.sat.miter as miter_module

    assert callable(thresholdc.verify) and auto_module.verify_network is verify_network
    assert hasattr(miter_module, "prove_equivalent")
