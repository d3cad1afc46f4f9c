"""The diff report as text: a table of definitions, the details of each changed one, the
outputs, and the units that moved most."""

from __future__ import annotations

from typing import Any

__all__ = ["render"]

_TOP_DRIFT = 10  # units listed in the drift table


def _fmt(x: float | None) -> str:
    return "-" if x is None else f"{x:.4f}".rstrip("0").rstrip(".") if x != 1 else "1"


def _checked(d: Any) -> str:
    if d.method is None:
        return "-"
    return f"{d.method} {d.assignments}"


def render(result: Any, net_file: str, rules_file: str) -> str:
    """The report of a :class:`~thresholdc.explain.diff.Diff` as text."""
    from ..commands.common import format_table

    defs = result.definitions
    with_unit = sum(1 for d in defs if d.reading is not None)
    out = [f"diff {net_file} against {rules_file}: {len(defs)} definitions, "
           f"{with_unit} with a unit, {len(result.changed)} changed"]
    rows = []
    for d in defs:
        reading = "(no unit)" if d.reading is None else (
            "same as the rule" if d.reading == d.rule else d.reading)
        rows.append((d.name + (" *" if d.output else ""), _fmt(d.agreement), _checked(d),
                     reading))
    out.append(format_table(("definition", "agreement", "checked", "unit reads"), rows,
                            right={1}))
    out.append("(* an output; agreement: the unit rounded to 0/1, composed with the units it "
               "reads, against the rule)")
    for d in defs:
        if d.reading is None or (d.agreement == 1 and not (d.added or d.dropped or d.negated)):
            continue
        out.append("")
        out.append(f"{d.name}: agreement {_fmt(d.agreement)} ({d.method} over "
                   f"{len(d.columns)} columns, {d.assignments} assignments)")
        out.append(f"  rule:    {d.rule}")
        out.append(f"  unit:    {d.reading}" + ("" if d.exact_reading else
                                                "   (weights rounded: too many inputs)"))
        for label, items in (("added", d.added), ("dropped", d.dropped),
                             ("negated", d.negated)):
            if items:
                out.append(f"  {label}: {', '.join(items)}")
        e = d.explanation
        if e is not None:
            cols = ", ".join(f"{c}={v}" for c, v in e["columns"].items()) or "(any values)"
            out.append(f"  differs whenever {cols}: unit {str(e['unit']).lower()}, rule "
                       f"{str(e['rule']).lower()} ({e['kind']}; {e['counterexamples']} "
                       "counterexamples)")
        if d.rounding is not None and d.rounding < 1:
            out.append(f"  the unrounded unit decides as its reading on {_fmt(d.rounding)} "
                       "of the assignments")
    out.append("")
    out.append(format_table(
        ("output", "agreement", "checked"),
        [(o.name, _fmt(o.agreement), f"{o.method} {o.assignments}") for o in result.outputs],
        right={1}))
    if result.drift is not None:
        moved = sorted(result.drift, key=lambda u: (-u.change, u.name))[:_TOP_DRIFT]
        out.append("")
        out.append(f"weight drift from the start (largest {len(moved)} of "
                   f"{len(result.drift)} units)")
        out.append(format_table(
            ("unit", "change", "relative", "largest weight change", "bias change"),
            [(u.name, f"{u.change:.3f}", "new" if u.new else _fmt(u.relative),
              "-" if u.largest_input is None else f"{u.largest_input} {u.largest_change:+.3f}",
              f"{u.bias_change:+.3f}") for u in moved],
            right={1, 2}))
    for note in result.notes:
        out.append(f"note: {note}")
    return "\n".join(out)
