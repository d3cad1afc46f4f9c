"""``thresholdc verify TRAINED.json RULES`` on a typed domain too large to enumerate: auto
reaches verify_trained, prints per-output verdicts, counterexample rows in the rule file's
column names and values, and the bound reached when a limit stops it."""

from __future__ import annotations

import json

from tests.verify.retention_cases import is_counterexample
from thresholdc.api import load
from thresholdc.cli import main

NAMES = [f"c{i}" for i in range(12)]
# Bird-survey tally (an invented scenario): twelve transects graded a-d; 4^12 = 16,777,216
# valid assignments, above auto's enumeration bound.
TEXT = ("input " + ", ".join(f"{n}: {{a, b, c, d}}" for n in NAMES) + "\n"
        "output flag, note\n"
        "hot = atleast(2, c0 == a, c1 == b, c2 in {a, c})\n"
        "flag = hot and not (c3 == d)\n"
        "note = c4 == b or (c5 == a and c6 != d)\n")
WRONG = TEXT.replace("c3 == d", "c3 == c")


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    return code, capsys.readouterr().out


def test_trained_sigmoid_network_through_the_command_line(tmp_path, capsys):
    right, wrong, net = tmp_path / "right.rules", tmp_path / "wrong.rules", tmp_path / "s.json"
    right.write_text(TEXT)
    wrong.write_text(WRONG)
    assert run(capsys, "compile", right, "--activation", "sigmoid", "-o", net)[0] == 0
    code, out = run(capsys, "verify", net, right)
    assert code == 0 and "method: milp" in out
    rows = {line.split()[0]: line.split()[1] for line in out.splitlines()
            if line.strip().split()[:1] in (["flag"], ["note"])}
    assert rows == {"flag": "equal", "note": "equal"}

    code, out = run(capsys, "verify", net, wrong, "--json")
    data = json.loads(out)
    assert code == 1 and data["result"] == "different"
    verdicts = {o["name"]: o["verdict"] for o in data["outputs"]}
    assert verdicts == {"flag": "different", "note": "equal"}
    (flag,) = [o for o in data["outputs"] if o["name"] == "flag"]
    assert flag["counterexamples"]
    for row in flag["counterexamples"]:  # {column: value} in the rule file's names
        assert row["c3"] in ("c", "d")  # the planted difference
        assert is_counterexample(load(str(net)), WRONG, "flag", row)

    code, out = run(capsys, "verify", net, wrong)
    assert code == 1
    shown = [line for line in out.splitlines() if "flag expected" in line]
    assert shown and all("c3=c" in line or "c3=d" in line for line in shown)

    code, out = run(capsys, "verify", net, right, "--time-limit", "0.001")
    assert code == 2
    flag_line = next(line for line in out.splitlines() if "flag not decided:" in line)
    assert "shadow:" in flag_line and "rules = 1: time limit" in flag_line
    assert "note not decided:" in out

