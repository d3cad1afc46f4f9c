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
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def from_dict(data: Any, file: str = "<network>") -> Network:
    """Build and check a :class:`Network` from parsed JSON."""
    _expect(isinstance(data, dict), file, "a network file must hold a JSON object")
    _expect(
        data.get("format") == FORMAT,
        file,
        f"not a thresholdc network file (expected \"format\": \"{FORMAT}\")",
    )
    _expect(
        data.get("version") == VERSION,
        file,
        f"unsupported network file version {data.get('version')!r} (this reader knows {VERSION})",
    )
    encoding = data.get("encoding", "binary")
    _expect(encoding in ENCODINGS, file, f"unknown encoding {encoding!r}; known: binary, bipolar")
    inputs = data.get("inputs")
    _expect(
        isinstance(inputs, list) and all(isinstance(i, str) for i in inputs),
        file,
        '"inputs" must be a list of names',
    )
    features = data.get("features")
    _expect(
        features is None
        or (isinstance(features, list) and all(isinstance(f, dict) for f in features)),
        file,
        '"features" must be a list of objects',
    )
    raw_neurons = data.get("neurons")
    _expect(isinstance(raw_neurons, list), file, '"neurons" must be a list')
    neurons = []
    for k, raw in enumerate(raw_neurons):
        where = f"neuron {k + 1}"
        _expect(isinstance(raw, dict), file, f"{where} must be an object")
        name = raw.get("name")
        _expect(isinstance(name, str) and name != "", file, f"{where} has no name")
        where = f"neuron {name!r}"
        ins = raw.get("inputs")
        ws = raw.get("weights")
        _expect(
            isinstance(ins, list) and all(isinstance(i, str) for i in ins),
            file,
            f"{where}: \"inputs\" must be a list of names",
        )
        _expect(
            isinstance(ws, list) and all(_is_number(w) for w in ws),
            file,
            f"{where}: \"weights\" must be a list of finite numbers",
        )
        _expect(
            len(ins) == len(ws),
            file,
            f"{where} has {len(ins)} inputs but {len(ws)} weights",
        )
        bias = raw.get("bias")
        _expect(_is_number(bias), file, f"{where}: \"bias\" must be a finite number")
        layer = raw.get("layer")
        _expect(
            isinstance(layer, int) and not isinstance(layer, bool),
            file,
            f"{where}: \"layer\" must be an integer",
        )
        activation = raw.get("activation", "step")
        _expect(
            activation in act.ACTIVATIONS,
            file,
            f"{where}: unknown activation {activation!r}; known: {', '.join(act.ACTIVATIONS)}",
        )
        role = raw.get("role", "gate")
        _expect(role in ROLES, file, f"{where}: unknown role {role!r}; known: {', '.join(ROLES)}")
        origin = raw.get("origin")
        _expect(origin is None or isinstance(origin, str), file, f"{where}: bad \"origin\"")
        neurons.append(
            Neuron(name, layer, tuple(ins), tuple(ws), bias, activation, role, origin)
        )
    raw_outputs = data.get("outputs")
    _expect(isinstance(raw_outputs, list), file, '"outputs" must be a list')
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
    meta = data.get("meta", {})
    _expect(isinstance(meta, dict), file, '"meta" must be an object')
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


def loads(text: str, file: str = "<network>") -> Network:
    """Parse network file text."""
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        lines = text.splitlines()
        line = lines[exc.lineno - 1] if exc.lineno <= len(lines) else ""
        raise NetworkFileError(
            f"not a JSON network file: {exc.msg}", file=file, line=exc.lineno, column=exc.colno,
            source_line=line,
        ) from None
    return from_dict(data, file)


def read_text(path: str) -> str:
    """The UTF-8 text of ``path``, or a NetworkFileError that says why it cannot be read."""
    return _read_text(path, NetworkFileError)


def load(path: str) -> Network:
    """Read the JSON network file at ``path``."""
    return loads(read_text(path), path)
