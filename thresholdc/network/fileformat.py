"""The network file, version 1 (DESIGN.md §4): JSON with keys in a fixed order.

The writer puts each neuron on one line so that diffs of network files read well, and emits
numbers deterministically (integral values as integers), so the same network gives the same
bytes.  The reader checks everything (:func:`check_network`) and raises
:class:`~thresholdc.errors.NetworkFileError` naming the file and what is wrong.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
>>> loads(dumps(net)) == net
True
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from typing import Any

from ..errors import NetworkFileError, UsageError
from ..files import read_text as _read_text
from ..ir import activations as act
from ..ir.network import ENCODINGS, ROLES, Network, Neuron, Output, check_network
from ..textlines import line_and_column, split_lines

__all__ = [
    "FORMAT", "VERSION", "dumps", "loads", "load", "save", "atomic_write", "from_dict",
    "check_writable",
]

FORMAT = "thresholdc-network"
VERSION = 1


def _num(x: float) -> int | float:
    """An integral value as ``int`` (so it prints without ``.0``), else the float itself."""
    x = float(x)
    if math.isfinite(x) and x.is_integer() and abs(x) < 2**53:
        return int(x)
    return x


def _neuron_dict(n: Neuron) -> dict[str, Any]:
    return {
        "name": n.name,
        "layer": n.layer,
        "inputs": list(n.inputs),
        "weights": [_num(w) for w in n.weights],
        "bias": _num(n.bias),
        "activation": n.activation,
        "role": n.role,
        "origin": n.origin,
    }


def _dump(value: Any) -> str:
    return json.dumps(value, ensure_ascii=False, allow_nan=False)


def dumps(net: Network) -> str:
    """The file text of ``net``: header keys, one line per neuron and output, then ``meta``."""
    lines = ["{", f'  "format": {_dump(FORMAT)},', f'  "version": {VERSION},']
    if net.encoding != "binary":
        lines.append(f'  "encoding": {_dump(net.encoding)},')
    lines.append(f'  "inputs": {_dump(list(net.inputs))},')
    if net.features is not None:
        lines.append('  "features": [')
        lines.append(",\n".join(f"    {_dump(f)}" for f in net.features))
        lines.append("  ],")
    lines.append('  "neurons": [')
    if net.neurons:
        lines.append(",\n".join(f"    {_dump(_neuron_dict(n))}" for n in net.neurons))
    lines.append("  ],")
    lines.append('  "outputs": [')
    if net.outputs:
        lines.append(
            ",\n".join(f"    {_dump({'name': o.name, 'source': o.source})}" for o in net.outputs)
        )
    lines.append("  ],")
    meta = json.dumps(net.meta, ensure_ascii=False, allow_nan=False, indent=2)
    lines.append('  "meta": ' + meta.replace("\n", "\n  "))
    lines.append("}")
    return "\n".join(lines) + "\n"


def atomic_write(path: str, data: bytes | str) -> None:
    """Write ``data`` to ``path`` through a temporary file in the same folder, then rename,
    so a failure never leaves a half-written file."""
    folder = os.path.dirname(os.path.abspath(path))
    check_writable(path)
    try:
        fd, tmp = tempfile.mkstemp(dir=folder, prefix=".thresholdc-", suffix=".tmp")
    except OSError as exc:
        raise UsageError(f"cannot write here: {exc.strerror}", file=path) from None
    umask = os.umask(0)
    os.umask(umask)
    try:
        os.fchmod(fd, 0o666 & ~umask)  # the permissions a plain open() would give
        with os.fdopen(fd, "wb") as fh:
            fh.write(data.encode("utf-8") if isinstance(data, str) else data)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def check_writable(path: str) -> None:
    """Raise UsageError when ``path`` cannot be written: its folder is missing or it is a
    folder itself (checked before long work, so no time is lost on a bad ``-o``)."""
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise UsageError("cannot write: no such folder", file=path)
    if os.path.isdir(path):
        raise UsageError("cannot write: is a folder", file=path)


def save(net: Network, path: str) -> None:
    """Write ``net`` as a JSON network file at ``path`` (atomically)."""
    atomic_write(path, dumps(net))


def _fail(file: str, message: str) -> NetworkFileError:
    return NetworkFileError(message, file=file)


def _expect(cond: bool, file: str, message: str) -> None:
    if not cond:
        raise _fail(file, message)


def _is_number(x: Any) -> bool:
    if isinstance(x, bool) or not isinstance(x, (int, float)):
        return False
    # beyond 2^1000 a value overflows as soon as it is doubled or summed: refused as out of range
    return abs(x) < 2**1000


def _is_int(x: Any) -> bool:
    return isinstance(x, int) and not isinstance(x, bool)


def _names(x: Any) -> bool:
    return isinstance(x, list) and all(isinstance(i, str) for i in x)


# The keys every neuron carries (the writer's order).
NEURON_KEYS = ("name", "layer", "inputs", "weights", "bias", "activation", "role", "origin")
# Bounds checked before any array is built, so a file claiming absurd sizes is refused at once.
MAX_UNITS = 10_000_000        # input units + neurons + outputs
MAX_CONNECTIONS = 100_000_000  # weights over all neurons
MAX_FILE_BYTES = 1 << 30      # 1 GiB of JSON


def _require(data: dict[str, Any], key: str, file: str, where: str = "") -> Any:
    if key not in data:
        raise _fail(file, f"{where}missing \"{key}\"")
    return data[key]


def _check_features(features: Any, inputs: list[str], file: str) -> None:
    """``features`` (typed inputs): a list of objects whose units are the input units, in order."""
    _expect(isinstance(features, list) and all(isinstance(f, dict) for f in features), file,
            '"features" must be a list of objects')
    units: list[str] = []
    for k, f in enumerate(features):
        where = f"feature {k + 1}"
        _expect(isinstance(f.get("name"), str), file, f'{where}: "name" must be a string')
        kind = f.get("kind")
        _expect(kind in ("bool", "categorical", "real"), file,
                f"{where}: unknown kind {kind!r}; known: bool, categorical, real")
        _expect(_names(f.get("units")), file, f'{where}: "units" must be a list of names')
        if kind == "categorical":
            values = f.get("values")
            _expect(isinstance(values, list) and len(values) == len(f["units"]) and all(
                isinstance(v, str) or _is_int(v) for v in values), file,
                f'{where}: "values" must list one name or integer per unit')
        else:
            _expect(len(f["units"]) == 1, file, f"{where}: a {kind} feature has one unit")
        if kind == "real":
            rng = f.get("range")
            _expect(rng is None or (isinstance(rng, list) and len(rng) == 2
                                    and all(_is_number(x) for x in rng) and rng[0] <= rng[1]),
                    file, f'{where}: "range" must be null or [low, high] with low <= high')
            scale = f.get("scale")
            _expect(_is_number(scale) and scale > 0, file,
                    f'{where}: "scale" must be a positive number')
        units.extend(f["units"])
    _expect(units == inputs, file, '"features" units must be the "inputs", in order')


def from_dict(data: Any, file: str = "<network>") -> Network:
    """Build and check a :class:`Network` from parsed JSON.

    Strict: ``format`` is exactly the string, ``version`` exactly the integer 1, every required
    key is present with its type, and the structure is checked (:func:`check_network`).

    >>> from_dict({"format": FORMAT, "version": 1.0})
    Traceback (most recent call last):
    ...
    thresholdc.errors.NetworkFileError: <network>: unsupported network file version 1.0 \
