"""Contract checks of DESIGN.md §3 (rule language) and §4 (network file), from outside.

Each rule file below is written to disk, compiled with the command line (plain and
``--layered``), and the network file is read back by the small independent reader of this
module (plain ``json`` and numpy, nothing from thresholdc): key order, layers, topological order,
the strict layered form, helper names, roles and origins, the |z| >= 0.5 margin, and the function
computed, compared row by row with the truth written here in plain Python.  ``thresholdc table``
is compared with the same truth.
"""

from __future__ import annotations

import hashlib
import itertools
import json
import os

import numpy as np
import pytest

from thresholdc import __version__
from thresholdc.cli import main

# ---- the independent reader (DESIGN.md §4) -------------------------------------------------

TOP_KEYS = ["format", "version", "inputs", "neurons", "outputs", "meta"]
NEURON_KEYS = ["name", "layer", "inputs", "weights", "bias", "activation", "role", "origin"]
SHAPING_OPTIONS = {"activation", "encoding", "gain", "tolerance", "layered", "synthesis",
                   "simplify_support", "cut_size", "max_fan_in", "max_weight"}


def read_ordered(path):
    """The file parsed twice: as (key, value) pairs, to see key order, and as plain dicts."""
    with open(path, encoding="utf-8") as fh:
        text = fh.read()
    return json.loads(text, object_pairs_hook=list), json.loads(text)


def keys(pairs):
    return [k for k, _ in pairs]


def truth_rows(n):
    """Every 0/1 assignment of n inputs, first input the highest bit (as `table` prints)."""
    rows = list(itertools.product((0, 1), repeat=n))
    return np.array(rows, dtype=np.int64).reshape(len(rows), n)


def run_network(net, X):
    """Values of every unit and the pre-activation z of every neuron, per row (DESIGN §4)."""
    values = {name: X[:, j].astype(float) for j, name in enumerate(net["inputs"])}
    zs = {}
    for n in net["neurons"]:
        z = np.full(len(X), float(n["bias"]))
        for w, i in zip(n["weights"], n["inputs"], strict=True):
            z = z + w * values[i]
        assert n["activation"] == "step", n
        zs[n["name"]] = z
        values[n["name"]] = (z > 0).astype(float)  # step: 1 if z > 0 else 0
    return values, zs


def check_network_file(path, source_path, inputs, outputs, strict, definitions):
    """Every §4 point a reader can check on a compiled Boolean step network."""
    pairs, net = read_ordered(path)
    assert keys(pairs) == TOP_KEYS
    for n in dict(pairs)["neurons"]:
        assert keys(n) == NEURON_KEYS
    for o in dict(pairs)["outputs"]:
        assert keys(o) == ["name", "source"]
    meta_pairs = dict(pairs)["meta"]
    assert keys(meta_pairs)[:4] == ["tool", "source_sha256", "options", "verification"]
    meta = net["meta"]
    assert net["format"] == "thresholdc-network" and net["version"] == 1
    assert meta["tool"] == f"thresholdc {__version__}"
    with open(source_path, "rb") as fh:
        assert meta["source_sha256"] == hashlib.sha256(fh.read()).hexdigest()
    assert set(meta["options"]) >= SHAPING_OPTIONS
    assert meta["options"]["layered"] is strict
    assert keys(dict(meta_pairs)["verification"]) == ["method", "result"]
    assert meta["verification"]["result"] == "equal"
    text = open(path, encoding="utf-8").read()
    assert os.path.dirname(os.path.abspath(path)) not in text  # no path stored
    assert "seconds" not in text and "time" not in json.dumps(meta["options"])

    assert net["inputs"] == inputs  # every declared input is a unit, used or not
    assert [o["name"] for o in net["outputs"]] == outputs
    layer = {name: 0 for name in net["inputs"]}
    origin = {}
    for n in net["neurons"]:
        assert n["name"] not in layer  # unique names
        for i in n["inputs"]:
            assert i in layer, f"{n['name']} reads {i} before it is computed"
        assert n["layer"] == 1 + max((layer[i] for i in n["inputs"]), default=0)
        if strict:
            assert all(layer[i] == n["layer"] - 1 for i in n["inputs"]), n
        assert n["role"] in ("gate", "relay")
        if n["name"] in definitions:
            assert n["origin"] == n["name"]
        else:
            assert "~" in n["name"], f"helper {n['name']} must contain '~'"
            if n["role"] == "gate":  # a helper gate: the first definition that uses it
                assert n["origin"] in definitions
        if n["role"] == "relay":
            assert len(n["inputs"]) == 1
            carried = origin.get(n["inputs"][0])
            if carried is not None:
                assert n["origin"] == carried
        assert all(float(w).is_integer() for w in n["weights"])
        assert (float(n["bias"]) - 0.5).is_integer()  # half-integer bias
        layer[n["name"]] = n["layer"]
        origin[n["name"]] = n["origin"]
    for o in net["outputs"]:
        assert o["source"] in layer  # a neuron or an input unit
    if strict and net["neurons"]:
        top = max(n["layer"] for n in net["neurons"])
        assert all(layer[o["source"]] == top for o in net["outputs"])

    X = truth_rows(len(inputs))
    values, zs = run_network(net, X)
    for name, z in zs.items():
        assert np.all(np.abs(z) >= 0.5), f"|z| < 0.5 at {name}"
    for n in net["neurons"]:
        if n["role"] == "relay":
            assert np.array_equal(values[n["name"]], values[n["inputs"][0]])
    return np.stack([values[o["source"]] for o in net["outputs"]], axis=1).astype(int), net


