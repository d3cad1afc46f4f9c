"""The development benchmark's pieces (benchmarks/refine_bench.py), small: the seeded sampler,
the degradations, and one fold of refinement from a damaged rule file."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from tests.benchmark_modules import load_benchmark
from thresholdc.logic.reference import evaluate_definitions

bench = load_benchmark("refine_bench")
TRUE = bench.true_source()


def test_the_hidden_rules_have_the_promised_shape():
    prog = TRUE.program
    assert 30 <= len(prog.inputs) <= 60
    levels = {}
    for name in prog.order:  # a definition's level: 1 + the highest level it uses
        used = bench._definitions_used(prog, name)
        levels[name] = 1 + max((levels[u] for u in used if u in levels), default=0)
    assert 3 <= max(levels.values()) <= 5
    assert "atleast(" in TRUE.text


def test_the_sampler_is_seeded_and_flips_exactly_the_noise_fraction():
    C1, X1, y1 = bench.sample(TRUE, 300, seed=3)
    C2, X2, y2 = bench.sample(TRUE, 300, seed=3)
    assert np.array_equal(C1, C2) and np.array_equal(y1, y2)
    assert not np.array_equal(bench.sample(TRUE, 300, seed=4)[0], C1)
    clean = evaluate_definitions(TRUE.program, C1)["treat"]
    assert int(((y1[:, 0] > 0.5) != clean).sum()) == round(bench.NOISE * 300)
    # the input units are a valid one-hot encoding of the columns
    assert X1.shape == (300, len(TRUE.inputs))
    for var in TRUE.program.inputs:
        if var.kind == "categorical":
            cols = [TRUE.inputs.index(f"{var.name}={v}") for v in var.values]
            assert (X1[:, cols].sum(axis=1) == 1).all()


@pytest.mark.parametrize("name", list(bench.DEGRADATIONS))
def test_every_degradation_changes_its_definition_and_the_output(name):
    bad = bench.degrade(TRUE, name)
    changed = bench.DEGRADATIONS[name][0]
    C = bench.sample(TRUE, 4000, seed=0)[0]
    want = evaluate_definitions(TRUE.program, C)
    got = evaluate_definitions(bad.program, C)
    assert (want[changed] != got[changed]).any()
    assert (want["treat"] != got["treat"]).any()
    cones = bench.unchanged_cones(TRUE, bad)
    assert changed not in cones and "treat" not in cones
    assert all((want[d] == got[d]).all() for d in cones)


def test_folds_partition_the_rows():
    parts = bench.folds(103, 10, seed=1)
    assert sorted(itertools.chain.from_iterable(parts)) == list(range(103))


@pytest.mark.slow
def test_one_fold_of_refinement_beats_random_init_and_keeps_the_correct_rules():
    bad = bench.degrade(TRUE, "drop-antecedent")
    C, X, y = bench.sample(TRUE, 300, seed=0)
    test = bench.folds(300, 3, seed=0)[0]
    r = bench.run_fold(TRUE, bad, X, C, y, test, seed=0, workers=1)
    assert r["warm"] < r["random"]
    assert r["lost"] == [] and r["no_unit"] == []
