"""Reading a large data file: ``thresholdc score`` on 10^6 rows beside plain Python's csv
module from the same run.

The data: ``circuits/bike_docks.csv`` (19 columns) repeated to ``--rows`` data rows, written
once to a temporary folder.  Each row of the table runs in its own process (so its peak memory
is its own, ``VmHWM``; seconds count the work after the imports):

- ``thresholdc score``: the whole command (read the network and the table, encode the input
  units, run the network, score two labelled outputs), ``--json`` so no table is printed;
- ``read_table``: our reader alone (text to the table of trimmed cells, 65,536 rows a chunk);
- ``csv module``: the peer, ``list(csv.reader(open(path, newline="")))`` (rows as lists of
  strings, nothing trimmed or checked).

Times are wall-clock on a shared machine: read the ratios.

    python3 benchmarks/csv_bench.py [--rows 1000000]
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

CHILD = r"""
import json, sys, time
what, path, net = sys.argv[1:4]
if what == "score":
    import contextlib, io
    from thresholdc.cli import main
elif what == "read_table":
    from thresholdc.training.data import read_table
else:
    import csv
t0 = time.perf_counter()  # after the imports: the work alone
if what == "score":
    with contextlib.redirect_stdout(io.StringIO()):
        code = main(["score", net, path, "--json", "--positive", "yes", "--label",
                     "rebalance=van_sent", "--label", "mechanic=mechanic_sent"])
    assert code == 0, code
elif what == "read_table":
    read_table(path)
else:
    with open(path, encoding="utf-8", newline="") as fh:
        list(csv.reader(fh))
seconds = time.perf_counter() - t0
# the peak resident memory of this process image (VmHWM; ru_maxrss would carry the parent's
# peak across exec)
with open("/proc/self/status") as fh:
    peak = next(int(ln.split()[1]) * 1024 for ln in fh if ln.startswith("VmHWM:"))
print(json.dumps({"seconds": seconds, "peak": peak}))
"""


def write_table(path: Path, rows: int) -> None:
    """The bundled bike-share table repeated to ``rows`` data rows."""
    lines = (ROOT / "circuits" / "bike_docks.csv").read_text(encoding="utf-8").splitlines()
    head, body = lines[0], lines[1:]
    with open(path, "w", encoding="utf-8", newline="\n") as fh:
        fh.write(head + "\n")
        for first in range(0, rows, len(body)):
            fh.write("\n".join(body[: min(len(body), rows - first)]) + "\n")


def run(what: str, path: Path, net: Path) -> dict:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    out = subprocess.run([sys.executable, "-c", CHILD, what, str(path), str(net)], env=env,
                         capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--rows", type=int, default=1_000_000, help="data rows (default 1000000)")
    args = p.parse_args()
    sys.path.insert(0, str(ROOT))
    from thresholdc.compiler import compile_rules
    from thresholdc.export import save_any

    with tempfile.TemporaryDirectory() as folder:
        path, net = Path(folder, "d.csv"), Path(folder, "n.json")
        write_table(path, args.rows)
        rules = (ROOT / "circuits" / "bike_docks.rules").read_text(encoding="utf-8")
        save_any(compile_rules(rules), str(net))
        size = path.stat().st_size
        print(f"{args.rows:,} rows x 19 columns, {size / 1e6:.0f} MB")
        results = {w: run(w, path, net) for w in ("score", "read_table", "csv")}
    peer = results["csv"]
    print(f"{'':<20}{'seconds':>9}{'peak GB':>9}{'x csv time':>12}{'x csv peak':>12}")
    for name, label in (("score", "thresholdc score"), ("read_table", "read_table"),
                        ("csv", "csv module")):
        r = results[name]
        print(f"{label:<20}{r['seconds']:>9.1f}{r['peak'] / 1e9:>9.2f}"
              f"{r['seconds'] / peer['seconds']:>12.2f}{r['peak'] / peer['peak']:>12.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
