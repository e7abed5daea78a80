"""Report documents: takes analysis, gate, tuning and profile results, gives a Document
(tables with captions, sentences, plots) for harness.report.formats to render."""
