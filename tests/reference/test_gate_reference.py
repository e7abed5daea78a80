"""The gate's statistics and JUnit output checked against outside references.

Sources:
- statsmodels (`statsmodels.stats.weightstats`): `DescrStatsW(d).tconfint_mean` and
  `ttest_mean` give the t-interval and two-sided t-test of a paired mean difference d (Student,
  1908); `CompareMeans(...).tconfint_diff(usevar="unequal")` and `ttest_ind(usevar="unequal")`
  give Welch's interval and test (Welch, 1947).
- pytest's own JUnit XML writer (`--junitxml`, the xunit2 family that build servers read):
  the element and attribute names our file must share.
"""

from __future__ import annotations

import subprocess
import sys
import xml.etree.ElementTree as ElementTree

import numpy as np
import pytest
from statsmodels.stats.weightstats import CompareMeans, DescrStatsW

from harness.gate.compare import Check, GateOutcome, compare_metric
from harness.report.documents.gate import gate_document
from harness.report.formats import FORMATS

BEFORE = {0: 0.81, 1: 0.79, 2: 0.84, 3: 0.80, 4: 0.83}
AFTER = {0: 0.78, 1: 0.77, 2: 0.80, 3: 0.79, 4: 0.79}


@pytest.mark.parametrize("confidence", [0.95, 0.99])
def test_paired_interval_and_p_value_match_statsmodels(confidence):
    ours = compare_metric(BEFORE, AFTER, confidence)
    differences = np.array([AFTER[s] - BEFORE[s] for s in sorted(BEFORE)])
    reference = DescrStatsW(differences)
    low, high = reference.tconfint_mean(alpha=1 - confidence)
    _, p_value, _ = reference.ttest_mean(0.0)
    assert ours.test == "paired t-test" and ours.seeds == 5
    assert ours.difference == pytest.approx(differences.mean(), abs=1e-12)
    assert (ours.low, ours.high) == pytest.approx((low, high), abs=1e-12)
    assert ours.p_value == pytest.approx(p_value, rel=1e-9)


def test_welch_interval_and_p_value_match_statsmodels():
    """No shared seeds: Welch's unequal-variance test on the two samples."""
    after = {10 + s: v for s, v in AFTER.items()}
    ours = compare_metric(BEFORE, after, 0.95)
    now, then = (
        DescrStatsW(np.array(list(after.values()))),
        DescrStatsW(np.array(list(BEFORE.values()))),
    )
    compared = CompareMeans(now, then)
    low, high = compared.tconfint_diff(alpha=0.05, usevar="unequal")
    _, p_value, _ = compared.ttest_ind(usevar="unequal")
    assert ours.test == "Welch t-test"
    assert (ours.low, ours.high) == pytest.approx((low, high), abs=1e-12)
    assert ours.p_value == pytest.approx(p_value, rel=1e-9)


PYTEST_SAMPLE = """
def test_passes():
    assert True

def test_fails():
    assert 1 == 2, "one is not two"

import pytest

@pytest.mark.skip(reason="shown as skipped")
def test_skipped():
    pass
"""


def test_junit_names_match_pytest_junit_writer(tmp_path):
    """Our file uses the element and attribute names pytest writes (hostname left out on purpose:
    the file may be shared). A separate process, because pytest cannot nest in-process here."""
    sample = tmp_path / "test_sample.py"
    sample.write_text(PYTEST_SAMPLE)
    theirs_path = tmp_path / "theirs.xml"
    subprocess.run(
        [
            sys.executable,
            "-m",
            "pytest",
            "-q",
            "-p",
            "no:cacheprovider",
            str(sample),
            f"--junitxml={theirs_path}",
            "-o",
            "junit_family=xunit2",
        ],
        cwd=tmp_path,
        capture_output=True,
        check=False,
    )
    theirs = ElementTree.parse(theirs_path).getroot()
    checks = (
        Check("a", "metric", "fail", "dropped 3.00 points"),
        Check("a", "reproducibility", "skip", "no run with identical inputs"),
        Check("a", "time", "pass", "within limit"),
    )
    outcome = GateOutcome("s", "accuracy", 0.95, checks, {}, {}, (), {"a": 1.0}, 1.8e9)
    ours_path = tmp_path / "ours.xml"
    ours_path.write_text(FORMATS["junit"].render(gate_document(outcome)), encoding="utf-8")
    ours = ElementTree.parse(ours_path).getroot()

    assert ours.tag == theirs.tag == "testsuites"
    their_suite, our_suite = theirs.find("testsuite"), ours.find("testsuite")
    assert set(their_suite.attrib) - {"hostname"} <= set(our_suite.attrib)
    for their_case, our_case in zip(
        their_suite.iter("testcase"), our_suite.iter("testcase"), strict=True
    ):
        assert set(their_case.attrib) == set(our_case.attrib)
    their_failure = their_suite.find("testcase/failure")
    our_failure = our_suite.find("testcase/failure")
    assert set(their_failure.attrib) <= set(our_failure.attrib)
    assert their_suite.find("testcase/skipped") is not None
    assert our_suite.find("testcase/skipped") is not None
    for name in ("tests", "failures", "errors", "skipped"):
        assert their_suite.get(name) == our_suite.get(name)
