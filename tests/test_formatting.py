"""One way to write each figure: numbers, differences, p-values, intervals, labels, sparklines."""

from __future__ import annotations

from harness import formatting as f


def test_numbers_and_intervals() -> None:
    assert f.fixed(0.81234) == "0.812" and f.fixed(2.5, 2) == "2.50"
    assert f.fixed(None) == f.fixed(float("nan")) == "-"
    assert f.interval(0.79, 0.8312) == "0.790 to 0.831"
    assert f.interval(0.79, float("nan")) == "-"


def test_signed_differences_and_points() -> None:
    assert f.signed(1.234) == "+1.2" and f.signed(-0.04) == "-0.0" and f.signed(0.5, 2) == "+0.50"
    assert f.signed(float("inf")) == "nan"
    assert f.signed_interval(-0.84, 2.06) == "-0.8 to +2.1"
    assert f.as_points(0.0123) == "+1.23" and f.as_points(-0.1) == "-10.00"
    assert f.as_points(float("nan")) == "-"


def test_confidence_levels_as_percentages() -> None:
    assert [f.percent(c) for c in (0.95, 0.9, 0.99, 0.8)] == ["95%", "90%", "99%", "80%"]


def test_p_values() -> None:
    assert [f.p_text(p) for p in (0.0004, 0.0123, 0.43)] == ["< 0.001", "0.012", "0.43"]
    assert f.p_phrase(0.0004) == "p < 0.001" and f.p_phrase(0.05) == "p = 0.05"
    assert f.p_text(float("nan")) == "n/a"


def test_metric_labels() -> None:
    assert [f.metric_label(m) for m in ("accuracy", "macro_f1", "roc_auc", "loss")] == [
        "accuracy",
        "macro-F1",
        "ROC-AUC",
        "loss",
    ]


def test_sparkline_squeezed_to_a_width() -> None:
    curve = [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8]
    assert f.sparkline(curve, width=4) == "▁▃▆█"  # maxima 0.2, 0.4, 0.6, 0.8
    assert len(f.sparkline(list(range(100)), width=40)) == 34  # steps of 3 values
    assert f.sparkline([0.5, 0.5]) == "▁▁"
