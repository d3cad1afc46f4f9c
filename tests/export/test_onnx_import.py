"""Reading networks back from ONNX: our own exports, PyTorch's exporter, hand-built MLPs."""

from __future__ import annotations

import io
import warnings

import numpy as np
import pytest

from tests.export._export_nets import all_rows, full_adder, mlp_forward, random_network, strict_xor
from thresholdc.errors import NetworkFileError, UsageError
from thresholdc.ir.network import Network, Output
from thresholdc.network.soften import apply_activation

onnx = pytest.importorskip("onnx")
from onnx import TensorProto, helper, numpy_helper  # noqa: E402

from thresholdc.export.onnx import save_onnx, to_onnx  # noqa: E402
from thresholdc.export.onnx_import import from_onnx, load_onnx  # noqa: E402


def mlp_model(layers, *, matmul: bool = False, n_in: int) -> onnx.ModelProto:
    """An MLP written the way training frameworks write one (Gemm, or MatMul + Add)."""
    nodes, inits, x = [], [], "x"
    ops = {"sigmoid": "Sigmoid", "tanh": "Tanh", "relu": "Relu"}
    for k, (W, b, f) in enumerate(layers):
        if matmul:
            inits += [numpy_helper.from_array(W.T.astype(np.float32), f"w{k}"),
                      numpy_helper.from_array(b.astype(np.float32), f"b{k}")]
            nodes += [helper.make_node("MatMul", [x, f"w{k}"], [f"m{k}"]),
                      helper.make_node("Add", [f"m{k}", f"b{k}"], [f"z{k}"])]
        else:
            inits += [numpy_helper.from_array(W.astype(np.float32), f"w{k}"),
                      numpy_helper.from_array(b.astype(np.float32), f"b{k}")]
            nodes.append(helper.make_node("Gemm", [x, f"w{k}", f"b{k}"], [f"z{k}"], transB=1))
        x = f"z{k}"
        if f != "linear":
            nodes.append(helper.make_node(ops[f], [x], [f"a{k}"]))
            x = f"a{k}"
    nodes.append(helper.make_node("Identity", [x], ["y"]))
    graph = helper.make_graph(
        nodes, "mlp",
        [helper.make_tensor_value_info("x", TensorProto.FLOAT, ["n", n_in])],
        [helper.make_tensor_value_info("y", TensorProto.FLOAT, ["n", layers[-1][0].shape[0]])],
        initializer=inits)
    return helper.make_model(graph, opset_imports=[helper.make_opsetid("", 17)])


def trained_layers(seed: int = 0):
    """Random 3-5-2 layers standing in for a network trained elsewhere."""
    rng = np.random.default_rng(seed)
    return [(rng.normal(size=(5, 3)), rng.normal(size=5), "relu"),
            (rng.normal(size=(2, 5)), rng.normal(size=2), "sigmoid")]


def f32(layers):
    """The layers rounded to float32, as an ONNX file stores them."""
    return [(W.astype(np.float32).astype(float), b.astype(np.float32).astype(float), f)
            for W, b, f in layers]


@pytest.mark.parametrize("net", [full_adder(), strict_xor(), random_network(3, n_neurons=9)],
                         ids=["adder", "xor", "random"])
def test_own_export_round_trips_without_like(net):
    back = from_onnx(to_onnx(net))
    X = all_rows(len(net.inputs))
    assert back.evaluate(X).tolist() == net.evaluate(X).tolist()
    assert back.inputs == net.inputs and back.output_names == net.output_names


def test_own_general_export_restores_the_network():
    net = full_adder()
    back = from_onnx(to_onnx(net), like=net)
    assert back.neurons == net.neurons
    assert back.outputs == net.outputs


def test_own_dense_export_restores_names_and_origins():
    net = apply_activation(full_adder(), activation="sigmoid", layered=True)
    back = from_onnx(to_onnx(net))
    assert back.is_strict()
    first = [n.name for n in net.neurons if n.layer == 1]
    assert [n.name for n in back.neurons if n.layer == 1] == first
    assert {n.origin for n in back.neurons} == {n.origin for n in net.neurons}
    X = all_rows(3)
    np.testing.assert_allclose(back.evaluate(X), net.evaluate(X), atol=1e-6)


@pytest.mark.parametrize("matmul", [False, True], ids=["gemm", "matmul-add"])
def test_framework_style_mlp_with_like(matmul):
    like = strict_xor()
    rng = np.random.default_rng(1)
    layers = [(rng.normal(size=(4, 2)), rng.normal(size=4), "tanh"),
              (rng.normal(size=(2, 4)), rng.normal(size=2), "sigmoid")]
    net = from_onnx(mlp_model(layers, matmul=matmul, n_in=2), like=like)
    X = all_rows(2)
    np.testing.assert_allclose(net.evaluate(X), mlp_forward(f32(layers), X), atol=1e-12)
    assert net.inputs == like.inputs and net.output_names == like.output_names
    assert [n.name for n in net.neurons][:4] == ["L1~1", "L1~2", "L1~3", "L1~4"]


def test_linear_last_layer_and_relu():
    layers = trained_layers()
    layers[-1] = (layers[-1][0], layers[-1][1], "linear")
    like = Network(("a", "b", "c"), (), (Output("p", "a"), Output("q", "b")))
    net = from_onnx(mlp_model(layers, n_in=3), like=like)
    assert [n.activation for n in net.neurons] == ["relu"] * 5 + ["linear"] * 2
    X = all_rows(3)
    np.testing.assert_allclose(net.evaluate(X), mlp_forward(f32(layers), X), atol=1e-12)


