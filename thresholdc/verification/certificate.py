"""Check the certificate of a soft (sigmoid or tanh) network: its certified error bound.

A soft network stores, in ``meta.certificate``, each neuron's pre-gain margin, its gain and its
certified deviation bound (see :mod:`thresholdc.network.soften`).  :func:`check_certificate`
trusts none of the stored numbers: it divides every stored weight and bias by the stored gain
(they must come back integer and half-integer — in the bipolar encoding ``2w`` integer and
``b − Σw`` half-integer), recomputes the margins of the de-gained step network over every input
assignment where they are enumerable (else uses 0.5, which integer weights and half-integer
biases guarantee on 0/1 inputs), propagates the deviation bounds forward from the input units
(deviation 0) with the stated gains, and reports every stated number that is not backed.

How the ``verify`` command uses it: for a network whose neurons are sigmoid or tanh, call
``check_certificate(net)``; print each entry of ``problems`` and exit 1 when ``ok`` is false.
``bound`` is the recomputed largest deviation; ``survives`` says whether it stays below the
misreading limit (0.5 binary, 1 bipolar).

>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.network.soften import apply_activation
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5),), (Output("y", "y"),))
>>> check_certificate(apply_activation(net, activation="sigmoid")).ok
True
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..ir.network import Network, real_units
from ..network import MAX_MARGIN_INPUTS, deviation, misread_limit, neuron_margins

__all__ = ["CertificateCheck", "check_certificate"]

_INTEGRAL = 1e-6  # how far a de-gained weight may be from its integer (relative to max(1, |w|))
_SLACK = 1e-9  # relative slack when comparing stated and recomputed bounds


@dataclass(frozen=True)
class CertificateCheck:
    """The result of :func:`check_certificate`.

    ``ok``: no problem found.  ``problems``: one readable line per unbacked claim.
    ``bound``: the recomputed largest deviation (``nan`` when the certificate could not be read).
    ``stated_bound``: the certificate's ``bound``.  ``margins``: how the checker obtained the
    margins (``"exhaustive"`` or ``"assumed"``).  ``survives``: ``bound`` is below the
    misreading limit.
    """

    ok: bool
    problems: tuple[str, ...]
    bound: float
    stated_bound: float | None
    margins: str
    survives: bool

    def __repr__(self) -> str:
        verdict = "ok" if self.ok else f"{len(self.problems)} problem(s)"
        return f"CertificateCheck({verdict}, bound={self.bound:.3g}, margins={self.margins})"


def _is_number(x: Any) -> bool:
    """A finite int or float that is not a bool."""
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _near_integer(x: float) -> bool:
    """``x`` is an integer up to rounding error."""
    return abs(x - round(x)) <= _INTEGRAL * max(1.0, abs(x))


def _failed(problems: list[str], stated: float | None) -> CertificateCheck:
    """A check that could not get as far as recomputing bounds."""
    return CertificateCheck(False, tuple(problems), math.nan, stated, "assumed", False)


def check_certificate(
    net: Network, *, max_inputs: int = MAX_MARGIN_INPUTS, progress: bool = False
) -> CertificateCheck:
    """Recompute the certificate of a sigmoid (binary) or tanh (bipolar) network.

    Parameters
    ----------
    net : Network
        A soft network as written by ``apply_activation`` (gains folded into the weights).
    max_inputs : int
        Enumerate margins up to this many input units; beyond, use the guaranteed 0.5.
    progress : bool
        Progress bar (tqdm, if installed, on a terminal) while margins are enumerated.

    Returns
    -------
    CertificateCheck

    Examples
    --------
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.network.soften import apply_activation
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> soft = apply_activation(net, activation="sigmoid", tolerance=0.05)
    >>> cert = dict(soft.meta["certificate"], bound=0.001)
    >>> check_certificate(soft.with_meta(certificate=cert)).problems[0]
    'stated bound 0.001 is below the recomputed 0.05'
    """
    problems: list[str] = []
    cert = net.meta.get("certificate")
    want = "tanh" if net.encoding == "bipolar" else "sigmoid"
    if not isinstance(cert, dict):
        return _failed(["the network carries no certificate (meta.certificate)"], None)
    stated_bound = cert.get("bound")
    if not _is_number(stated_bound):
        problems.append("the certificate has no numeric \"bound\"")
        stated_bound = None
    tolerance = cert.get("tolerance")
    if tolerance is not None and not _is_number(tolerance):
        problems.append("the certificate's \"tolerance\" must be a number or null")
        tolerance = None
    if cert.get("margins") not in ("exhaustive", "assumed"):
        problems.append("the certificate's \"margins\" must be \"exhaustive\" or \"assumed\"")
    entries = cert.get("neurons")
    if not isinstance(entries, dict):
        return _failed(problems + ["the certificate has no \"neurons\" object"], stated_bound)
    names = [n.name for n in net.neurons]
    for extra in sorted(set(entries) - set(names)):
        problems.append(f"the certificate names {extra!r}, which is not a neuron")
    stated: dict[str, tuple[float, float, float]] = {}
    for n in net.neurons:
        e = entries.get(n.name)
        if n.activation != want:
            problems.append(
                f"neuron {n.name!r} is {n.activation}; a {net.encoding} certificate covers "
                f"{want} neurons"
            )
        if not (isinstance(e, dict) and all(_is_number(e.get(k)) for k in
                                            ("margin", "gain", "bound"))):
            problems.append(f"neuron {n.name!r} has no margin, gain and bound in the certificate")
        elif e["gain"] <= 0:
            problems.append(f"neuron {n.name!r} has a gain {e['gain']} that is not positive")
        else:
            stated[n.name] = (float(e["margin"]), float(e["gain"]), float(e["bound"]))
    if len(stated) < len(names):
        return _failed(problems, stated_bound)

    # De-gain every neuron and check integer weights, half-integer bias (neurons reading a
    # real unit compare x with a real constant: their bias is a float by design).  Values
    # within rounding error of the grid are snapped to it, so the margins are exact.
    bipolar = net.encoding == "bipolar"
    real = real_units(net)
    pre = []
    unsure = np.zeros(len(names), dtype=bool)
    for j, n in enumerate(net.neurons):
        g = stated[n.name][1]
        ws = [float(w) / g for w in n.weights]
        b = float(n.bias) / g
        if real.keys() & set(n.inputs):
            pre.append(replace(n, weights=tuple(ws), bias=b, activation="step"))
            continue
        whole = [2 * w for w in ws] if bipolar else ws
        bad = [k for k, w in enumerate(whole) if not _near_integer(w)]
        if bad:
            k = bad[0]
            problems.append(
                f"neuron {n.name!r}: weight {k + 1} divided by the gain {g} is {ws[k]:.6g}, "
                + ("not a multiple of 1/2" if bipolar else "not an integer")
            )
        else:
            ws = [round(w) / 2 for w in whole] if bipolar else [float(round(w)) for w in ws]
        half = b - sum(ws) if bipolar else b
        if not _near_integer(half - 0.5):
            problems.append(
                f"neuron {n.name!r}: the bias divided by the gain {g} is {b:.6g}, "
                + ("not a half-integer offset from the weights" if bipolar
                   else "not a half-integer")
            )
        elif not bad:
            b = round(half - 0.5) + 0.5 + (sum(ws) if bipolar else 0.0)
        unsure[j] = bool(bad) or not _near_integer(half - 0.5)
        pre.append(replace(n, weights=tuple(ws), bias=b, activation="step"))
    step = replace(net, neurons=tuple(pre))

    margins, how = neuron_margins(step, max_inputs=max_inputs, progress=progress)
    if how == "assumed":
        margins = np.where(unsure, 0.0, margins)  # nothing guarantees their margin
    for n, m in zip(net.neurons, margins.tolist(), strict=True):
        if stated[n.name][0] > m * (1 + _SLACK):
            problems.append(
                f"neuron {n.name!r}: stated margin {stated[n.name][0]:g} exceeds the "
                f"{'recomputed' if how == 'exhaustive' else 'guaranteed'} {m:g}"
            )

    # Forward propagation of the deviation bounds with the stated gains.
    pos = {name: j for j, name in enumerate(names)}
    bounds = np.zeros(len(names))
    for j, n in enumerate(step.neurons):
        spent = sum(abs(w) * bounds[pos[i]] for i, w in zip(n.inputs, n.weights, strict=True)
                    if i in pos)
        g = stated[n.name][1]
        bounds[j] = deviation(g * (float(margins[j]) - spent), want)
        if stated[n.name][2] < bounds[j] * (1 - _SLACK):
            problems.append(
                f"neuron {n.name!r}: stated bound {stated[n.name][2]:.6g} is below the "
                f"recomputed {bounds[j]:.6g}"
            )
    bound = float(bounds.max()) if len(bounds) else 0.0
    if stated_bound is not None and stated_bound < bound * (1 - _SLACK):
        problems.insert(0, f"stated bound {stated_bound:.6g} is below the recomputed {bound:.6g}")
    if tolerance is not None and bound > tolerance * (1 + _SLACK):
        problems.append(f"the recomputed bound {bound:.6g} exceeds the stated tolerance "
                        f"{tolerance:g}")
    return CertificateCheck(not problems, tuple(problems), bound, stated_bound, how,
                            bound < misread_limit(net))
