"""Every command that writes a file, killed with SIGKILL at seeded points while it writes.

A dry run in this process records the command's output (the "new" file) and counts the Python
events (calls, returns, C calls) from the moment it creates its temporary file to the end of
the command.  Then, for each seeded event number k, a forked child runs the same command and
SIGKILLs itself at event k: the target must afterwards be absent (when it was absent before),
the complete old file, or the complete new one, byte for byte, never a part of either.  A kill
between creating the temporary file and the rename may leave that hidden
``.thresholdc-*.tmp`` (nothing in the killed process can remove it); nothing else may appear.
"""

from __future__ import annotations

import contextlib
import io
import os
import random
import signal
import sys
import tempfile
from pathlib import Path

import pytest

from tests.fuzz.cases import ROOT
from thresholdc.cli import main

RULES = ROOT / "circuits" / "bike_docks.rules"
DATA = ROOT / "circuits" / "bike_docks.csv"
LABELS = ["--positive", "yes", "--label", "rebalance=van_sent", "--label",
          "mechanic=mechanic_sent"]
KILLS_PER_COMMAND = 5
OLD = b"an older file, which a killed write must leave whole\n"

# (target name, argv) with {d} the folder; n.json and t.json are made once beforehand
COMMANDS = [
    ("c.json", ["compile", "{d}/r.rules", "-o", "{d}/c.json", "--max-inputs", "16"]),
    ("c.onnx", ["compile", "{d}/r.rules", "-o", "{d}/c.onnx", "--max-inputs", "16"]),
    ("c.npz", ["compile", "{d}/r.rules", "-o", "{d}/c.npz", "--max-inputs", "16"]),
    ("e.json", ["export", "{d}/n.json", "-o", "{d}/e.json"]),
    ("e.onnx", ["export", "{d}/n.json", "-o", "{d}/e.onnx"]),
    ("e.npz", ["export", "{d}/n.json", "-o", "{d}/e.npz"]),
    ("tr.json", ["train", "{d}/n.json", "{d}/d.csv", "-o", "{d}/tr.json", "--epochs", "1",
                 *LABELS]),
    ("rep.html", ["report", "{d}/n.json", "{d}/r.rules", "-o", "{d}/rep.html"]),
    ("ex.bench", ["example", "adder4", "-o", "{d}/ex.bench"]),
    ("err.csv", ["score", "{d}/n.json", "{d}/d.csv", "--errors", "{d}/err.csv", *LABELS]),
    ("dr.svg", ["draw", "{d}/n.json", "-o", "{d}/dr.svg"]),
    ("back.rules", ["diff", "{d}/t.json", "{d}/r.rules", "--write-rules", "{d}/back.rules"]),
]
NEEDS = {"c.onnx": "onnx", "e.onnx": "onnx"}


class _Counter:
    """Counts profile events once the command has created its temporary output file, and
    SIGKILLs this process at event ``kill_at`` (None: never)."""

    def __init__(self, kill_at: int | None = None) -> None:
        self.kill_at = kill_at
        self.events = 0
        self.started = False

    def profile(self, frame, event, arg):  # noqa: ARG002
        self.events += 1
        if self.kill_at is not None and self.events >= self.kill_at:
            os.kill(os.getpid(), signal.SIGKILL)

    def run(self, argv: list[str]) -> int:
        real = tempfile.mkstemp

        def mkstemp(*args, **kwargs):
            if not self.started and str(kwargs.get("prefix", "")).startswith(".thresholdc-"):
                self.started = True
                sys.setprofile(self.profile)
            return real(*args, **kwargs)

        tempfile.mkstemp = mkstemp  # type: ignore[assignment]
        try:
            with contextlib.redirect_stdout(io.StringIO()), \
                    contextlib.redirect_stderr(io.StringIO()):
                return main(argv)
        finally:
            sys.setprofile(None)
            tempfile.mkstemp = real  # type: ignore[assignment]


def _killed_run(argv: list[str], kill_at: int) -> int:
    """Run ``argv`` in a forked child that SIGKILLs itself at event ``kill_at``; its status."""
    pid = os.fork()
    if pid == 0:  # the child
        try:
            code = _Counter(kill_at).run(argv)
        except BaseException:  # noqa: BLE001
            code = 99
        os._exit(code)
    _, status = os.waitpid(pid, 0)
    return status


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    d = tmp_path_factory.mktemp("sigkill")
    (d / "r.rules").write_bytes(RULES.read_bytes())
    (d / "d.csv").write_bytes(DATA.read_bytes())
    assert main(["compile", str(d / "r.rules"), "-o", str(d / "n.json"), "--no-synthesis"]) == 0
    with contextlib.redirect_stdout(io.StringIO()):
        assert main(["train", str(d / "n.json"), str(d / "d.csv"), "-o", str(d / "t.json"),
                     "--epochs", "1", *LABELS]) == 0
    return d


@pytest.mark.skipif(not hasattr(os, "fork"), reason="needs fork")
@pytest.mark.parametrize("target,argv", COMMANDS, ids=[c[0] for c in COMMANDS])
def test_sigkill_while_writing_leaves_old_or_new_file(folder, target, argv):
    need = NEEDS.get(target)
    if need:
        pytest.importorskip(need)
    d = Path(folder)
    argv = [a.replace("{d}", str(d)) for a in argv]
    out = d / target
    before = set(os.listdir(d)) - {target}
    if out.exists():
        out.unlink()
    dry = _Counter()
    assert dry.run(argv) == 0
    assert dry.started, "the command wrote its output without the atomic writer"
    new = out.read_bytes()
    assert new and new != OLD
    rng = random.Random(f"sigkill:{target}")
    points = sorted(rng.randrange(1, dry.events + 1) for _ in range(KILLS_PER_COMMAND))
    seen = set()
    for k, kill_at in enumerate(points):
        had_old = k % 2 == 1
        if had_old:
            out.write_bytes(OLD)
        elif out.exists():
            out.unlink()
        status = _killed_run(argv, kill_at)
        assert os.WIFSIGNALED(status) and os.WTERMSIG(status) == signal.SIGKILL, status
        if out.exists():
            got = out.read_bytes()
            assert got == new or (had_old and got == OLD), (target, kill_at, len(got))
            seen.add("new" if got == new else "old")
        else:
            assert not had_old, (target, kill_at)
            seen.add("absent")
        extra = set(os.listdir(d)) - before - {target}
        assert all(n.startswith(".thresholdc-") and n.endswith(".tmp") for n in extra), extra
        for n in extra:  # a killed write's hidden temporary file, cleared for the next run
            os.unlink(d / n)
    assert seen
    out.unlink(missing_ok=True)
