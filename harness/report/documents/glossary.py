"""Short explanations of the terms report tables use, said in a legend under each table that
uses them (every format shows the same legend)."""

from __future__ import annotations

import re

TERMS: dict[str, str] = {
    "side": "attention for an attention contender, baseline for the others",
    "points": "hundredths of the metric (0.01)",
    "t-interval": "the range that holds the true mean (or mean difference) at the stated "
    "confidence, from Student's t over seeds, clipped to what the metric allows",
    "bootstrap": "the same range from resampling the seeds (percentile bootstrap)",
    "t (df)": "the paired t statistic and its degrees of freedom",
    "Holm p": "the paired t-test's p-value adjusted for making many comparisons (Holm 1979)",
    "Wilcoxon p": "the signed-rank test's p-value, which assumes no normal distribution",
    "d_z": "effect size: mean difference over the standard deviation of the differences "
    "(Cohen's d_z)",
    "s/epoch": "seconds of training per epoch",
    "tensor MiB": "peak memory of one training step's tensors (parameters, gradients, "
    "optimiser state, inputs, activations kept for backward) in MiB; not the whole process, "
    "which `heedful check` estimates in GiB",
    "Pareto": "no other contender is at least as good and at least as cheap (in time, "
    "parameters or memory; all: in all three)",
    "×": "ratio of now to the baseline",
}


def _uses(text: str, term: str) -> bool:
    """Whether `term` stands in `text` as a word of its own (`side`, not `inside`)."""
    return re.search(rf"(?<![\w-]){re.escape(term)}(?![\w-])", text) is not None


def legend_for(header: list[str] | tuple[str, ...]) -> str:
    """`term: meaning; ...` for each glossary term a header uses, in glossary order."""
    text = " | ".join(header)
    used = [f"{term}: {meaning}" for term, meaning in TERMS.items() if _uses(text, term)]
    return "; ".join(used) + ("." if used else "")
