"""Verification of trained (or soft) networks with any activations: :func:`verify_trained`.

First a quick seeded search (:mod:`thresholdc.verification.sampling`: skewed draws of valid
inputs, a few seconds at most) settles the outputs it finds a counterexample for as
``different``; the rest go to a complete method, picked by the network's activations:

* step, ReLU and linear neurons only: the MILP (:mod:`thresholdc.verification.milp`), exact up to
  HiGHS's floating-point verdicts;
* sigmoid or tanh only: first the step-shadow proof
  (:mod:`thresholdc.verification.shadow`, at most 60% of the time): where every unit an output
  reads is proven to have the sign of the same network with step activations, that output is
  decided by the exact MILP of the step network (counterexamples re-checked on the network
  itself);
* then, for any other smooth network and the outputs still open, the MILP with sound
  piecewise-linear envelopes of the activations (three quarters of the time left), then the
  relaxation branch-and-bound (:mod:`thresholdc.verification.relax`) in the rest.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic.source import source_from_text
>>> text = "input c: {red, green, blue}, a\\nhot = c == red\\ny = hot and a\\n"
>>> net = compile_rules(text, activation="sigmoid", layered=True)
>>> report = verify_trained(net, source_from_text(text))
>>> report.result, [o.verdict for o in report.outputs]
('equal', ['equal'])
"""

from __future__ import annotations

import time
from dataclasses import replace
from typing import Any

from ..ir.network import Network
from ..logic import RuleSource
from .domain import check_names, typed_domain
from .milp import milp_domain, run_milp
from .relax import DEFAULT_MAX_NODES, run_relax
from .report import OutputReport, Report
from .sampling import sample_counterexamples
from .shadow import SMOOTH, prove_shadow, step_shadow

__all__ = ["verify_trained"]

_EXACT = {"step", "relu", "linear"}
_MILP_SHARE = 0.75
#: The step-shadow proof's share of the time of a sigmoid/tanh network's complete check.
_SHADOW_SHARE = 0.6
#: The sampling stage's share of the time limit (and at most this many seconds).
_SAMPLE_SHARE, _SAMPLE_SECONDS = 0.1, 5.0


def _restrict(network: Network, source: Any, names: list[str]) -> tuple[Network, Any]:
    """The network and the rules with only the outputs ``names``."""
    outs = tuple(o for o in network.outputs if o.name in names)
    program = replace(source.program, outputs=tuple(o.name for o in outs))
    return replace(network, outputs=outs), RuleSource(source.file, source.text, program)


def verify_trained(
    network: Network,
    source: Any,
    *,
    max_nodes: int = DEFAULT_MAX_NODES,
    time_limit: float = 60.0,
    progress: bool | None = None,
    sample: bool = True,
) -> Report:
    """Decide per output whether a trained (or soft) ``network`` computes ``source``'s rules.

    Parameters
    ----------
    network : Network
        Any activations among step, relu, linear, sigmoid, tanh; typed or Boolean inputs.
    source : RuleSource
        The rule file (same input units and output names).
    max_nodes : int
        Boxes of the relaxation branch-and-bound (soft networks).
    time_limit : float
        Seconds for the whole check.
    progress : bool or None
        Progress bars on a terminal (None: as the command line set them).
    sample : bool
        Run the sampling stage first (False: the complete methods alone, as before it was
        added; the retention benchmark compares both).

    Returns
    -------
    Report
        Method ``milp`` or ``milp+relax`` (prefixed ``sample+`` when sampling found
        counterexamples, or just ``sample`` when it settled every output); per output
        ``equal`` (proven), ``different`` (re-checked counterexamples in the user's column
        names and values) or ``undecided`` with the bound reached.

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic.source import source_from_text
    >>> net = compile_rules("input k: {a, b, c}\\ny = k == a\\n")
    >>> r = verify_trained(net, source_from_text("input k: {a, b, c}\\ny = k == b\\n"))
    >>> r.outputs[0].verdict, sorted(c.assignment["k"] for c in r.outputs[0].counterexamples)
    ('different', ['a', 'b'])
    """
    t0 = time.perf_counter()
    check_names(network, source)
    if not sample:
        return _complete(network, source, max_nodes=max_nodes, time_limit=time_limit,
                         progress=progress)
    domain = milp_domain(network, source)
    found = sample_counterexamples(
        network, source, domain,
        time_limit=min(_SAMPLE_SECONDS, _SAMPLE_SHARE * time_limit), progress=progress)
    sampled = {o.name: OutputReport.differs(o.name, ex)
               for o, ex in zip(network.outputs, found) if ex}
    open_names = [o.name for o in network.outputs if o.name not in sampled]
    if not open_names:
        report = Report.of("sample", domain.size,
                           [sampled[o.name] for o in network.outputs],
                           notes=["counterexamples found by seeded sampling of valid inputs, "
                                  "re-checked on the network and the reference evaluator"])
        report.seconds = time.perf_counter() - t0
        return report
    net1, src1 = (network, source) if not sampled else _restrict(network, source, open_names)
    left = time_limit - (time.perf_counter() - t0)
    rest = _complete(net1, src1, max_nodes=max_nodes, time_limit=left, progress=progress)
    if not sampled:
        rest.seconds = time.perf_counter() - t0
        return rest
    by_name = {o.name: o for o in rest.outputs}
    outputs = [sampled.get(o.name) or by_name[o.name] for o in network.outputs]
    return Report.of("sample+" + rest.method, rest.assignments, outputs, proofs=rest.proofs,
                     notes=["sample: counterexamples of " + ", ".join(sampled) + " found by "
                            "seeded sampling of valid inputs"] + rest.notes,
                     seconds=time.perf_counter() - t0)


