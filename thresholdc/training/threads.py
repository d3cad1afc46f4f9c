"""One BLAS thread while training: the matrices of a fit are small, and parallel work comes
from the fold processes instead.

OpenBLAS (bundled with numpy and scipy) starts one thread per core for every product; on a
busy 2-core machine its threads wait for each other and scipy's L-BFGS-B ran about 50 times
slower per evaluation (18 ms against 0.4 ms for 1000 parameters, measured while writing this
module).  :func:`one_blas_thread` finds the OpenBLAS libraries loaded in this process (Linux:
``/proc/self/maps``) and sets their thread count to 1 for the duration; elsewhere, or when
none is found, it does nothing.  SciPy brings its own OpenBLAS, loaded only when
``scipy.linalg`` is first imported (the L-BFGS fits import it lazily, after training has
begun), so both functions import it first: without that, the first training run of a fresh
process (every ``thresholdc train``) ran L-BFGS-B with one BLAS thread per core, 3.3 s
instead of 0.7 s on the speed benchmark (measured while writing this).
:func:`set_blas_threads` sets the count for good (a worker process of the cross-validation
calls it once, when it starts).

>>> with one_blas_thread():
...     pass
"""

from __future__ import annotations

import ctypes
import importlib
import os
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = ["one_blas_thread", "set_blas_threads"]

_NAMES = ("openblas", "scipy_openblas")
_SUFFIXES = ("", "64_")


def _libraries() -> list[tuple[object, object]]:
    """``(set, get)`` thread-count functions of every OpenBLAS loaded in this process (SciPy's
    loaded first, when SciPy is installed)."""
    try:
        importlib.import_module("scipy.linalg")
    except ImportError:
        pass
    maps = "/proc/self/maps"
    if not os.path.exists(maps):
        return []
    with open(maps, encoding="utf-8", errors="replace") as f:
        paths = sorted({line.split()[-1] for line in f if "openblas" in line.lower()
                        and line.split()[-1].startswith("/")})
    found = []
    for path in paths:
        try:
            lib = ctypes.CDLL(path)
        except OSError:
            continue
        for name in _NAMES:
            for suffix in _SUFFIXES:
                setter = getattr(lib, f"{name}_set_num_threads{suffix}", None)
                getter = getattr(lib, f"{name}_get_num_threads{suffix}", None)
                if setter is not None and getter is not None:
                    getter.restype = ctypes.c_int
                    found.append((setter, getter))
    return found


def set_blas_threads(n: int) -> list[int]:
    """Set every loaded OpenBLAS to ``n`` threads; the counts before, one per library.

    >>> before = set_blas_threads(1)
    >>> _ = set_blas_threads(max(before, default=1))
    """
    libs = _libraries()
    before = [int(get()) for _, get in libs]  # type: ignore[operator]
    for setter, _ in libs:
        setter(n)  # type: ignore[operator]
    return before


@contextmanager
def one_blas_thread() -> Iterator[None]:
    """Run the body with one OpenBLAS thread, then restore the previous counts."""
    libs = _libraries()
    before = [int(get()) for _, get in libs]  # type: ignore[operator]
    for setter, _ in libs:
        setter(1)  # type: ignore[operator]
    try:
        yield
    finally:
        for (setter, _), n in zip(libs, before, strict=True):
            setter(n)  # type: ignore[operator]
