"""Truth tables held as Python integers: bit ``r`` is the value at the row ``r`` where
variable ``i`` is ``(r >> i) & 1`` (the order :func:`thresholdc.synth.identify.identify` uses).

Every operation is a handful of word-parallel integer operations (no loop over rows), with the
masks it needs cached per number of variables.  Functions of up to :data:`MAX_VARS` variables.

>>> n = 2
>>> a, b = var(n, 0), var(n, 1)
>>> bin(a & b), bin(a ^ b)
('0b1000', '0b110')
>>> expand(a & b, (0, 1), 3) == var(3, 0) & var(3, 1)
True
"""

from __future__ import annotations

from functools import cache, lru_cache

__all__ = [
    "MAX_VARS", "full", "var", "expand", "expand_cached", "swap", "flip", "depends", "support",
    "shrink", "unateness", "count_eq", "count_ge", "count_bit", "symmetry", "to_list", "compose",
]

#: The largest number of variables these helpers are used with (2**12-bit integers).
MAX_VARS = 12


@cache
def full(n: int) -> int:
    """The constant-1 table of ``n`` variables."""
    return (1 << (1 << n)) - 1


@cache
def var(n: int, i: int) -> int:
    """The table of variable ``i`` among ``n``."""
    block = ((1 << (1 << i)) - 1) << (1 << i)  # 2^i zeros then 2^i ones
    period = 1 << (i + 1)
    reps = (1 << n) // period
    return block * _repeat(period, reps)


@cache
def _repeat(width: int, times: int) -> int:
    """The integer with a 1 at bit ``k·width`` for ``k < times`` (multiplying repeats)."""
    out = 0
    for k in range(times):
        out |= 1 << (k * width)
    return out


@cache
def _swap_mask(n: int, a: int, b: int) -> int:
    """Rows where variable ``a`` is 1 and variable ``b`` is 0 (``a < b``)."""
    return var(n, a) & ~var(n, b) & full(n)


def swap(tt: int, n: int, a: int, b: int) -> int:
    """The table with variables ``a`` and ``b`` exchanged."""
    if a == b:
        return tt
    if a > b:
        a, b = b, a
    s = (1 << b) - (1 << a)
    t = ((tt >> s) ^ tt) & _swap_mask(n, a, b)
    return tt ^ t ^ (t << s)


def flip(tt: int, n: int, i: int) -> int:
    """The table of ``f`` with variable ``i`` complemented."""
    s = 1 << i
    hi = var(n, i)
    return ((tt & hi) >> s) | ((tt << s) & hi)


def expand(tt: int, positions: tuple[int, ...], n: int) -> int:
    """A table over ``len(positions)`` variables re-expressed over ``n`` variables, where its
    variable ``j`` becomes variable ``positions[j]`` (``positions`` increasing)."""
    m = len(positions)
    if m == n:
        return tt
    out = tt * _repeat(1 << m, 1 << (n - m))
    for j in range(m - 1, -1, -1):
        p = positions[j]
        if p != j:
            out = swap(out, n, j, p)
    return out


@lru_cache(maxsize=1 << 16)
def expand_cached(tt: int, positions: tuple[int, ...], n: int) -> int:
    """:func:`expand`, cached (cut enumeration re-expresses the same small tables often)."""
    return expand(tt, positions, n)


def depends(tt: int, n: int, i: int) -> bool:
    """Whether the function depends on variable ``i``."""
    hi = var(n, i)
    return ((tt & hi) >> (1 << i)) != (tt & ~hi & full(n))


def support(tt: int, n: int) -> tuple[int, ...]:
    """The variables the function depends on, in order."""
    return tuple(i for i in range(n) if depends(tt, n, i))


def shrink(tt: int, n: int, keep: tuple[int, ...]) -> int:
    """The table over the variables ``keep`` (increasing) of a function that depends on no
    other variable."""
    out = tt
    m = n
    # move each kept variable down to its new position, then cut the table to 2**len(keep)
    for j, p in enumerate(keep):
        if p != j:
            out = swap(out, m, j, p)
    return out & full(len(keep))


def unateness(tt: int, n: int) -> tuple[int, ...] | None:
    """Per variable +1 (positive unate), -1 (negative), 0 (irrelevant); None if binate."""
    out = []
    mask = full(n)
    for i in range(n):
        hi = var(n, i)
        f1 = (tt & hi) >> (1 << i)
        f0 = tt & ~hi & mask
        if f0 == f1:
            out.append(0)
        elif f0 & ~f1 == 0:
            out.append(1)
        elif f1 & ~f0 == 0:
            out.append(-1)
        else:
            return None
    return tuple(out)


@cache
def count_eq(n: int, c: int) -> int:
    """Rows with exactly ``c`` true variables."""
    out = 0
    for r in range(1 << n):
        if r.bit_count() == c:
            out |= 1 << r
    return out


@cache
def count_ge(n: int, c: int) -> int:
    """Rows with at least ``c`` true variables."""
    out = 0
    for k in range(max(c, 0), n + 1):
        out |= count_eq(n, k)
    return out


@cache
def count_bit(n: int, j: int) -> int:
    """Rows whose count of true variables has bit ``j`` set."""
    out = 0
    for k in range(n + 1):
        if (k >> j) & 1:
            out |= count_eq(n, k)
    return out


def symmetry(tt: int, n: int) -> tuple[tuple[int, ...], tuple[int, ...]] | None:
    """``(polarity, values)`` when ``f(x) = values[Σ (x_i xor polarity_i)]``, else None.

    The polarity has ``polarity[0] = 0``; a variable pairs with variable 0 either plainly
    (exchanging them leaves ``f`` unchanged) or complemented (exchanging them and complementing
    both leaves it unchanged).  The candidate is then checked on every count.
    """
    if n == 0:
        return (), (tt & 1,)
    pol = [0] * n
    for j in range(1, n):
        plain = swap(tt, n, 0, j) == tt
        anti = swap(flip(flip(tt, n, 0), n, j), n, 0, j) == tt
        if not plain and not anti:
            return None
        pol[j] = 0 if plain else 1
    g = tt
    for j in range(n):
        if pol[j]:
            g = flip(g, n, j)
    values = []
    for c in range(n + 1):
        m = count_eq(n, c)
        part = g & m
        if part == 0:
            values.append(0)
        elif part == m:
            values.append(1)
        else:
            return None
    return tuple(pol), tuple(values)


def to_list(tt: int, n: int) -> list[int]:
    """The table as a list of 0/1 of length ``2**n``."""
    return [(tt >> r) & 1 for r in range(1 << n)]


def compose(local: int, k: int, args: list[int], n: int) -> int:
    """``local`` (a table over ``k`` variables) applied to ``args`` (tables over ``n``)."""
    # Shannon expansion on the last variable, done bottom-up over the 2**k leaves of the tree.
    mask = full(n)
    level = [mask if (local >> r) & 1 else 0 for r in range(1 << k)]
    for j in range(k):
        a = args[j]
        na = ~a & mask
        level = [(na & level[2 * r]) | (a & level[2 * r + 1]) for r in range(len(level) // 2)]
    return level[0]
