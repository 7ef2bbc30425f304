"""A small document model and its two renderings: self-contained HTML and Markdown.

The report is built once as a :class:`Document` (sections of paragraphs,
bullet lists, tables and figures) and rendered twice, so the HTML page and
its Markdown twin always say the same thing.  The HTML embeds its figures as
base64 PNG data URIs and its style sheet inline: it needs no network and no
files beside it, and has no scripts.  The Markdown refers to PNG files
written next to it.  In both, a cell with a ``link`` links to the anchor of
that id (in Markdown ``[text](#id)``), and a table row with an id carries the
anchor (in Markdown an ``<a id="…"></a>`` at the start of its first cell).
"""
from __future__ import annotations

import base64
import html
import os
import re
from dataclasses import dataclass, field


@dataclass(frozen=True)
class Cell:
    """A table cell; ``link`` is an anchor id in the same document, ``title`` a hover text."""

    text: str
    link: str | None = None
    title: str | None = None
    mark: str | None = None  # "flag" (a caveat applies) or "best" (the best value of its row)


@dataclass(frozen=True)
class Table:
    header: tuple[str, ...]
    rows: tuple[tuple[Cell | str, ...], ...]
    caption: str = ""
    row_ids: tuple[str | None, ...] = ()


@dataclass(frozen=True)
class Figure:
    name: str  # file stem for the Markdown twin
    caption: str
    png: bytes


@dataclass(frozen=True)
class Bullets:
    items: tuple[str, ...]


Block = str | Table | Figure | Bullets


@dataclass(frozen=True)
class Section:
    title: str
    id: str
    blocks: tuple[Block, ...]


@dataclass(frozen=True)
class Document:
    title: str
    meta: tuple[tuple[str, str], ...]
    notice: str
    sections: tuple[Section, ...] = field(default=())

    @property
    def figures(self) -> tuple[Figure, ...]:
        return tuple(b for s in self.sections for b in s.blocks if isinstance(b, Figure))


# --------------------------------------------------------------------- HTML
_CSS = """
body { font-family: "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; margin: 0; color: #202428;
       background: #fbfbf8; line-height: 1.45; }
main { max-width: 1100px; margin: 0 auto; padding: 1.5em 2em 4em; }
h1 { font-size: 1.7em; margin-bottom: 0.2em; }
h2 { font-size: 1.3em; border-bottom: 2px solid #c9ccc4; padding-bottom: 0.2em; margin-top: 2em; }
.meta { color: #555a60; font-size: 0.92em; }
.meta dt { font-weight: bold; float: left; clear: left; width: 11em; }
.meta dd { margin-left: 11.5em; }
.notice { border-left: 5px solid #8a8f84; background: #f0f0ea; padding: 0.6em 1em; margin: 1em 0; }
table { border-collapse: collapse; margin: 0.8em 0 0.4em; font-size: 0.9em; }
th, td { border: 1px solid #c9ccc4; padding: 0.25em 0.6em; text-align: left; vertical-align: top; }
th { background: #ecede6; }
td.num { text-align: right; white-space: nowrap; }
td.flag { background: #fbf0dc; }
td.best { font-weight: bold; }
caption { caption-side: bottom; text-align: left; color: #555a60; font-size: 0.88em; padding-top: 0.3em; }
figure { margin: 1em 0; }
figure img { max-width: 100%; border: 1px solid #dcded8; background: white; }
figcaption { color: #555a60; font-size: 0.88em; }
a { color: #20507a; }
nav ol { columns: 2; }
"""


_NUMBER = r"[−+\-]?\d+(?:\.\d+)?"
_NUMERIC = re.compile(rf"^(?:{_NUMBER}(?:\s*\({_NUMBER}\))?|—)$")


def _e(text: str) -> str:
    return html.escape(text, quote=True)


def _cell_html(c: Cell | str, tag: str = "td") -> str:
    if not isinstance(c, Cell):
        c = Cell(str(c))
    inner = _e(c.text)
    if c.link:
        inner = f'<a href="#{_e(c.link)}">{inner}</a>'
    attrs = ""
    if c.title:
        attrs += f' title="{_e(c.title)}"'
    classes = [c.mark] if c.mark else []
    if tag == "td" and _NUMERIC.match(c.text):
        classes.append("num")
    if classes:
        attrs += f' class="{" ".join(classes)}"'
    return f"<{tag}{attrs}>{inner}</{tag}>"


def _table_html(t: Table) -> str:
    out = ["<table>"]
    if t.caption:
        out.append(f"<caption>{_e(t.caption)}</caption>")
    out.append("<thead><tr>" + "".join(_cell_html(h, "th") for h in t.header) + "</tr></thead><tbody>")
    for i, row in enumerate(t.rows):
        rid = t.row_ids[i] if i < len(t.row_ids) else None
        ida = f' id="{_e(rid)}"' if rid else ""
        out.append(f"<tr{ida}>" + "".join(_cell_html(c) for c in row) + "</tr>")
    out.append("</tbody></table>")
    return "\n".join(out)


