"""Network.save and Network.to_json (public API, DESIGN.md §5) write through the export stage."""

from __future__ import annotations

import pytest

from thresholdc import compile_rules, load
from thresholdc.errors import UsageError
from thresholdc.export import save_any
from thresholdc.ir import network as network_module
from thresholdc.network import dumps

RULES = "input a, b, c\nalarm = atleast(2, a, b, c)\n"


@pytest.mark.parametrize("suffix", [".json", ".npz"])
def test_save_writes_the_same_bytes_as_save_any(tmp_path, suffix):
    net = compile_rules(RULES, layered=True)
    by_method, by_function = tmp_path / f"m{suffix}", tmp_path / f"f{suffix}"
    net.save(str(by_method))
    save_any(net, str(by_function))
    assert by_method.read_bytes() == by_function.read_bytes()
    assert load(str(by_method), like=net).evaluate([[1, 1, 0]]).tolist() == [[1.0]]


def test_to_json_is_the_network_file_text():
    net = compile_rules(RULES)
    assert net.to_json() == dumps(net)


def test_without_a_registered_writer_save_says_what_to_import(tmp_path, monkeypatch):
    monkeypatch.setattr(network_module, "_WRITERS", {})
    net = compile_rules(RULES)
    with pytest.raises(UsageError, match="no network writer is registered"):
        net.save(str(tmp_path / "n.json"))
    assert not (tmp_path / "n.json").exists()
