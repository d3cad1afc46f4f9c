"""The linear and integer programs of synthesis, handed to HiGHS without scipy's per-call
wrapper.

Synthesis solves thousands of tiny programs (a few dozen rows); ``scipy.optimize.linprog`` and
``milp`` spend most of their time per call on input checks, sparse conversion and re-validating
every option by name (c7552: 6.6 s in programs, 0.9 s of it in the solver).  :func:`solve`
builds the same HiGHS model directly (dense matrix to column-wise sparse in numpy, one options
object built once) through the HiGHS binding that scipy ships, with the options ``linprog(...,
method="highs")`` and ``milp`` pass, so the solver takes the same path and returns the same
vertex.  Where that binding is missing (another scipy layout) it falls back to the public
functions, with identical results.

Problem form::

    minimise  c·x   subject to   row_lo ≤ A x ≤ row_hi,   col_lo ≤ x ≤ col_hi,
                                 x integer where ``integer``

>>> import numpy as np
>>> r = solve(np.array([1.0, 1.0]), np.array([[1.0, 2.0]]), np.array([4.0]),
...           np.array([np.inf]), np.zeros(2), np.full(2, np.inf))
>>> r.status, r.x.tolist()
('optimal', [0.0, 2.0])
"""

from __future__ import annotations

import types
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

import numpy as np

from ..lazy import lazy_module

optimize = lazy_module("scipy.optimize")

__all__ = ["LpResult", "solve"]


@dataclass(frozen=True)
class LpResult:
    """The end of one program: ``status`` is ``"optimal"``, ``"infeasible"`` (no point meets
    the constraints) or ``"other"`` (unbounded, a node limit without a solution, …); ``x`` is
    the solution when there is one (for an integer program stopped by its node limit, the best
    point found)."""

    status: str
    x: np.ndarray | None


@lru_cache(maxsize=1)
def _binding() -> types.ModuleType | None:
    """scipy's HiGHS binding (``scipy.optimize._highspy._core``, loaded with scipy.optimize),
    or None when this scipy does not have it there."""
    core = getattr(getattr(optimize, "_highspy", None), "_core", None)
    needed = ("HighsLp", "_Highs", "HighsOptions", "MatrixFormat", "HighsVarType",
              "HighsModelStatus", "HighsStatus", "kHighsInf")
    if core is None or not all(hasattr(core, a) for a in needed):
        return None  # pragma: no cover - depends on the installed scipy
    return core


