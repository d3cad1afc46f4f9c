"""Same input and options give byte-identical output, whatever the process's string-hash seed
(set and dict-of-set order): every bundled example compiled as a step and a sigmoid network
and verified, in two interpreters with different PYTHONHASHSEED values; and the suite's own
hypothesis profile is the derandomised one with no example database."""

from __future__ import annotations

import ast
import os
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import settings

ROOT = Path(__file__).resolve().parents[1]

CHILD = r"""
import hashlib, json, sys
from pathlib import Path
from thresholdc.compiler import compile_rules
from thresholdc.network.fileformat import dumps
from thresholdc.verification import verify_network
from thresholdc.logic import load_source
def timeless(obj):  # a report's seconds are the one thing that may differ
    if isinstance(obj, dict):
        return {k: timeless(v) for k, v in obj.items() if k != "seconds"}
    return [timeless(v) for v in obj] if isinstance(obj, list) else obj
out = {}
for path in sorted(Path(sys.argv[1]).glob("*.rules")):
    text = path.read_text(encoding="utf-8")
    for opts in ({}, {"activation": "sigmoid"}):
        net = compile_rules(text, **opts)
        report = verify_network(net, load_source(str(path)))
        key = f"{path.name} {sorted(opts.items())}"
        data = dumps(net) + repr(timeless(report.to_dict()))
        out[key] = hashlib.sha256(data.encode()).hexdigest()
print(json.dumps(out, sort_keys=True))
"""


def _run(seed: str) -> str:
    env = dict(os.environ, PYTHONPATH=str(ROOT), PYTHONHASHSEED=seed)
    proc = subprocess.run([sys.executable, "-c", CHILD, str(ROOT / "circuits")], env=env,
                          capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr[-2000:]
    return proc.stdout


@pytest.mark.slow
def test_output_does_not_depend_on_the_hash_seed():
    first, second = _run("1"), _run("2")
    assert first.count('"') > 20  # something was compiled
    assert first == second


def test_the_ci_profile_is_deterministic(pytestconfig):
    ci = settings.get_profile("ci")
    assert ci.derandomize and ci.database is None
    if pytestconfig.getoption("hypothesis_profile", None) in (None, "ci"):
        current = settings()  # the profile every test without its own @settings runs under
        assert current.derandomize and current.database is None


def test_no_test_overrides_the_profile_into_randomness():
    # a @settings(derandomize=False) or a database of its own would escape the ci profile
    found = []
    for path in sorted((ROOT / "tests").rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.Call) and getattr(node.func, "id", None) == "settings":
                for kw in node.keywords:
                    if kw.arg == "database" or (kw.arg == "derandomize" and not (
                            isinstance(kw.value, ast.Constant) and kw.value.value is True)):
                        found.append(f"{path.relative_to(ROOT)}:{node.lineno}")
    assert found == []
