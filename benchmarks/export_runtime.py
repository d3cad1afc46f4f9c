"""Export benchmark: time to write each format, and time to evaluate every input row of a
compiled network in our evaluator beside the runtimes the exports feed (plain numpy on the
.npz arrays, onnxruntime, PyTorch), from the same run.  Not a timed test.

Every runtime runs on one thread (OpenBLAS, onnxruntime, torch): on a shared 2-core machine
multi-threaded BLAS on these small matrices mostly measures the other processes.

    python benchmarks/export_runtime.py [RULES] [--repeat N] [--netlist FILE ...] [--rows R]

The second part is netlist-sized networks (default: the 16x16 multiplier of
``thresholdc example mult16``; more with ``--netlist FILE.bench``): rows/s of our own
evaluator (``Network.decide``, bit-sliced, and the float path ``Network.run_units``) beside
onnxruntime and torch on the sparse exports (and on the dense exports they replace), on R
random rows (default 65536), with the ratios to ours.
"""

from __future__ import annotations

import argparse
import itertools
import os
import sys
import time
from collections.abc import Callable

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # before numpy loads OpenBLAS

import numpy as np  # noqa: E402

sys.path.insert(0, os.path.join(os.path.dirname(__file__), ".."))
sys.path.insert(0, os.path.dirname(__file__))

import thresholdc  # noqa: E402
from thresholdc.export.npz import npz_bytes, to_arrays  # noqa: E402


def best(fn: Callable[[], object], repeat: int) -> float:
    """The best wall time of ``repeat`` calls, in seconds."""
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def numpy_mlp(arrays: dict[str, np.ndarray]) -> Callable[[np.ndarray], np.ndarray]:
    """A forward pass over the .npz arrays, as a user would write it."""
    acts = {"step": lambda z: (z > 0).astype(np.float32),
            "sigmoid": lambda z: 1 / (1 + np.exp(-z)), "tanh": np.tanh,
            "relu": lambda z: np.maximum(z, 0), "linear": lambda z: z}
    layers = [(arrays[f"W{k}"].T.astype(np.float32), arrays[f"b{k}"].astype(np.float32),
               acts[str(f)]) for k, f in enumerate(arrays["activations"], start=1)]

    def run(X: np.ndarray) -> np.ndarray:
        a = X
        for Wt, b, f in layers:
            a = f(a @ Wt + b)
        return a
    return run


def netlists(paths: list[str], rows: int, repeat: int, ort, torch) -> None:
    """Ours vs onnxruntime vs torch rows/s on netlist-sized networks (see the docstring)."""
    import gen_circuits

    from thresholdc.export.onnx import onnx_bytes
    from thresholdc.logic import source_from_text
    cases = [(os.path.basename(p), open(p, encoding="utf-8").read()) for p in paths]
    if not cases:
        cases = [("mult16.bench", gen_circuits.multiplier(16))]
    for name, text in cases:
        net = thresholdc.compile_source(source_from_text(text, name), verify="none").network
        X = np.random.default_rng(1).integers(0, 2, size=(rows, len(net.inputs))).astype(
            np.float32)
        want = net.decide(X)
        print(f"\n{name}: {len(net.neurons)} neurons, depth {net.depth}, {rows} random rows, "
              f"best of {repeat}")
        results: list[tuple[str, float]] = []
        t_bits = best(lambda net=net, X=X: net.decide(X), repeat)
        results.append(("ours: Network.decide (bit-sliced)", t_bits))
        results.append(("ours: Network.run_units (float path)",
                        best(lambda net=net, X=X: net.run_units(X), repeat)))
        if ort is not None:
            options = ort.SessionOptions()
            options.intra_op_num_threads = options.inter_op_num_threads = 1
            for form in ("sparse", "general"):
                sess = ort.InferenceSession(onnx_bytes(net, form=form), options,
                                            providers=["CPUExecutionProvider"])
                got = sess.run(None, {"inputs": X})[0] > 0.5
                assert np.array_equal(got, want), form
                results.append((f"onnxruntime, {form} ONNX", best(
                    lambda sess=sess, X=X: sess.run(None, {"inputs": X}), repeat)))
        if torch is not None:
            from thresholdc.export.torch import to_torch
            T = torch.as_tensor(X)
            for form in ("sparse", "dense"):
                model = to_torch(net, form=form)
                with torch.no_grad():
                    assert np.array_equal(model(T).numpy() > 0.5, want), form

                def forward(model=model, T=T) -> None:
                    with torch.no_grad():
                        model(T)
                results.append((f"torch, {form} module", best(forward, repeat)))
        print(f"  {'':40s} {'rows/s':>11s} {'vs bits':>8s} {'vs float':>9s}")
        t_float = results[1][1]
        for label, t in results:
            print(f"  {label:40s} {rows / t:11.0f} {t_bits / t:7.2f}x {t_float / t:8.2f}x")


