"""NumPy ``.npz`` export and import: the strict layered form as plain arrays.

Layout: ``W1, b1, …, WL, bL`` (float64; ``Wℓ`` of shape ``(n_out, n_in)``,
``bℓ`` of shape ``(n_out,)``), and unicode (dtype ``'U'``) arrays ``activations`` (length L),
``inputs`` and ``outputs``.  The rows of ``WL`` are the outputs in output order (see
:mod:`thresholdc.export.dense`).  Nothing needs pickle, so ``np.load(path,
allow_pickle=False)`` reads it, and a forward pass is a few lines of numpy.

The archive is written by hand (stored entries with a fixed date in a fixed order) because
``np.savez`` stamps every entry with the current time: the same network gives the same bytes.

>>> import io
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
>>> arrays = np.load(io.BytesIO(npz_bytes(net)), allow_pickle=False)
>>> sorted(arrays.files), arrays["W1"].tolist(), arrays["activations"].tolist()
(['W1', 'activations', 'b1', 'inputs', 'outputs'], [[1.0, 1.0]], ['step'])
"""

from __future__ import annotations

import io
import re
import zipfile
from typing import Any

import numpy as np

from ..errors import NetworkFileError
from ..ir.network import Network
from ..network import atomic_write
from .dense import dense_form, network_from_layers

__all__ = ["to_arrays", "npz_bytes", "save_npz", "load_npz", "from_arrays"]

_DATE = (1980, 1, 1, 0, 0, 0)  # the earliest date a zip entry can hold; fixed for identical bytes


def _names(values: Any) -> np.ndarray:
    """A 1-D unicode array (dtype ``'<U…'``, never object) of ``values``."""
    values = [str(v) for v in values]
    width = max([1] + [len(v) for v in values])
    return np.array(values, dtype=f"<U{width}")


def to_arrays(net: Network) -> dict[str, np.ndarray]:
    """The arrays of the ``.npz`` file of ``net``, in the order they are written.

    Parameters
    ----------
    net : Network
        Any network; a non-strict one is put in strict layered form first.

    Returns
    -------
    dict of str to numpy.ndarray
        ``W1, b1, …, WL, bL, activations, inputs, outputs``.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> list(to_arrays(net))
    ['W1', 'b1', 'activations', 'inputs', 'outputs']
    """
    form = dense_form(net)
    arrays: dict[str, np.ndarray] = {}
    for k, (W, b, _) in enumerate(form.layers, start=1):
        arrays[f"W{k}"] = np.ascontiguousarray(W, dtype=np.float64)
        arrays[f"b{k}"] = np.ascontiguousarray(b, dtype=np.float64)
    arrays["activations"] = _names(f for _, _, f in form.layers)
    arrays["inputs"] = _names(form.inputs)
    arrays["outputs"] = _names(form.outputs)
    return arrays


def npz_bytes(net: Network) -> bytes:
    """The bytes of the ``.npz`` file of ``net`` (deterministic)."""
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_STORED) as archive:
        for key, array in to_arrays(net).items():
            info = zipfile.ZipInfo(f"{key}.npy", date_time=_DATE)
            info.external_attr = 0o644 << 16
            entry = io.BytesIO()
            np.lib.format.write_array(entry, array, allow_pickle=False)
            archive.writestr(info, entry.getvalue())
    return buffer.getvalue()


def save_npz(net: Network, path: str) -> None:
    """Write ``net`` as ``.npz`` at ``path`` (atomically: temporary file, then rename).

    >>> import os, tempfile
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> path = os.path.join(tempfile.mkdtemp(), "n.npz"); save_npz(net, path)
    >>> np.load(path, allow_pickle=False)["b1"].tolist()
    [0.5]
    """
    atomic_write(path, npz_bytes(net))


