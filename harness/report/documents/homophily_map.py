"""A homophily map run on its own (after `run`) as a Document: the same table the suite report
shows."""

from __future__ import annotations

from harness.analysis.homophily_map import HomophilyMapSummary
from harness.report.documents.diagnostic_tables import homophily_map_table
from harness.report.documents.document import Document


def map_document(summary: HomophilyMapSummary) -> Document:
    part = homophily_map_table(summary)
    return Document(
        title="Homophily map",
        blocks=(part,) if part is not None else (),
        frames={"homophily_map": summary.table},
        name="homophily map",
    )
