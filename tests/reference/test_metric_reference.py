"""Heedful's metrics against scikit-learn's `accuracy_score`, `f1_score(average="macro")` and
`roc_auc_score` (scikit-learn user guide, "Metrics and scoring"), and a worked example.

`fast_score` is the torch twin used every epoch for early stopping; it must give the very
figure scikit-learn gives, including classes missing from the truth or the predictions.
"""

from __future__ import annotations

import numpy as np
import pytest
import torch
from sklearn.metrics import accuracy_score, f1_score, roc_auc_score

from harness.training.metrics import fast_score, score


def random_case(seed: int, nodes: int, classes: int, skew: float) -> tuple[torch.Tensor, ...]:
    """Random logits and labels; `skew` pushes predictions toward class 0 so some go missing."""
    generator = torch.Generator().manual_seed(seed)
    logits = torch.randn(nodes, classes, generator=generator)
    logits[:, 0] += skew
    labels = torch.randint(0, classes, (nodes,), generator=generator)
    return logits, labels


@pytest.mark.parametrize("seed", range(12))
def test_fast_accuracy_and_macro_f1_equal_scikit_learn(seed):
    rng = np.random.default_rng(seed)
    classes = int(rng.integers(2, 7))
    nodes = int(rng.integers(3, 60))
    logits, labels = random_case(seed, nodes, classes, skew=float(rng.uniform(0, 2.5)))
    predicted = logits.argmax(1).numpy()
    expected_accuracy = accuracy_score(labels.numpy(), predicted)
    expected_f1 = f1_score(labels.numpy(), predicted, average="macro", zero_division=0)
    assert fast_score("accuracy", logits, labels, classes) == pytest.approx(expected_accuracy)
    assert fast_score("macro_f1", logits, labels, classes) == pytest.approx(expected_f1)
    assert score("accuracy", logits, labels, classes) == pytest.approx(expected_accuracy)
    assert score("macro_f1", logits, labels, classes) == pytest.approx(expected_f1)


def test_macro_f1_worked_example():
    """Worked by hand: truth [0,0,1,1,2], predictions [0,1,1,1,1].

    class 0: precision 1, recall 1/2 -> F1 2/3; class 1: precision 2/4, recall 1 -> F1 2/3;
    class 2: never predicted, recall 0 -> F1 0. Macro-F1 = (2/3 + 2/3 + 0) / 3 = 4/9.
    """
    labels = torch.tensor([0, 0, 1, 1, 2])
    logits = torch.nn.functional.one_hot(torch.tensor([0, 1, 1, 1, 1]), 3).float()
    assert fast_score("macro_f1", logits, labels, 3) == pytest.approx(4 / 9)
    assert score("macro_f1", logits, labels, 3) == pytest.approx(4 / 9)
    assert fast_score("accuracy", logits, labels, 3) == pytest.approx(3 / 5)


@pytest.mark.parametrize("classes", [2, 4])
def test_roc_auc_equals_scikit_learn_one_vs_rest(classes):
    logits, labels = random_case(7, 80, classes, skew=0.3)
    probabilities = torch.softmax(logits, 1).double().numpy()
    if classes == 2:
        expected = roc_auc_score(labels.numpy(), probabilities[:, 1])
    else:
        expected = roc_auc_score(labels.numpy(), probabilities, multi_class="ovr")
    assert score("roc_auc", logits, labels, classes) == pytest.approx(expected)
    assert fast_score("roc_auc", logits, labels, classes) == pytest.approx(expected)


def test_roc_auc_binary_worked_example():
    """Scores [0.1, 0.4, 0.35, 0.8] for truth [0, 0, 1, 1]: 3 of 4 positive-negative pairs are
    ranked correctly, so ROC-AUC = 0.75 (the worked example in scikit-learn's roc_auc_score
    docstring)."""
    positive = torch.tensor([0.1, 0.4, 0.35, 0.8])
    logits = torch.stack([torch.zeros(4), torch.logit(positive)], 1)
    assert score("roc_auc", logits, torch.tensor([0, 0, 1, 1]), 2) == pytest.approx(0.75)
