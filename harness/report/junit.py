"""A gate outcome as JUnit XML: one test case per contender and check.

Element and attribute names follow the common JUnit XML shape that build servers read:
testsuites > testsuite > testcase, with failure / skipped children and tests, failures,
errors, skipped, time counts. Warnings pass and carry their text in system-out.
"""

from __future__ import annotations

import time
import xml.etree.ElementTree as ElementTree
from pathlib import Path

from harness.gate.compare import FAIL, SKIP, WARN, GateOutcome
from harness.output_files import write_output


def junit_tree(outcome: GateOutcome) -> ElementTree.ElementTree:
    checks = outcome.checks
    failures = sum(check.status == FAIL for check in checks)
    skipped = sum(check.status == SKIP for check in checks)
    seconds = sum(outcome.contender_seconds.values())
    counts = {
        "tests": str(len(checks)),
        "failures": str(failures),
        "errors": "0",
        "skipped": str(skipped),
        "time": f"{seconds:.3f}",
    }
    root = ElementTree.Element("testsuites", {"name": f"heedful gate {outcome.suite}", **counts})
    suite = ElementTree.SubElement(
        root,
        "testsuite",
        {
            "name": f"heedful.gate.{outcome.suite}",
            **counts,
            "timestamp": time.strftime("%Y-%m-%dT%H:%M:%S", time.gmtime(outcome.gated_at)),
        },
    )
    properties = ElementTree.SubElement(suite, "properties")
    facts = {"metric": outcome.metric, "status": outcome.status}
    facts |= {f"environment.{k}": str(v) for k, v in sorted(outcome.environment.items())}
    facts["environment_differs"] = "; ".join(outcome.environment_differences) or "no"
    for name, value in facts.items():
        ElementTree.SubElement(properties, "property", {"name": name, "value": value})
    for check in checks:
        spent = (
            outcome.contender_seconds.get(check.contender, 0.0) if check.check == "metric" else 0.0
        )
        case = ElementTree.SubElement(
            suite,
            "testcase",
            {
                "classname": f"{outcome.suite}.{check.contender}",
                "name": check.check,
                "time": f"{spent:.3f}",
            },
        )
        if check.status == FAIL:
            failure = ElementTree.SubElement(
                case, "failure", {"message": check.message, "type": f"{check.check} regression"}
            )
            failure.text = check.message
        elif check.status == SKIP:
            ElementTree.SubElement(case, "skipped", {"message": check.message})
        else:
            out = ElementTree.SubElement(case, "system-out")
            out.text = ("warning: " if check.status == WARN else "") + check.message
    if outcome.environment_differences:
        note = ElementTree.SubElement(suite, "system-out")
        note.text = "environment differs from the baseline's: " + "; ".join(
            outcome.environment_differences
        )
    ElementTree.indent(root)
    return ElementTree.ElementTree(root)


def junit_xml(outcome: GateOutcome) -> bytes:
    """The JUnit XML document, UTF-8 with its declaration."""
    root = junit_tree(outcome).getroot()
    return ElementTree.tostring(root, encoding="utf-8", xml_declaration=True)


def write_junit(path: str | Path, outcome: GateOutcome) -> None:
    """The JUnit XML file at `path` (a link there is replaced, not written through)."""
    write_output(path, junit_xml(outcome))
