"""CompileOptions: one validation, the valid values listed, no option silently ignored."""

from __future__ import annotations

import dataclasses
import json

import pytest

from thresholdc import compile_rules
from thresholdc.cli import build_parser, main
from thresholdc.errors import UsageError
from thresholdc.ir.options import CHOICES, HONOURED, RECORDED, CompileOptions

ATLEAST = "input a, b, c, d\ny = atleast(2, a, b, c, d)\n"


def test_every_option_is_honoured_by_some_pass():
    honoured = {name for names in HONOURED.values() for name in names}
    assert honoured == {f.name for f in dataclasses.fields(CompileOptions)}


@pytest.mark.parametrize("name", sorted(CHOICES))
def test_an_unknown_choice_lists_every_valid_value(name):
    with pytest.raises(UsageError) as info:
        CompileOptions(**{name: "bogus"})
    assert info.value.message == (
        f"The {name!r} option must be one of {', '.join(CHOICES[name])}. Got 'bogus' instead."
    )


@pytest.mark.parametrize("bad", [
    {"cut_size": 1}, {"cut_size": 11}, {"max_fan_in": 1}, {"max_weight": 0},
    {"simplify_support": -1}, {"max_inputs": 2.5}, {"time_limit": 0}, {"layered": 1},
])
def test_values_out_of_range_are_refused_naming_the_option(bad):
    (name, value), = bad.items()
    with pytest.raises(UsageError) as info:
        CompileOptions(**bad)
    assert info.value.message.startswith(f"The {name!r} option must be ")
    assert info.value.message.endswith(f"Got {value!r} instead.")


def test_options_are_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        CompileOptions().cut_size = 8  # type: ignore[misc]


def test_recorded_options_keep_the_network_file_order():
    # DESIGN.md §4: meta.options lists the shaping options; their order is part of the bytes.
    assert list(CompileOptions().recorded()) == list(RECORDED)
    assert CompileOptions(activation="sigmoid").recorded()["tolerance"] == 0.01
    assert CompileOptions(activation="sigmoid", gain=3.0).recorded()["tolerance"] is None


def test_no_synthesis_with_a_fan_in_limit_is_refused_by_the_api():
    with pytest.raises(UsageError, match="'max_fan_in' option needs synthesis"):
        compile_rules(ATLEAST, synthesis=False, max_fan_in=2)
    with pytest.raises(UsageError, match="'max_weight' option needs synthesis"):
        compile_rules(ATLEAST, synthesis=False, max_weight=1)


def test_no_synthesis_with_a_fan_in_limit_is_a_usage_error_on_the_command_line(tmp_path,
                                                                                capsys):
    src = tmp_path / "fan.rules"
    src.write_text(ATLEAST)
    out = tmp_path / "fan.json"
    code = main(["compile", str(src), "--no-synthesis", "--max-fan-in", "2", "-o", str(out)])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("thresholdc: error: The 'max_fan_in' option needs synthesis")
    assert len(err.strip().splitlines()) == 1
    assert not out.exists()


def test_the_fan_in_limit_holds_with_synthesis(tmp_path, capsys):
    src = tmp_path / "fan.rules"
    src.write_text(ATLEAST)
    out = tmp_path / "fan.json"
    assert main(["compile", str(src), "--max-fan-in", "2", "-o", str(out)]) == 0
    data = json.loads(out.read_text())
    assert data["meta"]["options"]["max_fan_in"] == 2
    assert max(len(n["inputs"]) for n in data["neurons"]) <= 2
    assert data["meta"]["verification"]["result"] == "equal"


def test_an_option_no_running_pass_uses_is_a_warning(tmp_path, capsys):
    src = tmp_path / "fan.rules"
    src.write_text(ATLEAST)
    code = main(["compile", str(src), "--no-synthesis", "--cut-size", "8",
                 "-o", str(tmp_path / "n.json")])
    assert code == 0
    assert "warning: the 'cut_size' option has no effect" in capsys.readouterr().err


def test_the_command_line_takes_choices_and_defaults_from_the_options():
    parser = build_parser()
    compile_parser = parser._subparsers._group_actions[0].choices["compile"]
    actions = {a.dest: a for a in compile_parser._actions}
    assert tuple(actions["activation"].choices) == CHOICES["activation"]
    assert tuple(actions["encoding"].choices) == CHOICES["encoding"]
    assert set(actions["method"].choices) == set(CHOICES["verify"]) - {"none"}
    for dest, name in (("cut_size", "cut_size"), ("simplify_support", "simplify_support"),
                       ("max_inputs", "max_inputs"), ("time_limit", "time_limit"),
                       ("method", "verify"), ("activation", "activation")):
        assert actions[dest].default == CompileOptions.default(name)
