"""NumPy .npz export and import: layout, plain-numpy evaluation, round trips, bad files."""

from __future__ import annotations

import os
import zipfile

import numpy as np
import pytest

from tests.export._export_nets import all_rows, full_adder, random_network, strict_xor
from thresholdc.errors import NetworkFileError, UsageError
from thresholdc.export.npz import load_npz, npz_bytes, save_npz
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.soften import apply_activation


def numpy_forward(path: str, X: np.ndarray) -> np.ndarray:
    """What a user writes: load with allow_pickle=False and run the layers by hand."""
    f = np.load(path, allow_pickle=False)
    a = X
    for k, name in enumerate(f["activations"], start=1):
        z = a @ f[f"W{k}"].T + f[f"b{k}"]
        a = {"step": lambda z: (z > 0).astype(float),
             "sigmoid": lambda z: 1 / (1 + np.exp(-z)),
             "tanh": np.tanh,
             "relu": lambda z: np.maximum(z, 0),
             "linear": lambda z: z}[str(name)](z)
    return a


def test_layout_keys_shapes_and_dtypes(tmp_path):
    path = str(tmp_path / "xor.npz")
    save_npz(strict_xor(), path)
    f = np.load(path, allow_pickle=False)
    assert sorted(f.files) == sorted(["W1", "b1", "W2", "b2", "activations", "inputs", "outputs"])
    assert f["W1"].shape == (2, 2) and f["b1"].shape == (2,)
    assert f["W2"].shape == (2, 2) and f["b2"].shape == (2,)
    for key in ("activations", "inputs", "outputs"):
        assert f[key].dtype.kind == "U"
    assert f["activations"].tolist() == ["step", "step"]
    assert f["inputs"].tolist() == ["a", "b"]
    assert f["outputs"].tolist() == ["x", "same_x"]


def test_plain_numpy_evaluates_the_file_like_the_network(tmp_path):
    net = full_adder()
    path = str(tmp_path / "adder.npz")
    save_npz(net, path)
    X = all_rows(3)
    assert numpy_forward(path, X).tolist() == net.evaluate(X).tolist()


def test_sigmoid_network_stays_within_its_tolerance(tmp_path):
    net = apply_activation(full_adder(), activation="sigmoid", tolerance=0.01, layered=True)
    path = str(tmp_path / "soft.npz")
    save_npz(net, path)
    X = all_rows(3)
    got = numpy_forward(path, X)
    np.testing.assert_allclose(got, net.evaluate(X), atol=1e-12)
    assert np.abs(got - full_adder().evaluate(X)).max() <= 0.01


@pytest.mark.parametrize("seed", range(5))
def test_random_networks_round_trip(tmp_path, seed):
    net = random_network(seed, n_inputs=5, n_neurons=9)
    path = str(tmp_path / "r.npz")
    save_npz(net, path)
    X = all_rows(5)
    assert numpy_forward(path, X).tolist() == net.evaluate(X).tolist()
    back = load_npz(path, like=net)
    assert back.evaluate(X).tolist() == net.evaluate(X).tolist()
    assert back.output_names == net.output_names
    assert back.is_strict()


def test_same_network_gives_identical_bytes_and_no_stray_files(tmp_path):
    a, b = str(tmp_path / "a.npz"), str(tmp_path / "b.npz")
    save_npz(full_adder(), a)
    save_npz(full_adder(), b)
    with open(a, "rb") as fa, open(b, "rb") as fb:
        assert fa.read() == fb.read()
    assert npz_bytes(full_adder()) == npz_bytes(full_adder())
    assert sorted(os.listdir(tmp_path)) == ["a.npz", "b.npz"]


def test_load_without_like_uses_the_files_own_names(tmp_path):
    path = str(tmp_path / "xor.npz")
    save_npz(strict_xor(), path)
    net = load_npz(path)
    assert net.inputs == ("a", "b")
    assert net.output_names == ("x", "same_x")
    assert all("~" in n.name for n in net.neurons[:2])
    X = all_rows(2)
    assert net.evaluate(X).tolist() == strict_xor().evaluate(X).tolist()