(this reader knows 1)
    """
    _expect(isinstance(data, dict), file, "a network file must hold a JSON object")
    _expect(
        data.get("format") == FORMAT and isinstance(data.get("format"), str),
        file,
        f"not a thresholdc network file (expected \"format\": \"{FORMAT}\")",
    )
    version = _require(data, "version", file)
    _expect(
        _is_int(version) and version == VERSION,
        file,
        f"unsupported network file version {version!r} (this reader knows {VERSION})",
    )
    encoding = data.get("encoding", "binary")
    _expect(encoding in ENCODINGS, file, f"unknown encoding {encoding!r}; known: binary, bipolar")
    inputs = _require(data, "inputs", file)
    _expect(_names(inputs), file, '"inputs" must be a list of names')
    features = data.get("features")
    if features is not None:
        _check_features(features, inputs, file)
    raw_neurons = _require(data, "neurons", file)
    _expect(isinstance(raw_neurons, list), file, '"neurons" must be a list')
    raw_outputs = _require(data, "outputs", file)
    _expect(isinstance(raw_outputs, list), file, '"outputs" must be a list')
    units = len(inputs) + len(raw_neurons) + len(raw_outputs)
    _expect(units <= MAX_UNITS, file,
            f"{units} units and outputs exceed the reader's bound of {MAX_UNITS}")
    neurons = []
    connections = 0
    for k, raw in enumerate(raw_neurons):
        where = f"neuron {k + 1}"
        _expect(isinstance(raw, dict), file, f"{where} must be an object")
        name = raw.get("name")
        _expect(isinstance(name, str) and name != "", file, f"{where} has no name")
        where = f"neuron {name!r}"
        for key in NEURON_KEYS:
            _require(raw, key, file, f"{where}: ")
        ins = raw["inputs"]
        ws = raw["weights"]
        _expect(_names(ins), file, f"{where}: \"inputs\" must be a list of names")
        _expect(
            isinstance(ws, list) and all(_is_number(w) for w in ws),
            file,
            f"{where}: \"weights\" must be a list of finite numbers (below 2^1000 in size)",
        )
        _expect(
            len(ins) == len(ws),
            file,
            f"{where} has {len(ins)} inputs but {len(ws)} weights",
        )
        connections += len(ws)
        _expect(connections <= MAX_CONNECTIONS, file,
                f"more than {MAX_CONNECTIONS} weights: over the reader's bound")
        bias = raw["bias"]
        _expect(_is_number(bias), file,
                f"{where}: \"bias\" must be a finite number (below 2^1000 in size)")
        layer = raw["layer"]
        _expect(_is_int(layer), file, f"{where}: \"layer\" must be an integer")
        activation = raw["activation"]
        _expect(
            isinstance(activation, str) and activation in act.ACTIVATIONS,
            file,
            f"{where}: unknown activation {activation!r}; known: {', '.join(act.ACTIVATIONS)}",
        )
        role = raw["role"]
        _expect(isinstance(role, str) and role in ROLES, file,
                f"{where}: unknown role {role!r}; known: {', '.join(ROLES)}")
        origin = raw["origin"]
        _expect(origin is None or isinstance(origin, str), file,
                f"{where}: \"origin\" must be a string or null")
        neurons.append(
            Neuron(name, layer, tuple(ins), tuple(ws), bias, activation, role, origin)
        )
    outputs = []
    for raw in raw_outputs:
        _expect(
            isinstance(raw, dict)
            and isinstance(raw.get("name"), str)
            and isinstance(raw.get("source"), str),
            file,
            'each output must be {"name": …, "source": …}',
        )
        outputs.append(Output(raw["name"], raw["source"]))
    meta = _require(data, "meta", file)
    _expect(isinstance(meta, dict), file, '"meta" must be an object')
    _check_meta(meta, file)
    net = Network(
        tuple(inputs),
        tuple(neurons),
        tuple(outputs),
        meta,
        encoding,
        tuple(features) if features is not None else None,
    )
    check_network(net, file)
    return net


def _check_meta(meta: dict[str, Any], file: str) -> None:
    """The parts of ``meta`` that commands read: their shapes, so no reader trips on them."""
    cones = meta.get("cones")
    if cones is not None:
        _expect(isinstance(cones, dict) and all(
            isinstance(c, dict) and isinstance(c.get("root"), str) and _names(c.get("leaves"))
            for c in cones.values()), file,
            '"meta.cones" must map neurons to {"root": SIGNAL, "leaves": [SIGNAL, …]}')
    for key in ("verification", "certificate", "options", "training"):
        _expect(meta.get(key) is None or isinstance(meta[key], dict), file,
                f'"meta.{key}" must be an object')


def loads(text: str, file: str = "<network>") -> Network:
    """Parse network file text (NaN, Infinity and out-of-range numbers are refused).

    >>> loads('{"format": "thresholdc-network", "version": NaN}', "n.json")
    Traceback (most recent call last):
    ...
    thresholdc.errors.NetworkFileError: n.json: not a JSON network file: NaN is not a JSON number
    """
    _expect(len(text) <= MAX_FILE_BYTES, file,
            f"the file is larger than the reader's bound of {MAX_FILE_BYTES} bytes")
    try:
        data = json.loads(text, parse_constant=_no_constant, parse_float=_finite_float)
    except _NotFinite as exc:
        raise NetworkFileError(f"not a JSON network file: {exc}", file=file) from None
    except RecursionError:
        raise NetworkFileError("not a JSON network file: nested too deeply", file=file) from None
    except ValueError as exc:
        if not isinstance(exc, json.JSONDecodeError):  # e.g. an integer of too many digits
            raise NetworkFileError(f"not a JSON network file: {exc}", file=file) from None
        # the position counted as in every other file (a bare CR ends a line too), not json's
        line, column = line_and_column(text, exc.pos)
        lines = split_lines(text)
        raise NetworkFileError(
            f"not a JSON network file: {exc.msg}", file=file, line=line, column=column,
            source_line=lines[line - 1] if line <= len(lines) else "",
        ) from None
    return from_dict(data, file)


class _NotFinite(ValueError):
    pass


def _no_constant(name: str) -> float:
    raise _NotFinite(f"{name} is not a JSON number")


def _finite_float(text: str) -> float:
    x = float(text)
    if not math.isfinite(x):
        raise _NotFinite(f"{text} is out of the range of a number")
    return x


def read_text(path: str) -> str:
    """The UTF-8 text of ``path``, or a NetworkFileError that says why it cannot be read."""
    return _read_text(path, NetworkFileError)


def load(path: str) -> Network:
    """Read the JSON network file at ``path`` (its size is checked before it is read)."""
    try:
        size = os.path.getsize(path)
    except OSError:
        size = 0  # read_text says why it cannot be read
    _expect(size <= MAX_FILE_BYTES, path,
            f"the file is larger than the reader's bound of {MAX_FILE_BYTES} bytes")
    return loads(read_text(path), path)
