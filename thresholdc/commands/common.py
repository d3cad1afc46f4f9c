"""Small pieces the command modules share: JSON printing, tables, progress bars."""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence
from typing import Any

from ..present import count
from . import SUMMARY

__all__ = ["add_parser", "print_json", "format_table", "fmt_num", "warn", "count"]


def add_parser(
    subparsers: Any, name: str, *, description: str, example: str
) -> argparse.ArgumentParser:
    """A subcommand parser with its summary (:data:`SUMMARY`), a description and an example in
    its epilog."""
    return subparsers.add_parser(
        name,
        help=SUMMARY[name],
        description=description,
        epilog=f"example:\n  {example}",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )


def print_json(data: Any) -> None:
    """Print ``data`` as JSON (UTF-8, two-space indent) on stdout."""
    sys.stdout.write(json.dumps(data, indent=2, ensure_ascii=False) + "\n")


def warn(message: str) -> None:
    """One warning line on stderr."""
    sys.stderr.write(f"thresholdc: warning: {message}\n")


def fmt_num(x: float) -> str:
    """A number as short text: integers without a point, others with up to 6 significant
    digits."""
    x = float(x)
    if x.is_integer() and abs(x) < 1e15:
        return str(int(x))
    return f"{x:.6g}"


def format_table(header: Sequence[str], rows: Sequence[Sequence[Any]], *, right: set[int] | None
                 = None) -> str:
    """Columns padded to their widest cell; ``right`` lists columns aligned right."""
    right = right or set()
    cells = [[str(c) for c in header]] + [[str(c) for c in r] for r in rows]
    widths = [max(len(r[i]) for r in cells) for i in range(len(header))]

    def line(r: list[str]) -> str:
        return "  ".join(
            c.rjust(w) if i in right else c.ljust(w) for i, (c, w) in enumerate(zip(r, widths))
        ).rstrip()

    out = [line(cells[0]), "  ".join("-" * w for w in widths)]
    out.extend(line(r) for r in cells[1:])
    return "\n".join(out)
