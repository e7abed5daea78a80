"""MkDocs hook: pages written from the code at build time, so they cannot drift from it.

reference.md is the suite-file reference (harness.schema.reference); command-options.md is
every command's --help text (harness.cli.parser).
"""

from __future__ import annotations

from mkdocs.structure.files import File, Files

from harness.schema.reference import reference_page


def command_options_page() -> str:
    """`heedful COMMAND --help` of every command, as the installed parser prints it."""
    import argparse
    import os

    from harness.cli import parser

    os.environ["COLUMNS"] = "96"  # argparse wraps help to this width
    top = parser()
    lines = [
        "# Command options",
        "",
        "Generated from the command-line parser when the documentation is built: what "
        "`heedful COMMAND --help` prints.",
        "",
        "```text",
        top.format_help().rstrip(),
        "```",
        "",
    ]
    commands = next(a for a in top._actions if isinstance(a, argparse._SubParsersAction))
    for name, sub in commands.choices.items():
        lines += [f"## heedful {name}", "", "```text", sub.format_help().rstrip(), "```", ""]
    return "\n".join(lines)


def on_files(files: Files, config) -> Files:  # noqa: ANN001 - MkDocs' config object
    for name, content in (
        ("reference.md", reference_page()),
        ("command-options.md", command_options_page()),
    ):
        files.append(File.generated(config, name, content=content))
    return files
