"""SAT for typed step networks: categorical inputs as one-hot groups, reals as ordered atoms.

The domain is the step network's exact one (:func:`thresholdc.verification.typed.typed_domain`):
every categorical input takes one of its values, every real input one point per cell cut by
the rules' and the network's thresholds (and a point on each threshold).  In the miter

* a Boolean input is one variable;
* a categorical input is one variable per value — the network's one-hot units themselves —
  with an exactly-one constraint from python-sat's cardinality encodings (``pysat.card``,
  sequential counter);
* a real input with points p_0 < p_1 < … < p_{r−1} is r − 1 ordered atoms
  a_j = [x ≥ p_j] with a_{j+1} → a_j (x > c_i implies x > c_j for c_j < c_i); the choice is
  the number of true atoms.  A predicate or a neuron on x is a function of the choice index,
  written as runs of atoms (a_s ∧ ¬a_e): exact for a step network, whose neurons and rules
  are constant on each cell.

The rules side is encoded from the rule AST (:func:`~.encode.encode_program`), each typed
predicate evaluated on the points by its own operator and constant, independently of the
network; the network side neuron by neuron: a neuron reading no real unit as its exact
integer threshold, a neuron reading one real unit (and at most :data:`MAX_OTHERS` other
units) by evaluating it, in the network's own arithmetic, on every point for every value of
its other inputs.  Counterexamples are decoded to ``{feature: value}`` (the user's column
names and values: ``colour: "red"``, ``temp: 31.5``) and re-simulated on both sides.

>>> from thresholdc.compiler import compile_rules
>>> from thresholdc.logic import source_from_text
>>> text = "input colour: {red, green, blue}, temp: real\\ny = colour == red and temp > 30\\n"
>>> net = compile_rules(text, verify="none")
>>> verify_typed_sat(net, source_from_text(text), time_limit=10).result
'equal'
>>> wrong = source_from_text(text.replace("temp > 30", "temp >= 30"))
>>> verify_typed_sat(net, wrong, time_limit=10).counterexamples[0].assignment
{'colour': 'red', 'temp': 30.0}
"""

from __future__ import annotations

import itertools
import time
from typing import Any

import numpy as np

from ...errors import UsageError
from ...ir.network import Network
from ..domain import Discrete, Domain, network_cuts, network_rows, typed_domain
from ..report import Counterexample, Report
from .circuit import FALSE, TRUE, Circuit
from .encode import encode_program, integer_threshold
from .method import miter_report
from .miter import prove_equivalent

__all__ = ["verify_typed_sat", "typed_sat_problem", "MAX_OTHERS"]

#: A neuron reading a real unit may read at most this many other units (2^k cases each).
MAX_OTHERS = 8


def _runs(c: Circuit, atoms: list[int], values: np.ndarray) -> int:
    """The literal that is true exactly at the choice indices where ``values`` is true, for
    a feature whose choice is the number of true ordered ``atoms`` (choice ≥ j ⇔ atoms[j-1])."""
    def at_least(j: int) -> int:
        return TRUE if j == 0 else (FALSE if j > len(atoms) else atoms[j - 1])

    terms = []
    j, r = 0, len(values)
    while j < r:
        if values[j]:
            e = j
            while e < r and values[e]:
                e += 1
            terms.append(c.and_([at_least(j), -at_least(e)]))
            j = e
        else:
            j += 1
    return c.or_(terms)


