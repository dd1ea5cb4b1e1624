"""The HTML writer: one self-contained file (styles inline, plots as embedded SVG images).

Every piece of text goes through :func:`html.escape`; plots are embedded as
``data:`` image URIs, so nothing inside them can run as script. The print style
sheet gives a page per section on the chosen paper size.
"""

from __future__ import annotations

import base64
from html import escape

from molid.reports.content import Bullets, Columns, Fields, Highlight, Plot, Signature, Table

__all__ = ["render_html"]

_CSS = """
@page { size: %(paper)s; margin: 14mm 15mm 15mm 15mm; }
body { font-family: "DejaVu Sans", Verdana, Arial, sans-serif; font-size: 9pt; color: #111;
       margin: 0; background: #f4f4f4; }
main { max-width: 190mm; margin: 0 auto; }
section.page { background: #fff; padding: 10mm 8mm; margin: 8mm 0; box-shadow: 0 0 3px #bbb; }
.running { color: #666; font-size: 7.5pt; border-bottom: 1px solid #ccc; display: flex;
           justify-content: space-between; margin-bottom: 3mm; }
h1 { font-size: 15pt; margin: 0 0 1mm 0; }
h2 { font-size: 9.5pt; margin: 3mm 0 1mm 0; }
.subtitle { color: #555; font-size: 8pt; margin: 0 0 2mm 0; }
dl.fields { display: grid; grid-template-columns: 22mm 1fr 22mm 1fr; gap: 0.6mm 2mm;
            margin: 0 0 2mm 0; }
dl.fields dt { font-weight: bold; } dl.fields dd { margin: 0; }
.highlight { background: #e8f0fa; border: 1px solid #4a77b4; padding: 2mm 3mm; margin: 2mm 0; }
.highlight p { margin: 0.5mm 0; } .highlight p:first-child { font-weight: bold; font-size: 10.5pt; }
table { border-collapse: collapse; width: 100%%; font-size: 8pt; margin: 0 0 0.5mm 0; }
th { background: #e6e6e6; text-align: left; } th, td { padding: 0.6mm 1.2mm;
     border-bottom: 1px solid #ccc; vertical-align: top; }
td.R, th.R { text-align: right; font-variant-numeric: tabular-nums; }
.tablenote { color: #555; font-style: italic; font-size: 7pt; margin: 0 0 2mm 0; }
.consistent { color: #1b7837; font-weight: bold; } .marginal { color: #c46200; font-weight: bold; }
.excluded { color: #b2182b; font-weight: bold; }
.condenses, .not-a-liquid, .dissolves { color: #6f6f6f; font-weight: bold; }
.error { color: #b2182b; font-weight: bold; } .muted { color: #666; }
figure { margin: 2mm 0; } figure img { width: 100%%; height: auto; }
figcaption { font-size: 7pt; color: #555; }
.box { padding: 1.5mm 3mm; margin: 2mm 0; border-left: 3px solid #bbb; background: #f5f5f5; }
.box.warning { background: #fff4d6; border-color: #d6a000; }
.box.error { background: #fde2e2; border-color: #b2182b; }
.box.safety { background: #ffece0; border-color: #c85000; }
.box h2 { margin-top: 0.5mm; } .box ul { margin: 0.5mm 0; padding-left: 5mm; }
.box .footnote { font-weight: bold; margin: 1mm 0 0 0; }
.box .lead { font-weight: bold; margin: 0.5mm 0; }
.signature { display: grid; grid-template-columns: 1fr 1fr; gap: 8mm; margin-top: 6mm; }
.signature div { border-bottom: 1px solid #000; padding-top: 6mm; }
.signature span { font-size: 7pt; color: #555; }
.columns { display: grid; grid-template-columns: 49%% 49%%; gap: 2%%; align-items: start; }
td .bar { float: left; height: 2.4mm; margin-top: 0.5mm; background: #4a77b4; }
footer { color: #666; font-size: 7.5pt; margin-top: 4mm; }
@media print {
  body { background: #fff; } main { max-width: none; }
  section.page { box-shadow: none; margin: 0; padding: 0; break-after: page; }
  section.page:last-of-type { break-after: auto; }
  table, figure, .box, .highlight, .signature { break-inside: avoid; }
}
"""


