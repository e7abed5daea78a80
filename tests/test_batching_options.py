"""`fanout` and `compile = true` are refused only where no run would use them (issue 27, item 14):
a suite-wide value that some contender's runs use is fine."""

from __future__ import annotations

from harness.cli import main
from tests.conftest import TINY_SUITE


def test_a_suite_fanout_used_by_one_sampled_contender_is_accepted(write_suite, capsys):
    mixed = TINY_SUITE.replace("epochs = 15", "epochs = 15\nfanout = [4, 4]\ncompile = true")
    mixed = mixed.replace("hidden = 4", 'hidden = 4\ntraining = {batching = "sampled"}')
    assert main(["check", str(write_suite(mixed))]) == 0
    assert "attention: 2 runs" in capsys.readouterr().out


def test_the_same_fanout_with_no_sampled_contender_is_refused(write_suite, capsys):
    unused = TINY_SUITE.replace("epochs = 15", "epochs = 15\nfanout = [4, 4]")
    assert main(["check", str(write_suite(unused))]) == 2
    error = capsys.readouterr().err.strip()
    assert error.endswith('allowed: leave fanout out, or batching = "sampled"')
    assert len(error.splitlines()) == 1