def test_pytorch_exporter_output_is_read(tmp_path):
    torch = pytest.importorskip("torch")
    from thresholdc.export.torch import to_torch

    net = apply_activation(full_adder(), activation="sigmoid", layered=True)
    model = to_torch(net)
    buffer = io.BytesIO()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        torch.onnx.export(model, (torch.zeros(1, 3),), buffer, dynamo=False,
                          input_names=["x"], output_names=["y"],
                          dynamic_axes={"x": {0: "batch"}, "y": {0: "batch"}})
    exported = onnx.load_from_string(buffer.getvalue())
    assert "Gemm" in {n.op_type for n in exported.graph.node}  # what PyTorch writes
    back = from_onnx(exported, like=net)
    assert [n.name for n in back.neurons] == [n.name for n in from_onnx(to_onnx(net)).neurons]
    X = all_rows(3)
    np.testing.assert_allclose(back.evaluate(X), net.evaluate(X), atol=1e-6)


def test_gather_and_concat_on_columns_are_read():
    # inputs (a, b, c) -> h = sigmoid(W1 [c, a] + b1) -> y = relu(W2 [a, b, c, h] + b2)
    rng = np.random.default_rng(4)
    W1, b1 = rng.normal(size=(2, 2)), rng.normal(size=2)
    W2, b2 = rng.normal(size=(2, 5)), rng.normal(size=2)
    inits = [numpy_helper.from_array(np.array([2, 0], dtype=np.int64), "cols"),
             numpy_helper.from_array(W1.astype(np.float32), "W1"),
             numpy_helper.from_array(b1.astype(np.float32), "b1"),
             numpy_helper.from_array(W2.astype(np.float32), "W2"),
             numpy_helper.from_array(b2.astype(np.float32), "b2")]
    nodes = [helper.make_node("Gather", ["x", "cols"], ["g"], axis=1),
             helper.make_node("Gemm", ["g", "W1", "b1"], ["z1"], transB=1),
             helper.make_node("Sigmoid", ["z1"], ["h"]),
             helper.make_node("Concat", ["x", "h"], ["v"], axis=1),
             helper.make_node("Gemm", ["v", "W2", "b2"], ["z2"], transB=1),
             helper.make_node("Relu", ["z2"], ["y"])]
    graph = helper.make_graph(
        nodes, "g", [helper.make_tensor_value_info("x", TensorProto.FLOAT, ["n", 3])],
        [helper.make_tensor_value_info("y", TensorProto.FLOAT, ["n", 2])], initializer=inits)
    net = from_onnx(helper.make_model(graph), like=full_adder())
    X = all_rows(3)
    r = lambda a: a.astype(np.float32).astype(float)  # noqa: E731
    h = 1 / (1 + np.exp(-(X[:, [2, 0]] @ r(W1).T + r(b1))))
    want = np.maximum(np.hstack([X, h]) @ r(W2).T + r(b2), 0)
    np.testing.assert_allclose(net.evaluate(X), want, atol=1e-12)
    assert [n.layer for n in net.neurons] == [1, 1, 2, 2]


def test_foreign_model_without_like_is_refused():
    with pytest.raises(UsageError, match="--like"):
        from_onnx(mlp_model(trained_layers(), n_in=3))


def test_shape_mismatch_names_the_layer():
    with pytest.raises(UsageError, match="layer 1 reads 3 columns but there are 2 input units"):
        from_onnx(mlp_model(trained_layers(), n_in=3), like=strict_xor())
    like = full_adder()
    rng = np.random.default_rng(2)
    layers = [(rng.normal(size=(4, 3)), rng.normal(size=4), "relu"),
              (rng.normal(size=(3, 4)), rng.normal(size=3), "sigmoid")]
    with pytest.raises(UsageError, match=r"last layer \(layer 2\) has 3 units but there are 2"):
        from_onnx(mlp_model(layers, n_in=3), like=like)


def test_unsupported_operator_is_named():
    graph = helper.make_graph(
        [helper.make_node("Softmax", ["x"], ["y"], name="soft")], "g",
        [helper.make_tensor_value_info("x", TensorProto.FLOAT, ["n", 2])],
        [helper.make_tensor_value_info("y", TensorProto.FLOAT, ["n", 2])])
    with pytest.raises(UsageError, match="unsupported operator Softmax in node 'soft'"):
        from_onnx(helper.make_model(graph), like=strict_xor())


def test_unreadable_and_missing_files(tmp_path):
    bad = tmp_path / "bad.onnx"
    bad.write_bytes(b"\x00not a model\xff")
    with pytest.raises(NetworkFileError):
        load_onnx(str(bad))
    with pytest.raises(NetworkFileError, match="no such file"):
        load_onnx(str(tmp_path / "none.onnx"))


def test_load_onnx_reads_a_saved_file(tmp_path):
    path = str(tmp_path / "adder.onnx")
    save_onnx(full_adder(), path)
    back = load_onnx(path)
    X = all_rows(3)
    assert back.evaluate(X).tolist() == full_adder().evaluate(X).tolist()


def test_features_and_encoding_travel_in_the_metadata():
    from dataclasses import replace

    features = ({"name": "colour", "kind": "categorical", "values": ["red", "blue"],
                 "units": ["colour=red", "colour=blue"]},
                {"name": "flag", "kind": "bool", "units": ["flag"]})
    base = strict_xor()
    net = replace(base, inputs=("colour=red", "colour=blue"), features=features[:1],
                  neurons=tuple(replace(n, inputs=tuple({"a": "colour=red", "b": "colour=blue"}
                                                        .get(i, i) for i in n.inputs))
                                for n in base.neurons))
    back = from_onnx(to_onnx(net))
    assert back.features == features[:1]
    assert back.inputs == ("colour=red", "colour=blue")
    bip = apply_activation(full_adder(), encoding="bipolar")
    assert from_onnx(to_onnx(bip)).encoding == "bipolar"