class _Problem:
    """The variables of a typed miter: names of the circuit inputs, per feature."""

    def __init__(self, net: Network, source: Any, domain: Domain) -> None:
        self.net, self.source, self.domain = net, source, domain
        self.names: list[str] = []
        self.kind: dict[str, Discrete] = {}
        self.var_names: dict[str, list[str]] = {}
        for f in domain.discrete:
            if f.kind == "real":
                names = [f"{f.name}>={p!r}" for p in f.labels[1:]]
            else:
                names = [f.units[0]] if f.kind == "bool" else list(f.units)
            self.var_names[f.name] = names
            self.kind[f.name] = f
            self.names.extend(names)
        self.real_of_unit = {f.units[0]: f for f in domain.discrete if f.kind == "real"}

    # -- the domain
    def constraints(self, ins: dict[str, int], top: int) -> tuple[list[list[int]], int]:
        from pysat.card import CardEnc, EncType

        clauses: list[list[int]] = []
        for f in self.domain.discrete:
            lits = [ins[n] for n in self.var_names[f.name]]
            if f.kind == "categorical":
                enc = CardEnc.equals(lits=lits, bound=1, top_id=top, encoding=EncType.seqcounter)
                clauses.extend(enc.clauses)
                top = max(top, enc.nv)
            elif f.kind == "real":
                clauses.extend([-b, a] for a, b in zip(lits, lits[1:]))
        return clauses, top

    def sample(self, rng: np.random.Generator, rows: int) -> np.ndarray:
        """Random valid rows of the circuit inputs."""
        choice = np.zeros((rows, len(self.domain.discrete)), dtype=np.int64)
        for k, f in enumerate(self.domain.discrete):
            choice[:, k] = rng.integers(0, f.size, size=rows)
        return self.rows_of(choice)

    def rows_of(self, choice: np.ndarray) -> np.ndarray:
        cols: list[np.ndarray] = []
        for k, f in enumerate(self.domain.discrete):
            ch = choice[:, k]
            if f.kind == "real":
                cols.extend(ch >= j for j in range(1, f.size))
            elif f.kind == "bool":
                cols.append(ch == 1)
            else:
                cols.extend(ch == j for j in range(f.size))
        return np.stack(cols, axis=1) if cols else np.zeros((len(choice), 0), dtype=bool)

    def choice_of(self, assignment: dict[str, int]) -> np.ndarray:
        """Choice indices of one model (``{circuit input: 0/1}``)."""
        out = np.zeros(len(self.domain.discrete), dtype=np.int64)
        for k, f in enumerate(self.domain.discrete):
            bits = [assignment[n] for n in self.var_names[f.name]]
            if f.kind == "real":
                out[k] = sum(bits)
            elif f.kind == "bool":
                out[k] = bits[0]
            else:
                out[k] = bits.index(1) if 1 in bits else 0
        return out

    # -- the two sides
    def rules_side(self, c: Circuit, ins: dict[str, int]) -> dict[str, int]:
        program = self.source.program
        bools = {f.name: ins[f.units[0]] for f in self.domain.discrete if f.kind == "bool"}

        def leaf(c: Circuit, e: Any) -> int:
            f = self.kind[e.var]
            lits = [ins[n] for n in self.var_names[f.name]]
            if f.kind == "categorical":
                chosen = {str(x) for x in e.values}
                hit = c.or_(lit for lit, v in zip(lits, f.labels) if str(v) in chosen)
                return -hit if e.negate else hit
            points = np.asarray(f.labels, dtype=float)
            holds = {">": points > e.value, ">=": points >= e.value, "<": points < e.value,
                     "<=": points <= e.value}[e.op]
            return _runs(c, lits, holds)

        lits = encode_program(c, program, bools, leaf)
        return {name: lits[name] for name in self.source.outputs}

    def network_side(self, c: Circuit, ins: dict[str, int]) -> dict[str, int]:
        net = self.net
        lit: dict[str, int] = {u: ins[u] for u in net.inputs if u in ins}
        for n in net.neurons:
            reals = [i for i in n.inputs if i in self.real_of_unit]
            if not reals:
                W, K = integer_threshold(n.weights, n.bias)
                lit[n.name] = c.geq(W, [lit[i] for i in n.inputs], K)
                continue
            f = self.real_of_unit[reals[0]]
            atoms = [ins[x] for x in self.var_names[f.name]]
            points = np.asarray(f.labels, dtype=float)
            w_real = sum(float(w) for i, w in zip(n.inputs, n.weights) if i == reals[0])
            others = [(i, float(w)) for i, w in zip(n.inputs, n.weights) if i != reals[0]]
            terms = []
            for combo in itertools.product((0.0, 1.0), repeat=len(others)):
                s = float(n.bias)
                for v, (_, w) in zip(combo, others):
                    s += v * w
                fires = (w_real * points + s) > 0  # the network's own arithmetic
                case = c.and_([lit[i] if v else -lit[i] for v, (i, _) in zip(combo, others)])
                terms.append(c.and_([case, _runs(c, atoms, fires)]))
            lit[n.name] = c.or_(terms)
        return {o.name: lit[o.source] for o in net.outputs}

    def confirm(self, assignment: dict[str, int]) -> list[Counterexample]:
        """The outputs that really differ at one model, by re-simulation on both sides."""
        choice = self.choice_of(assignment)[None, :]
        X = self.domain.unit_rows(choice)
        out_index = [list(self.source.outputs).index(o.name) for o in self.net.outputs]
        expected = np.asarray(self.source.evaluate(X), dtype=bool)[0, out_index]
        Xn = network_rows(self.net, self.domain, X)
        values = self.net.evaluate(Xn)[0]
        got = self.net.decide(Xn)[0]
        Z, _ = self.net.forward(Xn)
        pos = {n.name: j for j, n in enumerate(self.net.neurons)}
        found = []
        for k, o in enumerate(self.net.outputs):
            if bool(got[k]) != bool(expected[k]):
                margin = abs(float(Z[0, pos[o.source]])) if o.source in pos else 0.5
                found.append(Counterexample(self.domain.assignment(choice[0]), o.name,
                                            bool(expected[k]), float(values[k]), margin))
        return found


