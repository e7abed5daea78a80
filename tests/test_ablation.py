"""Ablation grids and attention options in suite files: expansion, labels and bad input."""

from __future__ import annotations

import pytest

from harness.cli import main
from harness.errors import InputError
from harness.planning import expand, load_suite

GRID = """
[ablation.attention]
mode = "grid"
[ablation.attention.axes]
heads = [1, 2]
hop_radius = [1, 2]
head_merge = ["concatenate", "average"]
"""

ONE_AT_A_TIME = """
[ablation.attention]
[ablation.attention.axes]
heads = [1, 2, 4]
feature_start = ["given", "degree"]
"""


def test_grid_runs_every_combination(write_suite, tiny_suite_text) -> None:
    suite = load_suite(write_suite(tiny_suite_text + GRID))
    runs = [r for r in expand(suite) if r.contender == "attention"]
    assert len(runs) == 2 * 2 * 2 * 2  # points x seeds
    points = {tuple(sorted(r.point.items())) for r in runs}
    assert len(points) == 8
    assert len({r.key for r in runs}) == 16  # every option is in the key
    first = runs[0]
    assert first.label == "attention[heads=1,hop_radius=1,head_merge=concatenate]"
    assert first.options.heads == first.point["heads"]
    others = [r for r in expand(suite) if r.contender != "attention"]
    assert all(r.point == {} and r.label == r.contender for r in others)


def test_one_at_a_time_sweeps_each_axis_from_the_base(write_suite, tiny_suite_text) -> None:
    suite = load_suite(write_suite(tiny_suite_text + ONE_AT_A_TIME))
    points = [r.point for r in expand(suite) if r.contender == "attention" and r.seed == 0]
    # the tiny suite's attention has heads = 2 and the given features
    assert points == [
        {"heads": 2, "feature_start": "given"},
        {"heads": 1, "feature_start": "given"},
        {"heads": 4, "feature_start": "given"},
        {"heads": 2, "feature_start": "degree"},
    ]


def test_check_prints_runs_per_contender_and_total(write_suite, tiny_suite_text, capsys) -> None:
    path = write_suite(tiny_suite_text + GRID)
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "attention: 16 runs (8 grid points)" in out
    assert "convolution: 2 runs" in out
    assert "20 runs in total" in out


def check_error(write_suite, text: str, capsys) -> str:
    assert main(["check", str(write_suite(text))]) == 2
    message = capsys.readouterr().err.strip()
    assert message.count("\n") == 0 and "Traceback" not in message
    return message


@pytest.mark.parametrize(
    ("extra", "expected"),
    [
        (
            "[ablation.attention.axes]\nheads = [2, 0]\n",
            "ablation.attention.axes.heads: given 0; Input should be greater than or equal to 1",
        ),
        (
            "[ablation.attention.axes]\nhead = [2]\n",
            "ablation.attention.axes.head: unknown option (did you mean 'heads'?)",
        ),
        (
            "[ablation.convolution.axes]\nhop_radius = [1, 2]\n",
            "ablation.convolution.axes.hop_radius: model 'gcn' has no attention",
        ),
        (
            "[ablation.attenton.axes]\nheads = [1]\n",
            "ablation.attenton: no contender of that name (did you mean 'attention'?)",
        ),
        ("[ablation.attention.axes]\nheads = []\n", "axis 'heads' has no levels"),
        (
            '[ablation.attention]\nmode = "grid"\n[ablation.attention.axes]\n'
            "heads = [16]\nhidden = [4, 128]\n",
            "ablation.attention: point attention[heads=16,hidden=128]: layer 1 is heads x "
            "hidden = 16 x 128 = 2048 wide; allowed: at most 1024",
        ),
    ],
)
def test_bad_ablation_tables(write_suite, tiny_suite_text, capsys, extra, expected) -> None:
    assert expected in check_error(write_suite, tiny_suite_text + extra, capsys)


def test_attention_options_on_a_convolution_are_errors(write_suite, tiny_suite_text, capsys):
    text = tiny_suite_text.replace('model = "gcn"\n', 'model = "gcn"\nhead_merge = "average"\n')
    message = check_error(write_suite, text, capsys)
    assert "contenders.convolution: unknown key 'head_merge' for model 'gcn'" in message


def test_heads_times_width_limit(write_suite, tiny_suite_text, capsys) -> None:
    text = tiny_suite_text.replace("heads = 2\nhidden = 4", "heads = 16\nhidden = 256")
    message = check_error(write_suite, text, capsys)
    assert "contenders.attention" in message and "16 x 256 = 4096 wide" in message


def test_heads_list_must_match_layers(write_suite, tiny_suite_text, capsys) -> None:
    text = tiny_suite_text.replace("heads = 2\n", "heads = [2, 2, 2]\n")
    assert "heads lists 3 layers" in check_error(write_suite, text, capsys)


def test_identity_start_in_the_inductive_setting(write_suite, tiny_suite_text, capsys) -> None:
    inductive = tiny_suite_text.replace(
        'metric = "accuracy"\n', 'metric = "accuracy"\nsetting = "inductive"\n'
    )
    direct = inductive.replace('model = "mlp"\n', 'model = "mlp"\nfeature_start = "identity"\n')
    message = check_error(write_suite, direct, capsys)
    assert (
        "contenders.features_only.feature_start: given 'identity' with setting 'inductive'"
        in message
    )
    swept = inductive + '[ablation.attention.axes]\nfeature_start = ["given", "identity"]\n'
    message = check_error(write_suite, swept, capsys)
    assert "ablation.attention.axes.feature_start: given 'identity'" in message


def test_too_many_eigenvectors_at_check_time(write_suite, tiny_suite_text, capsys) -> None:
    text = tiny_suite_text.replace(
        'model = "mlp"\n', 'model = "mlp"\nfeature_start = "laplacian"\nstart_width = 500\n'
    )
    message = check_error(write_suite, text, capsys)
    assert "contenders.features_only.start_width: given start_width = 500" in message
    assert "at most nodes - 2 = 118" in message


def test_hop_radius_beyond_the_budget(write_suite, tiny_suite_text, capsys) -> None:
    text = tiny_suite_text + "[hops]\nmemory_budget_mb = 0.01\n"
    text += "[ablation.attention.axes]\nhop_radius = [1, 3]\n"
    message = check_error(write_suite, text, capsys)
    assert message.startswith("heedful: error: ")
    assert "ablation.attention.axes.hop_radius: given 3; the 3-hop edge set is estimated" in message
    assert "above hops.memory_budget_mb = 0.01" in message


def test_cache_directory_from_suite_and_environment(write_suite, tiny_suite_text, monkeypatch):
    monkeypatch.delenv("HEEDFUL_CACHE", raising=False)
    plain = expand(load_suite(write_suite(tiny_suite_text)))
    assert plain[0].hop_cache == "runs/cache"
    with_cache = load_suite(write_suite(tiny_suite_text + '[hops]\ncache = "elsewhere"\n'))
    assert expand(with_cache)[0].hop_cache == "elsewhere"
    monkeypatch.setenv("HEEDFUL_CACHE", "/tmp/heedful-cache")
    assert expand(with_cache)[0].hop_cache == "/tmp/heedful-cache"
    assert expand(with_cache)[0].key == plain[0].key  # where the cache lives changes no result


def test_design_points_reject_unknown_contender_directly(write_suite, tiny_suite_text) -> None:
    with pytest.raises(InputError, match="no contender of that name"):
        load_suite(write_suite(tiny_suite_text + "[ablation.nobody.axes]\nheads = [1]\n"))
