"""Retention checks of trained-like typed networks: verify_trained beside today's verify_bounds.

Networks (all from rule files of our own invented scenarios, built by
benchmarks/trained_like.py, deterministic):

* ``seed bank``: circuits/seed_bank.rules, 60 categorical inputs of 3-4 values (200 one-hot
  units), 2 outputs; as compiled (step), its exact ReLU form, dense perturbed step, and dense
  sigmoid networks (66 hidden units) perturbed as a short fine-tuning would, from none to
  enough noise that the rules are no longer kept;
* ``tool shed``: a 10-input categorical rule set small enough for the old method.

From one run it prints, per network, the per-output verdicts and time of
:func:`thresholdc.verification.trained.verify_trained` (sampling, then MILP / relaxation
branch-and-bound), of the same without its sampling stage (today's method before it), the
result and time of :func:`thresholdc.verification.bounds.verify_bounds` (interval branch-and-bound,
stopped at ``--limit`` seconds), and the ratios.  A method that stops at its limit
with an output still undecided is printed as "> limit" seconds (its stop time is not a finish
time), and a ratio against it as "> N×" (or "< N×" when ours is the one left open).
Timings are wall-clock on a shared machine, with the CPU seconds beside ours (the process and
its workers: a figure the load of other work inflates less); not a test.

``--baseline DIR`` runs, per network and in the same run, another checkout's
``verify_trained`` in a subprocess (``git archive REV | tar -x -C DIR``): the code of an
earlier commit on the same networks (its own benchmarks/trained_like.py builds them), printed
instead of the without-sampling column.

    python3 benchmarks/retention_bench.py [--limit 10] [--budget 60] [--only 'tool shed']
        [--baseline DIR]
"""

from __future__ import annotations

import argparse
import pathlib
import sys
import time

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))

from trained_like import step_like, trained_like  # noqa: E402

from thresholdc.compiler import compile_rules  # noqa: E402
from thresholdc.logic.source import source_from_text  # noqa: E402
from thresholdc.network import to_relu  # noqa: E402
from thresholdc.verification import verify_trained  # noqa: E402
from thresholdc.verification.bounds import verify_bounds  # noqa: E402

ROOT = pathlib.Path(__file__).resolve().parents[1]

TOOL_SHED = """\
# Tool-shed lending (an invented scenario): ten categorical facts decide a loan.
input kind: {hand, power, garden}, state: {good, worn, broken}, member: {full, trial, none}
input days: {one, three, week}, deposit: {paid, owed}, season: {spring, summer, autumn}
input trained: {yes, no}, returns: {on_time, late, lost}, stock: {many, few, last}
input helper: {yes, no}
output lend, warn
lend = member != none and state != broken and returns != lost
       and (kind != power or trained == yes)
       and atmost(1, days == week, stock == last, deposit == owed)
warn = lend and atleast(2, state == worn, returns == late, season == summer, helper == no)
"""


def cases():
    seed_text = (ROOT / "circuits" / "seed_bank.rules").read_text()
    shed = TOOL_SHED.replace("\n       and", " and")
    yield "seed bank, compiled step", compile_rules(seed_text, verify="none"), seed_text
    yield ("seed bank, exact ReLU form", to_relu(compile_rules(seed_text, verify="none")),
           seed_text)
    yield ("seed bank, dense step, perturbed", step_like(seed_text, link=0.005, rel=0.02),
           seed_text)
    for link, rel in ((0.0, 0.0), (0.002, 0.01), (0.005, 0.02), (0.02, 0.05)):
        yield (f"seed bank, dense sigmoid, noise {link}/{rel}",
               trained_like(seed_text, link=link, rel=rel), seed_text)
    for link, rel in ((0.0, 0.0), (0.02, 0.05), (0.2, 0.3)):
        yield (f"tool shed, dense sigmoid, noise {link}/{rel}",
               trained_like(shed, link=link, rel=rel), shed)


def _time(report, seconds: float, limit: float) -> str:
    """A finish time, or "> limit" where a limit stopped the method with outputs open."""
    if any(o.verdict == "undecided" for o in report.outputs) or not report.outputs:
        return f"> {limit:g}"
    return f"{seconds:.2f}"


