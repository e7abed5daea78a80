"""Metrics: the per-epoch twin agrees with the reported figure; ROC-AUC edge cases."""

from __future__ import annotations

import math

import pytest
import torch

from harness.training.metrics import METRICS, fast_score, score


def test_perfect_and_wrong_predictions():
    labels = torch.tensor([0, 1, 2, 1])
    perfect = torch.nn.functional.one_hot(labels, 3).float() * 5
    for name in METRICS:
        assert score(name, perfect, labels, 3) == pytest.approx(1.0)
    wrong = torch.nn.functional.one_hot((labels + 1) % 3, 3).float() * 5
    assert score("accuracy", wrong, labels, 3) == 0.0
    assert fast_score("macro_f1", wrong, labels, 3) == 0.0


def test_fast_score_matches_score_when_classes_are_missing():
    """Class 3 of 4 appears nowhere: neither metric may count it as a zero."""
    labels = torch.tensor([0, 0, 1, 2, 2, 2])
    logits = torch.nn.functional.one_hot(torch.tensor([0, 1, 1, 2, 2, 0]), 4).float()
    for name in ("accuracy", "macro_f1"):
        assert fast_score(name, logits, labels, 4) == pytest.approx(score(name, logits, labels, 4))
    assert fast_score("macro_f1", logits, labels, 4) == pytest.approx((1 / 2 + 2 / 3 + 4 / 5) / 3)


def test_roc_auc_over_the_classes_present():
    """Labels hold classes 0 and 2 of 3: one-vs-rest over those two, probabilities renormalised."""
    labels = torch.tensor([0, 2, 0, 2])
    logits = torch.tensor([[2.0, 0.0, 0.0], [0.0, 0.0, 2.0], [1.0, 5.0, 0.0], [0.0, 0.0, 1.0]])
    assert score("roc_auc", logits, labels, 3) == pytest.approx(1.0)


def test_roc_auc_with_one_class_is_not_a_number():
    logits = torch.randn(5, 3, generator=torch.Generator().manual_seed(0))
    assert math.isnan(score("roc_auc", logits, torch.zeros(5, dtype=torch.long), 3))
