"""The suite's [analysis] table: defaults, and one-line errors for bad settings."""

from __future__ import annotations

import pytest

from harness.cli import main
from harness.errors import InputError
from harness.planning import load_suite


def test_defaults_when_the_table_is_absent(tiny_suite):
    analysis = load_suite(tiny_suite).analysis
    assert (analysis.minimum_gain, analysis.confidence) == (1.0, 0.95)
    assert analysis.attention == [] and analysis.baselines == []


def test_settings_are_read(write_suite, tiny_suite_text):
    text = tiny_suite_text + '\n[analysis]\nminimum_gain = 0.5\nbaselines = ["features_only"]\n'
    analysis = load_suite(write_suite(text)).analysis
    assert analysis.minimum_gain == 0.5 and analysis.baselines == ["features_only"]


@pytest.mark.parametrize(
    ("table", "message"),
    [
        ("minimum_gian = 2", "analysis: unknown key 'minimum_gian' (did you mean 'minimum_gain'?)"),
        ("minimum_gain = -1", "analysis.minimum_gain: given -1;"),
        ("confidence = 1.5", "analysis.confidence: given 1.5;"),
        ('attention = ["nobody"]', "attention names 'nobody', not a contender; allowed:"),
        (
            'attention = ["attention"]\nbaselines = ["attention"]',
            "attention named in both attention and baselines",
        ),
    ],
)
def test_bad_settings_name_the_key(write_suite, tiny_suite_text, capsys, table, message):
    path = write_suite(tiny_suite_text + f"\n[analysis]\n{table}\n")
    with pytest.raises(InputError, match=None) as caught:
        load_suite(path)
    assert message in str(caught.value)
    assert main(["check", str(path)]) == 2
    error = capsys.readouterr().err.strip()
    assert error.startswith(f"heedful: error: {path}: ") and "\n" not in error
