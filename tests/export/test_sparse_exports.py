"""The sparse (unit-major, per-group gathered) ONNX and torch exports: onnxruntime (a second
runtime) and torch against Network.evaluate on every input row of seeded random networks,
onnx.checker, read-back, byte-identical output, and the choice between dense and sparse."""

from __future__ import annotations

import numpy as np
import pytest

from tests.export._export_nets import all_rows, full_adder, random_network, strict_xor
from tests.verify.threshold_builders import load_gen_circuits
from thresholdc.compiler import compile_source
from thresholdc.export.dense import dense_form
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.logic import source_from_text

onnx = pytest.importorskip("onnx")
ort = pytest.importorskip("onnxruntime")

from thresholdc.export.onnx import SPARSE_FROM, choose_form, onnx_bytes, to_onnx  # noqa: E402
from thresholdc.export.onnx_import import from_onnx  # noqa: E402

ACTS = ("step", "sigmoid", "tanh", "relu", "linear")


def _ort(data: bytes, X: np.ndarray) -> np.ndarray:
    # onnxruntime as the second runtime (the ONNX reference implementation's operators)
    session = ort.InferenceSession(data, providers=["CPUExecutionProvider"])
    return session.run(None, {"inputs": X.astype(np.float32)})[0]


def _nets() -> list[tuple[str, Network]]:
    out = [("full_adder", full_adder()), ("strict_xor", strict_xor())]
    for seed in range(6):
        out.append((f"step{seed}", random_network(seed, n_inputs=6, n_neurons=25,
                                                  max_fan_in=4, n_outputs=5)))
        out.append((f"soft{seed}", random_network(100 + seed, n_inputs=5, n_neurons=20,
                                                  activations=ACTS, n_outputs=4)))
    out.append(("bipolar", random_network(7, n_inputs=5, n_neurons=15, encoding="bipolar")))
    const = Network(("a", "b"), (Neuron("one", 1, (), (), 0.5),
                                 Neuron("y", 2, ("a", "one"), (1, 1), -1.5)),
                    (Output("y", "y"), Output("b", "b"), Output("one", "one"),
                     Output("y2", "y")))
    out.append(("constant_and_input_outputs", const))
    return out


@pytest.mark.parametrize(("label", "net"), _nets(), ids=[n for n, _ in _nets()])
def test_sparse_onnx_equals_our_evaluator_on_every_row(label, net):
    X = all_rows(len(net.inputs), bipolar=net.encoding == "bipolar")
    model = to_onnx(net, form="sparse")
    onnx.checker.check_model(model, full_check=True)
    assert {p.key: p.value for p in model.metadata_props}["form"] == '"sparse"'
    atol = 0.0 if all(n.activation == "step" for n in net.neurons) else 1e-5
    np.testing.assert_allclose(_ort(onnx_bytes(net, form="sparse"), X), net.evaluate(X),
                               atol=atol, rtol=1e-5)
    back = from_onnx(model)
    np.testing.assert_allclose(back.evaluate(X), net.evaluate(X), atol=1e-6)
    assert onnx_bytes(net, form="sparse") == onnx_bytes(net, form="sparse")


def test_auto_picks_dense_for_small_and_sparse_for_netlist_sized_networks():
    assert choose_form(strict_xor()) == "dense"
    assert choose_form(full_adder()) == "general"
    big = random_network(3, n_inputs=8, n_neurons=SPARSE_FROM, max_fan_in=3)
    assert choose_form(big) == "sparse"
    assert choose_form(big, "general") == "general"
    with pytest.raises(Exception, match="strict layered"):
        choose_form(full_adder(), "dense")


def test_a_multiplier_export_equals_decide_on_random_rows():
    gc = load_gen_circuits()
    net = compile_source(source_from_text(gc.multiplier(6), "mult6.bench"),
                         verify="none").network
    assert len(net.neurons) >= SPARSE_FROM  # auto writes the sparse form
    X = np.random.default_rng(5).integers(0, 2, size=(3000, len(net.inputs))).astype(float)
    data = onnx_bytes(net)
    assert onnx.load_from_string(data).graph.node[0].op_type == "Transpose"
    np.testing.assert_array_equal(_ort(data, X) > 0.5, net.decide(X))
    dense_weights = sum(W.size for W, _, _ in dense_form(net).layers)
    sparse_weights = sum(int(np.prod(t.dims)) for t in onnx.load_from_string(data).graph
                         .initializer if t.name.endswith("_W"))
    assert sparse_weights < dense_weights / 4


torch = pytest.importorskip("torch")
from thresholdc.export.torch import SparseNet, from_torch, to_torch  # noqa: E402


@pytest.mark.parametrize(("label", "net"), _nets(), ids=[n for n, _ in _nets()])
def test_sparse_torch_equals_our_evaluator_and_reads_back(label, net):
    X = all_rows(len(net.inputs), bipolar=net.encoding == "bipolar")
    model = to_torch(net, form="sparse")
    assert isinstance(model, SparseNet)
    with torch.no_grad():
        got = model(torch.as_tensor(X, dtype=torch.float32)).numpy()
    atol = 0.0 if all(n.activation == "step" for n in net.neurons) else 1e-5
    np.testing.assert_allclose(got, net.evaluate(X), atol=atol, rtol=1e-5)
    back = from_torch(model, like=net)
    np.testing.assert_allclose(back.evaluate(X), net.evaluate(X), atol=1e-6)


def test_sparse_torch_has_gradients_and_holds_small_blocks():
    net = random_network(11, n_inputs=5, n_neurons=20, activations=("sigmoid",))
    model = to_torch(net, form="sparse")
    X = torch.as_tensor(all_rows(5), dtype=torch.float32)
    model(X).sum().backward()
    grads = [p.grad for p in model.weight]
    assert all(g is not None for g in grads) and any(float(g.abs().sum()) > 0 for g in grads)
    links = {(n.name, i) for n in net.neurons for i in n.inputs}
    assert sum(int((p != 0).sum()) for p in model.weight) == len(links)
    # each block holds only the rows its group reads, far fewer than every earlier unit
    total = sum(int(p.numel()) for p in model.weight)
    everything = sum(len(names) * (5 + sum(len(m) for m in model.names[:k]))
                     for k, names in enumerate(model.names))
    assert total < everything
