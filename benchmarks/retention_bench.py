"""Retention checks of trained-like typed networks: verify_trained beside today's verify_bounds.

Networks (all from rule files of our own invented scenarios, built by
benchmarks/trained_like.py, deterministic):

* ``seed bank``: circuits/seed_bank.rules, 60 categorical inputs of 3-4 values (200 one-hot
  units), 2 outputs; as compiled (step), its exact ReLU form, dense perturbed step, and dense
  sigmoid networks (66 hidden units) perturbed as a short fine-tuning would, from none to
  enough noise that the rules are no longer kept;
* ``tool shed``: a 10-input categorical rule set small enough for the old method.

From one run it prints, per network, the per-output verdicts and time of
:func:`thresholdc.verification.retention.verify_trained` (MILP / relaxation branch-and-bound), the
result and time of :func:`thresholdc.verification.bounds.verify_bounds` (interval branch-and-bound,
stopped at ``--limit`` seconds and then printed as "> limit"), and the ratio old / new.
Timings are wall-clock on a shared machine; not a test.

    python3 benchmarks/retention_bench.py [--limit 30] [--budget 60]
"""

from __future__ import annotations

import argparse
import pathlib
import sys
import time

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))

from trained_like import step_like, trained_like  # noqa: E402

from thresholdc.compiler import compile_rules  # noqa: E402
from thresholdc.errors import VerificationUndecided  # noqa: E402
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


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--limit", type=float, default=30.0, help="seconds for verify_bounds")
    ap.add_argument("--budget", type=float, default=60.0, help="seconds for verify_trained")
    args = ap.parse_args()
    print(f"{'network':44} {'hidden':>6}  {'verify_trained':44} {'s':>6}  "
          f"{'verify_bounds':>13} {'s':>8}  {'old/new':>8}")
    for name, net, text in cases():
        src = source_from_text(text, "bench.rules")
        hidden = len(net.neurons) - len(net.outputs)
        t0 = time.perf_counter()
        rep = verify_trained(net, src, time_limit=args.budget)
        ours = time.perf_counter() - t0
        verdicts = " ".join(f"{o.name}={o.verdict}" for o in rep.outputs)
        t0 = time.perf_counter()
        try:
            old = verify_bounds(net, src, time_limit=args.limit).result
            theirs = time.perf_counter() - t0
            shown, ratio = f"{theirs:8.2f}", f"{theirs / ours:8.2f}"
        except VerificationUndecided:
            old = "undecided"
            shown, ratio = f"> {args.limit:g}".rjust(8), f"> {args.limit / ours:.1f}".rjust(8)
        print(f"{name:44} {hidden:6d}  {rep.method + ': ' + verdicts:44} {ours:6.2f}  "
              f"{old:>13} {shown}  {ratio}", flush=True)
        if old in ("equal", "different") and rep.result in ("equal", "different"):
            assert old == rep.result, (name, old, rep.result)


if __name__ == "__main__":
    main()
