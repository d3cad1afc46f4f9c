"""Fuzz cases for the command line and the checks every case must pass.

Shared by the bounded CI run (``tests/fuzz/test_fuzz.py``) and the long campaign
(``benchmarks/fuzz_campaign.py``).  A case is a list of files to write and the arguments of
one command; :func:`run_case` runs it through ``cli.main`` in-process under a time limit and
returns what went wrong (an empty list when nothing did).  Every generator takes a seeded
``random.Random``, so a case is reproduced from its family and seed.
"""

from __future__ import annotations

import contextlib
import io
import json
import os
import random
import signal
import tempfile
import warnings
import zipfile
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from thresholdc.cli import main

ROOT = Path(__file__).resolve().parents[2]
CIRCUITS = sorted((ROOT / "circuits").glob("*.rules"))
# The per-case limits in seconds: CPU time of this process (steady on a loaded machine), and
# a generous wall-clock limit that also catches waiting forever (on a child, a lock, input).
CASE_SECONDS = 20.0
CASE_WALL_SECONDS = 180.0
ALLOWED_CODES = (0, 1, 2)
# Input counts of the wide parity/majority/exactly cases (the campaign adds 300).
EXTREME_INPUTS = [3, 30]

KEYWORDS = ("input output and or xor not implies iff if then else true false atleast atmost "
            "exactly majority nand nor parity in bool real scale").split()
PUNCT = ["(", ")", ",", "=", "->", "<->", "|", "&", "^", "!", "~", "*", "+", "-", ">=", ">",
         "<=", "<", "==", "!=", ":", "{", "}", "[", "]", "#", "\n", "\n", "\n", " "]
NAMES = ["a", "b", "c", "d", "x1", "_y", "out", "alarm"]


@dataclass
class Case:
    """Files to write (name -> bytes), the command's arguments (``{d}`` is the folder), and
    the output file the command may write (must exist only after success)."""

    family: str
    files: dict[str, bytes]
    argv: list[str]
    output: str | None = None
    notes: list[str] = field(default_factory=list)
    # files written by a function (name -> writer(path)), for files too big to hold in memory
    streams: dict[str, Callable[[Path], None]] = field(default_factory=dict)
    # this case's CPU-time limit in seconds, when it needs more than CASE_SECONDS
    seconds: float | None = None
    # (exit code, text stderr must hold) when the case has one right answer
    expect: tuple[int, str] | None = None


class _Timeout(BaseException):
    """Raised by the alarm; a BaseException so no handler of the program swallows it."""


def _alarm(signum, frame):  # noqa: ARG001
    raise _Timeout


_FOLDER: list[str] = []


def _empty_folder() -> str:
    """One work folder per process, emptied before each case (cheaper than a new one)."""
    if not _FOLDER:
        _FOLDER.append(tempfile.mkdtemp(prefix="thresholdc-fuzz-"))
    folder = _FOLDER[0]
    for name in os.listdir(folder):
        os.unlink(os.path.join(folder, name))
    return folder


def run_case(case: Case, seconds: float | None = None) -> list[str]:
    """Run ``case`` in an empty folder through ``cli.main``; return the failures found."""
    failures: list[str] = []
    seconds = seconds or case.seconds or CASE_SECONDS
    if True:
        folder = _empty_folder()
        for name, data in case.files.items():
            Path(folder, name).write_bytes(data)
        for name, writer in case.streams.items():
            writer(Path(folder, name))
        argv = [a.replace("{d}", folder) for a in case.argv]
        out, err = io.StringIO(), io.StringIO()
        old = signal.signal(signal.SIGALRM, _alarm), signal.signal(signal.SIGPROF, _alarm)
        signal.setitimer(signal.ITIMER_PROF, seconds)
        signal.setitimer(signal.ITIMER_REAL, max(seconds, CASE_WALL_SECONDS))
        code: int | None
        try:
            with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
                try:
                    code = main(argv)
                except SystemExit as exc:  # argparse usage errors
                    code = exc.code if isinstance(exc.code, int) else 2
        except _Timeout:
            code = None
            failures.append(f"no answer within {seconds:g} s of CPU time "
                            f"({CASE_WALL_SECONDS:g} s of wall time)")
        except BaseException as exc:  # noqa: BLE001 - anything escaping main is a failure
            code = None
            failures.append(f"escaped main: {type(exc).__name__}: {exc}")
        finally:
            signal.setitimer(signal.ITIMER_PROF, 0)
            signal.setitimer(signal.ITIMER_REAL, 0)
            signal.signal(signal.SIGALRM, old[0])
            signal.signal(signal.SIGPROF, old[1])
        text = err.getvalue()
        if "Traceback" in text:
            failures.append("traceback on stderr")
        if code is not None and code not in ALLOWED_CODES:
            failures.append(f"exit {code}: {text.strip()[:300]}")
        if code == 2:
            lines = text.rstrip("\n").split("\n")  # a source line may hold \x1c etc.
            if not lines or not lines[0].startswith("thresholdc: error: "):
                failures.append(f"exit 2 without an error line: {text[:200]!r}")
            elif len(lines) not in (1, 3):
                failures.append(f"exit 2 with {len(lines)} lines of stderr: {text[:300]!r}")
        if case.expect is not None and code is not None and (
                code != case.expect[0] or case.expect[1] not in text):
            failures.append(f"expected exit {case.expect[0]} with {case.expect[1]!r}, got "
                            f"exit {code}: {text.strip()[:300]!r}")
        leftovers = [n for n in os.listdir(folder) if n.startswith(".thresholdc-")]
        if leftovers:
            failures.append(f"temporary files left: {leftovers}")
        if case.output is not None:
            target = Path(folder, case.output)
            if code != 0 and target.exists():
                failures.append(f"exit {code} left an output file")
            if code == 0 and not target.exists():
                failures.append("exit 0 wrote no output file")
    return [f"{case.family}: {f} [argv {' '.join(case.argv)}]" for f in failures]


