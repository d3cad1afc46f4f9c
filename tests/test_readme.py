"""Every shell and Python block of README.md runs as written (in a temporary folder holding a
copy of circuits/), in document order, so later blocks can use the files earlier ones wrote.

Shell lines run through the command line's ``main`` in this process (same program as the
installed script, without its start-up cost). Lines that install packages, run the test
suite or run benchmarks are left out; blocks that need an absent extra are skipped; the
commands with the 16 x 16 multiplier and the training run (with its cross-validation) are
left to the slow test, which runs the whole README.
"""

from __future__ import annotations

import contextlib
import doctest
import io
import pathlib
import re
import shlex
import shutil

import pytest

from thresholdc.cli import main

ROOT = pathlib.Path(__file__).resolve().parents[1]
FENCE = re.compile(r"^```(\w+)\n(.*?)^```", re.S | re.M)
SKIP = ("pip install", "-m pytest", "benchmarks/")


def blocks() -> list[tuple[str, str]]:
    """``(language, text)`` of every ``sh`` and ``python`` block, in order."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    return [(m.group(1), m.group(2)) for m in FENCE.finditer(text)
            if m.group(1) in ("sh", "python")]


def commands(block: str) -> list[list[str]]:
    """The thresholdc argument lists of a shell block (continuations joined, ``&&`` split)."""
    joined = re.sub(r"\\\n\s*", " ", block)
    out = []
    for line in joined.splitlines():
        for part in line.split("&&"):
            words = shlex.split(part, comments=True)
            if not words or any(s in part for s in SKIP):
                continue
            if words[:3] == ["python3", "-m", "thresholdc"]:
                words = words[3:]
            elif words[0] == "thresholdc":
                words = words[1:]
            else:
                raise AssertionError(f"README command not understood: {part.strip()}")
            out.append(words)
    return out


def _needs(text: str) -> None:
    for module in ("torch", "onnx", "onnxruntime", "matplotlib"):
        if re.search(rf"\bimport [\w., ]*\b{module}\b", text) or (
                module == "matplotlib" and ("draw " in text or "figure(" in text
                                            or "report " in text)):
            pytest.importorskip(module)


def _slow(argv: list[str]) -> bool:
    return argv[0] == "train" or any("mult16" in a or "trained" in a for a in argv)


def run_block(lang: str, text: str, *, quick: bool = False) -> None:
    """Run one block; ``quick`` leaves out the slow commands (see the module docstring)."""
    _needs(text)
    if lang == "sh":
        for argv in commands(text):
            if quick and _slow(argv):
                continue
            with contextlib.redirect_stdout(io.StringIO()):
                code = main(argv)
            allowed = (0, 1) if argv[0] == "verify" else (0,)  # verify exits 1 on a difference
            assert code in allowed, f"'thresholdc {' '.join(argv)}' exited {code}"
    elif text.lstrip().startswith(">>>"):
        test = doctest.DocTestParser().get_doctest(text, {"thresholdc": __import__(
            "thresholdc")}, "README", "README.md", 0)
        runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS)
        with contextlib.redirect_stdout(io.StringIO()):
            runner.run(test)
        assert runner.failures == 0, "a README doctest failed"
    else:
        with contextlib.redirect_stdout(io.StringIO()):
            exec(compile(text, "README.md", "exec"), {"__name__": "__readme__"})


@pytest.fixture
def folder(tmp_path, monkeypatch):
    shutil.copytree(ROOT / "circuits", tmp_path / "circuits")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def test_readme_has_blocks_and_every_command_is_understood():
    found = blocks()
    assert sum(lang == "sh" for lang, _ in found) >= 8
    assert sum(lang == "python" for lang, _ in found) >= 3
    for lang, text in found:
        if lang == "sh":
            commands(text)  # raises on a command that is not thresholdc


def test_readme_blocks_run(folder):
    for lang, text in blocks():
        run_block(lang, text, quick=True)
    for name in ("greenhouse.json", "router.json", "router.png", "router.html", "docks.onnx",
                 "wrong_rows.csv", "greenhouse_figure.png"):
        assert (folder / name).exists(), name


@pytest.mark.slow
def test_readme_runs_whole(folder):
    for lang, text in blocks():
        run_block(lang, text)
    assert (folder / "mult16.json").exists() and (folder / "trained.json").exists()


def test_readme_compile_summary_matches_the_program(folder, capsys):
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    shown = text.split("The summary of the first command looks like this:", 1)[1]
    shown = shown.split("```\n", 2)[1].splitlines()
    assert main(["compile", "circuits/greenhouse.rules", "-o", "greenhouse.json"]) == 0
    actual = capsys.readouterr().out.splitlines()

    def timeless(lines):  # times differ from run to run
        return [re.sub(r"[0-9.]+ s\b", "T s", line) for line in lines]

    assert timeless(actual) == timeless(shown)
