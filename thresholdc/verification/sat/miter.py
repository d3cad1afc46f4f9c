"""Equivalence of two circuits by SAT: a miter, with sweeping, solved in a child process.

:func:`prove_equivalent` builds both sides into one :class:`Circuit` over shared inputs and
decides whether every output pair agrees on every input.  The steps (a standard
combinational equivalence check; common practice, cf. FRAIG-style sweeping):

1. Structural hashing while building: the same op on the same literals is one variable, so
   parts the two sides share are shared for free (``share=False`` turns this off).
2. Simulation on random rows (plus all-zeros and all-ones) gives every node a signature; each
   node of the second side whose signature (or its complement) matches a node of the first is
   a *candidate* equivalence, taken in topological order.
3. A candidate is proved on the spot when both cones close over a small common cut: walking
   back from the second-side node through its unmerged nodes gives a frontier of at most
   :data:`CUT_MAX` variables, and the first-side node's cone must end on that frontier; both
   are then evaluated on all 2^|frontier| assignments.  A proved node is substituted by its
   partner everywhere downstream (it is not encoded at all).
4. The rest goes to the solver, in a child process that the parent ends at the time limit:
   remaining candidates are tried with a small conflict budget each (proved ones are added as
   two binary clauses), then the miter ``d_k → (a_k ⊕ b_k)``, ``∨ d_k`` is solved.  A model
   is a counterexample for every output that differs in it; those outputs are dropped and
   the rest solved again, until UNSAT (every remaining output proved equal) or the time limit.

>>> from thresholdc.verification.sat.circuit import Circuit
>>> def xor_a(c, ins):
...     return {"y": c.xor_([ins["a"], ins["b"]])}
>>> def xor_b(c, ins):
...     a, b = ins["a"], ins["b"]
...     return {"y": c.and_([c.or_([a, b]), -c.and_([a, b])])}
>>> prove_equivalent(["a", "b"], ["y"], xor_a, xor_b, time_limit=10).status
'equal'
"""

from __future__ import annotations

import multiprocessing as mp
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ...progress import bar, track
from .circuit import TRUE, Circuit, node_value

__all__ = [
    "MiterOutcome",
    "prove_equivalent",
    "solve_cnf",
    "available_solvers",
    "default_solver",
    "SOLVER_PREFERENCE",
    "CUT_MAX",
    "SYMMETRIC_MAX",
]

#: Incremental back ends of python-sat, strongest first (assumptions and conflict budgets).
SOLVER_PREFERENCE = ("cadical300", "cadical195", "cadical153", "glucose42", "glucose4", "minisat22")
#: Back ends without assumptions (each round of the miter gets a fresh solver).
NON_INCREMENTAL = ("kissat404",)
CUT_MAX = 12
SYMMETRIC_MAX = 256
_REGION_B = 64
_REGION_A = 400
_ROWS = 1024
_CONF_BUDGET = 2000
_PARTNERS = 8

Builder = Callable[[Circuit, dict[str, int]], dict[str, int]]


@dataclass
class MiterOutcome:
    """What the miter established.

    ``status`` is ``equal``, ``different`` or ``undecided``; ``differing`` maps each output
    shown to differ to an input assignment (``{input: 0/1}``) from the solver's model (to be
    re-simulated by the caller); ``proven`` lists the outputs proven equal; ``stats`` holds
    sizes and times for the report.
    """

    status: str
    differing: dict[str, dict[str, int]] = field(default_factory=dict)
    proven: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    stats: dict[str, Any] = field(default_factory=dict)


def available_solvers() -> list[str]:
    """Names of the python-sat back ends that can be created here, preferred first.

    >>> names = available_solvers()
    >>> all(n in SOLVER_PREFERENCE + NON_INCREMENTAL for n in names)
    True
    """
    try:
        from pysat.solvers import Solver
    except ImportError:
        return []
    names = []
    for name in SOLVER_PREFERENCE + NON_INCREMENTAL:
        try:
            Solver(name=name).delete()
        except Exception:  # noqa: BLE001 - a back end missing from this build
            continue
        names.append(name)
    return names


def default_solver() -> str | None:
    """The preferred incremental back end available, or None without python-sat.

    >>> default_solver() in SOLVER_PREFERENCE + (None,)
    True
    """
    for name in available_solvers():
        if name not in NON_INCREMENTAL:
            return name
    return None