def test_load_with_like_restores_neuron_names(tmp_path):
    path = str(tmp_path / "xor.npz")
    save_npz(strict_xor(), path)
    net = load_npz(path, like=strict_xor())
    assert [n.name for n in net.neurons] == ["xor~1", "xor~2", "x", "x~2"]
    assert [n.origin for n in net.neurons] == ["x", "x", "x", "x"]


def test_like_with_other_inputs_is_refused(tmp_path):
    path = str(tmp_path / "xor.npz")
    save_npz(strict_xor(), path)
    other = Network(("p", "q"), (Neuron("x", 1, ("p", "q"), (1, 1), -0.5),),
                    (Output("x", "x"), Output("same_x", "x")))
    with pytest.raises(UsageError, match="inputs"):
        load_npz(path, like=other)


def test_foreign_file_whose_shape_does_not_fit_like_names_the_layer(tmp_path):
    # A file written by someone else's code: layers only, no names.
    path = str(tmp_path / "foreign.npz")
    np.savez(path, W1=np.ones((4, 2)), b1=np.zeros(4), W2=np.ones((3, 4)), b2=np.zeros(3),
             activations=np.array(["sigmoid", "sigmoid"]))
    with pytest.raises(UsageError, match=r"layer 2\) has 3 units but there are 2 outputs"):
        load_npz(path, like=strict_xor())
    np.savez(path, W1=np.ones((4, 3)), b1=np.zeros(4), W2=np.ones((2, 4)), b2=np.zeros(2),
             activations=np.array(["sigmoid", "sigmoid"]))
    with pytest.raises(UsageError, match="layer 1 reads 3 columns but there are 2 input units"):
        load_npz(path, like=strict_xor())


def test_foreign_file_that_fits_takes_the_names_of_like(tmp_path):
    path = str(tmp_path / "foreign.npz")
    rng = np.random.default_rng(0)
    np.savez(path, W1=rng.normal(size=(5, 2)), b1=np.zeros(5), W2=rng.normal(size=(2, 5)),
             b2=np.zeros(2), activations=np.array(["sigmoid", "sigmoid"]))
    net = load_npz(path, like=strict_xor())
    assert net.inputs == ("a", "b") and net.output_names == ("x", "same_x")
    assert [n.name for n in net.neurons][:5] == [f"L1~{i}" for i in range(1, 6)]


def _write(path, **arrays):
    np.savez(path, **arrays)


@pytest.mark.parametrize("arrays, message", [
    ({"b1": np.zeros(1), "activations": np.array(["step"])}, "no weight arrays"),
    ({"W1": np.zeros((1, 1)), "activations": np.array(["step"])}, "no bias b1"),
    ({"W1": np.zeros((1, 1)), "b1": np.zeros(1)}, "no 'activations'"),
    ({"W1": np.zeros((1, 1)), "b1": np.zeros(1), "activations": np.array(["step", "step"])},
     "names 2 layers but there are 1"),
    ({"W2": np.zeros((1, 1)), "b2": np.zeros(1), "activations": np.array(["step"])},
     "without gaps"),
])
def test_bad_layouts_are_file_errors(tmp_path, arrays, message):
    path = str(tmp_path / "bad.npz")
    _write(path, **arrays)
    with pytest.raises(NetworkFileError, match=message):
        load_npz(path)


def test_unknown_activation_is_a_usage_error(tmp_path):
    path = str(tmp_path / "bad.npz")
    _write(path, W1=np.ones((1, 1)), b1=np.zeros(1), activations=np.array(["swish"]),
           inputs=np.array(["a"]))
    with pytest.raises(UsageError, match="unknown activation 'swish'"):
        load_npz(path)


def test_not_an_archive_and_missing_file(tmp_path):
    path = tmp_path / "text.npz"
    path.write_text("hello")
    with pytest.raises(NetworkFileError):
        load_npz(str(path))
    with pytest.raises(NetworkFileError, match="no such file"):
        load_npz(str(tmp_path / "none.npz"))


def test_archive_entries_have_a_fixed_date(tmp_path):
    path = str(tmp_path / "x.npz")
    save_npz(strict_xor(), path)
    with zipfile.ZipFile(path) as z:
        assert {i.date_time for i in z.infolist()} == {(1980, 1, 1, 0, 0, 0)}
