"""The design report: one self-contained HTML file to print or to send to a builder.

The command layer fills a :class:`Report` (a title, a few key facts and sections of
paragraphs, tables, bullet lists and images, all as plain text and numbers) and
:func:`render_html` writes the page. No physics here, and nothing leaves the file:
styles are inline in one ``<style>`` block (with print rules), images are inline
base64 PNG, there is no script and no external font, stylesheet or link.

Every text is escaped with :func:`html.escape`. Table cells that hold a number carry
it in SI units in a ``data-value`` attribute beside the formatted text, so a reader
(or a test) can take the numbers back out exactly; each table has an ``id``.

The caution that this is not a safety, navigation or warning light is always in the
report, whatever the sections hold.
"""

from __future__ import annotations

import base64
import html
import math
from collections.abc import Sequence
from dataclasses import dataclass, field

from pulsepick.analysis.cautions import NOT_A_SAFETY_LIGHT
from pulsepick.output.render import word_hints


@dataclass(frozen=True)
class Cell:
    """A table cell: the text shown and, for a number, its SI value."""

    text: str
    value: float | None = None  # SI units; written as data-value
    unit: str = ""  # SI unit of ``value`` ("s", "A", "ohm", ...), written as data-unit


@dataclass(frozen=True)
class Table:
    """A table with a caption; ``key`` becomes its ``id``."""

    key: str
    caption: str
    columns: tuple[str, ...]
    rows: tuple[tuple[Cell | str, ...], ...]
    numeric: tuple[bool, ...] = ()  # right-aligned columns


@dataclass(frozen=True)
class Paragraph:
    text: str
    kind: str = "plain"  # "plain" or "note" (set in smaller type)


@dataclass(frozen=True)
class Items:
    """A bullet list; ``kind`` is "plain", "warning" or "caution"."""

    items: tuple[str, ...]
    kind: str = "plain"


@dataclass(frozen=True)
class Image:
    """A figure: PNG bytes shown inline."""

    caption: str
    png: bytes
    width_px: int
    height_px: int


@dataclass(frozen=True)
class Svg:
    """A drawing: SVG text shown inline (e.g. the schematic)."""

    caption: str
    svg: str  # an <svg> element (an XML declaration before it is dropped)


Block = Paragraph | Table | Items | Image | Svg


@dataclass(frozen=True)
class Section:
    key: str  # id of the section
    heading: str
    blocks: tuple[Block, ...] = ()


@dataclass(frozen=True)
class Report:
    """Everything the page shows, as plain text and numbers."""

    title: str  # the circuit
    subtitle: str  # what the report is (command and request in a line)
    facts: tuple[tuple[str, Cell | str], ...]  # key figures shown at the top
    sections: tuple[Section, ...]
    stamp: str  # version, seed, how it was made
    generated: str = ""  # date the report was made
    verdict: str = ""  # one line shown under the title (e.g. the night's verdict)
    verdict_good: bool | None = None  # colours the verdict: True good, False bad
    extra_cautions: tuple[str, ...] = field(default=())


def cell_text(cell: Cell | str) -> str:
    return cell.text if isinstance(cell, Cell) else cell


def _esc(text: str) -> str:
    return html.escape(word_hints(str(text)), quote=True)


def _value_attrs(cell: Cell | str) -> str:
    if not isinstance(cell, Cell) or cell.value is None:
        return ""
    v = float(cell.value)
    attrs = f' data-value="{_esc(repr(v) if math.isfinite(v) else str(v))}"'
    if cell.unit:
        attrs += f' data-unit="{_esc(cell.unit)}"'
    return attrs


def _table(t: Table) -> str:
    num = tuple(t.numeric) + (False,) * (len(t.columns) - len(t.numeric))
    out = [f'<table id="{_esc(t.key)}">']
    if t.caption:
        out.append(f"<caption>{_esc(t.caption)}</caption>")
    right = ' class="num"'
    out.append("<thead><tr>" + "".join(
        f'<th scope="col"{right if num[i] else ""}>{_esc(c)}</th>'
        for i, c in enumerate(t.columns)) + "</tr></thead>")
    out.append("<tbody>")
    for row in t.rows:
        cells = []
        for i, c in enumerate(row):
            cls = ' class="num"' if i < len(num) and num[i] else ""
            cells.append(f"<td{cls}{_value_attrs(c)}>{_esc(cell_text(c))}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</tbody></table>")
    return "\n".join(out)


def _block(b: Block) -> str:
    if isinstance(b, Paragraph):
        cls = ' class="note"' if b.kind == "note" else ""
        return f"<p{cls}>{_esc(b.text)}</p>"
    if isinstance(b, Table):
        return _table(b)
    if isinstance(b, Items):
        cls = {"warning": "warn", "caution": "caution"}.get(b.kind, "plain")
        lis = "".join(f"<li>{_esc(t)}</li>" for t in b.items)
        return f'<ul class="{cls}">{lis}</ul>'
    if isinstance(b, Image):
        data = base64.b64encode(b.png).decode("ascii")
        return (f'<figure><img src="data:image/png;base64,{data}" width="{b.width_px}" '
                f'height="{b.height_px}" alt="{_esc(b.caption)}">'
                f"<figcaption>{_esc(b.caption)}</figcaption></figure>")
    if isinstance(b, Svg):
        body = b.svg[b.svg.find("<svg"):] if "<svg" in b.svg else ""
        return (f'<figure class="schematic">{body}'
                f"<figcaption>{_esc(b.caption)}</figcaption></figure>")
    raise TypeError(f"unknown report block {type(b).__name__}")


