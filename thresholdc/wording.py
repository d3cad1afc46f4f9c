"""Small text helpers shared by the printed summaries and the pictures.

>>> count(1, "neuron"), count(2, "bias", "biases"), count(0, "link")
('1 neuron', '2 biases', '0 links')
"""

from __future__ import annotations

__all__ = ["count"]


def count(n: int, one: str, many: str | None = None) -> str:
    """``n`` with the singular or plural noun: ``1 neuron``, ``3 neurons``.

    >>> count(1_234, "row")
    '1,234 rows'
    """
    return f"{n:,} {one if n == 1 else (many or one + 's')}"
