"""Per definition: each definition's verdict against its exhaustive truth table.

The network (compiled without synthesis, so every definition keeps a neuron of its name) is
checked against one-place mutants of its rule file (``tests/verify/mutants.py``).  The truth
per definition: the unit named after it (``Network.forward``) against the reference evaluator
(``thresholdc/logic/reference.py``) of that definition on all 2^n rows.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from tests.verify.mutants import mutate, random_rules
from thresholdc.compiler import compile_rules, compile_source
from thresholdc.errors import UsageError
from thresholdc.logic import reference, source_from_text
from thresholdc.verification import OutputReport, definition_units, verify_definitions

pytest.importorskip("pysat.solvers")


def truth(net, src, names):
    n = len(src.inputs)
    X = ((np.arange(2**n)[:, None] >> np.arange(n)) & 1).astype(np.uint8)
    perm = [list(src.inputs).index(u) for u in net.inputs]
    ref = reference.evaluate(dataclasses.replace(src.program, outputs=tuple(names)), X)
    _, A = net.forward(X[:, perm].astype(float))
    pos = {nr.name: j for j, nr in enumerate(net.neurons)}
    units = definition_units(net, src)
    col = {u: i for i, u in enumerate(net.inputs)}
    out = {}
    for k, name in enumerate(names):
        u = units[name]
        got = A[:, pos[u]] > 0.5 if u in pos else X[:, perm][:, col[u]] > 0.5
        out[name] = int((got != ref[:, k]).sum())
    return out


@pytest.mark.parametrize("seed", range(10))
def test_definition_verdicts_against_truth(seed):
    tree = random_rules(100 + seed, n_inputs=6)
    net = compile_source(source_from_text(tree.text(), "o.rules"), synthesis=False,
                         verify="none").network
    for m in range(4):
        mutant, _ = mutate(tree, seed * 100 + m)
        src = source_from_text(mutant.text(), "m.rules")
        units = definition_units(net, src)
        want = truth(net, src, list(units))
        for method in ("exhaustive", "sat", "auto"):
            rep = verify_definitions(net, src, method=method)
            assert [o.name for o in rep.outputs] == list(src.program.order)
            for o in rep.outputs:
                if o.name not in units:
                    assert o.verdict == "undecided" and "no unit" in o.bound
                    continue
                assert o.verdict == ("different" if want[o.name] else "equal"), (method, o)
                if o.exact:
                    assert o.disagreements == want[o.name]


def test_a_backend_can_be_plugged_in():
    text = "input a, b, c\nm = a and b\ny = m or c\n"
    net = compile_rules(text, synthesis=False)
    seen = []

    def backend(network, source, names):
        seen.append(list(names))
        return {n: OutputReport.undecided(n, "test backend: no method") for n in names}

    rep = verify_definitions(net, source_from_text(text), backend=backend)
    assert seen == [["m", "y"]]
    assert rep.result == "undecided" and rep.method == "definitions:backend"
    assert all(o.bound == "test backend: no method" for o in rep.outputs)


def test_soft_network_per_definition():
    text = "input a, b, c, d\nm = atleast(2, a, b, c)\ny = m xor d\n"
    net = compile_rules(text, synthesis=False, activation="sigmoid")
    wrong = source_from_text(text.replace("atleast(2", "atleast(3"))
    rep = verify_definitions(net, wrong)
    # m differs where exactly two of a, b, c are true (3 rows of 8, d free: 6 of 16)
    assert rep.verdicts() == {"m": "different", "y": "different"}
    assert rep.outputs[0].disagreements == 6


def test_refusals():
    text = "input a, b, c\nm = a and b\ny = m or c\n"
    net = compile_rules(text, synthesis=False)
    with pytest.raises(UsageError, match="not a definition"):
        verify_definitions(net, source_from_text(text), names=["nope"])
    bench = source_from_text("INPUT(a)\nOUTPUT(y)\ny = NOT(a)\n", "n.bench")
    with pytest.raises(UsageError, match="netlist has no definitions"):
        verify_definitions(net, bench)