def main() -> None:
    here = os.path.dirname(__file__)
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("rules", nargs="?", default=os.path.join(here, "..", "circuits",
                                                            "bike_docks.rules"))
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--netlist", action="append", default=[], metavar="FILE")
    ap.add_argument("--rows", type=int, default=65536)
    args = ap.parse_args()
    text = open(args.rules, encoding="utf-8").read()
    cases = [("step (general graph)", thresholdc.compile_rules(text)),
             ("sigmoid layered (MLP)", thresholdc.compile_rules(text, activation="sigmoid",
                                                                layered=True))]
    n = len(cases[0][1].inputs)
    X = np.array(list(itertools.product([0.0, 1.0], repeat=n)), dtype=np.float32)
    print(f"{os.path.basename(args.rules)}: {n} inputs, {len(X)} rows, best of {args.repeat}, "
          "one thread each")
    try:
        import onnxruntime as ort

        from thresholdc.export.onnx import onnx_bytes
    except ImportError:
        ort = None
    try:
        import torch

        from thresholdc.export.torch import to_torch
        torch.set_num_threads(1)
    except ImportError:
        torch = None
    for label, net in cases:
        print(f"\n{label}: {len(net.neurons)} neurons, depth {net.depth}")
        rows: list[tuple[str, float]] = []
        base = best(lambda net=net: net.evaluate(X), args.repeat)
        rows.append(("Network.evaluate (thresholdc, float64)", base))
        if net.is_strict():
            run = numpy_mlp(to_arrays(net))
            rows.append(("plain numpy on .npz arrays (float32)",
                         best(lambda run=run: run(X), args.repeat)))
        if ort is not None:
            data = onnx_bytes(net)
            options = ort.SessionOptions()
            options.intra_op_num_threads = options.inter_op_num_threads = 1
            sess = ort.InferenceSession(data, options, providers=["CPUExecutionProvider"])
            rows.append(("onnxruntime (float32)", best(
                lambda sess=sess: sess.run(None, {"inputs": X}), args.repeat)))
        if torch is not None and (net.is_strict() or
                                  all(u.activation == "step" for u in net.neurons)):
            model = to_torch(net)
            T = torch.as_tensor(X)

            def forward(model=model, T=T) -> None:
                with torch.no_grad():
                    model(T)
            rows.append(("PyTorch nn.Sequential (float32)", best(forward, args.repeat)))
        print(f"  {'evaluate every row':44s} {'ms':>9s} {'vs ours':>8s}")
        for name, t in rows:
            print(f"  {name:44s} {1e3 * t:9.2f} {base / t:7.2f}x")
        w_npz = best(lambda net=net: npz_bytes(net), args.repeat)
        line = f"  write .npz {1e3 * w_npz:.2f} ms"
        if ort is not None:
            w_onnx = best(lambda net=net: onnx_bytes(net), args.repeat)
            line += f", write .onnx {1e3 * w_onnx:.2f} ms"
        print(line)
    netlists(args.netlist, args.rows, args.repeat, ort, torch)


if __name__ == "__main__":
    main()
