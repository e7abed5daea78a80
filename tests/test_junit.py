"""JUnit XML of a gate outcome: the common testsuites/testsuite/testcase shape, with figures."""

from __future__ import annotations

import xml.etree.ElementTree as ElementTree

import pytest

from harness.gate.compare import Check, GateOutcome
from harness.report.documents.gate import gate_document
from harness.report.formats import FORMATS
from harness.report.formats.junit import junit_tree

TESTSUITE_ATTRIBUTES = {"name", "tests", "failures", "errors", "skipped", "time", "timestamp"}
TESTCASE_ATTRIBUTES = {"classname", "name", "time"}


@pytest.fixture
def outcome() -> GateOutcome:
    """A fictional parcel-locker suite with one failure, one warning and one skipped check."""
    figures = {
        "baseline": 0.8,
        "current": 0.7,
        "difference": -0.1,
        "low": -0.14,
        "high": -0.06,
        "p_value": 0.004,
        "test": "paired t-test",
        "seeds": 4,
    }
    ratio = {"baseline": 1.0, "current": 1.0, "ratio": 1.0, "limit": 1.5}
    checks = (
        Check(
            "lockers <&> vans",
            "metric",
            "fail",
            'dropped 10.00 points, "interval" [-14, -6]',
            figures,
        ),
        Check("lockers <&> vans", "time", "warn", "seconds per epoch x1.90 above limit", ratio),
        Check("lockers <&> vans", "memory", "pass", "peak memory x1.00 within limit", ratio),
        Check("lockers <&> vans", "reproducibility", "skip", "no run with identical inputs"),
        Check("vans_only", "metric", "pass", "within tolerance", {**figures, "difference": 0.0}),
        Check("vans_only", "time", "pass", "within limit", ratio),
        Check("vans_only", "memory", "pass", "within limit", ratio),
        Check("vans_only", "reproducibility", "pass", "identical metrics"),
    )
    return GateOutcome(
        suite="lockers",
        metric="accuracy",
        confidence=0.95,
        checks=checks,
        environment={"python": "3.11.7", "threads": 2},
        baseline_environment={"python": "3.11.7", "threads": 4},
        environment_differences=("threads: baseline 4, now 2",),
        contender_seconds={"lockers <&> vans": 3.25, "vans_only": 1.5},
        gated_at=1.8e9,
    )


def test_junit_file_has_the_common_schema_shape(outcome, tmp_path):
    """testsuites > testsuite > testcase; counts agree with the elements; figures in failures."""
    path = tmp_path / "gate.xml"
    path.write_text(FORMATS["junit"].render(gate_document(outcome)), encoding="utf-8")
    assert path.read_text().startswith("<?xml version='1.0' encoding='utf-8'?>")
    root = ElementTree.parse(path).getroot()
    assert root.tag == "testsuites"
    suites = list(root)
    assert [element.tag for element in suites] == ["testsuite"]
    suite = suites[0]
    assert TESTSUITE_ATTRIBUTES <= set(suite.attrib)
    cases = suite.findall("testcase")
    assert len(cases) == int(suite.get("tests")) == int(root.get("tests")) == 8
    assert len(suite.findall("testcase/failure")) == int(suite.get("failures")) == 1
    assert len(suite.findall("testcase/skipped")) == int(suite.get("skipped")) == 1
    assert int(suite.get("errors")) == int(root.get("errors")) == 0
    assert float(suite.get("time")) == pytest.approx(4.75)
    for case in cases:
        assert set(case.attrib) == TESTCASE_ATTRIBUTES
        assert float(case.get("time")) >= 0
        assert all(child.tag in ("failure", "skipped", "system-out") for child in case)
    assert {(c.get("classname"), c.get("name")) for c in cases} == {
        (f"lockers.{contender}", check)
        for contender in ("lockers <&> vans", "vans_only")
        for check in ("metric", "time", "memory", "reproducibility")
    }
    failure = suite.find("testcase/failure")
    assert failure.get("message") == 'dropped 10.00 points, "interval" [-14, -6]'
    assert failure.text == failure.get("message") and failure.get("type") == "metric regression"
    warned = [c for c in cases if c.get("name") == "time" and "<&>" in c.get("classname")][0]
    assert warned.findtext("system-out") == "warning: seconds per epoch x1.90 above limit"
    properties = {p.get("name"): p.get("value") for p in suite.find("properties")}
    assert properties["environment_differs"] == "threads: baseline 4, now 2"
    assert properties["status"] == "fail" and properties["environment.threads"] == "2"
    assert suite.get("timestamp") == "2027-01-15T08:00:00"


def test_junit_tree_of_a_passing_gate_has_no_failures(outcome):
    passing = GateOutcome(
        **{
            **outcome.__dict__,
            "checks": tuple(c for c in outcome.checks if c.contender == "vans_only"),
            "environment_differences": (),
        }
    )
    root = junit_tree(gate_document(passing)).getroot()
    assert root.get("tests") == "4" and root.get("failures") == "0"
    assert root.find("testsuite/system-out") is None
    assert passing.status == "pass" and passing.exit_code == 0


def test_markdown_summary_names_failures_and_environment(outcome):
    text = FORMATS["markdown"].render(gate_document(outcome))
    assert text.startswith("# Heedful gate: lockers\n")
    assert "> gate FAIL" in text
    assert (
        "| lockers &lt;&amp;&gt; vans | 0.800 | 0.700 | -10.00 | -14.00 to -6.00 | 1.00 | 1.00 "
        r"| ✗\!✓- | fail |" in text
    )
    assert r"| vans\_only | 0.800 | 0.700 | +0.00 |" in text  # names escaped as in report.md
    assert "- fail metric: dropped 10.00 points" in text
    assert "- warn time: seconds per epoch x1.90 above limit" in text
    assert "environment differs from the baseline's: threads: baseline 4, now 2" in text
    assert "95% t-interval of the paired mean difference" in text
