"""save_any / load_any by suffix, and the export and draw commands."""

from __future__ import annotations

import argparse
import json

import numpy as np
import pytest

from tests.export._export_nets import all_rows, full_adder, strict_xor
from thresholdc.commands import draw as draw_cmd
from thresholdc.commands import export as export_cmd
from thresholdc.errors import UsageError
from thresholdc.export import SUFFIXES, load_any, load_dense, save_any
from thresholdc.network import fileformat


def parser() -> argparse.ArgumentParser:
    """A parser with only our two commands, the way the CLI registers them."""
    p = argparse.ArgumentParser(prog="thresholdc")
    sub = p.add_subparsers(dest="command")
    for module in (export_cmd, draw_cmd):
        module.register(sub)
        sub.choices[module.__name__.rsplit(".", 1)[1]].set_defaults(run=module.run)
    return p


def run(*argv: str) -> int:
    args = parser().parse_args(list(argv))
    return args.run(args)


@pytest.mark.parametrize("suffix", [".json", ".npz", ".onnx"])
def test_save_any_and_load_any_keep_the_function(tmp_path, suffix):
    if suffix == ".onnx":
        pytest.importorskip("onnx")
    net = full_adder()
    path = str(tmp_path / f"adder{suffix}")
    save_any(net, path)
    back = load_any(path)
    X = all_rows(3)
    assert back.evaluate(X).tolist() == net.evaluate(X).tolist()
    assert back.output_names == net.output_names


def test_unknown_suffix_lists_the_supported_ones(tmp_path):
    with pytest.raises(UsageError) as err:
        save_any(full_adder(), str(tmp_path / "adder.h5"))
    for suffix in SUFFIXES:
        assert suffix in err.value.message
    assert list(tmp_path.iterdir()) == []
    with pytest.raises(UsageError, match="no suffix"):
        load_any(str(tmp_path / "adder"))
    with pytest.raises(UsageError, match=r"supported: \.npz, \.onnx"):
        load_dense(str(tmp_path / "adder.json"))


def test_export_command_converts_json_to_each_format(tmp_path, capsys):
    pytest.importorskip("onnx")
    src = str(tmp_path / "xor.json")
    fileformat.save(strict_xor(), src)
    for suffix in (".npz", ".onnx", ".json"):
        out = str(tmp_path / f"copy{suffix}")
        assert run("export", src, "-o", out) == 0
        assert f"wrote {out}" in capsys.readouterr().out
        back = load_any(out, like=strict_xor())
        X = all_rows(2)
        assert back.evaluate(X).tolist() == strict_xor().evaluate(X).tolist()


def test_export_command_reads_npz_with_like_and_prints_json(tmp_path, capsys):
    like = str(tmp_path / "xor.json")
    fileformat.save(strict_xor(), like)
    rng = np.random.default_rng(3)
    foreign = str(tmp_path / "trained.npz")
    np.savez(foreign, W1=rng.normal(size=(2, 2)), b1=rng.normal(size=2),
             W2=rng.normal(size=(2, 2)), b2=rng.normal(size=2),
             activations=np.array(["sigmoid", "sigmoid"]))
    out = str(tmp_path / "trained.json")
    assert run("export", foreign, "-o", out, "--like", like, "--json") == 0
    summary = json.loads(capsys.readouterr().out)
    assert summary["format"] == "json" and summary["outputs"] == 2
    net = fileformat.load(out)
    assert [n.name for n in net.neurons] == ["xor~1", "xor~2", "x", "x~2"]


def test_export_command_bad_suffix_writes_nothing(tmp_path):
    src = str(tmp_path / "xor.json")
    fileformat.save(strict_xor(), src)
    with pytest.raises(UsageError, match="unknown output suffix '.csv'"):
        run("export", src, "-o", str(tmp_path / "x.csv"))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["xor.json"]


def test_draw_command_writes_png(tmp_path, capsys):
    pytest.importorskip("matplotlib")
    src = str(tmp_path / "adder.json")
    fileformat.save(full_adder(), src)
    out = tmp_path / "adder.png"
    assert run("draw", src, "-o", str(out)) == 0
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "every neuron" in capsys.readouterr().out
    assert run("draw", src, "-o", str(out), "--max-neurons", "1") == 0
    assert "per-layer summary" in capsys.readouterr().out


def test_draw_command_refuses_other_pictures(tmp_path):
    src = str(tmp_path / "adder.json")
    fileformat.save(full_adder(), src)
    with pytest.raises(UsageError, match=r"supported: \.png, \.svg"):
        run("draw", src, "-o", str(tmp_path / "adder.pdf"))


def test_cli_exit_codes(tmp_path, capsys):
    cli = pytest.importorskip("thresholdc.cli")
    src = str(tmp_path / "adder.json")
    fileformat.save(full_adder(), src)
    assert cli.main(["export", src, "-o", str(tmp_path / "adder.npz")]) == 0
    assert cli.main(["export", src, "-o", str(tmp_path / "adder.txt")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("thresholdc: error: ")
    assert ".json, .npz, .onnx" in err
    assert cli.main(["export", str(tmp_path / "missing.json"), "-o",
                     str(tmp_path / "m.npz")]) == 2


def test_importing_the_package_loads_no_optional_library():
    import subprocess
    import sys

    code = ("import sys, thresholdc.export; "
            "print(sorted(m for m in ('onnx', 'torch', 'matplotlib') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "[]"


def test_a_missing_optional_package_is_a_usage_error(tmp_path, monkeypatch):
    import sys

    monkeypatch.setitem(sys.modules, "onnx", None)  # makes "import onnx" fail
    monkeypatch.delitem(sys.modules, "thresholdc.export.onnx", raising=False)
    # run from this checkout, the hint is an editable install of it
    with pytest.raises(UsageError, match=r"pip install -e '.*\[onnx\]'"):
        save_any(full_adder(), str(tmp_path / "adder.onnx"))
    assert list(tmp_path.iterdir()) == []


def test_missing_extra_hint_fits_the_installation(tmp_path, monkeypatch):
    from thresholdc import extras

    monkeypatch.setattr(extras, "checkout_root", lambda: None)  # as from an installed wheel
    assert extras.install_hint("onnx") == "pip install 'thresholdc[onnx]'"
    monkeypatch.setattr(extras, "checkout_root", lambda: str(tmp_path))
    monkeypatch.chdir(tmp_path)
    assert extras.install_hint("onnx") == "pip install -e '.[onnx]'"
    monkeypatch.chdir("/")
    assert extras.install_hint("torch") == f"pip install -e '{tmp_path}[torch]'"
