"""Progress bars for long work, shown only on a terminal and only when the caller asks.

The command line turns bars on (``enabled(True)``) unless ``--json`` is given; library calls
show none by default.  Bars use tqdm when it is installed and stderr is a terminal; otherwise
:func:`bar` returns a silent stand-in with the same ``update``/``close`` methods.

>>> with bar(10, "rows") as b:
...     b.update(10)
"""

from __future__ import annotations

import contextvars
import sys
from typing import Any

__all__ = ["enabled", "is_enabled", "bar"]

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


def bar(total: int, desc: str, *, unit: str = "it", show: bool | None = None) -> Any:
    """A tqdm bar on a terminal when enabled, else a silent one (both are context managers).

    ``show`` overrides the context's setting (a caller's own ``progress=`` option); a bar is
    still shown only on a terminal.
    """
    on = is_enabled() if show is None else (show and sys.stderr.isatty())
    if not on:
        return _Silent()
    try:
        from tqdm import tqdm
    except ImportError:
        return _Silent()
    return tqdm(total=total, desc=desc, unit=unit, unit_scale=True, leave=False,
                file=sys.stderr)