def from_arrays(arrays: Any, *, like: Network | None = None, file: str = "<npz>") -> Network:
    """A dense :class:`Network` from the arrays of an ``.npz`` file (see :func:`load_npz`)."""
    keys = set(arrays.files if hasattr(arrays, "files") else arrays.keys())
    numbered = sorted(int(m.group(1)) for k in keys if (m := re.fullmatch(r"W(\d+)", k)))
    if not numbered:
        raise NetworkFileError("no weight arrays W1, W2, … in this .npz file", file=file)
    depth = len(numbered)
    if numbered != list(range(1, depth + 1)):
        raise NetworkFileError(f"weight arrays must be W1 … W{depth} without gaps; "
                               f"found {', '.join(f'W{k}' for k in numbered)}", file=file)
    for k in range(1, depth + 1):
        if f"b{k}" not in keys:
            raise NetworkFileError(f"layer {k} has W{k} but no bias b{k}", file=file)
    if "activations" not in keys:
        raise NetworkFileError("no 'activations' array (one name per layer)", file=file)
    acts = _strings(arrays["activations"], "activations", file)
    if len(acts) != depth:
        raise NetworkFileError(f"'activations' names {len(acts)} layers but there are "
                               f"{depth} weight arrays", file=file)
    layers = []
    for k in range(1, depth + 1):
        W, b = arrays[f"W{k}"], arrays[f"b{k}"]
        for name, a in ((f"W{k}", W), (f"b{k}", b)):
            if a.dtype.kind not in "fiu":
                raise NetworkFileError(f"{name} must hold numbers, not {a.dtype}", file=file)
        layers.append((W.astype(float), b.astype(float), acts[k - 1]))
    inputs = _strings(arrays["inputs"], "inputs", file) if "inputs" in keys else None
    outputs = _strings(arrays["outputs"], "outputs", file) if "outputs" in keys else None
    return network_from_layers(layers, like=like, inputs=inputs, outputs=outputs, file=file)


def _strings(array: np.ndarray, key: str, file: str) -> list[str]:
    """The 1-D unicode array ``key`` as a list of str."""
    if array.dtype.kind != "U" or array.ndim != 1:
        raise NetworkFileError(f"'{key}' must be a 1-D unicode array (dtype 'U'), "
                               f"not {array.dtype} of shape {array.shape}", file=file)
    return [str(v) for v in array]


def load_npz(path: str, like: Network | None = None) -> Network:
    """Read a dense MLP from an ``.npz`` file in the layout above.

    Parameters
    ----------
    path : str
        The file.
    like : Network, optional
        The compiled network the file came from: gives neuron names, features and the
        encoding (without it, the file's own ``inputs`` and ``outputs`` arrays name the
        units and hidden units are called ``L{k}~{i}``).

    Returns
    -------
    Network
        A dense network in strict layered form.

    Raises
    ------
    NetworkFileError
        The file cannot be read or is not in the layout.
    UsageError
        A layer's shape does not fit ``like`` (the message names the layer).

    >>> import os, tempfile
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> path = os.path.join(tempfile.mkdtemp(), "n.npz"); save_npz(net, path)
    >>> load_npz(path).evaluate([[0], [1]]).tolist()
    [[1.0], [0.0]]
    """
    try:
        arrays = np.load(path, allow_pickle=False)
    except FileNotFoundError:
        raise NetworkFileError("no such file", file=path) from None
    except IsADirectoryError:
        raise NetworkFileError("is a folder, not a file", file=path) from None
    except (zipfile.BadZipFile, EOFError, OSError) as exc:
        raise NetworkFileError(f"not a readable .npz file ({exc})", file=path) from None
    except ValueError as exc:  # e.g. an array that would need pickle
        raise NetworkFileError(f"not a plain .npz file: {exc}", file=path) from None
    if not isinstance(arrays, np.lib.npyio.NpzFile):
        raise NetworkFileError("holds a single array, not an .npz archive of layers", file=path)
    with arrays:
        return from_arrays(arrays, like=like, file=path)
