"""A Document's checks as JUnit XML: one test case per row of its `checks` frame (a gate: one
per contender and check).

Element and attribute names follow the common JUnit XML shape that build servers read:
testsuites > testsuite > testcase, with failure / skipped children and tests, failures,
errors, skipped, time counts. Warnings pass and carry their text in system-out.
"""

from __future__ import annotations

import time
import xml.etree.ElementTree as ElementTree

import pandas as pd

from harness.gate.compare import FAIL, SKIP, WARN
from harness.report.documents.document import Document

CHECK_COLUMNS = ("classname", "name", "time", "status", "message")


def junit_tree(document: Document) -> ElementTree.ElementTree:
    """The document's `checks` frame (classname, name, time, status, message) as test cases, its
    properties as properties and its notices as the suite's output."""
    checks = document.frames.get("checks", pd.DataFrame(columns=CHECK_COLUMNS))
    counts = {
        "tests": str(len(checks)),
        "failures": str(int((checks["status"] == FAIL).sum())),
        "errors": "0",
        "skipped": str(int((checks["status"] == SKIP).sum())),
        "time": f"{checks['time'].sum():.3f}",
    }
    root = ElementTree.Element("testsuites", {"name": f"heedful {document.name}", **counts})
    made_at = time.gmtime(document.made_at if document.made_at is not None else time.time())
    suite = ElementTree.SubElement(
        root,
        "testsuite",
        {
            "name": "heedful." + document.name.replace(" ", ".", 1),
            **counts,
            "timestamp": time.strftime("%Y-%m-%dT%H:%M:%S", made_at),
        },
    )
    properties = ElementTree.SubElement(suite, "properties")
    for name, value in document.properties:
        ElementTree.SubElement(properties, "property", {"name": name, "value": value})
    for check in checks.itertuples():
        case = ElementTree.SubElement(
            suite,
            "testcase",
            {"classname": check.classname, "name": check.name, "time": f"{check.time:.3f}"},
        )
        if check.status == FAIL:
            failure = ElementTree.SubElement(
                case, "failure", {"message": check.message, "type": f"{check.name} regression"}
            )
            failure.text = check.message
        elif check.status == SKIP:
            ElementTree.SubElement(case, "skipped", {"message": check.message})
        else:
            out = ElementTree.SubElement(case, "system-out")
            out.text = ("warning: " if check.status == WARN else "") + check.message
    if document.notices:
        note = ElementTree.SubElement(suite, "system-out")
        note.text = "\n".join(document.notices)
    ElementTree.indent(root)
    return ElementTree.ElementTree(root)


def render(document: Document) -> str:
    """The XML text with its declaration, as build servers read it."""
    return ElementTree.tostring(
        junit_tree(document).getroot(), encoding="utf-8", xml_declaration=True
    ).decode("utf-8")
