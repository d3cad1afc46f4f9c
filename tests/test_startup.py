"""Start-up cost: which heavy third-party packages a command pulls in (counted, never timed).

``python -X importtime`` lists every module an interpreter really loads; a lazily bound module
shows up there only once something uses it.  Wall-clock time is not asserted (the machine is
shared); the heavy packages are what made ``--help`` slow, so their absence is the check.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

#: Packages that cost a large part of a second to import and that --help or loading a
#: network never needs.  # common practice (measured with -X importtime on this project)
HEAVY = ("scipy.optimize", "scipy.special", "scipy.sparse", "sympy", "networkx")


def _loaded(code: str) -> set[str]:
    done = subprocess.run([sys.executable, "-X", "importtime", "-c", code],
                          capture_output=True, text=True, check=True)
    names = set()
    for line in done.stderr.splitlines():
        if line.startswith("import time:") and "|" in line:
            names.add(line.rsplit("|", 1)[1].strip())
    return names


def _heavy(names: set[str]) -> list[str]:
    return sorted(n for n in names for h in HEAVY if n == h or n.startswith(h + "."))


def test_the_importtime_listing_sees_a_lazily_bound_module_once_it_is_used():
    # The check below can fail: using a lazily bound module really loads it.
    names = _loaded("import thresholdc.logic.lower as m; m.sympy.Symbol('x')")
    assert any(n.startswith("sympy.") for n in names)


@pytest.mark.parametrize("code", [
    "import thresholdc, thresholdc.cli",
    "import thresholdc.cli as c; c.build_parser().format_help()",
])
def test_importing_the_package_and_the_command_line_loads_no_heavy_package(code):
    assert _heavy(_loaded(code)) == []


def test_loading_and_evaluating_a_step_network_loads_no_heavy_package(tmp_path):
    import thresholdc

    path = tmp_path / "n.json"
    net = thresholdc.compile_rules("input a, b\noutput y\ny = a and b\n")
    thresholdc.save_any(net, str(path))
    code = (
        "import numpy as np, thresholdc\n"
        f"net = thresholdc.load({str(path)!r})\n"
        "assert net.decide(np.array([[1, 1], [0, 1]])).tolist() == [[True], [False]]\n"
    )
    assert _heavy(_loaded(code)) == []