def _complete(network: Network, source: Any, *, max_nodes: int, time_limit: float,
              progress: bool | None) -> Report:
    """The MILP, then for sigmoid/tanh the relaxation branch-and-bound on what is open."""
    t0 = time.perf_counter()
    kinds = {n.activation for n in network.neurons}
    if kinds <= _EXACT:
        report = run_milp(network, source, milp_domain(network, source),
                          time_limit=time_limit, progress=progress)
        report.seconds = time.perf_counter() - t0
        return report
    if kinds <= set(SMOOTH):
        shadowed = _via_shadow(network, source, time_limit=time_limit, progress=progress)
        if isinstance(shadowed, str):  # no output covered: say how far the proof got
            left = max(time_limit - (time.perf_counter() - t0), 0.0)
            rest = _complete_soft(network, source, max_nodes=max_nodes, time_limit=left,
                                  progress=progress)
            rest.outputs = [replace(o, bound=f"{shadowed}; {o.bound}")
                            if o.verdict == "undecided" else o for o in rest.outputs]
            rest.seconds = time.perf_counter() - t0
            return rest
        else:
            done, notes, proofs = shadowed
            open_names = [o.name for o in network.outputs if o.name not in done]
            left = time_limit - (time.perf_counter() - t0)
            if not open_names or left <= 0:
                outputs = [done.get(o.name) or OutputReport.undecided(
                    o.name, "shadow: time limit reached") for o in network.outputs]
                return Report.of("milp", typed_domain(network, source).size, outputs,
                                 proofs=proofs, notes=notes,
                                 seconds=time.perf_counter() - t0)
            net1, src1 = _restrict(network, source, open_names)
            rest = _complete_soft(net1, src1, max_nodes=max_nodes, time_limit=left,
                                  progress=progress)
            by_name = {o.name: o for o in rest.outputs}
            outputs = [done.get(o.name) or by_name[o.name] for o in network.outputs]
            return Report.of(rest.method, rest.assignments, outputs,
                             proofs=proofs + rest.proofs,
                             notes=list(dict.fromkeys(notes + rest.notes)),
                             seconds=time.perf_counter() - t0)
    left = max(time_limit - (time.perf_counter() - t0), 0.0)
    report = _complete_soft(network, source, max_nodes=max_nodes, time_limit=left,
                            progress=progress)
    report.seconds = time.perf_counter() - t0
    return report


def _via_shadow(network: Network, source: Any, *, time_limit: float,
                progress: bool | None) -> tuple[dict[str, OutputReport], list[str],
                                                list[str]] | str:
    """Decide the outputs whose units are all proven to decide as the step shadow's
    (:func:`~thresholdc.verification.shadow.prove_shadow`) by the MILP of the shadow, each
    point re-checked on the network itself.  When no output is covered, the bound the proof
    reached (units proven, why it stopped)."""
    t0 = time.perf_counter()
    domain = typed_domain(network, source)
    proof = prove_shadow(network, source, domain, time_limit=time_limit * _SHADOW_SHARE,
                         progress=progress)
    covered = [o.name for k, o in enumerate(network.outputs) if proof.covers(network, k)]
    if not covered:
        why = f", {proof.stopped}" if proof.stopped else ""
        return (f"shadow: {len(proof.proven)} of {len(network.neurons)} units proven to have "
                f"their step shadow's sign ({proof.seconds:.1f} s{why})")
    net1, src1 = _restrict(network, source, covered)
    left = time_limit * (_SHADOW_SHARE + (1 - _SHADOW_SHARE) / 2) - (time.perf_counter() - t0)
    rep = run_milp(step_shadow(net1), src1, domain, time_limit=max(left, 1.0),
                   progress=progress, check=net1)
    done = {o.name: o for o in rep.outputs if o.verdict != "undecided"}
    proofs = []
    equal = [o.name for o in rep.outputs if o.verdict == "equal"]
    if equal:
        proofs.append(
            f"milp: on every valid input each of the {len(proof.proven)} units needed has the "
            f"sign of its step shadow's (unit-by-unit MILP bounds, {proof.solves} solves), "
            f"so the network decides as its step shadow, and no valid "
            f"input makes the shadow differ from the rules on {', '.join(equal)}")
    notes = ["the step shadow: the network with step activations, checked by MILP; "
             "counterexamples re-checked on the network itself"] + rep.notes
    return done, notes, proofs


def _complete_soft(network: Network, source: Any, *, max_nodes: int, time_limit: float,
                   progress: bool | None) -> Report:
    """The MILP with envelopes, then the relaxation branch-and-bound on what is open."""
    t0 = time.perf_counter()
    first = run_milp(network, source, milp_domain(network, source),
                     time_limit=time_limit * _MILP_SHARE, progress=progress)
    open_names = [o.name for o in first.outputs if o.verdict == "undecided"]
    left = time_limit - (time.perf_counter() - t0)
    if not open_names or left <= 0:
        first.seconds = time.perf_counter() - t0
        return first
    net2, src2 = _restrict(network, source, open_names)
    second = run_relax(net2, src2, typed_domain(net2, src2), max_nodes=max_nodes,
                       time_limit=left, progress=progress)
    by_name = {o.name: o for o in second.outputs}
    outputs = []
    for o in first.outputs:
        o2 = by_name.get(o.name)
        if o2 is not None and o2.verdict == "undecided" and o.bound:
            o2 = replace(o2, bound=f"milp: {o.bound}; relax: {o2.bound}")
        outputs.append(o2 if o2 is not None else o)
    notes = list(dict.fromkeys(first.notes + second.notes))
    return Report.of("milp+relax", first.assignments, outputs,
                     proofs=first.proofs + second.proofs, notes=notes,
                     seconds=time.perf_counter() - t0)
