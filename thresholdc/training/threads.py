"""One BLAS thread while training: the matrices of a fit are small, and parallel work comes
from the fold processes instead.

OpenBLAS (bundled with numpy and scipy) starts one thread per core for every product; on a
busy 2-core machine its threads wait for each other and scipy's L-BFGS-B ran about 50 times
slower per evaluation (18 ms against 0.4 ms for 1000 parameters, measured while writing this
module).  :func:`one_blas_thread` finds the OpenBLAS libraries loaded in this process (Linux:
``/proc/self/maps``) and sets their thread count to 1 for the duration; elsewhere, or when
none is found, it does nothing.

>>> with one_blas_thread():
...     pass
"""

from __future__ import annotations

import ctypes
import os
from collections.abc import Iterator
from contextlib import contextmanager

__all__ = ["one_blas_thread"]

_NAMES = ("openblas", "scipy_openblas")
_SUFFIXES = ("", "64_")


def _libraries() -> list[tuple[object, object]]:
    """``(set, get)`` thread-count functions of every OpenBLAS loaded in this process."""
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
