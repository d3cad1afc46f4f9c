"""Write circuits/bike_docks.csv: invented mornings at bike-share docks (not a benchmark).

The flags are drawn at random with a fixed seed.  The decisions are what the dispatchers did,
which is the written rules of circuits/bike_docks.rules with one habit of their own (they park
extra bikes at every event, weekday or not) and about 4% of decisions that follow no rule.
Run: ``python benchmarks/training_make_example.py`` (writes the same file every time).
"""

from __future__ import annotations

import os

import numpy as np

from thresholdc.logic.source import source_from_text

HERE = os.path.dirname(os.path.abspath(__file__))
RULES = os.path.join(HERE, "..", "circuits", "bike_docks.rules")
OUT = os.path.join(HERE, "..", "circuits", "bike_docks.csv")
PRACTICE = ("(event_near and (weekend or school_out))", "event_near")
ROWS, NOISE, SEED = 240, 0.04, 20260517


def main() -> None:
    text = open(RULES, encoding="utf-8").read()
    assert PRACTICE[0] in text
    practice = source_from_text(text.replace(*PRACTICE), "practice.rules")
    rng = np.random.default_rng(SEED)
    X = (rng.random((ROWS, len(practice.inputs))) < 0.4).astype(int)
    y = practice.evaluate(X)
    y = np.where(rng.random(y.shape) < NOISE, ~y, y)
    header = ["morning", "dock", *practice.inputs, "van_sent", "mechanic_sent", "extra_bikes"]
    days = rng.integers(1, 29, size=ROWS)
    docks = rng.integers(100, 160, size=ROWS)
    lines = [",".join(header)]
    for k in range(ROWS):
        flags = [str(v) for v in X[k]]
        said = ["yes" if v else "no" for v in y[k]]
        lines.append(",".join([f"2025-03-{days[k]:02d}", f"D{docks[k]}", *flags, *said]))
    with open(OUT, "w", encoding="utf-8", newline="\n") as fh:
        fh.write("\n".join(lines) + "\n")
    print(f"wrote {OUT}: {ROWS} rows")


if __name__ == "__main__":
    main()
