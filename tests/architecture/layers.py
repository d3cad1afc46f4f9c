"""The floors of the package, lowest first: the one place the layering rule is written down.

A module may import modules of its own floor and of the floors below it, never above.
``base`` holds the helpers every floor uses; ``ir`` the shared representations; then the
stage packages in pipeline order; then the drivers (compiler, API, command line).
DEVELOPERS.md draws the same order.
"""

from __future__ import annotations

FLOORS: tuple[tuple[str, tuple[str, ...]], ...] = (
    ("base", ("thresholdc.errors", "thresholdc.files", "thresholdc.textlines",
              "thresholdc.progress",
              "thresholdc.lazy", "thresholdc.version", "thresholdc.present", "thresholdc.extras",
              "thresholdc.examples")),
    ("ir", ("thresholdc.ir",)),
    ("syntax", ("thresholdc.syntax",)),
    ("logic", ("thresholdc.logic",)),
    ("network", ("thresholdc.network",)),
    ("synth", ("thresholdc.synth",)),
    ("verify", ("thresholdc.verification", "thresholdc.forcing")),
    ("export", ("thresholdc.export",)),
    ("train", ("thresholdc.training",)),
    ("explain", ("thresholdc.explain",)),
    ("compiler", ("thresholdc.compiler",)),
    ("api", ("thresholdc.api", "thresholdc.htmlreport")),
    ("commands", ("thresholdc.commands",)),
    ("package", ("thresholdc",)),
    ("cli", ("thresholdc.cli", "thresholdc.__main__")),
)

#: Stage packages: code outside a stage reaches it through its ``__init__`` (its public names).
STAGES = ("syntax", "logic", "network", "synth", "verification", "export", "training",
          "explain")


def floor_of(module: str) -> int:
    """The floor index of a module (the longest matching prefix wins).

    >>> floor_of("thresholdc.ir.gates") < floor_of("thresholdc.synth.cuts")
    True
    """
    best, length = None, -1
    for index, (_, prefixes) in enumerate(FLOORS):
        for prefix in prefixes:
            if (module == prefix or module.startswith(prefix + ".")) and len(prefix) > length:
                best, length = index, len(prefix)
    if best is None:
        raise KeyError(module)
    return best