# ---- rule files ---------------------------------------------------------------------------


def _rules_case(rng: random.Random, family: str, text: bytes) -> Case:
    if rng.random() < 0.5:
        return Case(family, {"r.rules": text}, ["table", "{d}/r.rules", "--limit", "8"])
    return Case(family, {"r.rules": text},
                ["compile", "{d}/r.rules", "-o", "{d}/n.json", "--max-inputs", "12"], "n.json")


def rules_random_bytes(rng: random.Random) -> Case:
    data = bytes(rng.randrange(256) for _ in range(rng.randrange(0, 200)))
    return _rules_case(rng, "rules/bytes", data)


def rules_token_soup(rng: random.Random) -> Case:
    toks = [rng.choice(KEYWORDS + PUNCT + NAMES + [str(rng.randrange(-3, 12))])
            for _ in range(rng.randrange(1, 60))]
    head = "input a, b, c, d\n" if rng.random() < 0.7 else ""
    return _rules_case(rng, "rules/soup", (head + " ".join(toks) + "\n").encode())


def _mutate_bytes(rng: random.Random, data: bytes) -> bytes:
    b = bytearray(data)
    for _ in range(rng.randrange(1, 6)):
        op = rng.randrange(6)
        k = rng.randrange(len(b) + 1)
        if op == 0 and b:
            del b[k % len(b)]
        elif op == 1:
            b[k:k] = rng.choice([b"\x00", b"\r\n", b"\xef\xbb\xbf", b"(", b")", b"not ", b",",
                                 b" and ", b"\t", b"\xff", b"99999999999999999999", b"\n"])
        elif op == 2 and b:
            b[k % len(b)] = rng.randrange(256)
        elif op == 3:
            lines = bytes(b).split(b"\n")
            i = rng.randrange(len(lines))
            lines.insert(rng.randrange(len(lines) + 1), lines[i])
            b = bytearray(b"\n".join(lines))
        elif op == 4:
            lines = bytes(b).split(b"\n")
            rng.shuffle(lines)
            b = bytearray(b"\n".join(lines))
        else:
            b = bytearray(bytes(b).replace(b"\n", b"\r\n"))
    return bytes(b)


def rules_mutation(rng: random.Random) -> Case:
    data = rng.choice(CIRCUITS).read_bytes()
    return _rules_case(rng, "rules/mutation", _mutate_bytes(rng, data))


def rules_extremes(rng: random.Random) -> Case:
    n = rng.choice([10, 100, 1000, 20000])
    big = rng.choice(["9" * 30, "9" * 400, str(2**63), str(10**18)])
    names = ", ".join(f"x{i}" for i in range(rng.choice(EXTREME_INPUTS)))
    texts = [
        "input a, b\ny = " + "(" * n + "a" + ")" * n + "\n",
        "input a, b\ny = " + "not " * n + "a\n",
        "input a, b\ny = a" + " and b" * n + "\n",
        f"input a, b, c\ny = atleast({big}, a, b, c)\n",
        f"input a, b, c\ny = {big}*a + b - c >= 1\n",
        f"input a, b, c\ny = a + b >= {big}\n",
        f"input {names}\ny = parity({names})\n",
        f"input {names}\ny = majority({names})\n",
        f"input {names}\ny = exactly(2, {names})\n",
        "\ufeffinput a\r\ny = not a\r\n",
        "input a\x00\ny = a\n",
        "input t: real in [" + big + ", 1]\ny = t > 0\n",
        f"input t: real scale {big}\ny = t > 1e308\n",
        "input c: {" + ", ".join(f"v{i}" for i in range(n)) + "}\ny = c == v1\n",
    ]
    return _rules_case(rng, "rules/extreme", rng.choice(texts).encode("utf-8", "replace"))


