"""Trend plot of gate history: each contender's metric and seconds per epoch over gate runs."""

from __future__ import annotations

import io

import matplotlib
import pandas as pd
from matplotlib.figure import Figure

from harness.analysis.verdict import WORSE
from harness.formatting import metric_label
from harness.report.documents.palette import CYCLE, VERDICTS


def trend_figure(history: pd.DataFrame) -> Figure:
    """Two panels sharing the time axis; a failed gate run is marked with a cross in the
    colour of a worse verdict.

    Drawn on a bare Figure (Agg canvas when saved): no pyplot, so importing this module leaves
    everyone else's matplotlib backend alone and keeps no figure open."""
    figure = Figure(figsize=(7, 5))
    top, bottom = figure.subplots(2, 1, sharex=True)
    metric = metric_label(history["metric"].iloc[-1])
    for contender, rows in history.groupby("contender", sort=False):
        when = pd.to_datetime(rows["gated_at"], unit="s")
        line = top.plot(when, rows["metric_mean"], marker="o", label=str(contender))[0]
        bottom.plot(when, rows["seconds_per_epoch"], marker="o", color=line.get_color())
        failed = rows["contender_status"] == "fail"
        top.scatter(
            when[failed],
            rows["metric_mean"][failed],
            marker="x",
            color=VERDICTS[WORSE],
            s=60,
            zorder=3,
        )
    top.set_ylabel(f"test {metric} (mean over seeds)")
    bottom.set_ylabel("seconds per epoch")
    bottom.set_xlabel("gate run (UTC)")
    top.legend(fontsize="small", loc="best")
    top.set_title("Gate history")
    figure.autofmt_xdate()
    figure.tight_layout()
    return figure


TREND_TITLE = "Gate history: mean test metric and seconds per epoch per gate run"


def trend_png(history: pd.DataFrame) -> bytes | None:
    """The trend plot as PNG bytes, or None when there is no gate history to plot."""
    if history.empty:
        return None
    buffer = io.BytesIO()
    with matplotlib.rc_context(CYCLE):
        trend_figure(history).savefig(buffer, format="png", dpi=110)
    return buffer.getvalue()