def _csc(A: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Column-wise sparse form of a dense matrix (what ``scipy.sparse.csc_array(A)`` holds)."""
    At = A.T
    nz = At != 0
    cols, rows = np.nonzero(nz)
    indptr = np.zeros(A.shape[1] + 1, dtype=np.int32)
    np.cumsum(np.bincount(cols, minlength=A.shape[1]), out=indptr[1:])
    return indptr, rows.astype(np.int32), At[nz].astype(np.float64)


def _options(core: Any, integer: bool, node_limit: int | None,
             rel_gap: float | None) -> Any:
    """The options linprog (``method="highs"``) or milp set, as one HiGHS options object."""
    o = core.HighsOptions()
    o.log_to_console = False
    if integer:
        if node_limit is not None:
            o.mip_max_nodes = int(node_limit)
        if rel_gap is not None:
            o.mip_rel_gap = float(rel_gap)
    else:
        o.presolve = "on"
        o.highs_debug_level = 0
        o.output_flag = False
        o.simplex_strategy = 1  # dual simplex, as linprog asks
    return o


@lru_cache(maxsize=16)
def _cached_options(integer: bool, node_limit: int | None, rel_gap: float | None) -> Any:
    core = _binding()
    assert core is not None
    return _options(core, integer, node_limit, rel_gap)


def solve(c: np.ndarray, A: np.ndarray, row_lo: np.ndarray, row_hi: np.ndarray,
          col_lo: np.ndarray, col_hi: np.ndarray, *, integer: bool = False,
          node_limit: int | None = None, rel_gap: float | None = None) -> LpResult:
    """Minimise ``c·x`` over ``row_lo ≤ A x ≤ row_hi``, ``col_lo ≤ x ≤ col_hi`` (all variables
    integer when ``integer``), by HiGHS.

    Parameters
    ----------
    c : ndarray, shape (n,)
    A : ndarray, shape (m, n)
        Dense constraint matrix (the programs of synthesis are small).
    row_lo, row_hi : ndarray, shape (m,)
        Row bounds; ``±inf`` where a side is open.
    col_lo, col_hi : ndarray, shape (n,)
        Variable bounds.
    integer : bool
        An integer program (``milp``) instead of a linear one (``linprog``).
    node_limit : int, optional
        Branch-and-bound nodes at most (a work bound, so the result is the same everywhere).
    rel_gap : float, optional
        Relative optimality gap of the integer program (0 for a proven optimum).

    Returns
    -------
    LpResult

    Examples
    --------
    >>> import numpy as np
    >>> r = solve(np.array([1.0]), np.array([[2.0]]), np.array([3.0]), np.array([np.inf]),
    ...           np.zeros(1), np.full(1, np.inf), integer=True)
    >>> r.status, r.x.tolist()
    ('optimal', [2.0])
    """
    c = np.ascontiguousarray(c, dtype=np.float64)
    A = np.asarray(A, dtype=np.float64).reshape(-1, c.size)
    core = _binding()
    if core is None:  # pragma: no cover - depends on the installed scipy
        return _solve_scipy(c, A, row_lo, row_hi, col_lo, col_hi, integer, node_limit,
                            rel_gap)
    indptr, indices, data = _csc(A)
    lp = core.HighsLp()
    lp.num_col_ = c.size
    lp.num_row_ = A.shape[0]
    lp.a_matrix_.num_col_ = c.size
    lp.a_matrix_.num_row_ = A.shape[0]
    lp.a_matrix_.format_ = core.MatrixFormat.kColwise
    lp.col_cost_ = c
    lp.col_lower_ = np.asarray(col_lo, dtype=np.float64)
    lp.col_upper_ = np.asarray(col_hi, dtype=np.float64)
    lp.row_lower_ = np.asarray(row_lo, dtype=np.float64)
    lp.row_upper_ = np.asarray(row_hi, dtype=np.float64)
    lp.a_matrix_.start_ = indptr
    lp.a_matrix_.index_ = indices
    lp.a_matrix_.value_ = data
    if integer:
        lp.integrality_ = [core.HighsVarType(1)] * c.size
    h = core._Highs()
    if h.passOptions(_cached_options(integer, node_limit, rel_gap)) == core.HighsStatus.kError:
        return LpResult("other", None)  # pragma: no cover
    if h.passModel(lp) == core.HighsStatus.kError:
        return LpResult("other", None)  # pragma: no cover
    if h.run() == core.HighsStatus.kError:
        return LpResult("other", None)  # pragma: no cover
    status = h.getModelStatus()
    S = core.HighsModelStatus
    if status == S.kOptimal:
        return LpResult("optimal", np.array(h.getSolution().col_value))
    if status in (S.kInfeasible, S.kModelError):
        return LpResult("infeasible", None)
    if integer and status in (S.kTimeLimit, S.kIterationLimit, S.kSolutionLimit) \
            and h.getInfo().objective_function_value != core.kHighsInf:
        return LpResult("other", np.array(h.getSolution().col_value))
    return LpResult("other", None)


def _solve_scipy(c: np.ndarray, A: np.ndarray, row_lo: np.ndarray, row_hi: np.ndarray,
                 col_lo: np.ndarray, col_hi: np.ndarray, integer: bool,
                 node_limit: int | None, rel_gap: float | None) -> LpResult:
    """:func:`solve` through scipy's public functions (same solver, same options)."""
    if integer:
        options: dict[str, Any] = {}
        if node_limit is not None:
            options["node_limit"] = node_limit
        if rel_gap is not None:
            options["mip_rel_gap"] = rel_gap
        res = optimize.milp(c, integrality=np.ones(c.size),
                            bounds=optimize.Bounds(col_lo, col_hi),
                            constraints=optimize.LinearConstraint(A, row_lo, row_hi),
                            options=options)
    else:
        hi, lo = np.asarray(row_hi), np.asarray(row_lo)
        up, down = np.isfinite(hi), np.isfinite(lo)
        res = optimize.linprog(c, A_ub=np.vstack([A[up], -A[down]]),
                               b_ub=np.concatenate([hi[up], -lo[down]]),
                               bounds=np.column_stack([col_lo, col_hi]), method="highs")
    if res.status == 0:
        return LpResult("optimal", np.asarray(res.x))
    if res.status == 2:
        return LpResult("infeasible", None)
    return LpResult("other", None if res.x is None else np.asarray(res.x))