# ---- truth in plain Python (numpy 0/1 integer columns) ---------------------------------------


def NOT(x):
    return 1 - x


def IMP(a, b):
    return (1 - a) | b


def IFF(a, b):
    return 1 - (a ^ b)


def ITE(c, x, y):
    return np.where(c == 1, x, y)


def CNT(*xs):
    return sum(xs)


def B(x):
    return np.asarray(x).astype(np.int64)


# (id, rule text, inputs, outputs, truth(v) -> list of columns in output order)
CASES = [
    # precedence, lowest first: if, <->, -> (right-assoc), or, xor, and, not, comparisons
    ("or_over_and", "input a, b, c\ny = a or b and c\n", "abc", ["y"],
     lambda v: [v["a"] | (v["b"] & v["c"])]),
    ("implies_right", "input a, b, c\ny = a -> b -> c\n", "abc", ["y"],
     lambda v: [IMP(v["a"], IMP(v["b"], v["c"]))]),
    ("implies_words", "input a, b, c\ny = a implies b implies c\n", "abc", ["y"],
     lambda v: [IMP(v["a"], IMP(v["b"], v["c"]))]),
    ("iff_below_implies", "input x, y, z\nq = x <-> y -> z\n", "xyz", ["q"],
     lambda v: [IFF(v["x"], IMP(v["y"], v["z"]))]),
    ("iff_word", "input x, y\nq = x iff not y\n", "xy", ["q"],
     lambda v: [IFF(v["x"], NOT(v["y"]))]),
    ("not_binds_tighter_than_and", "input a, b\ny = not a and b\n", "ab", ["y"],
     lambda v: [NOT(v["a"]) & v["b"]]),
    ("symbol_not", "input a, b\ny = !a & ~b\n", "ab", ["y"],
     lambda v: [NOT(v["a"]) & NOT(v["b"])]),
    ("and_over_xor", "input a, b, c\ny = a ^ b & c\n", "abc", ["y"],
     lambda v: [v["a"] ^ (v["b"] & v["c"])]),
    ("xor_over_or", "input a, b, c\ny = a | b xor c\nz = a xor b or c\n", "abc", ["y", "z"],
     lambda v: [v["a"] | (v["b"] ^ v["c"]), (v["a"] ^ v["b"]) | v["c"]]),
    ("or_over_implies", "input a, b, c\ny = a or b -> c\n", "abc", ["y"],
     lambda v: [IMP(v["a"] | v["b"], v["c"])]),
    ("not_over_comparison", "input a, b\ny = not a + b >= 1\n", "ab", ["y"],
     lambda v: [NOT(B(v["a"] + v["b"] >= 1))]),
    ("comparisons_in_and_or", "input a, b, c\ny = a + b >= 2 or c and a - b < 0\n", "abc",
     ["y"], lambda v: [B(v["a"] + v["b"] >= 2) | (v["c"] & B(v["a"] - v["b"] < 0))]),
    # weighted comparisons, all six operators
    ("leading_minus", "input a, b\ny = -a + 2*b >= 1\n", "ab", ["y"],
     lambda v: [B(-v["a"] + 2 * v["b"] >= 1)]),
    ("single_term", "input a\ny = a >= 1\nz = a == 1\nw = a != 0\n", "a", ["y", "z", "w"],
     lambda v: [v["a"], v["a"], v["a"]]),
    ("negative_right_side", "input a, b\ny = 2*a - 3*b < -1\n", "ab", ["y"],
     lambda v: [B(2 * v["a"] - 3 * v["b"] < -1)]),
    ("equal", "input a, b\ny = a + b == 1\n", "ab", ["y"], lambda v: [B(v["a"] + v["b"] == 1)]),
    ("not_equal", "input a, b, c\ny = a + 2*b + c != 2\n", "abc", ["y"],
     lambda v: [B(v["a"] + 2 * v["b"] + v["c"] != 2)]),
    ("gt_le", "input a, b, c\np = 3*a + b > 2\nq = a + b + c <= 1\nr = -2*a - b >= -2\n",
     "abc", ["p", "q", "r"],
     lambda v: [B(3 * v["a"] + v["b"] > 2), B(v["a"] + v["b"] + v["c"] <= 1),
                B(-2 * v["a"] - v["b"] >= -2)]),
    ("always_and_never", "input a, b\ny = a + b >= -5\nz = a + b > 5\n", "ab", ["y", "z"],
     lambda v: [B(v["a"] >= 0), B(v["a"] > 5)]),
    ("operands_are_expressions",
     "input a, b, c\ny = 2*(a and b) + atleast(1, c, a) - (not b) >= 2\n", "abc", ["y"],
     lambda v: [B(2 * (v["a"] & v["b"]) + B(CNT(v["c"], v["a"]) >= 1) - NOT(v["b"]) >= 2)]),
    ("ite_as_operand", "input a, b, c\ny = 2*(if a then b else c) - a >= 1\n", "abc", ["y"],
     lambda v: [B(2 * ITE(v["a"], v["b"], v["c"]) - v["a"] >= 1)]),
    ("big_coefficients", "input a, b, c, d\ny = 5*a + 3*b - 7*c + d >= 1\n", "abcd", ["y"],
     lambda v: [B(5 * v["a"] + 3 * v["b"] - 7 * v["c"] + v["d"] >= 1)]),
    # if … then … else …
    ("ite", "input c, x, y\nq = if c then x else y\n", "cxy", ["q"],
     lambda v: [ITE(v["c"], v["x"], v["y"])]),
    ("ite_else_takes_the_rest", "input a, b, c, d\nq = if a then b else c or d\n", "abcd", ["q"],
     lambda v: [ITE(v["a"], v["b"], v["c"] | v["d"])]),
    ("ite_nested", "input c, d, x, y\nq = if c then if d then x else y else (if x then d else c)\n",
     "cdxy", ["q"],
     lambda v: [ITE(v["c"], ITE(v["d"], v["x"], v["y"]), ITE(v["x"], v["d"], v["c"]))]),
    ("ite_in_brackets", "input a, b, c, d\nq = a and (if b then c else d)\n", "abcd", ["q"],
     lambda v: [v["a"] & ITE(v["b"], v["c"], v["d"])]),
    ("ite_as_argument", "input c, x, y\nq = atleast(1, if c then x else y, c)\n", "cxy", ["q"],
     lambda v: [B(CNT(ITE(v["c"], v["x"], v["y"]), v["c"]) >= 1)]),
    # calls, with expression arguments, k = 0 and k = n
    ("call_arguments", "input a, b, c, d\nq = atmost(1, a and b, c or d, not a)\n", "abcd",
     ["q"], lambda v: [B(CNT(v["a"] & v["b"], v["c"] | v["d"], NOT(v["a"])) <= 1)]),
    ("k_zero_and_n",
     "input a, b, c\np = atleast(0, a, b, c)\nq = atleast(3, a, b, c)\nr = atmost(0, a, b, c)\n"
     "s = atmost(3, a, b, c)\nt = exactly(0, a, b, c)\nu = exactly(3, a, b, c)\n",
     "abc", list("pqrstu"),
     lambda v: [B(CNT(*v.values()) >= 0), B(CNT(*v.values()) >= 3), B(CNT(*v.values()) <= 0),
                B(CNT(*v.values()) <= 3), B(CNT(*v.values()) == 0),
                B(CNT(*v.values()) == 3)]),
    ("exactly", "input a, b, c, d\nq = exactly(2, a, b, c, d)\n", "abcd", ["q"],
     lambda v: [B(CNT(*v.values()) == 2)]),
    ("majority_even_is_more_than_half",
     "input a, b, c, d\nq = majority(a, b, c, d)\nr = majority(a, b)\ns = majority(a)\n",
     "abcd", ["q", "r", "s"],
     lambda v: [B(CNT(*v.values()) >= 3), v["a"] & v["b"], v["a"]]),
    ("majority_odd", "input a, b, c, d, e\nq = majority(a, b, c, d, e)\n", "abcde", ["q"],
     lambda v: [B(CNT(*v.values()) >= 3)]),
    ("parity", "input a, b, c, d\nq = parity(a, b, c, d)\nr = parity(a)\ns = parity(a, not b)\n",
     "abcd", ["q", "r", "s"],
     lambda v: [CNT(*v.values()) % 2, v["a"], (v["a"] + NOT(v["b"])) % 2]),
    ("nand_nor", "input a, b, c\np = nand(a)\nq = nor(a)\nr = nand(a, b, c)\ns = nor(a, b, c)\n",
     "abc", list("pqrs"),
     lambda v: [NOT(v["a"]), NOT(v["a"]), NOT(v["a"] & v["b"] & v["c"]),
                NOT(v["a"] | v["b"] | v["c"])]),
    ("duplicate_arguments", "input a, b\ny = atleast(2, a, a, b)\nz = a + a >= 2\n", "ab",
     ["y", "z"], lambda v: [B(2 * v["a"] + v["b"] >= 2), v["a"]]),
    # constants
    ("constants",
     "input a\np = 1\nq = 0\nr = true\ns = false\nt = a and true\nu = a or false\nw = not 1\n",
     "a", list("pqrstuw"),
     lambda v: [1 + 0 * v["a"], 0 * v["a"], 1 + 0 * v["a"], 0 * v["a"], v["a"], v["a"],
                0 * v["a"]]),
    ("no_inputs", "output y, z\ny = 1\nz = not y\n", "", ["y", "z"],
     lambda v: [np.ones(1, np.int64), np.zeros(1, np.int64)]),
    # statements
    ("any_order", "output z\nz = m and c\nm = a or b\ninput a, b\ninput c\n", "abc", ["z"],
     lambda v: [(v["a"] | v["b"]) & v["c"]]),
    ("several_input_output_statements",
     "input a\noutput q\ninput b, c\noutput p\np = a and b\nq = b or c\n", "abc", ["q", "p"],
     lambda v: [v["b"] | v["c"], v["a"] & v["b"]]),
    ("input_as_output", "input a, b\noutput a, y, b\ny = a and b\n", "ab", ["a", "y", "b"],
     lambda v: [v["a"], v["a"] & v["b"], v["b"]]),
    ("only_an_input_as_output", "input a, b\noutput b\n", "ab", ["b"], lambda v: [v["b"]]),
    ("used_definition_as_output", "input a, b\noutput m, y\nm = a and b\ny = not m\n", "ab",
     ["m", "y"], lambda v: [v["a"] & v["b"], NOT(v["a"] & v["b"])]),
    ("alias_of_an_input", "input a, b\noutput x, y\nx = a\ny = x\n", "ab", ["x", "y"],
     lambda v: [v["a"], v["a"]]),
    ("outputs_default_to_unused_definitions",
     "input a, b, c\nm = a and b\nz = m or c\nw = not a\nm2 = m xor c\n", "abc",
     ["z", "w", "m2"],
     lambda v: [(v["a"] & v["b"]) | v["c"], NOT(v["a"]), (v["a"] & v["b"]) ^ v["c"]]),
    ("unused_input_is_a_unit", "input a, b, spare, c\ny = a and c\n", ["a", "b", "spare", "c"],
     ["y"], lambda v: [v["a"] & v["c"]]),
    ("shared_sub_terms", "input a, b, c, d\nm = a and b\nx = m or c\ny = m or d\nz = not m\n",
     "abcd", ["x", "y", "z"],
     lambda v: [(v["a"] & v["b"]) | v["c"], (v["a"] & v["b"]) | v["d"], NOT(v["a"] & v["b"])]),
    ("xor_cones", "input a, b, c, d, e, f\ny = (a xor b) and (c xor d) or (e <-> f)\n",
     "abcdef", ["y"],
     lambda v: [((v["a"] ^ v["b"]) & (v["c"] ^ v["d"])) | IFF(v["e"], v["f"])]),
    # the text itself
    ("comments_and_blank_lines",
     "# head\ninput a, b # the inputs\n\n   # indented comment\ny = a and b # end\n#last",
     "ab", ["y"], lambda v: [v["a"] & v["b"]]),
    ("crlf", "input a, b\r\ny = a or b\r\nz = (a and\r\n b)\r\n", "ab", ["y", "z"],
     lambda v: [v["a"] | v["b"], v["a"] & v["b"]]),
    ("byte_order_mark", "\ufeffinput a, b\ny = a and b\n", "ab", ["y"],
     lambda v: [v["a"] & v["b"]]),
    ("tabs", "input\ta,\tb\ny\t=\ta\tand\tb\t\n", "ab", ["y"], lambda v: [v["a"] & v["b"]]),
    ("trailing_whitespace", "input a, b   \ny = a and b   \n   \n\n\n", "ab", ["y"],
     lambda v: [v["a"] & v["b"]]),
    ("no_final_newline", "input a, b\ny = a and b", "ab", ["y"], lambda v: [v["a"] & v["b"]]),
    ("names_with_digits_and_underscores",
     "input A1, _b, c_2_, x9y\nOut_1 = A1 and _b\n__ = c_2_ or x9y\n",
     ["A1", "_b", "c_2_", "x9y"], ["Out_1", "__"],
     lambda v: [v["A1"] & v["_b"], v["c_2_"] | v["x9y"]]),
    ("keywords_inside_names_and_other_case",
     "input android, notion, iffy, AND, scale\nand_1 = android and AND\n"
     "Not = not notion or iffy or scale\n",
     ["android", "notion", "iffy", "AND", "scale"], ["and_1", "Not"],
     lambda v: [v["android"] & v["AND"], NOT(v["notion"]) | v["iffy"] | v["scale"]]),
    ("multi_line_inside_brackets",
     "input a, b, c\ny = atleast(2,\n  a,\n  b,   # comment inside\n\n  c)\nz = (a\n or\n b)\n",
     "abc", ["y", "z"], lambda v: [B(CNT(*v.values()) >= 2), v["a"] | v["b"]]),
]