# ---- network files -------------------------------------------------------------------------

_GOOD: dict[str, tuple[dict, str]] = {}


def good_networks() -> dict[str, tuple[dict, str]]:
    """Compiled bundled examples as JSON dicts, with their rule text (compiled once)."""
    if not _GOOD:
        from thresholdc.compiler import compile_rules
        from thresholdc.network.fileformat import dumps

        for path in CIRCUITS:
            text = path.read_text(encoding="utf-8")
            for opts in ({}, {"layered": True}, {"activation": "sigmoid"}):
                net = compile_rules(text, **opts)
                _GOOD[f"{path.stem}{sorted(opts.items())}"] = (json.loads(dumps(net)), text)
    return _GOOD


WEIRD = [None, True, False, 0, 1, -1, 1.5, 2**70, "", "x", "step", [], [1], ["a"], {}, {"a": 1}]


def _paths(obj, prefix=()):
    yield prefix
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from _paths(v, (*prefix, k))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _paths(v, (*prefix, i))


def _set(obj, path, value):
    for p in path[:-1]:
        obj = obj[p]
    if isinstance(obj, list) and value is _DELETE:
        del obj[path[-1]]
    elif value is _DELETE:
        obj.pop(path[-1], None)
    else:
        obj[path[-1]] = value


_DELETE = object()


def _mutate_network(rng: random.Random, d: dict) -> str:
    kind = rng.randrange(8)
    neurons = d["neurons"]
    if kind == 0:  # a random node gets a value of another type, or goes
        path = rng.choice([p for p in _paths(d) if p])
        _set(d, path, _DELETE if rng.random() < 0.3 else rng.choice(WEIRD))
    elif kind == 1 and len(neurons) > 1:  # a cycle: an early neuron reads a later one
        i, j = sorted(rng.sample(range(len(neurons)), 2))
        neurons[i]["inputs"].append(neurons[j]["name"])
        neurons[i]["weights"].append(1)
    elif kind == 2:  # forward references
        rng.shuffle(neurons)
    elif kind == 3 and neurons:  # duplicate names
        what = rng.randrange(3)
        if what == 0:
            neurons.append(dict(rng.choice(neurons)))
        elif what == 1:
            d["outputs"].append(dict(rng.choice(d["outputs"])))
        else:
            d["inputs"].append(rng.choice(d["inputs"]))
    elif kind == 4:  # huge claimed sizes and numbers
        if neurons:
            n = rng.choice(neurons)
            n[rng.choice(["layer", "bias"])] = rng.choice([2**62, 10**300, -(2**63), 1e308])
        d["version"] = rng.choice([1, 1.0, True, 10**40])
    text = json.dumps(d)
    if kind == 5:
        text = text.replace("-0.5", rng.choice(["NaN", "Infinity", "-Infinity", "1e999"]), 1)
    elif kind == 6:
        cut = rng.randrange(len(text) + 1)
        text = text[:cut]
    elif kind == 7:
        text = _mutate_bytes(rng, text.encode()).decode("utf-8", "replace")
    return text


def network_file(rng: random.Random) -> Case:
    key = rng.choice(sorted(good_networks()))
    d, rules = good_networks()[key]
    text = _mutate_network(rng, json.loads(json.dumps(d)))
    files = {"n.json": text.encode("utf-8", "surrogatepass"), "r.rules": rules.encode()}
    command = rng.choice([0, 0, 0, 0, 3, 3, 1, 2])  # verify and export cost the most
    if command == 0:
        return Case("network/inspect", files, ["inspect", "{d}/n.json"])
    if command == 1:
        return Case("network/verify", files,
                    ["verify", "{d}/n.json", "{d}/r.rules", "--max-inputs", "14"])
    if command == 2:
        suffix = rng.choice([".npz", ".json", ".onnx"])
        return Case("network/export", files, ["export", "{d}/n.json", "-o", "{d}/o" + suffix],
                    "o" + suffix)
    return Case("network/inspect-json", files, ["inspect", "{d}/n.json", "--json"])


# ---- .npz and ONNX -------------------------------------------------------------------------

_SENTINEL = "thresholdc-fuzz-unpickled"


