"""Start-up cost: which heavy third-party packages a command pulls in (counted, never timed).

``python -X importtime`` lists every module an interpreter really loads; a lazily bound module
shows up there only once something uses it.  Wall-clock time is not asserted (the machine is
shared); the heavy packages are what made ``--help`` slow, so their absence is the check.
``import thresholdc`` and ``thresholdc --help`` load none of the pipeline (the public names and
the commands load on first use); benchmarks/startup_bench.py measures the times.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

#: Packages that cost a large part of a second to import and that --help or loading a
#: network never needs.  # common practice (measured with -X importtime on this project)
HEAVY = ("scipy.optimize", "scipy.special", "scipy.sparse", "sympy", "networkx")


#: What the package facade and the top-level --help never need: the numeric and parsing
#: libraries and thresholdc's own pipeline (each loads when a command or name is used).
PIPELINE = ("numpy", "lark", "scipy", "sympy", "networkx", "thresholdc.api",
            "thresholdc.compiler", "thresholdc.ir", "thresholdc.syntax", "thresholdc.logic",
            "thresholdc.synth", "thresholdc.network", "thresholdc.verification",
            "thresholdc.export", "thresholdc.training", "thresholdc.explain",
            "thresholdc.htmlreport")


#: Prints every module of ``sys.modules`` at exit: ``-X importtime`` does not list modules
#: loaded through ``importlib.import_module`` (the package facade and the command line use it).
#: A lazily bound module not used yet is a stand-in there (``importlib.util._LazyModule``) and
#: is left out.
_AT_EXIT = ("import atexit, sys\n"
            "atexit.register(lambda: sys.stderr.write(''.join(f'loaded: {n}\\n' "
            "for n, m in list(sys.modules.items()) "
            "if type(m).__name__ != '_LazyModule')))\n")


def _loaded(code: str, *, argv: list[str] | None = None) -> set[str]:
    """Every module that ``code`` loads, or the command line run with ``argv`` (as ``python -m
    thresholdc``), in a fresh interpreter: the ``-X importtime`` listing and ``sys.modules``."""
    if argv is not None:
        code = (f"import runpy, sys\nsys.argv = {['thresholdc', *argv]!r}\n"
                "runpy.run_module('thresholdc', run_name='__main__', alter_sys=True)\n")
    done = subprocess.run([sys.executable, "-X", "importtime", "-c", _AT_EXIT + code],
                          capture_output=True, text=True, check=True)
    names = set()
    for line in done.stderr.splitlines():
        if line.startswith("import time:") and "|" in line:
            names.add(line.rsplit("|", 1)[1].strip())
        elif line.startswith("loaded: "):
            names.add(line[len("loaded: "):])
    return names


def _heavy(names: set[str], heavy: tuple[str, ...] = HEAVY) -> list[str]:
    return sorted(n for n in names for h in heavy if n == h or n.startswith(h + "."))


def test_the_importtime_listing_sees_a_lazily_bound_module_once_it_is_used():
    # The check below can fail: using a lazily bound module really loads it.
    names = _loaded("import thresholdc.logic.lower as m; m.sympy.Symbol('x')")
    assert any(n.startswith("sympy.") for n in names)


@pytest.mark.parametrize("code", [
    "import thresholdc, thresholdc.cli",
    "import thresholdc.cli as c; c.build_parser(()).format_help()",
])
def test_importing_the_package_and_the_command_line_loads_no_heavy_package(code):
    assert _heavy(_loaded(code)) == []


@pytest.mark.parametrize("code,argv", [
    ("import thresholdc", None),
    ("import thresholdc, thresholdc.cli; dir(thresholdc); thresholdc.__all__", None),
    ("", ["--help"]),
    ("", ["--version"]),
])
def test_the_package_and_the_top_level_help_load_none_of_the_pipeline(code, argv):
    names = _loaded(code, argv=argv)
    assert "thresholdc" in names  # the listing saw the package itself
    assert _heavy(names, PIPELINE) == []
    assert not any(n.startswith("thresholdc.commands.") and n != "thresholdc.commands.common"
                   for n in names)


def test_a_command_s_help_loads_that_command_only():
    names = _loaded("", argv=["inspect", "--help"])
    commands = {n for n in names if n.startswith("thresholdc.commands.")}
    assert "thresholdc.commands.inspect" in commands
    assert commands <= {"thresholdc.commands.inspect", "thresholdc.commands.common"}


def test_the_check_sees_the_pipeline_once_a_public_name_is_used():
    # The checks above can fail: reading a public name loads the module behind it.
    names = _loaded("import thresholdc; thresholdc.compile_rules")
    assert {"numpy", "lark", "thresholdc.compiler"} <= names


def test_every_public_name_resolves_to_the_object_of_its_module():
    code = (
        "import importlib, thresholdc\n"
        "assert set(thresholdc.__all__) == set(thresholdc._LAZY) | {'__version__'}\n"
        "assert set(thresholdc.__all__) <= set(dir(thresholdc))\n"
        "for name, module in thresholdc._LAZY.items():\n"
        "    real = getattr(importlib.import_module('thresholdc.' + module), name)\n"
        "    assert getattr(thresholdc, name) is real, name\n"
        "try:\n"
        "    thresholdc.no_such_name\n"
        "except AttributeError as exc:\n"
        "    assert 'no_such_name' in str(exc)\n"
        "else:\n"
        "    raise AssertionError('no AttributeError')\n"
        "print('ok')\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0 and done.stdout == "ok\n", done.stderr


def test_a_notebook_display_works_without_importing_the_report_module_first():
    code = (
        "import sys, thresholdc\n"
        "net = thresholdc.compile_rules('input a, b\\ny = a and b\\n')\n"
        "assert 'thresholdc.htmlreport' not in sys.modules\n"
        "print(net._repr_html_()[:40])\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.startswith('<div class="thresholdc-network">')


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


def test_a_small_compile_loads_no_networkx(tmp_path):
    # the rule checker finds cycles itself; networkx stays for the gate-graph export and
    # the comparison of trained networks
    names = _loaded("", argv=["compile", "circuits/greenhouse.rules", "-o",
                              str(tmp_path / "g.json")])
    assert "thresholdc.synth.identify" in names  # the check saw the compile's work
    assert _heavy(names, ("networkx",)) == []


def test_a_small_compile_of_read_once_rules_loads_no_optimiser_sympy_or_networkx(tmp_path):
    # threshold tests of up to 6 variables are exact rational programs (no scipy.optimize),
    # and read-once definitions are not handed to sympy; circuits/greenhouse.rules still loads
    # sympy (two definitions are simplified) and scipy.optimize (the helper-neuron program),
    # and exhaustive verification still uses scipy.sparse
    rules = tmp_path / "r.rules"
    rules.write_text("input a, b, c, d, e\noutput y, z\nx = a and (b or not c)\n"
                     "y = x -> d\nz = (a ^ b) or (c and e)\n")
    names = _loaded("", argv=["compile", str(rules), "-o", str(tmp_path / "r.json")])
    assert "thresholdc.synth.identify" in names
    assert _heavy(names, ("scipy.optimize", "sympy", "networkx")) == []
