"""Soft activations with certified gains: the ``soften`` pass.

The compiler's step network has integer weights and half-integer biases, so on every 0/1 input
every step neuron has ``|z| ≥ 0.5``.  :func:`apply_activation` turns it into the network the
user asked for: ``step`` (unchanged, optionally in the bipolar encoding), ``sigmoid`` or
``tanh`` with certified gains folded into the weights and bias, or the exact ``relu`` form
(:mod:`thresholdc.network.relu`).  With ``layered=True`` the result is the strict layered form.

The certificate (stored as ``meta.certificate``) says how far every neuron's output can be
from its exact step value on every input assignment::

    {"tolerance": EPS | null, "margins": "exhaustive" | "assumed", "bound": B,
     "neurons": {NAME: {"margin": m, "gain": g, "bound": b}, ...}}

``m`` is the pre-gain margin (min |z| over every assignment of the input units; 0.5 when they
are too many to enumerate), ``g`` the gain folded into the neuron, ``b`` its certified
deviation and ``B`` the largest ``b``.
:func:`thresholdc.verification.certificate.check_certificate` checks it.

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...               (Output("y", "y"),))
>>> soft = apply_activation(net, activation="sigmoid", tolerance=0.01)
>>> soft.neurons[0].activation, soft.meta["certificate"]["bound"] <= 0.01
('sigmoid', True)
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import replace
from decimal import ROUND_CEILING, Decimal
from typing import Any

import numpy as np

from ..errors import UsageError
from ..ir.network import Network, real_margins, real_units
from ..ir.options import CHOICES, DEFAULT_TOLERANCE, CompileOptions
from ..progress import bar as progress_bar
from .layering import insert_relays
from .relu import to_relu

__all__ = [
    "ACTIVATION_CHOICES",
    "ENCODING_CHOICES",
    "DEFAULT_TOLERANCE",
    "MAX_MARGIN_INPUTS",
    "apply_activation",
    "certify_gains",
    "to_bipolar",
    "neuron_margins",
    "certificate_bound",
    "misread_limit",
    "survives",
    "deviation",
]

ACTIVATION_CHOICES = CHOICES["activation"]
ENCODING_CHOICES = CHOICES["encoding"]
MAX_MARGIN_INPUTS = 20
GAIN_DIGITS = 6  # gains are rounded up to this many significant digits
BOUND_DIGITS = 10  # bounds are rounded up to this many significant digits
_CHUNK_CELLS = 1 << 23  # rows × units evaluated at once while enumerating margins


# ---------------------------------------------------------------------------- options
def _check_options(
    activation: str, gain: float | None, tolerance: float | None, encoding: str
) -> None:
    """Raise UsageError for values or a combination that does not fit together (the checks of
    :class:`~thresholdc.ir.options.CompileOptions`)."""
    CompileOptions(activation=activation, gain=gain, tolerance=tolerance, encoding=encoding)


def _check_step_network(net: Network) -> None:
    """Raise UsageError unless ``net`` is a binary step network with integer weights and
    half-integer biases (the compiler's output)."""
    if net.encoding != "binary":
        raise UsageError("apply_activation needs a network in the binary encoding")
    real = real_units(net)
    for n in net.neurons:
        if n.activation != "step":
            raise UsageError(
                f"apply_activation needs a step network; neuron {n.name!r} is {n.activation}"
            )
        if real.keys() & set(n.inputs):  # a real test z = ±(x − c): float bias by design
            continue
        if not all(float(w).is_integer() for w in n.weights) or not (
            float(n.bias) - 0.5
        ).is_integer():
            raise UsageError(
                f"apply_activation needs integer weights and half-integer biases; "
                f"neuron {n.name!r} has {n!r}"
            )


# ---------------------------------------------------------------------------- the pass
def apply_activation(
    net: Network,
    *,
    activation: str = "step",
    gain: float | None = None,
    tolerance: float | None = None,
    encoding: str = "binary",
    layered: bool = False,
    progress: bool = False,
) -> Network:
    """The compiled step network in the chosen activation (a new network).

    Parameters
    ----------
    net : Network
        The compiler's step network (integer weights, half-integer biases, binary encoding),
        not yet layered.
    activation : {"step", "sigmoid", "tanh", "relu"}
        ``sigmoid`` and ``tanh`` get certified gains (``meta.certificate``); ``relu`` is the
        exact form of :func:`thresholdc.network.relu.to_relu`.
    gain : float, optional
        A fixed gain for every soft neuron (the certificate then shows the resulting bound,
        with ``"tolerance": null``).  Not together with ``tolerance``.
    tolerance : float, optional
        Every neuron within this distance of its step value (0 < EPS < 0.5; default 0.01
        for sigmoid/tanh when no gain is given).
    encoding : {"binary", "bipolar"}
        ``bipolar`` (inputs and outputs ±1) is required by ``tanh`` and allowed with ``step``.
    layered : bool
        Return the strict layered form (relays inserted; every output in the last layer).
    progress : bool
        Show a progress bar (tqdm, if installed) while margins are enumerated.

    Returns
    -------
    Network

    Raises
    ------
    UsageError
        For options that do not fit together, e.g. tanh without the bipolar encoding.

    Examples
    --------
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5, origin="n"),),
    ...               (Output("n", "n"),))
    >>> apply_activation(net, activation="sigmoid", gain=8.0).neurons[0].weights
    (-8.0,)
    >>> apply_activation(net, activation="tanh")
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: --activation tanh requires --encoding bipolar
    """
    _check_options(activation, gain, tolerance, encoding)
    _check_step_network(net)
    if activation == "relu":
        return to_relu(net, layered=layered)
    if layered:
        net = insert_relays(net)
    if encoding == "bipolar":
        net = to_bipolar(net)
    if activation == "step":
        return net
    if gain is None and tolerance is None:
        tolerance = DEFAULT_TOLERANCE
    return certify_gains(
        net, activation=activation, tolerance=tolerance, gain=gain, progress=progress
    )


def to_bipolar(net: Network) -> Network:
    """The step network rewritten for ±1 inputs and outputs (``encoding = "bipolar"``).

    A neuron ``z = Σ w x + b`` over 0/1 values reads, on ``x' = 2x − 1``,
    ``z = Σ (w/2) x' + (b + Σ w/2)``: the same pre-activation, so the same margins.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),),
    ...               (Output("y", "y"),))
    >>> bip = to_bipolar(net)
    >>> bip.neurons[0].weights, bip.neurons[0].bias, bip.evaluate([[-1, 1], [1, 1]]).tolist()
    ((0.5, 0.5), -0.5, [[-1.0], [1.0]])
    """
    assert net.encoding == "binary"
    real = real_units(net)  # real units carry raw values in both encodings: left as they are
    neurons = tuple(
        replace(n, weights=tuple(w if i in real else w / 2 for i, w in zip(n.inputs, n.weights)),
                bias=n.bias + sum(w for i, w in zip(n.inputs, n.weights) if i not in real) / 2)
        for n in net.neurons
    )
    return replace(net, neurons=neurons, encoding="bipolar")


# ---------------------------------------------------------------------------- margins
def _has_real_units(net: Network) -> bool:
    """True when a typed input feeds a real-valued unit (which cannot be enumerated)."""
    return any("real" in f.values() for f in (net.features or ()))


def _row_chunks(n_inputs: int, chunk: int, progress: bool) -> Iterator[tuple[int, int]]:
    """``(start, stop)`` ranges covering 0 … 2**n_inputs − 1, with an optional tqdm bar."""
    total = 1 << n_inputs
    starts = range(0, total, chunk)
    shown = progress_bar(len(starts), "margins", unit="chunk", show=progress and len(starts) > 4)
    with shown:
        for start in starts:
            yield start, min(start + chunk, total)
            shown.update(1)


def _plan(net: Network) -> list[tuple[np.ndarray, np.ndarray, float]]:
    """For every neuron: the value-array rows it reads, its weights and its bias."""
    index = {name: i for i, name in enumerate(net.inputs)}
    plan = []
    for j, n in enumerate(net.neurons):
        plan.append((np.array([index[i] for i in n.inputs], dtype=np.int64),
                     np.array(n.weights, dtype=float), float(n.bias)))
        index[n.name] = len(net.inputs) + j
    return plan


def _local_margins(net: Network, plan: list[tuple[np.ndarray, np.ndarray, float]]) -> np.ndarray:
    """A lower bound of every margin: min |z| over every pattern of the neuron's own inputs
    (reachable or not) for fan-in up to 12; beyond, 0.5 where the weights are exactly integer
    and the bias half-integer (in the bipolar encoding: 2w integer, b − Σw half-integer), else 0.
    """
    bipolar = net.encoding == "bipolar"
    values = (-1.0, 1.0) if bipolar else (0.0, 1.0)
    out = np.zeros(len(plan))
    for j, (_, w, b) in enumerate(plan):
        if w.size > 12:
            whole = 2 * w if bipolar else w
            half = b - w.sum() if bipolar else b
            if np.all(whole == np.round(whole)) and (half - 0.5).is_integer():
                out[j] = 0.5
        else:
            bits = (np.arange(1 << w.size)[:, None] >> np.arange(w.size)) & 1
            P = np.where(bits == 1, values[1], values[0])
            out[j] = float(np.abs(P @ w + b).min()) if w.size else abs(b)
    return out


def neuron_margins(
    net: Network, *, max_inputs: int = MAX_MARGIN_INPUTS, progress: bool = False
) -> tuple[np.ndarray, str]:
    """The margin ``min |z|`` of every neuron over every assignment of the input units.

    ``net`` is a step network (binary 0/1 or bipolar ±1 inputs).  With more than
    ``max_inputs`` inputs (or real-valued units) the margins are not enumerated and the
    compiler's guarantee 0.5 is returned with ``"assumed"``.  Chunked: never the whole truth
    table in memory.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (2, 2), -1.5),),
    ...               (Output("y", "y"),))
    >>> neuron_margins(net)
    (array([0.5]), 'exhaustive')
    """
    # Rules: rows are visited in a scrambled order (row = i·M mod 2**k, M odd, a bijection)
    # so that every chunk mixes all inputs; the unit values are held unit-major (one
    # contiguous row of values per unit) so a neuron reads whole rows.  The running minimum
    # of |z| can never fall below the neuron's local margin (min over every pattern of its own
    # inputs), so once every neuron has reached its local margin the rest of the table cannot
    # change anything and the enumeration stops early.
    k = len(net.inputs)
    count = len(net.neurons)
    if k > max_inputs or _has_real_units(net):
        return real_margins(net, np.full(count, 0.5)), "assumed"
    margins = np.full(count, np.inf)
    if count == 0:
        return margins, "exhaustive"
    plan = _plan(net)
    floor = _local_margins(net, plan)
    doubled = _doubled_plan(plan)
    cells = _CHUNK_CELLS * (8 if doubled is not None else 1)  # int8 cells are 8× smaller
    chunk = max(1, min(1 << k, cells // (k + count)))
    shifts = np.arange(k, dtype=np.int64)[:, None]
    mult = (0x9E3779B97F4A7C15 % (1 << k)) | 1 if k else 1
    bipolar = net.encoding == "bipolar"
    for start, stop in _row_chunks(k, chunk, progress):
        rows = (np.arange(start, stop, dtype=np.int64) * mult) & ((1 << k) - 1)
        bits = (rows[None, :] >> shifts) & 1
        if doubled is not None:
            got = _chunk_margins_int(bits, doubled, bipolar)
        else:
            got = _chunk_margins_float(bits, plan, bipolar)
        np.minimum(margins, got, out=margins)
        if (margins <= floor).all():
            break
    return margins, "exhaustive"


def _doubled_plan(
    plan: list[tuple[np.ndarray, np.ndarray, float]],
) -> list[tuple[np.ndarray, np.ndarray, np.int16]] | None:
    """The plan with 2·weights and 2·bias as int16 when they are all exact integers small
    enough that no 2z overflows int16; else None (the float path is used)."""
    out = []
    for idx, w, b in plan:
        w2, b2 = 2 * w, 2 * b
        if not (np.all(w2 == np.round(w2)) and float(b2).is_integer()):
            return None
        if float(np.abs(w2).sum()) + abs(b2) >= 2**15 - 1:
            return None
        out.append((idx, w2.astype(np.int16), np.int16(b2)))
    return out


def _chunk_margins_int(bits: np.ndarray, plan: list[tuple[np.ndarray, np.ndarray, np.int16]],
                       bipolar: bool) -> np.ndarray:
    """min |z| of every neuron over the rows ``bits`` (inputs × rows), in exact int16 2z."""
    k, n = bits.shape
    V = np.empty((k + len(plan), n), dtype=np.int8)
    V[:k] = 2 * bits - 1 if bipolar else bits
    out = np.empty(len(plan))
    for j, (idx, w2, b2) in enumerate(plan):
        z = np.full(n, b2, dtype=np.int16)
        for i, c in zip(idx.tolist(), w2.tolist(), strict=True):
            if c == 1:
                z += V[i]
            elif c == -1:
                z -= V[i]
            else:
                z += np.int16(c) * V[i]
        out[j] = float(np.abs(z).min()) / 2
        if bipolar:
            V[k + j] = np.where(z > 0, 1, -1)
        else:
            np.greater(z, 0, out=V[k + j], casting="unsafe")
    return out


def _chunk_margins_float(bits: np.ndarray, plan: list[tuple[np.ndarray, np.ndarray, float]],
                         bipolar: bool) -> np.ndarray:
    """min |z| of every neuron over the rows ``bits`` (inputs × rows), in float64."""
    k, n = bits.shape
    lo = -1.0 if bipolar else 0.0
    V = np.empty((k + len(plan), n))
    V[:k] = np.where(bits == 1, 1.0, lo)
    out = np.empty(len(plan))
    for j, (idx, w, b) in enumerate(plan):
        z = w @ V[idx] + b if idx.size else np.full(n, b)
        out[j] = float(np.abs(z).min())
        V[k + j] = np.where(z > 0, 1.0, lo)
    return out


# ---------------------------------------------------------------------------- gains
def deviation(x: float, activation: str) -> float:
    """How far a soft neuron can be from its step value when its true pre-activation,
    scaled by the gain, is at least ``x`` away from 0 on the right side.

    sigmoid: ``σ(−x)`` (values 0/1); tanh: ``1 − tanh(x)`` (values ±1).

    >>> round(deviation(math.log(99), "sigmoid"), 12)
    0.01
    """
    if activation == "tanh":
        return 2.0 * deviation(2.0 * x, "sigmoid")
    if x >= 0:
        return math.exp(-x) / (1.0 + math.exp(-x))
    return 1.0 / (1.0 + math.exp(x))


def _gain_numerator(eps: float, activation: str) -> float:
    """The scaled distance ``x`` with ``deviation(x) = eps``."""
    if activation == "tanh":
        return 0.5 * math.log((2.0 - eps) / eps)
    return math.log(1.0 / eps - 1.0)


def _ceil_sig(x: float, digits: int) -> float:
    """``x`` rounded up to ``digits`` significant digits (deterministic, never below x)."""
    if x <= 0 or not math.isfinite(x):
        return float(x)
    exponent = math.floor(math.log10(x)) - digits + 1
    d = Decimal(x).quantize(Decimal(1).scaleb(exponent), rounding=ROUND_CEILING)
    return float(d)


def _soft_inputs(net: Network) -> list[tuple[np.ndarray, np.ndarray]]:
    """For every neuron: indices of the neurons it reads and the |weights| on them.

    Input units deviate by 0, so they are left out."""
    pos = {n.name: j for j, n in enumerate(net.neurons)}
    edges = []
    for n in net.neurons:
        pairs = [
            (pos[i], abs(float(w)))
            for i, w in zip(n.inputs, n.weights, strict=True)
            if i in pos
        ]
        idx = np.array([p[0] for p in pairs], dtype=np.int64)
        aw = np.array([p[1] for p in pairs], dtype=float)
        edges.append((idx, aw))
    return edges


def _budgets(margins: np.ndarray, edges: list[tuple[np.ndarray, np.ndarray]],
             eps: float) -> np.ndarray:
    """Backward pass: ε_n = min(EPS, min over readers c of m_c / (2·Σ|w_c|))."""
    budget = np.full(len(edges), float(eps))
    for c in range(len(edges) - 1, -1, -1):
        idx, aw = edges[c]
        total = float(aw.sum())
        if idx.size and total > 0:
            budget[idx] = np.minimum(budget[idx], margins[c] / (2.0 * total))
    return budget


def certify_gains(
    net: Network,
    *,
    activation: str = "sigmoid",
    tolerance: float | None = DEFAULT_TOLERANCE,
    gain: float | None = None,
    progress: bool = False,
) -> Network:
    """Give every step neuron of ``net`` a soft activation with a certified gain.

    ``net`` is a step network: binary (for sigmoid) or bipolar (for tanh, see
    :func:`to_bipolar`), weights and bias pre-gain.  Either ``tolerance`` (derived gains) or
    ``gain`` (one fixed gain) is given.

    Rules.  A neuron whose inputs are each at most ε_i from their exact values
    has its pre-activation moved by at most s = Σ|w_i|·ε_i (input units: ε = 0), so with gain
    g its output is within deviation(g·(m − s)) of the step value (m: its margin).  With a
    tolerance EPS: backward from the outputs, each neuron gets the budget
    ε_n = min(EPS, min over readers c of m_c / (2·Σ|w_c|)) (the sum over the neurons c reads;
    this keeps s_c ≤ m_c/2); then forward, g_n = x(ε_n) / (m_n − s_n) with deviation(x) = ε_n,
    the smallest gain that meets the budget, rounded up to 6 significant digits.  Bounds are
    rounded up to 10 significant digits and the rounded values are propagated.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5, origin="n"),),
    ...               (Output("n", "n"),))
    >>> cert = certify_gains(net, tolerance=0.01).meta["certificate"]
    >>> cert["neurons"]["n"]["gain"], cert["neurons"]["n"]["bound"] <= 0.01
    (9.19024, True)
    """
    assert (tolerance is None) != (gain is None)
    margins, how = neuron_margins(net, progress=progress)
    edges = _soft_inputs(net)
    budget = _budgets(margins, edges, tolerance) if tolerance is not None else None
    bounds = np.zeros(len(net.neurons))
    gains = np.zeros(len(net.neurons))
    for j, (idx, aw) in enumerate(edges):
        spent = float(aw @ bounds[idx]) if idx.size else 0.0
        room = float(margins[j]) - spent
        if budget is not None:
            assert room > 0, "budgets keep every margin half free"
            g = _ceil_sig(_gain_numerator(float(budget[j]), activation) / room, GAIN_DIGITS)
        else:
            g = float(gain)  # type: ignore[arg-type]
        gains[j] = g
        bounds[j] = _ceil_sig(deviation(g * room, activation), BOUND_DIGITS)
    neurons = tuple(
        replace(
            n,
            weights=tuple(float(w) * g for w in n.weights),
            bias=float(n.bias) * g,
            activation=activation,
        )
        for n, g in zip(net.neurons, gains.tolist(), strict=True)
    )
    certificate: dict[str, Any] = {
        "tolerance": None if tolerance is None else float(tolerance),
        "margins": how,
        "bound": float(bounds.max()) if len(bounds) else 0.0,
        "neurons": {
            n.name: {"margin": float(m), "gain": float(g), "bound": float(b)}
            for n, m, g, b in zip(net.neurons, margins.tolist(), gains.tolist(),
                                  bounds.tolist(), strict=True)
        },
    }
    return replace(net, neurons=neurons).with_meta(certificate=certificate)


# ---------------------------------------------------------------------------- queries
def misread_limit(net: Network) -> float:
    """The deviation at which an output could be misread: 0.5 (binary), 1 (bipolar).

    >>> from thresholdc.ir.network import Network
    >>> misread_limit(Network((), (), ()))
    0.5
    """
    return 1.0 if net.encoding == "bipolar" else 0.5


def certificate_bound(net: Network) -> float:
    """The certified bound ``B`` stored in ``meta.certificate`` (0.0 for an exact network).

    Raises ``ValueError`` for a soft network without a certificate.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> certificate_bound(net)
    0.0
    """
    cert = net.meta.get("certificate")
    if cert is None:
        if any(n.activation in ("sigmoid", "tanh") for n in net.neurons):
            raise ValueError("this soft network carries no certificate")
        return 0.0
    return float(cert["bound"])


def survives(net: Network) -> bool:
    """True when the certified bound keeps every neuron on the right side of the decision
    threshold, i.e. the soft network still computes the rules (bound < :func:`misread_limit`).

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a", "b"), (Neuron("p", 1, ("a", "b"), (1, 1), -1.5),
    ...                            Neuron("q", 1, ("a", "b"), (1, 1), -0.5),
    ...                            Neuron("y", 2, ("p", "q"), (1, 1), -1.5)),
    ...               (Output("y", "y"),))
    >>> survives(apply_activation(net, activation="sigmoid", gain=1.0))
    False
    >>> survives(apply_activation(net, activation="sigmoid", gain=10.0))
    True
    """
    return certificate_bound(net) < misread_limit(net)