class _Trap:
    """Unpickling this creates a marker file: proof that a reader unpickled."""

    def __reduce__(self):
        return (open, (os.path.join(tempfile.gettempdir(), _SENTINEL), "w"))


def _good_bytes(suffix: str) -> tuple[bytes, bytes, str]:
    from thresholdc.export.npz import npz_bytes
    from thresholdc.network.fileformat import dumps, loads

    d, rules = good_networks()["greenhouse[('layered', True)]"]
    net = loads(json.dumps(d))
    if suffix == ".npz":
        return npz_bytes(net), dumps(net).encode(), rules
    from thresholdc.export.onnx import onnx_bytes

    return onnx_bytes(net), dumps(net).encode(), rules


def npz_file(rng: random.Random) -> Case:
    data, like, _ = _good_bytes(".npz")
    kind = rng.randrange(5)
    if kind == 0:
        data = _mutate_bytes(rng, data)
    elif kind == 1:
        data = data[: rng.randrange(len(data))]
    else:
        arrays = dict(np.load(io.BytesIO(data), allow_pickle=False))
        key = rng.choice(sorted(arrays))
        if kind == 2:
            arrays[key] = np.array([_Trap()], dtype=object)
        elif kind == 3:
            arrays[key] = rng.choice([np.zeros((0,)), np.full((3, 2), np.nan),
                                      np.array(["x"]), np.zeros((2, 2, 2))])
        else:
            arrays.pop(key)
        buf = io.BytesIO()
        with zipfile.ZipFile(buf, "w") as z:
            for k, v in arrays.items():
                arr = io.BytesIO()
                np.save(arr, v, allow_pickle=True)
                z.writestr(k + ".npy", arr.getvalue())
            if kind == 4 and rng.random() < 0.5:  # a header claiming a huge shape
                with warnings.catch_warnings():  # a second W1.npy on purpose (zipfile
                    warnings.simplefilter("ignore", UserWarning)  # warns about duplicates)
                    z.writestr("W1.npy", b"\x93NUMPY\x01\x00v\x00{'descr': '<f8', "
                               b"'fortran_order': False, 'shape': (100000000000, "
                               b"100000000000), }".ljust(117) + b"\n")
        data = buf.getvalue()
    files = {"n.npz": data, "like.json": like}
    return Case("npz", files, ["export", "{d}/n.npz", "--like", "{d}/like.json", "-o",
                               "{d}/o.json"], "o.json")


def onnx_file(rng: random.Random) -> Case:
    data, like, _ = _good_bytes(".onnx")
    kind = rng.randrange(3)
    if kind == 0:
        data = _mutate_bytes(rng, data)
    elif kind == 1:
        data = data[: rng.randrange(len(data))]
    else:
        import onnx

        model = onnx.load_from_string(data)
        node = rng.choice(list(model.graph.node))
        node.op_type = rng.choice(["Sin", "LSTM", "Conv", "FooBar", "Softmax", ""])
        data = model.SerializeToString()
    args = ["export", "{d}/n.onnx", "-o", "{d}/o.json"]
    if rng.random() < 0.5:
        args += ["--like", "{d}/like.json"]
    return Case("onnx", {"n.onnx": data, "like.json": like}, args, "o.json")


# ---- CSV data ------------------------------------------------------------------------------


def _bike() -> tuple[bytes, bytes]:
    d, _ = good_networks()["bike_docks[]"] if "bike_docks[]" in good_networks() else (None, "")
    return json.dumps(d).encode(), (ROOT / "circuits" / "bike_docks.csv").read_bytes()


def csv_file(rng: random.Random) -> Case:
    net, data = _bike()
    lines = data.decode().splitlines()
    kind = rng.randrange(7)
    if kind == 0:  # a column goes
        cols = lines[0].split(",")
        k = rng.randrange(len(cols))
        lines = [",".join(c for i, c in enumerate(r.split(",")) if i != k) for r in lines]
    elif kind == 1:  # an extra column, or a ragged row
        i = rng.randrange(len(lines))
        lines[i] += ",extra"
    elif kind == 2:
        lines = lines[: rng.randrange(2)]
    elif kind == 3:  # out-of-range and odd values
        i = rng.randrange(1, len(lines))
        cells = lines[i].split(",")
        cells[rng.randrange(len(cells))] = rng.choice(["2", "-1", "nan", "inf", "", "1e999",
                                                       "yes", " 1 ", "0x1", "\u00e9"])
        lines[i] = ",".join(cells)
    text = ("\n".join(lines) + "\n").encode()
    if kind == 4:
        text = text.replace(b",", b"\xff,", 1)
    elif kind == 5:
        text = _mutate_bytes(rng, text)
    elif kind == 6:
        text = b"\xef\xbb\xbf" + text.replace(b"\n", b"\r\n")
    files = {"n.json": net, "d.csv": text}
    if rng.random() < 0.9:
        argv = ["score", "{d}/n.json", "{d}/d.csv", "--positive", "yes", "--label",
                "rebalance=van_sent", "--label", "mechanic=mechanic_sent"]
        return Case("csv/score", files, argv)
    argv = ["train", "{d}/n.json", "{d}/d.csv", "-o", "{d}/t.json", "--epochs", "2",
            "--anchor", "0", "--positive", "yes", "--label", "rebalance=van_sent", "--label",
            "mechanic=mechanic_sent"]
    return Case("csv/train", files, argv, "t.json")


