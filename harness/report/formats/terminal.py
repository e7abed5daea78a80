"""A Document on the terminal: the headline verdict first, then each table with its caption and
legend. Names and verdicts are never cut: a table too wide for the screen drops its optional
columns first, then wraps its cells at spaces (a word longer than its column folds)."""

from __future__ import annotations

import io
from dataclasses import replace

from rich import box
from rich.console import Console, RenderableType
from rich.markup import escape as markup_escape
from rich.padding import Padding
from rich.table import Table as RichTable
from rich.text import Text as RichText

from harness.formatting import visible
from harness.report.documents.document import Document, Items, Table, Text

# piped output (logs, CI) is not cut to 80 columns, nor as wide as a log line may be
PIPED_WIDTH = 100
SHORT_CELL = 8  # cells this short are never wrapped
STYLES = {
    "better": "bold green",
    "worse": "bold red",
    "no difference that matters": "cyan",
    "inconclusive": "yellow",
    "best": "bold green",
    "pass": "green",
    "warn": "yellow",
    "fail": "bold red",
    "skip": "dim",
}


def escape(text: str) -> str:
    """Text for a rich cell or title: hidden characters shown (harness.formatting.visible),
    brackets not read as markup."""
    return markup_escape(visible(text))


def _plain(text: str) -> RichText:
    return RichText(visible(text))


def _shown(part: Table) -> tuple[tuple[str, ...], ...]:
    return part.rows if part.brief_rows is None else part.rows[: part.brief_rows]


def spans(part: Table) -> list[tuple[int, int]]:
    """Per column: its least width (its longest word, so no word is folded; a short cell such
    as `< 0.001` stays on one line) and its width with no cell wrapped."""
    out = []
    for index, header in enumerate(part.header):
        texts = [header, *(row[index] for row in _shown(part))]
        least = max((_unbroken(text) for text in texts), default=0)
        out.append((least, max(len(text) for text in texts)))
    return out


def _unbroken(text: str) -> int:
    return len(text) if len(text) <= SHORT_CELL else max(map(len, text.split()), default=0)


def _room(part: Table, width: int) -> int:
    """The width left for cells: columns are separated by two spaces, with one at each edge."""
    return width - 2 * (len(part.header) - 1) - 2


def column_widths(part: Table, width: int) -> list[int]:
    """Each column's width: unwrapped when everything fits; otherwise each starts at its least
    width and the room left unwraps whole columns, those needing least first, so that as few
    columns as possible wrap."""
    least = [low for low, _ in spans(part)]
    most = [high for _, high in spans(part)]
    spare = _room(part, width) - sum(least)
    sizes = list(least)
    for index in sorted(range(len(sizes)), key=lambda i: most[i] - least[i]):
        grown = min(most[index] - least[index], max(spare, 0))
        sizes[index] += grown
        spare -= grown
    return sizes


def rich_table(part: Table, width: int = 10_000) -> RichTable:
    """The table as a rich Table `width` columns wide at most; no word is folded, so names and
    verdicts stay whole."""
    table = RichTable(
        title=escape(part.title) if part.title else None,
        title_justify="left",
        box=box.HORIZONTALS if any(part.header) else None,
        pad_edge=False,
        collapse_padding=True,
        show_header=any(part.header),
    )
    columns = zip(part.header, part.right, column_widths(part, width), strict=True)
    for header, right, size in columns:
        table.add_column(escape(header), justify="right" if right else "left", width=size)
    for number, row in enumerate(_shown(part)):
        mark = part.marks[number] if number < len(part.marks) else ""
        table.add_row(*(escape(cell) for cell in row), style=STYLES.get(mark))
    return table


def _columns(part: Table, keep: list[int]) -> Table:
    """The table with only the columns at `keep`."""

    def chosen(values: tuple) -> tuple:
        return tuple(values[i] for i in keep) if values else values

    return replace(
        part,
        header=chosen(part.header),
        rows=tuple(chosen(row) for row in part.rows),
        right=chosen(part.right),
        optional=chosen(part.optional),
        whole=chosen(part.whole),
    )


def fitted(part: Table, width: int) -> Table:
    """The table without its optional columns, rightmost first, while it does not fit `width`
    unwrapped; a screen shows `brief_rows` rows and says how many more the files hold."""
    while any(part.optional) and sum(high for _, high in spans(part)) > _room(part, width):
        drop = max(i for i, optional in enumerate(part.optional) if optional)
        part = _columns(part, [i for i in range(len(part.header)) if i != drop])
    more = 0 if part.brief_rows is None else len(part.rows) - part.brief_rows
    if more > 0:
        part = replace(part, note=f"{part.note} {more} more rows in the report files.".strip())
    return part


def _fits(part: Table, width: int) -> bool:
    return sum(low for low, _ in spans(part)) <= _room(part, width)


def split(part: Table, width: int) -> list[Table]:
    """A table too wide even wrapped, as several tables that each repeat its leading text
    columns (the row's names) beside as many other columns as fit."""
    if _fits(part, width):
        return [part]
    keys = next((i for i, right in enumerate(part.right) if right), len(part.right))
    keys = max(1, min(keys, len(part.header) - 1))
    pieces: list[list[int]] = [[]]
    for column in range(keys, len(part.header)):
        trial = _columns(part, [*range(keys), *pieces[-1], column])
        if pieces[-1] and not _fits(trial, width):
            pieces.append([])
        pieces[-1].append(column)
    tables = [_columns(part, [*range(keys), *piece]) for piece in pieces]
    tables[1:] = [replace(t, title=f"{part.title} (continued)") for t in tables[1:]]
    return tables


def table_renderables(part: Table, width: int) -> list[RenderableType]:
    """The table fitted to the screen, then its caption and legend as a paragraph."""
    part = fitted(part, width)
    out: list[RenderableType] = [rich_table(piece, width) for piece in split(part, width)]
    below = " ".join(text for text in (part.note, part.legend) if text)
    return out + ([_plain(below)] if below else [])


def renderables(document: Document, console: Console) -> list[RenderableType]:
    """Notices, the headline verdict, then the body in order."""
    out: list[RenderableType] = [_plain(notice) for notice in document.notices]
    if document.headline:
        out.append(RichText.assemble(("Verdict: ", "bold"), visible(document.headline)))
    if document.lead:
        out.append(_plain(document.lead))
    for part in document.blocks:
        if isinstance(part, Table):
            out += table_renderables(part, console.width)
        elif isinstance(part, Items):
            out += [Padding(_plain(item), (0, 0, 0, 2)) for item in part.items]
        elif isinstance(part, Text):
            out.append(_plain(part.text))
    return out


def show(document: Document, console: Console) -> None:
    for renderable in renderables(document, console):
        console.print(renderable, highlight=False)


def render(document: Document, width: int = PIPED_WIDTH) -> str:
    """The document as plain terminal text `width` columns wide."""
    console = Console(width=width, record=True, color_system=None, file=io.StringIO())
    show(document, console)
    return console.export_text()
