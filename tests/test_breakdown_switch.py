"""`[analysis] breakdown = false`: new runs keep no per-node predictions and no breakdown is
made, while run keys stay those of the same suite with the breakdown on."""

from __future__ import annotations

import pytest

from harness.api import analyse_store
from harness.api import breakdown as node_breakdown
from harness.errors import InputError
from harness.execution.local import execute
from harness.planning import expand, load_suite, parse_suite
from harness.storage.database import has_table
from harness.storage.predictions import load_predictions

OFF = "\n[analysis]\nbreakdown = false\n"


def test_without_the_breakdown_runs_store_no_predictions(write_suite, tiny_suite_text, store_path):
    on = load_suite(write_suite(tiny_suite_text, "on.toml"))
    off_path = write_suite(tiny_suite_text + OFF, "off.toml")
    off = load_suite(off_path)
    assert [spec.key for spec in expand(off)] == [spec.key for spec in expand(on)]
    assert not any(spec.keep_predictions for spec in expand(off))
    assert all(spec.keep_predictions for spec in expand(on))

    execute(expand(off), store_path)
    assert not has_table(store_path, "predictions")
    report = analyse_store(store_path, off_path)
    assert report.breakdown is None and len(report.runs) == 6
    with pytest.raises(InputError, match="analysis.breakdown: given false"):
        node_breakdown(store_path, off_path)

    # the same runs asked for again with the breakdown on are reused as stored: no predictions
    on_path = write_suite(tiny_suite_text, "on.toml")
    again = execute(expand(load_suite(on_path)), store_path)
    assert (again.skipped, again.finished) == (6, 0)
    assert load_predictions(store_path, [spec.key for spec in expand(on)]) == {}


def test_stored_predictions_are_left_out_of_the_analysis_when_the_breakdown_is_off(
    write_suite, tiny_suite_text, store_path
):
    on_path = write_suite(tiny_suite_text, "on.toml")
    execute(expand(load_suite(on_path)), store_path)
    assert analyse_store(store_path, on_path).breakdown is not None
    off_path = write_suite(tiny_suite_text + OFF, "off.toml")
    assert analyse_store(store_path, off_path).breakdown is None


def test_a_link_suite_may_not_set_the_breakdown(tiny_suite_text):
    raw = {"task": "link_prediction", "analysis": {"breakdown": False}}
    with pytest.raises(InputError, match="breakdown is for the per-node breakdown"):
        parse_suite(raw | base_of(tiny_suite_text), "links.toml")


def base_of(text: str) -> dict:
    import tomllib

    raw = tomllib.loads(text)
    raw.pop("metric")
    return raw
