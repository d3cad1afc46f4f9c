"""A bug in thresholdc is reported as one, never as bad input (exit 3, not 2)."""

from __future__ import annotations

import os
from dataclasses import replace

import thresholdc.compiler as compiler
from thresholdc import __version__
from thresholdc.cli import INTERNAL_ERROR, main
from thresholdc.errors import InternalError

ADDER = "input a, b, cin\noutput sum, carry\nsum = a xor b xor cin\ncarry = majority(a, b, cin)\n"


def _compile(tmp_path, capsys):
    src = tmp_path / "adder.rules"
    src.write_text(ADDER, encoding="utf-8")
    code = main(["compile", str(src), "-o", str(tmp_path / "adder.json")])
    _, err = capsys.readouterr()
    return code, err


def _one_internal_line(err: str) -> None:
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("thresholdc: internal error: "), err
    assert f"(thresholdc {__version__}; please report)" in lines[0]
    assert "Traceback" not in err


def test_a_broken_compiler_invariant_is_an_internal_error(tmp_path, capsys, monkeypatch):
    # the activation pass gives a neuron a wrong layer: the compiler's own check must say "bug"
    real = compiler._activate

    def broken(net, shape):
        out = real(net, shape)
        first = replace(out.neurons[0], layer=out.neurons[0].layer + 1)
        return replace(out, neurons=(first, *out.neurons[1:]))

    monkeypatch.setattr(compiler, "_activate", broken)
    code, err = _compile(tmp_path, capsys)
    assert code == INTERNAL_ERROR == 3
    _one_internal_line(err)
    assert "has layer" in err and "thresholdc: error:" not in err
    assert sorted(os.listdir(tmp_path)) == ["adder.rules"]  # nothing written


def test_an_unexpected_exception_is_an_internal_error(tmp_path, capsys, monkeypatch):
    def boom(*_a, **_k):
        raise AssertionError("an invariant the tests did not foresee")

    monkeypatch.setattr(compiler, "_activate", boom)
    monkeypatch.delenv("THRESHOLDC_DEBUG", raising=False)
    code, err = _compile(tmp_path, capsys)
    assert code == 3
    _one_internal_line(err)
    assert "AssertionError: an invariant the tests did not foresee" in err


def test_a_network_differing_from_its_source_is_an_internal_error(tmp_path, capsys, monkeypatch):
    # verification finds the compiled network different from its rules: that is a bug (exit 3)
    real = compiler._activate

    def flipped(net, shape):
        out = real(net, shape)
        last = out.neurons[-1]
        return replace(out, neurons=(*out.neurons[:-1], replace(
            last, weights=tuple(-w for w in last.weights), bias=-last.bias)))

    monkeypatch.setattr(compiler, "_activate", flipped)
    code, err = _compile(tmp_path, capsys)
    assert code == 3
    _one_internal_line(err)
    assert "differs from its source" in err
    assert sorted(os.listdir(tmp_path)) == ["adder.rules"]


def test_internal_error_is_not_a_user_error():
    from thresholdc.errors import ThresholdcError

    assert not issubclass(InternalError, ThresholdcError)
    assert issubclass(compiler.CompileError, InternalError)
