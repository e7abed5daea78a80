"""The [tuning] section: budgets, ranges, choices and defaults per model kind."""

from __future__ import annotations

import copy

import pytest

from harness.errors import InputError
from harness.planning import parse_suite
from harness.schema.tuning import Range, default_space, spaces

SOURCE = "suites/x.toml"
BASE = {
    "name": "tuned",
    "seeds": 2,
    "data": {"source": "synthetic", "nodes": 60, "classes": 3, "average_degree": 4},
    "contenders": {
        "attention": {"model": "gat", "heads": 2, "hidden": 4},
        "convolution": {"model": "gcn", "hidden": 16},
        "features_only": {"model": "mlp", "hidden": 16},
    },
    "tuning": {"trials": 10},
}


def suite_with(**tuning):
    raw = copy.deepcopy(BASE)
    raw["tuning"].update(tuning)
    return raw


def error_of(raw) -> str:
    with pytest.raises(InputError) as caught:
        parse_suite(raw, SOURCE)
    message = str(caught.value)
    assert "\n" not in message and message.startswith(SOURCE)
    return message


def test_every_contender_gets_the_defaults_of_its_kind():
    suite = parse_suite(suite_with(), SOURCE)
    chosen = spaces(suite.tuning, suite.contenders)
    assert set(chosen) == {"attention", "convolution", "features_only"}
    assert {"heads", "attention_dropout", "hidden", "learning_rate"} <= set(chosen["attention"])
    assert "heads" not in chosen["convolution"] and "hidden" in chosen["features_only"]
    assert chosen["attention"]["learning_rate"] == Range(low=1e-3, high=5e-2, log=True)
    assert suite.tuning.pruner == "median" and suite.tuning.grace_seconds == 30


def test_equal_parameters_leaves_hidden_to_the_sizer():
    assert "hidden" not in default_space("gcn", equal_parameters=True)
    suite = parse_suite(suite_with(equal_parameters="attention"), SOURCE)
    assert all("hidden" not in s for s in spaces(suite.tuning, suite.contenders).values())


def test_a_written_space_replaces_the_defaults_and_takes_choices():
    raw = suite_with(
        space={
            "convolution": {
                "learning_rate": {"low": 0.001, "high": 0.1, "log": True},
                "layers": [1, 2, 3],
                "activation": ["relu", "elu"],
            }
        }
    )
    suite = parse_suite(raw, SOURCE)
    assert set(spaces(suite.tuning, suite.contenders)["convolution"]) == {
        "learning_rate",
        "layers",
        "activation",
    }


@pytest.mark.parametrize(
    ("space", "expected"),
    [
        ({"learning_rate": {"low": 0.1, "high": 0.01}}, "low 0.1 >= high 0.01"),
        ({"dropout": {"low": 0.3, "high": 0.3}}, "low 0.3 >= high 0.3"),
        ({"weight_decay": {"low": 0, "high": 0.01, "log": True}}, "includes 0"),
        ({"heads": [2, 4]}, "model kind 'gcn' has no option 'heads'"),
        ({"hidden": [8, 0]}, "tuning.space.convolution.hidden: given 0"),
        ({"hidden": {"low": 8.5, "high": 32}}, "whole-number bounds"),
        ({"layers": []}, "empty list"),
        ({"dropout": {"low": 0.1, "high": 1.5}}, "tuning.space.convolution.dropout: given 1.5"),
    ],
)
def test_bad_search_spaces_name_the_key(space, expected):
    message = error_of(suite_with(space={"convolution": space}))
    assert expected in message
    assert "tuning.space.convolution" in message


def test_budget_of_zero_and_no_budget_are_errors():
    assert "tuning.trials: given 0" in error_of(suite_with(trials=0))
    assert "tuning.seconds: given 0" in error_of(suite_with(trials=None, seconds=0))
    raw = copy.deepcopy(BASE)
    raw["tuning"] = {"pruner": "median"}
    assert "no budget" in error_of(raw)


def test_names_must_match_contenders():
    assert "tuning.space.atention: no contender" in error_of(
        suite_with(space={"atention": {"dropout": [0.1]}})
    )
    assert "tuning.equal_parameters: given 'convolutions'" in error_of(
        suite_with(equal_parameters="convolutions")
    )
    assert "sized by tuning.equal_parameters" in error_of(
        suite_with(equal_parameters=5000, space={"convolution": {"hidden": [8, 16]}})
    )
    assert "unknown key 'prunner'" in error_of(suite_with(prunner="median"))
    assert "tuning.pruner" in error_of(suite_with(pruner="quartile"))


def test_the_cli_prints_one_line_and_exits_2(tmp_path, capsys):
    from harness.cli import main

    path = tmp_path / "bad.toml"
    path.write_text(
        'name = "x"\n[data]\nsource = "synthetic"\nnodes = 60\n'
        '[contenders.attention]\nmodel = "gat"\n'
        "[tuning]\ntrials = 4\n[tuning.space.attention]\n"
        "learning_rate = { low = 0.0, high = 0.1, log = true }\n"
    )
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "tuning.space.attention.learning_rate" in err and "includes 0" in err


def test_tuning_and_ablation_tables_do_not_mix():
    raw = suite_with()
    raw["ablation"] = {"attention": {"mode": "grid", "axes": {"heads": [1, 2]}}}
    assert "cannot also be tuned" in error_of(raw)