def render_html(report, paper="a4") -> bytes:
    """Write the report as one self-contained HTML document (UTF-8 bytes).

    Parameters
    ----------
    report : Report
        The page model (see :mod:`molid.reports.content`).
    paper : {'a4', 'letter'}
        Paper size of the print style sheet.

    Returns
    -------
    bytes
        The HTML file.
    """
    from molid.reports.figures import figure_svg

    size = {"a4": "A4", "letter": "letter"}[paper]
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{escape(report.title)} · {escape(report.source)}</title>",
        f"<style>{_CSS % {'paper': size}}</style></head><body><main>",
    ]
    footer = f"molid {escape(report.version)}" + (
        f" · generated {escape(report.generated)}" if report.generated else "")
    for number, page in enumerate(report.pages, start=1):
        parts.append(f'<section class="page" id="page-{number}">')
        parts.append(f'<div class="running"><span>{escape(report.title)}</span>'
                     f"<span>{escape(report.source)}</span></div>")
        parts.append(f"<h1>{escape(page.title)}</h1>")
        if page.subtitle:
            parts.append(f'<p class="subtitle">{escape(page.subtitle)}</p>')
        for block in page.blocks:
            parts.append(_block(block, figure_svg))
        parts.append(f"<footer>{footer} · section {number} of {len(report.pages)}</footer>")
        parts.append("</section>")
    parts.append("</main></body></html>\n")
    return "\n".join(parts).encode("utf-8")


def _block(block, figure_svg) -> str:
    if isinstance(block, Columns):
        return (f'<div class="columns"><div>{_block(block.left, figure_svg)}</div>'
                f"<div>{_block(block.right, figure_svg)}</div></div>")
    if isinstance(block, Fields):
        cells = "".join(f"<dt>{escape(str(label))}</dt><dd>{escape(str(value))}</dd>"
                        for label, value in block.items)
        return f'<dl class="fields">{cells}</dl>'
    if isinstance(block, Highlight):
        return '<div class="highlight">' + "".join(
            f"<p>{escape(line)}</p>" for line in block.lines) + "</div>"
    if isinstance(block, Table):
        return _table(block)
    if isinstance(block, Plot):
        figure = block.make()
        data = base64.b64encode(figure_svg(figure)).decode("ascii")
        return (f'<figure><img alt="{escape(block.alt)}" src="data:image/svg+xml;base64,{data}">'
                f"<figcaption>{escape(block.alt)}</figcaption></figure>")
    if isinstance(block, Bullets):
        if not block.items and not block.footnote:
            return ""
        items = "".join(f"<li>{escape(item)}</li>" for item in block.items)
        footnote = (f'<p class="footnote">{escape(block.footnote)}</p>' if block.footnote else "")
        lead = f'<p class="lead">{escape(block.lead)}</p>' if block.lead else ""
        return (f'<div class="box {escape(block.kind)}"><h2>{escape(block.title)}</h2>'
                f"{lead}<ul>{items}</ul>{footnote}</div>")
    if isinstance(block, Signature):
        lines = "".join(f"<div><span>{escape(role)} (name, signature, date)</span></div>"
                        for role in block.roles)
        return f'<div class="signature">{lines}</div>'
    return ""


def _table(block) -> str:
    align = block.align or "L" * len(block.columns)
    head = "".join(f'<th class="{a}">{escape(str(name))}</th>'
                   for name, a in zip(block.columns, align, strict=False))
    body = []
    for index, cells in enumerate(block.rows):
        styles = block.styles[index] if block.styles else None
        row = []
        for column, cell in enumerate(cells):
            classes = [align[column] if column < len(align) else "L"]
            if styles and styles[column]:
                classes.append(styles[column])
            bar = ""
            if column == block.bars:
                try:
                    share = max(0.0, min(float(cell), 100.0))
                except ValueError:
                    share = None
                if share is not None:
                    bar = f'<span class="bar" style="width: {share * 0.75:.1f}%"></span>'
            row.append(f'<td class="{" ".join(classes)}">{bar}{escape(str(cell))}</td>')
        body.append("<tr>" + "".join(row) + "</tr>")
    note = f'<p class="tablenote">{escape(block.note)}</p>' if block.note else ""
    return (f"<h2>{escape(block.title)}</h2><table><thead><tr>{head}</tr></thead>"
            f"<tbody>{''.join(body)}</tbody></table>{note}")