def _ratio(old, old_s: float, old_limit: float, new, new_s: float, new_limit: float) -> str:
    """old / new, as "> N×" or "< N×" where one side stopped at its limit undecided."""
    old_open = any(o.verdict == "undecided" for o in old.outputs) or not old.outputs
    new_open = any(o.verdict == "undecided" for o in new.outputs) or not new.outputs
    if old_open and new_open:
        return "both open"
    if old_open:
        return f"> {old_limit / new_s:.1f}x"
    if new_open:
        return f"< {old_s / new_limit:.2f}x"
    return f"{old_s / new_s:.2f}x"


_BASELINE = '''
import json, pathlib, resource, sys, time
root = pathlib.Path(sys.argv[1])
sys.path[:0] = [str(root), str(root / "benchmarks")]
import retention_bench as rb
from thresholdc.logic.source import source_from_text
from thresholdc.verification import verify_trained
for name, net, text in rb.cases():
    if name == sys.argv[2]:
        t0 = time.perf_counter()
        rep = verify_trained(net, source_from_text(text, "bench.rules"),
                             time_limit=float(sys.argv[3]), progress=False)
        wall = time.perf_counter() - t0
        print(json.dumps({"method": rep.method, "wall": wall,
                          "verdicts": [[o.name, o.verdict] for o in rep.outputs]}))
'''


class _Run:
    """A baseline run's result, shaped like a report for the printing helpers."""

    def __init__(self, data: dict) -> None:
        self.method = data["method"]
        self.outputs = [type("O", (), {"name": n, "verdict": v}) for n, v in data["verdicts"]]


def _baseline(directory: str, name: str, budget: float):
    """``(report-like, seconds)`` of the checkout ``directory``'s verify_trained."""
    import json
    import subprocess

    out = subprocess.run([sys.executable, "-c", _BASELINE, directory, name, str(budget)],
                         capture_output=True, text=True, cwd=directory, check=True)
    data = json.loads(out.stdout.strip().splitlines()[-1])
    return _Run(data), data["wall"]


def _cpu() -> float:
    """CPU seconds of this process and its finished children."""
    import resource

    me = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime


def _verdicts(report) -> str:
    return " ".join(f"{o.name}={o.verdict}" for o in report.outputs)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--limit", type=float, default=10.0, help="seconds for verify_bounds")
    ap.add_argument("--budget", type=float, default=60.0, help="seconds for verify_trained")
    ap.add_argument("--only", default="", help="run only the networks whose name has this text")
    ap.add_argument("--baseline", default="",
                    help="a checkout of earlier code: its verify_trained beside ours")
    args = ap.parse_args()
    other = "baseline checkout" if args.baseline else "without sampling (today)"
    print(f"{'network':38} {'hid':>3}  {'verify_trained (ours)':40} {'s':>7} {'cpu s':>6}  "
          f"{other:40} {'s':>7} {'it/ours':>10}  "
          f"{'verify_bounds (old)':34} {'s':>7} {'old/ours':>9}")
    for name, net, text in cases():
        if args.only not in name:
            continue
        src = source_from_text(text, "bench.rules")
        hidden = len(net.neurons) - len(net.outputs)
        t0, c0 = time.perf_counter(), _cpu()
        rep = verify_trained(net, src, time_limit=args.budget, progress=False)
        ours, cpu = time.perf_counter() - t0, _cpu() - c0
        if args.baseline:
            today, today_s = _baseline(args.baseline, name, args.budget)
        else:
            t0 = time.perf_counter()
            today = verify_trained(net, src, time_limit=args.budget, progress=False,
                                   sample=False)
            today_s = time.perf_counter() - t0
        t0 = time.perf_counter()
        old = verify_bounds(net, src, time_limit=args.limit)
        theirs = time.perf_counter() - t0
        print(f"{name:38} {hidden:3d}  {rep.method + ': ' + _verdicts(rep):40} "
              f"{_time(rep, ours, args.budget):>7} {cpu:6.1f}  "
              f"{today.method + ': ' + _verdicts(today):40} "
              f"{_time(today, today_s, args.budget):>7} "
              f"{_ratio(today, today_s, args.budget, rep, ours, args.budget):>10}  "
              f"{_verdicts(old):34} {_time(old, theirs, args.limit):>7} "
              f"{_ratio(old, theirs, args.limit, rep, ours, args.budget):>9}", flush=True)
        for other in (today, old):  # decided verdicts must agree
            for a, b in zip(rep.outputs, other.outputs):
                if "undecided" not in (a.verdict, b.verdict):
                    assert a.verdict == b.verdict, (name, a.name, a.verdict, b.verdict)


if __name__ == "__main__":
    main()