def typed_sat_problem(net: Network, source: Any) -> _Problem | None:
    """The typed miter's variables for ``net`` and ``source``, or None when the network is
    not of the form this method encodes exactly (soft or bipolar, a neuron reading two real
    units or a real unit and more than :data:`MAX_OTHERS` others).

    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic import source_from_text
    >>> text = "input c: {a, b}, t: real\\ny = c == a or t < 2\\n"
    >>> typed_sat_problem(compile_rules(text), source_from_text(text)).names
    ['c=a', 'c=b', 't>=2.0', 't>=3.0']
    """
    if net.encoding != "binary" or any(n.activation != "step" for n in net.neurons):
        return None
    program = getattr(source, "program", None)
    if program is None:
        return None
    real = {v.name for v in program.inputs if v.kind == "real"}
    for n in net.neurons:
        reads = [i for i in n.inputs if i in real]
        if len(set(reads)) > 1 or (reads and len(n.inputs) - len(reads) > MAX_OTHERS):
            return None
    if real and network_cuts(net, real) is None:
        return None  # typed_domain would fall back to bands: not the exact cell form
    domain = typed_domain(net, source)
    if domain.continuous:
        return None
    return _Problem(net, source, domain)


def verify_typed_sat(net: Network, source: Any, *, time_limit: float,
                     solver: str | None = None) -> Report:
    """Prove a typed step network equal to its rules by SAT, output by output.

    Parameters
    ----------
    net
        A step network (binary encoding) compiled from a typed rule file, or any step network
        with the same units.
    source
        The typed rule rule source (:class:`~thresholdc.ir.reference.Reference`).
    time_limit
        Seconds for the whole check (the solver runs in a child process ended at the limit).
    solver
        A python-sat back end (default: the strongest available).

    Returns
    -------
    Report
        Method ``sat``; per output ``equal``, ``different`` with counterexamples as
        ``{feature: value}`` (``found`` of them; not counted exactly), or ``undecided``.

    Raises
    ------
    UsageError
        When the network is not of the encodable form (see :func:`typed_sat_problem`).

    Examples
    --------
    >>> from thresholdc.compiler import compile_rules
    >>> from thresholdc.logic import source_from_text
    >>> text = "input c: {a, b, z}\\ny = c != z\\n"
    >>> r = verify_typed_sat(compile_rules(text), source_from_text("input c: {a, b, z}\\n"
    ...                      "y = c == a\\n"), time_limit=10)
    >>> r.result, r.counterexamples[0].assignment
    ('different', {'c': 'b'})
    """
    t0 = time.perf_counter()
    problem = typed_sat_problem(net, source)
    if problem is None:
        raise UsageError("typed SAT needs a step network whose neurons each read at most one "
                         f"real unit and at most {MAX_OTHERS} other units")
    wanted = list(source.outputs)
    outcome = prove_equivalent(problem.names, wanted, problem.rules_side, problem.network_side,
                               time_limit=time_limit, solver=solver, sample=problem.sample,
                               constraints=problem.constraints)
    report = miter_report(net, source, outcome, "typed rules", wanted,
                          f"sat: not decided within the time limit of {time_limit:g} s",
                          confirm=problem.confirm)
    report.notes.extend(problem.domain.notes)
    report.assignments = problem.domain.size
    report.seconds = time.perf_counter() - t0
    return report
