"""Reports: documents/ turns results into a Document; formats/ renders that same Document as
terminal text, Markdown, LaTeX, HTML, CSV, JSON or JUnit XML. Renderers never compute."""