def to_html(doc: Document) -> str:
    parts = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
             '<meta name="viewport" content="width=device-width, initial-scale=1">',
             f"<title>{_e(doc.title)}</title>", f"<style>{_CSS}</style></head><body><main>",
             f"<h1>{_e(doc.title)}</h1>", '<dl class="meta">']
    for k, v in doc.meta:
        parts.append(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>")
    parts.append("</dl>")
    parts.append(f'<p class="notice">{_e(doc.notice)}</p>')
    parts.append("<nav><ol>" + "".join(f'<li><a href="#{_e(s.id)}">{_e(s.title)}</a></li>' for s in doc.sections)
                 + "</ol></nav>")
    for s in doc.sections:
        parts.append(f'<section id="{_e(s.id)}"><h2>{_e(s.title)}</h2>')
        for b in s.blocks:
            if isinstance(b, str):
                parts.append(f"<p>{_e(b)}</p>")
            elif isinstance(b, Bullets):
                parts.append("<ul>" + "".join(f"<li>{_e(i)}</li>" for i in b.items) + "</ul>")
            elif isinstance(b, Table):
                parts.append(_table_html(b))
            elif isinstance(b, Figure):
                data = base64.b64encode(b.png).decode("ascii")
                parts.append(f'<figure><img alt="{_e(b.caption)}" src="data:image/png;base64,{data}">'
                             f"<figcaption>{_e(b.caption)}</figcaption></figure>")
        parts.append("</section>")
    parts.append("</main></body></html>")
    return "\n".join(parts) + "\n"


# ----------------------------------------------------------------- Markdown
def _md_text(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def _md_link_text(text: str) -> str:
    return text.replace("[", "\\[").replace("]", "\\]")


def _md_anchor(anchor: str | None) -> str:
    return f'<a id="{html.escape(anchor, quote=True)}"></a>' if anchor else ""


def _plain(c: Cell | str) -> str:
    return c.text if isinstance(c, Cell) else str(c)


def _md_cell(c: Cell | str) -> str:
    if not isinstance(c, Cell):
        return _md_text(str(c))
    text = _md_text(c.text)
    if c.link:
        text = f"[{_md_link_text(text)}](#{c.link})"
    if c.mark == "best":
        text = f"**{text}**"
    if c.mark == "flag":
        text += " ⚑"
    return text


def to_markdown(doc: Document, figure_dir: str | None) -> str:
    """Markdown; figures are linked as ``figure_dir/<name>.png`` (omitted when ``figure_dir`` is None)."""
    out = [f"# {doc.title}", ""]
    for k, v in doc.meta:
        out.append(f"- **{k}:** {v}")
    out += ["", f"> {doc.notice}", ""]
    for s in doc.sections:
        out += [f'<a id="{s.id}"></a>', f"## {s.title}", ""]
        for b in s.blocks:
            if isinstance(b, str):
                out += [b, ""]
            elif isinstance(b, Bullets):
                out += [f"- {i}" for i in b.items] + [""]
            elif isinstance(b, Table):
                out.append("| " + " | ".join(_md_text(h) for h in b.header) + " |")
                numeric = [bool(b.rows) and all(_NUMERIC.match(_plain(r[i])) for r in b.rows if i < len(r))
                           for i in range(len(b.header))]
                out.append("|" + "|".join("---:" if n else ":---" for n in numeric) + "|")
                for i, row in enumerate(b.rows):
                    cells = [_md_cell(c) for c in row]
                    if cells:
                        cells[0] = _md_anchor(b.row_ids[i] if i < len(b.row_ids) else None) + cells[0]
                    out.append("| " + " | ".join(cells) + " |")
                if b.caption:
                    out += ["", f"*{b.caption}*"]
                out.append("")
            elif isinstance(b, Figure) and figure_dir is not None:
                out += [f"![{b.caption}]({figure_dir}/{b.name}.png)", "", f"*{b.caption}*", ""]
    return "\n".join(out).rstrip() + "\n"


def write(doc: Document, html_path: str, markdown_path: str | None = None) -> dict[str, str]:
    """Write the HTML page and (optionally) the Markdown twin with its figure files; returns the paths."""
    paths = {"html": html_path}
    with open(html_path, "w", encoding="utf-8") as fh:
        fh.write(to_html(doc))
    if markdown_path:
        stem = os.path.splitext(os.path.basename(markdown_path))[0]
        fig_rel = f"{stem}_plots"
        fig_dir = os.path.join(os.path.dirname(os.path.abspath(markdown_path)), fig_rel)
        if doc.figures:
            os.makedirs(fig_dir, exist_ok=True)
            for f in doc.figures:
                with open(os.path.join(fig_dir, f"{f.name}.png"), "wb") as fh:
                    fh.write(f.png)
            paths["figures"] = fig_dir
        with open(markdown_path, "w", encoding="utf-8") as fh:
            fh.write(to_markdown(doc, fig_rel))
        paths["markdown"] = markdown_path
    return paths