def _compile(tmp_path, capsys, name, text, *flags):
    src = tmp_path / f"{name}.rules"
    src.write_bytes(text.encode("utf-8"))
    out = tmp_path / f"{name}{'_'.join(('',) + flags).replace('-', '')}.json"
    code = main(["compile", str(src), "-o", str(out), *flags])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return src, out, captured


@pytest.mark.parametrize("name,text,inputs,outputs,truth", CASES, ids=[c[0] for c in CASES])
def test_construct_compiles_to_its_truth_table(tmp_path, capsys, name, text, inputs, outputs,
                                               truth):
    # DESIGN.md §3 (constructs) and §4 (network file), checked with an independent reader
    inputs = list(inputs)
    X = truth_rows(len(inputs))
    v = {n: X[:, j] for j, n in enumerate(inputs)}
    want = np.stack([np.broadcast_to(B(c), (len(X),)) for c in truth(v)], axis=1)
    definitions = {line.split("=")[0].strip() for line in text.splitlines() if "=" in line}
    files = []
    for flags in ((), ("--layered",)):
        src, out, _ = _compile(tmp_path, capsys, name, text, *flags)
        got, _ = check_network_file(str(out), str(src), inputs, outputs, bool(flags),
                                    definitions)
        np.testing.assert_array_equal(got, want)
        files.append(out.read_bytes())
        # the same input and options give the same bytes
        _, again, _ = _compile(tmp_path, capsys, name + "_again", text, *flags)
        assert again.read_bytes() == files[-1]
        assert main(["verify", str(out), str(src)]) == 0
        capsys.readouterr()
    # the truth table printed by `thresholdc table`
    assert main(["table", str(src), "--json", "--limit", "0"]) == 0
    table = json.loads(capsys.readouterr().out)
    assert table["inputs"] == inputs and table["outputs"] == outputs
    assert table["total_rows"] == len(X) == table["shown_rows"]
    np.testing.assert_array_equal(np.array(table["rows"]).reshape(len(X), -1),
                                  np.concatenate([X, want], axis=1))
    assert not [f for f in os.listdir(tmp_path) if f.startswith(".")]  # no temporary file