# ---------------------------------------------------------------------- sweeping (parent)
class _Sweep:
    """Candidate equivalences between the sides and their proofs on small cuts."""

    def __init__(self, c: Circuit, first_b: int, seed: int,
                 rows: np.ndarray | None = None) -> None:
        self.c = c
        self.first_b = first_b
        self.rep: dict[int, int] = {}
        rng = np.random.default_rng(seed)
        n = len(c.inputs)
        if rows is None:
            X = rng.integers(0, 2, size=(_ROWS, n)).astype(bool)
            X[0] = False
            X[1] = True
        else:  # the caller's rows (e.g. valid one-hot patterns only)
            X = np.asarray(rows, dtype=bool)
        self.rows = X.shape[0]
        self.P = c.simulate_packed(X)  # bit-packed values of every variable

    def sub(self, lit: int) -> int:
        r = self.rep.get(abs(lit))
        if r is None:
            return lit
        return r if lit > 0 else -r

    def candidates(self) -> list[tuple[int, list[int]]]:
        """Each second-side variable with the first-side literals (up to
        :data:`_PARTNERS`, latest first) that have the same simulation values."""
        packed = self.P
        first = (self.P[:, 0] & 1).astype(bool)  # the value on row 0 (all inputs 0)
        flipped = self.P ^ self.P[TRUE]
        table: dict[bytes, list[int]] = {}
        a_vars = [TRUE] + list(self.c.inputs) + [v for v in self.c.nodes if v < self.first_b]
        for v in reversed(a_vars):
            key = (flipped[v] if first[v] else packed[v]).tobytes()
            found = table.setdefault(key, [])
            if len(found) < _PARTNERS:
                found.append(-v if first[v] else v)
        out = []
        for v in self.c.nodes:
            if v < self.first_b:
                continue
            key = (flipped[v] if first[v] else packed[v]).tobytes()
            lits = table.get(key)
            if lits:
                out.append((v, [-lit if first[v] else lit for lit in lits]))
        return out

    def prove_on_cut(self, v: int, lit: int) -> bool:
        """Whether node ``v`` equals ``lit`` on a closed cone: on every assignment of at
        most CUT_MAX leaves, or — for up to SYMMETRIC_MAX leaves when both cones provably
        depend only on the count of true leaves — on one assignment per count."""
        c = self.c
        region_b: list[int] = []
        frontier: set[int] = set()
        seen: set[int] = set()
        stack = [v]
        while stack:
            x = stack.pop()
            if x in seen or x == TRUE:
                continue
            seen.add(x)
            if x >= self.first_b and x in c.nodes and x not in self.rep:
                region_b.append(x)
                if len(region_b) > _REGION_B:
                    return False
                stack.extend(abs(self.sub(a)) for a in c.nodes[x].args)
            else:
                frontier.add(x)
                if len(frontier) > SYMMETRIC_MAX:
                    return False
        region_a = self._cone(abs(lit), frontier)
        if region_a is None:
            return False
        if len(frontier) <= CUT_MAX:
            # Leaves that are first-side nodes computable from the other leaves become inner
            # nodes (otherwise the cut would see combinations that cannot occur).
            for x in sorted(frontier, reverse=True):
                if x in c.nodes and x < self.first_b:
                    inner = self._cone(x, frontier - {x})
                    if inner is not None:
                        frontier.discard(x)
                        region_a.extend(inner)
        region_a = sorted(set(region_a))
        leaves = sorted(frontier)
        m = len(leaves)
        if m <= CUT_MAX:
            k = np.arange(1 << m)
            cols = [((k >> i) & 1).astype(bool) for i in range(m)]
        else:
            index = {x: i for i, x in enumerate(leaves)}
            if not (self._symmetric(region_a, abs(lit), index, False)
                    and self._symmetric(sorted(region_b), v, index, True)):
                return False
            k = np.arange(m + 1)
            cols = [k > i for i in range(m)]
        vals: dict[int, np.ndarray] = {TRUE: np.ones(len(k), dtype=bool)}
        for i, x in enumerate(leaves):
            vals[x] = cols[i]

        def value(a: int) -> np.ndarray:
            return vals[a] if a > 0 else ~vals[-a]

        for x in sorted(region_a + region_b):
            node = c.nodes[x]
            args = node.args if x < self.first_b else tuple(self.sub(a) for a in node.args)
            vals[x] = node_value(node, [value(a) for a in args])
        return bool(np.array_equal(value(v), value(lit)))

    def _symmetric(self, region: list[int], root: int, index: dict[int, int],
                   second: bool) -> bool:
        """Whether a cone provably depends only on the count of true leaves: it is all xor
        nodes whose parity form reads every leaf an odd number of times, or every node reads
        every leaf once with one effective weight (−w on a negated leaf) or no leaf."""
        nodes = self.c.nodes
        if root in index:
            return False

        def args(x: int) -> tuple[int, ...]:
            return tuple(self.sub(a) for a in nodes[x].args) if second else nodes[x].args

        if all(nodes[x].op == "xor" for x in region):
            lin: dict[int, int] = {}
            for x in region:
                form = 0
                for a in args(x):
                    va = abs(a)
                    form ^= lin[va] if va in lin else (1 << index[va] if va in index else 0)
                lin[x] = form
            return lin.get(root) == (1 << len(index)) - 1
        for x in region:
            node = nodes[x]
            if node.op not in ("and", "geq"):
                return False
            weights = node.weights if node.op == "geq" else (1,) * len(node.args)
            eff: dict[int, int] = {}
            for a, w in zip(args(x), weights):  # type: ignore[arg-type]
                if abs(a) in index:
                    eff[abs(a)] = eff.get(abs(a), 0) + (w if a > 0 else -w)
            if eff and (len(eff) != len(index) or len(set(eff.values())) != 1):
                return False
        return True

    def _cone(self, root: int, frontier: set[int]) -> list[int] | None:
        """First-side nodes from ``root`` back to ``frontier``; None when the walk reaches an
        input outside the frontier or grows past its bound."""
        region: list[int] = []
        seen: set[int] = set()
        stack = [root]
        while stack:
            x = stack.pop()
            if x in seen or x == TRUE or x in frontier:
                continue
            seen.add(x)
            node = self.c.nodes.get(x)
            if node is None or x >= self.first_b:
                return None
            region.append(x)
            if len(region) > _REGION_A:
                return None
            stack.extend(abs(a) for a in node.args)
        return region

    def differing_row(self, a: int, b: int) -> int | None:
        """A simulated row on which literals ``a`` and ``b`` differ, if any."""
        diff = self.P[abs(a)] ^ self.P[abs(b)]
        if (a < 0) != (b < 0):
            diff = diff ^ self.P[TRUE]
        bits = np.unpackbits(diff, count=self.rows, bitorder="little")
        rows = np.nonzero(bits)[0]
        return int(rows[0]) if len(rows) else None

    def row(self, r: int) -> list[int]:
        """The input values of simulated row ``r``."""
        return [int(self.P[v, r // 8] >> (r % 8) & 1) for v in self.c.inputs]


# ---------------------------------------------------------------------- solving (child)
def _child(conn: Any, solver: str, clauses: list[list[int]], top: int,
           candidates: list[tuple[int, int]], pairs: list[tuple[int, int, int]],
           input_vars: list[int]) -> None:
    """Sweep the candidates, then solve the miter in rounds; report each result on ``conn``."""
    try:
        from pysat.solvers import Solver

        incremental = solver not in NON_INCREMENTAL
        proven = 0
        s = Solver(name=solver, bootstrap_with=clauses)
        if incremental:
            for v, a in candidates:
                ok = True
                for assumption in ([v, -a], [-v, a]):
                    s.conf_budget(_CONF_BUDGET)
                    if s.solve_limited(assumptions=assumption) is not False:
                        ok = False
                        break
                if ok:
                    s.add_clause([-v, a])
                    s.add_clause([v, -a])
                    proven += 1
        conn.send(("swept", proven, len(candidates) if incremental else 0))
        remaining = list(range(len(pairs)))
        while remaining:
            top += 1
            act = top
            round_clause = [pairs[k][2] for k in remaining]
            if incremental:
                s.add_clause([-act] + round_clause)
                result = s.solve(assumptions=[act])
            else:
                s.delete()
                s = Solver(name=solver, bootstrap_with=clauses)
                s.add_clause(round_clause)
                result = s.solve()
            if not result:
                conn.send(("unsat", remaining))
                break
            model = s.get_model()

            def val(lit: int, model: list[int] = model) -> bool:
                return (model[abs(lit) - 1] > 0) == (lit > 0)

            diff = [k for k in remaining if val(pairs[k][0]) != val(pairs[k][1])]
            conn.send(("sat", diff, [int(val(x)) for x in input_vars]))
            remaining = [k for k in remaining if k not in set(diff)]
            if incremental:
                s.add_clause([-act])
        s.delete()
        conn.send(("done",))
    except BaseException as exc:  # noqa: BLE001 - reported to the parent
        try:
            conn.send(("error", f"{type(exc).__name__}: {exc}"))
        except Exception:  # noqa: BLE001
            pass


def _context() -> Any:
    methods = mp.get_all_start_methods()
    return mp.get_context("fork" if "fork" in methods else "spawn")


def solve_cnf(
    clauses: list[list[int]],
    *,
    solver: str,
    time_limit: float,
    top: int | None = None,
    pairs: list[tuple[int, int, int]] | None = None,
    candidates: list[tuple[int, int]] | None = None,
    input_vars: list[int] | None = None,
) -> tuple[list[tuple], bool, float, int | None]:
    """Run the child solve and collect its messages until it ends or ``time_limit`` passes.

    Without ``pairs`` the clauses are solved once (satisfiable or not).  Returns the
    messages, whether the child finished, the seconds spent, and the child's exit code when
    it ended by itself (None when it was stopped at the time limit).

    >>> messages, finished, _, _ = solve_cnf([[1], [2, 3], [-2], [-3]], solver="minisat22",
    ...                                      time_limit=10)
    >>> finished, messages[-2][0]
    (True, 'unsat')
    """
    if top is None:
        top = max((abs(lit) for cl in clauses for lit in cl), default=1)
    if pairs is None:
        top += 1
        pairs = [(TRUE, -TRUE, top)]  # one pair that always differs: d → (1 ⊕ 0)
        clauses = clauses + [[-top, TRUE, -TRUE], [-top, -TRUE, TRUE]]
    ctx = _context()
    recv, send = ctx.Pipe(duplex=False)
    t0 = time.perf_counter()
    proc = ctx.Process(
        target=_child,
        args=(send, solver, clauses, top, candidates or [], pairs, input_vars or []),
        daemon=True,
    )
    proc.start()
    send.close()
    messages: list[tuple] = []
    finished = False
    exitcode: int | None = None
    deadline = t0 + max(time_limit, 0.0)
    # The solver cannot say how far it is: the bar shows the seconds used of the time limit
    # and how many of the miter's outputs are decided.
    shown, last, decided = bar(max(time_limit, 0.0), "sat: solving", unit="s"), t0, 0
    try:
        while True:
            now = time.perf_counter()
            shown.update(now - last)
            last, left = now, deadline - now
            if left <= 0:
                break
            if recv.poll(min(left, 0.05)):
                try:
                    msg = recv.recv()
                except EOFError:
                    break
                messages.append(msg)
                if msg[0] in ("sat", "unsat"):
                    decided += len(msg[1])
                    shown.set_postfix_str(f"{decided}/{len(pairs)} outputs decided")
                if msg[0] in ("done", "error"):
                    finished = msg[0] == "done"
                    break
            elif not proc.is_alive() and not recv.poll(0):
                break
    finally:
        shown.close()
        proc.join(0.05 if finished else 0)
        if not proc.is_alive():
            exitcode = proc.exitcode
        if proc.is_alive():
            proc.terminate()
            proc.join(1.0)
            if proc.is_alive():
                proc.kill()
        proc.join(1.0)
        recv.close()
    return messages, finished, time.perf_counter() - t0, exitcode


# ---------------------------------------------------------------------- the check
def prove_equivalent(
    inputs: list[str] | tuple[str, ...],
    outputs: list[str] | tuple[str, ...],
    build_a: Builder,
    build_b: Builder,
    *,
    time_limit: float,
    solver: str | None = None,
    sweep: bool = True,
    share: bool = True,
    seed: int = 0,
    sample: Callable[[np.random.Generator, int], np.ndarray] | None = None,
    constraints: Callable[[dict[str, int], int], tuple[list[list[int]], int]] | None = None,
) -> MiterOutcome:
    """Decide whether two circuits agree on every output; see the module docstring.

    ``build_a``/``build_b`` add a side to the circuit given the input literals by name and
    return the literal of each output by name.  ``time_limit`` (seconds) bounds the whole
    check; the solver runs in a child process that is ended when it is reached.  ``sample``
    gives the simulation rows (``(rng, rows) -> bool array``, columns in ``inputs`` order)
    when only some input patterns are valid, and ``constraints`` the clauses that say which
    are (``(input variables by name, top variable) -> (clauses, new top)``); proofs on
    small cuts hold on every pattern, so they stay sound.

    >>> def one(c, ins):
    ...     return {"y": c.or_([ins["a"], ins["b"]])}
    >>> def other(c, ins):
    ...     return {"y": c.xor_([ins["a"], ins["b"]])}
    >>> out = prove_equivalent(["a", "b"], ["y"], one, other, time_limit=10)
    >>> out.status, out.differing["y"]
    ('different', {'a': 1, 'b': 1})
    """
    t0 = time.perf_counter()
    deadline = t0 + time_limit
    c = Circuit(share=share)
    ins = {name: c.new_input() for name in inputs}
    c.side = 0
    la = build_a(c, ins)
    first_b = c.nvars + 1
    c.side = 1
    lb = build_b(c, ins)
    stats: dict[str, Any] = {"nodes_a": first_b - 1 - len(ins), "nodes_b": c.nvars - first_b + 1}
    out = MiterOutcome("undecided", stats=stats)
    rows = sample(np.random.default_rng(seed), _ROWS) if sample is not None else None
    sw = _Sweep(c, first_b, seed, rows) if sweep else None
    deferred: list[tuple[int, int]] = []
    if sw is not None:
        cands = sw.candidates()
        for v, lits in track(cands, "sat: matching nodes", unit="node"):
            lit = next((x for x in lits if sw.prove_on_cut(v, x)), None)
            if lit is not None:
                sw.rep[v] = lit
            else:
                deferred.append((v, lits[0]))
            if time.perf_counter() > deadline:
                out.notes.append("time limit reached while matching nodes")
                return out
        stats["matched"] = len(sw.rep)
        stats["candidates"] = len(cands)
    sub = sw.sub if sw is not None else (lambda lit: lit)
    open_pairs = []
    for name in outputs:
        a, b = la[name], sub(lb[name])
        if a == b:
            out.proven.append(name)
            continue
        r = sw.differing_row(a, lb[name]) if sw is not None else None
        if r is not None:
            out.differing[name] = dict(zip(inputs, sw.row(r)))  # type: ignore[union-attr]
        else:
            open_pairs.append((name, a, b))
    stats["seconds_prepare"] = time.perf_counter() - t0
    if not open_pairs:
        # every output is proven equal or shown different by simulation
        out.status = "different" if out.differing else "equal"
        stats["solver"] = None
        return out
    solver = solver or default_solver()
    if solver is None:
        out.notes.append("python-sat is not installed (pip install 'thresholdc[sat]')")
        return out
    deferred = [(v, lit) for v, lit in deferred if v not in (sw.rep if sw else {})]
    roots = [x for _, a, b in open_pairs for x in (a, b)] + [x for pair in deferred for x in pair]
    cnf = c.to_cnf(roots, sw.rep if sw is not None else None)
    clauses = cnf.clauses
    top = cnf.nvars
    if constraints is not None:  # the domain: e.g. exactly one value per categorical input
        more, top = constraints(ins, top)
        clauses.extend(more)
    pairs = []
    for _, a, b in open_pairs:
        top += 1
        clauses.append([-top, a, b])
        clauses.append([-top, -a, -b])
        pairs.append((a, b, top))
    stats.update(solver=solver, vars=top, clauses=len(clauses))
    messages, finished, seconds, exitcode = solve_cnf(
        clauses,
        solver=solver,
        time_limit=deadline - time.perf_counter(),
        top=top,
        pairs=pairs,
        candidates=deferred,
        input_vars=list(c.inputs),
    )
    stats["seconds_solve"] = seconds
    for msg in messages:
        if msg[0] == "swept":
            stats["swept"] = msg[1]
            stats["sweep_tried"] = msg[2]
        elif msg[0] == "sat":
            assignment = {name: int(v) for name, v in zip(inputs, msg[2])}
            for k in msg[1]:
                out.differing[open_pairs[k][0]] = assignment
        elif msg[0] == "unsat":
            out.proven.extend(open_pairs[k][0] for k in msg[1])
        elif msg[0] == "error":
            out.notes.append(f"the solver process failed: {msg[1]}")
    if out.differing:
        out.status = "different"
    elif finished and len(out.proven) == len(outputs):
        out.status = "equal"
    if not finished and not any(m[0] == "error" for m in messages):
        if exitcode is not None:
            out.notes.append(f"the solver process ended unexpectedly (exit code {exitcode})")
        else:
            out.notes.append(f"the SAT solver did not finish within {time_limit:g} s")
    return out
