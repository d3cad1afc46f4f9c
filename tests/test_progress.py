"""Progress bars: shown on a terminal for long steps, never in a pipe, a test log or --json.

A terminal is stood in for by a text stream whose ``isatty()`` is True; ``progress.DELAY``
(the seconds a step runs before its bar appears) is set to 0 so that small inputs show bars.
Each test runs in its own ``contextvars`` context, so turning bars on leaks nowhere.
"""

from __future__ import annotations

import contextvars
import importlib.util
import io

import pytest

from thresholdc import compile_rules, progress
from thresholdc.cli import main
from thresholdc.ir.gates import Gate, GateGraph
from thresholdc.logic import source_from_text
from thresholdc.synth.collapsing import collapse
from thresholdc.verification import verify_bounds, verify_local

RULES = ("input a, b, c, d\noutput y, z\nt = a and (b or c)\ny = t xor d\n"
         "z = atleast(2, a, b, c, d)\n")


class _Terminal(io.StringIO):
    """A stderr that says it is a terminal."""

    def isatty(self) -> bool:
        return True


def _stderr_of(monkeypatch, stream: io.StringIO, work, *, on: bool = True,
               delay: float = 0.0) -> str:
    """What ``work()`` writes on ``stream`` as stderr, bars turned on (``on``) in a fresh
    context."""
    monkeypatch.setattr("sys.stderr", stream)
    monkeypatch.setattr(progress, "DELAY", delay)

    def run():
        progress.enabled(on)
        work()

    contextvars.copy_context().run(run)
    return stream.getvalue()


def _gates() -> GateGraph:
    return GateGraph.build(["a", "b", "c"], [("y", "y")], [
        ("t", Gate("or", ("b", "c"))), ("y", Gate("and", ("a", "t")))])


def test_synthesis_shows_its_bars_on_a_terminal(monkeypatch):
    err = _stderr_of(monkeypatch, _Terminal(), lambda: collapse(_gates()))
    for step in ("synthesis: cuts", "synthesis: candidates", "synthesis: cover"):
        assert step in err


@pytest.mark.parametrize("stream,on", [(io.StringIO(), True), (_Terminal(), False)])
def test_no_bar_in_a_pipe_or_when_bars_are_off(monkeypatch, stream, on):
    assert _stderr_of(monkeypatch, stream, lambda: collapse(_gates()), on=on) == ""


def test_a_quick_step_shows_no_bar_even_on_a_terminal(monkeypatch):
    # The bar of a step appears only after DELAY seconds (2 s in the program).
    assert _stderr_of(monkeypatch, _Terminal(), lambda: collapse(_gates()), delay=60.0) == ""


def test_local_verification_shows_a_bar_over_its_cones(monkeypatch):
    net = compile_rules(RULES)
    src = source_from_text(RULES, "p.rules")
    err = _stderr_of(monkeypatch, _Terminal(), lambda: verify_local(net, src))
    assert "verification: cones" in err


def test_branch_and_bound_follows_the_command_line_setting(monkeypatch):
    net = compile_rules(RULES, activation="sigmoid")
    src = source_from_text(RULES, "p.rules")
    assert verify_bounds(net, src).result == "equal"  # the bar never changes the verdict
    err = _stderr_of(monkeypatch, _Terminal(), lambda: verify_bounds(net, src))
    assert "branch-and-bound" in err
    assert _stderr_of(monkeypatch, _Terminal(), lambda: verify_bounds(net, src, progress=False)
                      ) == ""


@pytest.mark.skipif(importlib.util.find_spec("pysat") is None, reason="python-sat not installed")
def test_the_sat_solve_shows_the_time_used_and_the_outputs_decided(monkeypatch):
    from thresholdc.verification.sat.miter import solve_cnf

    def work():
        messages, finished, _, _ = solve_cnf([[1], [2, 3], [-2], [-3]], solver="minisat22",
                                             time_limit=10)
        assert finished

    err = _stderr_of(monkeypatch, _Terminal(), work)
    assert "sat: solving" in err and "1/1 outputs decided" in err


@pytest.mark.parametrize("extra,stream,shown", [
    ([], _Terminal, True),
    (["--json"], _Terminal, False),
    ([], io.StringIO, False),
])
def test_the_compile_command_shows_bars_on_a_terminal_only(monkeypatch, tmp_path, capsys,
                                                             extra, stream, shown):
    src = tmp_path / "p.rules"
    src.write_text(RULES)
    codes = []

    def work():
        codes.append(main(["compile", str(src), "-o", str(tmp_path / "n.json"), *extra]))

    err = _stderr_of(monkeypatch, stream(), work, on=False)  # main turns bars on itself
    assert codes == [0]
    assert ("synthesis: candidates" in err) is shown
    if not shown:
        assert err == ""
