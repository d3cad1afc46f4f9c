"""Start-up cost of the command line, beside bare Python and ``import numpy`` from the same run.

Import time is the sum of the "self" column of ``python -X importtime`` (every module the
interpreter loads, the interpreter's own start-up modules included), the median of
``--repeat`` fresh interpreters per case after one warm-up run.  thresholdc's bytecode is kept
in a temporary ``-X pycache_prefix`` as an installed package keeps it (a checkout run with
``PYTHONDONTWRITEBYTECODE=1`` compiles every module from source each time, which
``--source`` measures instead).  Cases:

- ``python -c pass`` and ``import numpy``: the peers;
- ``import thresholdc`` and ``thresholdc --help``;
- ``compile`` of an 8-input rule file (circuits/greenhouse.rules), split into what is loaded
  before the command starts working (the command line and the compile command's modules) and
  the whole run (the work also loads what it uses: sympy to simplify two definitions, scipy's
  HiGHS for the helper-neuron programs of synthesis, scipy.sparse for exhaustive
  verification);

then the largest contributors of each thresholdc case, by top-level package.  Wall time of
the whole process is printed beside it for reference (the machine may be shared).

    python3 benchmarks/startup_bench.py [--repeat 5] [--top 8] [--source]
"""

from __future__ import annotations

import argparse
import os
import pathlib
import statistics
import subprocess
import sys
import tempfile
import time
from collections import Counter

ROOT = pathlib.Path(__file__).resolve().parents[1]
RULES = ROOT / "circuits" / "greenhouse.rules"
#: A small stdlib module nothing else loads: the line where it appears in the listing splits
#: "loaded before the command runs" from "loaded while it works".
MARKER = "colorsys"


def importtime(code: list[str], pycache: str | None = None
               ) -> tuple[list[tuple[str, int]], float]:
    """``(module, self microseconds)`` in load order for ``python -X importtime *code``, and
    the wall time of the process in seconds; bytecode is kept under ``pycache`` if given."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    flags = ["-X", "importtime"]
    if pycache is not None:
        env.pop("PYTHONDONTWRITEBYTECODE", None)
        flags += ["-X", f"pycache_prefix={pycache}"]
    start = time.perf_counter()
    done = subprocess.run([sys.executable, *flags, *code], capture_output=True,
                          text=True, env=env, cwd=ROOT)
    wall = time.perf_counter() - start
    if done.returncode != 0:
        raise SystemExit(f"startup_bench: {' '.join(code)} failed:\n{done.stderr[-2000:]}")
    return parse_importtime(done.stderr), wall


def parse_importtime(stderr: str) -> list[tuple[str, int]]:
    """The ``(module, self µs)`` rows of an ``-X importtime`` listing.

    >>> parse_importtime("import time:       120 |        300 |   numpy._core\\n")
    [('numpy._core', 120)]
    """
    rows = []
    for line in stderr.splitlines():
        if not line.startswith("import time:"):
            continue
        fields = line[len("import time:"):].split("|")
        if len(fields) == 3 and fields[0].strip().isdigit():
            rows.append((fields[2].strip(), int(fields[0])))
    return rows


def before_marker(rows: list[tuple[str, int]]) -> list[tuple[str, int]]:
    """The rows loaded before :data:`MARKER`."""
    names = [name for name, _ in rows]
    return rows[: names.index(MARKER)] if MARKER in names else rows


def by_package(rows: list[tuple[str, int]]) -> Counter[str]:
    """Self time summed by top-level package (``scipy.optimize._linprog`` counts to scipy)."""
    total: Counter[str] = Counter()
    for name, us in rows:
        total[name.split(".")[0]] += us
    return total


def cases(out: str) -> dict[str, tuple[list[str], bool]]:
    """Label -> (interpreter arguments, keep only the rows before the marker)."""
    compile_argv = ["compile", str(RULES), "-o", out]
    start = ("import sys, thresholdc.cli as c\n"
             "c.build_parser(['compile'])\n"
             f"import {MARKER}\n"
             f"sys.exit(c.main({compile_argv!r}))\n")
    return {
        "python -c pass": (["-c", "pass"], False),
        "import numpy": (["-c", "import numpy"], False),
        "import thresholdc": (["-c", "import thresholdc"], False),
        "thresholdc --help": (["-m", "thresholdc", "--help"], False),
        "compile 8 inputs: start": (["-c", start], True),
        "compile 8 inputs: whole run": (["-m", "thresholdc", *compile_argv], False),
    }


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--top", type=int, default=8, help="contributors listed per case")
    ap.add_argument("--source", action="store_true",
                    help="no bytecode cache for thresholdc: every module compiled from source")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        pycache = None if args.source else os.path.join(tmp, "pycache")
        table = {}
        for label, (code, cut) in cases(os.path.join(tmp, "net.json")).items():
            totals, walls, last = [], [], []
            importtime(code, pycache)  # warm-up: bytecode, grammar cache, file system cache
            for _ in range(args.repeat):
                rows, wall = importtime(code, pycache)
                last = before_marker(rows) if cut else rows
                totals.append(sum(us for _, us in last) / 1e3)
                walls.append(wall * 1e3)
            table[label] = (statistics.median(totals), statistics.median(walls), last)
    bare = table["python -c pass"][0]
    numpy = table["import numpy"][0]
    how = "compiled from source" if args.source else "bytecode cached"
    print(f"import time (ms, median of {args.repeat}; sum of -X importtime self times; "
          f"thresholdc {how})")
    print(f"{'case':30} {'import ms':>10} {'× bare':>8} {'× numpy':>8} {'wall ms':>9}")
    for label, (ms, wall, _) in table.items():
        print(f"{label:30} {ms:10.1f} {ms / bare:8.2f} {ms / numpy:8.2f} {wall:9.0f}")
    for label, (_, _, rows) in table.items():
        if "thresholdc" not in label and "compile" not in label:
            continue
        top = ", ".join(f"{name} {us / 1e3:.0f}" for name, us in
                        by_package(rows).most_common(args.top))
        print(f"\n{label}: top packages (ms, last run): {top}")


if __name__ == "__main__":
    main()
