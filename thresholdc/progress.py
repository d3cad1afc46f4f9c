"""Progress bars for long work, shown only on a terminal and only when the caller asks.

The command line turns bars on (``enabled(True)``) unless ``--json`` is given; library calls
show none by default.  Bars use tqdm when it is installed and stderr is a terminal; otherwise
:func:`bar` returns a silent stand-in with the same ``update``/``close`` methods.  A bar
appears only once its work has run for :data:`DELAY` seconds (tqdm's ``delay``), so quick
steps never flash one; :func:`track` wraps a loop.  Every long step of the program uses these
two (synthesis per node, verification, SAT, branch-and-bound, training).

>>> with bar(10, "rows") as b:
...     b.update(10)
>>> sum(track(range(4), "items"))
6
"""

from __future__ import annotations

import contextvars
import sys
from collections.abc import Iterable, Iterator, Sized
from typing import Any, TypeVar

__all__ = ["enabled", "is_enabled", "bar", "track", "DELAY"]

#: Seconds a step runs before its bar appears (the program's rule: bars for steps that can
#: take over 2 s; shorter ones stay silent).
DELAY = 2.0

_T = TypeVar("_T")

_ENABLED: contextvars.ContextVar[bool] = contextvars.ContextVar("thresholdc_progress",
                                                                default=False)


def enabled(on: bool) -> None:
    """Turn progress bars on or off for the current context."""
    _ENABLED.set(on)


def is_enabled() -> bool:
    """True when bars were turned on and stderr is a terminal."""
    return _ENABLED.get() and sys.stderr.isatty()


class _Silent:
    """A bar that shows nothing."""

    def update(self, n: int = 1) -> None:
        pass

    def set_postfix_str(self, s: str) -> None:
        pass

    def set_postfix(self, *args: Any, **kwargs: Any) -> None:
        pass

    def close(self) -> None:
        pass

    def __enter__(self) -> _Silent:
        return self

    def __exit__(self, *exc: Any) -> None:
        self.close()


def bar(total: float, desc: str, *, unit: str = "it", show: bool | None = None) -> Any:
    """A tqdm bar on a terminal when enabled, else a silent one (both are context managers).

    ``show`` overrides the context's setting (a caller's own ``progress=`` option); a bar is
    still shown only on a terminal, and only after :data:`DELAY` seconds.
    """
    on = is_enabled() if show is None else (show and sys.stderr.isatty())
    if not on:
        return _Silent()
    try:
        from tqdm import tqdm
    except ImportError:
        return _Silent()
    return tqdm(total=total, desc=desc, unit=unit, unit_scale=True, leave=False,
                file=sys.stderr, delay=DELAY)


def track(items: Iterable[_T], desc: str, *, total: int | None = None, unit: str = "it",
          show: bool | None = None) -> Iterator[_T]:
    """``items`` one by one, with a :func:`bar` advanced per item (``total`` defaults to
    ``len(items)``).

    >>> [x * x for x in track([1, 2, 3], "squares", show=False)]
    [1, 4, 9]
    """
    if total is None:
        total = len(items) if isinstance(items, Sized) else 0
    with bar(total, desc, unit=unit, show=show) as b:
        for item in items:
            yield item
            b.update(1)