def test_unused_definitions_warn_and_are_not_compiled(tmp_path, capsys):
    # DESIGN.md §3: with an output statement, definitions no output needs are a warning
    text = "input a, b, c\noutput y\ny = a and b\njunk = a or c\nmore = junk and b\n"
    src, out, captured = _compile(tmp_path, capsys, "unused", text)
    assert "thresholdc: warning: " in captured.err and "junk" in captured.err
    assert "more" in captured.err
    got, net = check_network_file(str(out), str(src), ["a", "b", "c"], ["y"], False,
                                  {"y", "junk", "more"})
    assert all(n["origin"] not in ("junk", "more") for n in net["neurons"])
    assert all(n["name"] not in ("junk", "more") for n in net["neurons"])
    X = truth_rows(3)
    np.testing.assert_array_equal(got[:, 0], X[:, 0] & X[:, 1])


def test_layered_and_plain_forms_compute_the_same(tmp_path, capsys):
    # DESIGN.md §4: the strict layered form adds relays only; both compute the rules
    text = "input a, b, c, d\nout1 = a xor b\nout2 = (a and c) or d\nout3 = not d\n"
    src, plain, _ = _compile(tmp_path, capsys, "forms", text)
    _, layered, _ = _compile(tmp_path, capsys, "forms", text, "--layered")
    defs = {"out1", "out2", "out3"}
    a, net_a = check_network_file(str(plain), str(src), list("abcd"), ["out1", "out2", "out3"],
                                  False, defs)
    b, net_b = check_network_file(str(layered), str(src), list("abcd"),
                                  ["out1", "out2", "out3"], True, defs)
    np.testing.assert_array_equal(a, b)
    relays = [n for n in net_b["neurons"] if n["role"] == "relay"]
    assert relays and all("~" in n["name"] for n in relays)