def _with_cautions(sections: Sequence[Section], extra: Sequence[str]) -> list[Section]:
    """The sections with a cautions section holding the safety-light caution."""
    out = list(sections)
    for i, s in enumerate(out):
        if s.key == "cautions":
            texts = [t for b in s.blocks if isinstance(b, Items) for t in b.items]
            more = [t for t in (*extra, NOT_A_SAFETY_LIGHT) if t not in texts]
            if more:
                out[i] = Section(s.key, s.heading, (*s.blocks, Items(tuple(more), "caution")))
            return out
    texts = tuple(dict.fromkeys((*extra, NOT_A_SAFETY_LIGHT)))
    out.append(Section("cautions", "Cautions", (Items(texts, "caution"),)))
    return out


_CSS = """
:root { --ink: #1f2a33; --soft: #5b6b78; --rule: #cfd8df; --band: #eef3f6;
        --accent: #1f5f8b; --warm: #b4541a; --good: #2f6b3a; --bad: #9b2c2c; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
       font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, Helvetica, Arial,
       sans-serif; }
main { max-width: 64rem; margin: 0 auto; padding: 1.5rem 1.25rem 3rem; }
header.top { border-left: 6px solid var(--accent); padding: 0.3rem 0 0.3rem 1rem;
             margin-bottom: 1.2rem; }
header.top .kicker { text-transform: uppercase; letter-spacing: 0.08em; font-size: 0.75rem;
                     color: var(--soft); margin: 0; }
h1 { font-size: 1.55rem; margin: 0.15rem 0 0.2rem; }
header.top .sub { margin: 0; color: var(--soft); }
.verdict { margin: 0.6rem 0 0; font-weight: 600; }
.verdict.good { color: var(--good); } .verdict.bad { color: var(--bad); }
dl.facts { display: grid; grid-template-columns: repeat(auto-fill, minmax(10.5rem, 1fr));
           gap: 0.5rem; margin: 0 0 1.5rem; }
dl.facts div { background: var(--band); border-radius: 4px; padding: 0.45rem 0.6rem; }
dl.facts dt { font-size: 0.72rem; text-transform: uppercase; letter-spacing: 0.05em;
              color: var(--soft); }
dl.facts dd { margin: 0.1rem 0 0; font-size: 1.1rem; font-weight: 600;
              font-variant-numeric: tabular-nums; }
section { margin: 0 0 1.6rem; }
h2 { font-size: 1.08rem; margin: 0 0 0.55rem; padding-bottom: 0.2rem;
     border-bottom: 1px solid var(--rule); }
h2 .n { color: var(--accent); margin-right: 0.45rem; font-variant-numeric: tabular-nums; }
table { border-collapse: collapse; margin: 0.3rem 0 0.9rem; font-size: 0.9rem;
        font-variant-numeric: tabular-nums; }
caption { text-align: left; font-weight: 600; color: var(--soft); padding-bottom: 0.25rem;
          font-size: 0.85rem; }
th, td { padding: 0.22rem 0.7rem 0.22rem 0; text-align: left; vertical-align: top;
         border-bottom: 1px solid var(--rule); }
th { font-weight: 600; color: var(--soft); border-bottom: 1.5px solid var(--ink); }
td.num, th.num { text-align: right; }
p.note { font-size: 0.85rem; color: var(--soft); }
ul { margin: 0.2rem 0 0.8rem; padding-left: 1.3rem; }
ul.warn li::marker { content: "! "; color: var(--warm); font-weight: 700; }
ul.caution li::marker { content: "\\25B8  "; color: var(--bad); }
figure { margin: 0.4rem 0 1rem; }
figure img { max-width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { font-size: 0.82rem; color: var(--soft); }
footer { border-top: 1px solid var(--rule); padding-top: 0.5rem; font-size: 0.78rem;
         color: var(--soft); }
@page { size: A4; margin: 14mm 12mm; }
@media print {
  body { font-size: 10pt; }
  main { max-width: none; padding: 0; }
  dl.facts div { border: 1px solid var(--rule); background: none; }
  h2 { break-after: avoid; }
  table, figure, dl.facts, ul { break-inside: avoid; }
  figure img { max-height: 120mm; width: auto; }
  section#cautions { break-inside: avoid; }
}
"""


def render_html(report: Report) -> str:
    """The complete HTML page (UTF-8 text) for ``report``."""
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{_esc(report.title)}</title>",
        f"<style>{_CSS}</style>",
        "</head>",
        "<body><main>",
        '<header class="top">',
        '<p class="kicker">pulsepick design report'
        + (f" · {_esc(report.generated)}" if report.generated else "") + "</p>",
        f"<h1>{_esc(report.title)}</h1>",
        f'<p class="sub">{_esc(report.subtitle)}</p>',
    ]
    if report.verdict:
        mood = {True: " good", False: " bad", None: ""}[report.verdict_good]
        parts.append(f'<p class="verdict{mood}">{_esc(report.verdict)}</p>')
    parts.append("</header>")
    if report.facts:
        parts.append('<dl class="facts" id="facts">')
        for label, value in report.facts:
            parts.append(f"<div><dt>{_esc(label)}</dt>"
                         f"<dd{_value_attrs(value)}>{_esc(cell_text(value))}</dd></div>")
        parts.append("</dl>")
    for n, s in enumerate(_with_cautions(report.sections, report.extra_cautions), start=1):
        parts.append(f'<section id="{_esc(s.key)}">')
        parts.append(f'<h2><span class="n">{n}</span>{_esc(s.heading)}</h2>')
        parts.extend(_block(b) for b in s.blocks)
        parts.append("</section>")
    parts.append(f"<footer>{_esc(report.stamp)}</footer>")
    parts.append("</main></body></html>")
    return "\n".join(parts) + "\n"