# Data rows of the streamed CSV cases: the suite uses a small count, the campaign 10^6.
STREAM_ROWS = [20_000]
# CPU seconds allowed per streamed case, per 10^6 rows (score takes ~11 s, one epoch of train
# ~30 s for 10^6 rows of 19 columns on a shared 2-core machine)
STREAM_SECONDS_PER_MILLION = 120.0


def _stream_writer(rows: int, damage: tuple[int, str] | None) -> Callable[[Path], None]:
    """A writer of the bike-share table repeated to ``rows`` data rows, a block of lines at a
    time (never the whole file in memory); ``damage`` replaces data row k by a bad line."""
    lines = (ROOT / "circuits" / "bike_docks.csv").read_text(encoding="utf-8").splitlines()
    head, body = lines[0], lines[1:]

    def write(path: Path) -> None:
        with open(path, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(head + "\n")
            for first in range(0, rows, len(body)):
                block = body[: min(len(body), rows - first)]
                if damage is not None and first <= damage[0] < first + len(block):
                    block = list(block)
                    block[damage[0] - first] = damage[1]
                fh.write("\n".join(block) + "\n")

    return write


def csv_stream(rng: random.Random) -> Case:
    """A large CSV (``STREAM_ROWS`` rows) written to the folder in blocks, scored or trained
    on; some carry one bad row near the end, which must be named by its line."""
    net, _ = _bike()
    rows = STREAM_ROWS[0]
    damage = None
    if rng.random() < 0.4:
        k = rows - 1 - rng.randrange(min(rows, 100))
        damage = (k, rng.choice(["2025-01-01,D1,0,1", "2025-01-01,D1," + "1," * 17 + "no",
                                 "\xe9,\xe9,2,0,0,0,0,0,0,0,0,0,0,0,0,0,no,no,no"]))
    streams = {"d.csv": _stream_writer(rows, damage)}
    # data row k is line k + 2 (the header is line 1)
    expect = (0, "") if damage is None else (2, f"d.csv:{damage[0] + 2}: ")
    seconds = max(CASE_SECONDS, STREAM_SECONDS_PER_MILLION * rows / 1e6)
    labels = ["--positive", "yes", "--label", "rebalance=van_sent", "--label",
              "mechanic=mechanic_sent"]
    if rng.random() < 0.6:
        return Case("csv/stream-score", {"n.json": net}, ["score", "{d}/n.json", "{d}/d.csv",
                    *labels], streams=streams, seconds=seconds, expect=expect)
    return Case("csv/stream-train", {"n.json": net},
                ["train", "{d}/n.json", "{d}/d.csv", "-o", "{d}/t.json", "--epochs", "1",
                 "--anchor", "0", *labels], "t.json", streams=streams, seconds=seconds,
                expect=expect)


FAMILIES: dict[str, tuple[Callable[[random.Random], Case], float]] = {
    # family: (generator, weight in the mix; every weight is positive)
    # cheap families weigh more, so a long campaign covers many cases per minute
    "rules/bytes": (rules_random_bytes, 25),
    "rules/soup": (rules_token_soup, 25),
    "rules/mutation": (rules_mutation, 6),
    "rules/extreme": (rules_extremes, 2),
    "network": (network_file, 12),
    "npz": (npz_file, 12),
    "onnx": (onnx_file, 8),
    "csv": (csv_file, 10),
    # a streamed case costs ~10^3 other cases at the campaign's 10^6 rows: about 1 in 10^4
    "csv/stream": (csv_stream, 0.01),
}


def make_case(family: str, seed: int) -> Case:
    """The case of ``family`` built from ``seed`` (the same seed, the same case)."""
    return FAMILIES[family][0](random.Random(f"{family}:{seed}"))


def unpickled() -> bool:
    """True when some reader unpickled a trap (the marker file exists)."""
    return os.path.exists(os.path.join(tempfile.gettempdir(), _SENTINEL))
