"""Building blocks of heatloom's HTML reports: one self-contained page, tables, inline SVG figures.

The study report (:mod:`heatloom.io.report`) and the site report (:mod:`heatloom.io.site_report`) are
both made of these pieces:

* :func:`build_page` puts sections in order under a header, a table of contents and a footer with the
  safety note, and gives a :class:`RenderedReport`; the style sheet sits in the page, and there is no
  script and no external file, font or style sheet;
* :class:`Page` collects the figures of a page while its sections are built (each drawn with
  :func:`figure_svg`, numbered, or a box saying why it is missing) and what could not be computed;
* :func:`frame_table` and :func:`long_table` write tables with the unit of every column or row, numbers
  shown with the digits of :func:`heatloom.io.formats.number_formats` (the workbook's), each number cell
  carrying its full value in a ``data-value`` attribute;
* :func:`paragraph`, :func:`notes_list`, :func:`missing_box`, and the sections every report has:
  :func:`assumptions_section`, :func:`safety_section`, :func:`methods_table`, :func:`about_table`.

Everything is well-formed XML (void elements closed, all text escaped with :func:`escape`), so a page
and every figure in it parse with an XML parser as well as in a browser.
"""

from __future__ import annotations

import html
import io as _io
import math
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from .. import defaults
from .formats import column_units, format_number, is_number

__all__ = [
    "escape",
    "figure_svg",
    "frame_table",
    "long_table",
    "paragraph",
    "notes_list",
    "missing_box",
    "Page",
    "assumptions_section",
    "safety_section",
    "methods_table",
    "about_table",
    "RenderedReport",
    "build_page",
]


def escape(text) -> str:
    """Any value as text safe inside an element or a quoted attribute.

    Examples
    --------
    >>> escape('a < b & "c"')
    'a &lt; b &amp; &quot;c&quot;'
    """
    return html.escape(str(text), quote=True)


# --------------------------------------------------------------------------------------------------
# figures


def figure_svg(fig, key: str, label: str) -> str:
    """A matplotlib figure as an inline SVG element (text as paths, ids made unique), then let go of.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        Closed afterwards when pyplot holds it (:func:`heatloom.io.figures.close_figure`).
    key : str
        Prefix of every id inside the SVG (letters, digits and hyphens), unique within the page.
    label : str
        Accessible name of the figure.

    Returns
    -------
    str
        ``<svg ...>...</svg>``, well-formed XML, with no XML declaration, doctype or metadata.

    Examples
    --------
    >>> from heatloom.io.figures import new_figure
    >>> fig = new_figure(); _ = fig.subplots().plot([0, 1], [0, 1])
    >>> svg = figure_svg(fig, "f1", "a line")
    >>> svg.startswith("<svg") and 'id="f1-' in svg and "<metadata" not in svg
    True
    """
    import matplotlib

    from .figures import close_figure

    if not re.fullmatch(r"[A-Za-z][A-Za-z0-9-]*", key):
        raise ValueError(f"figure key must be letters, digits and hyphens, got {key!r}")
    buf = _io.StringIO()
    try:
        with matplotlib.rc_context({"svg.fonttype": "path", "svg.hashsalt": f"heatloom-{key}"}):
            fig.savefig(buf, format="svg", bbox_inches="tight", metadata={"Date": None})
    finally:
        close_figure(fig)
    text = buf.getvalue()
    text = text[text.index("<svg"):]
    text = re.sub(r"\s*<metadata>.*?</metadata>", "", text, flags=re.S)
    seen: dict[str, int] = {}

    def unique(m) -> str:
        # figure artists share semantic ids (every temperature label of a stream); an HTML page needs each once
        n = seen[m.group(1)] = seen.get(m.group(1), 0) + 1
        return f'id="{key}-{m.group(1)}"' if n == 1 else f'id="{key}-{m.group(1)}-{n}"'

    text = re.sub(r'\bid="([^"]+)"', unique, text)
    text = re.sub(r'\b((?:xlink:)?href)="#([^"]+)"', lambda m: f'{m.group(1)}="#{key}-{m.group(2)}"', text)
    text = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{key}-{m.group(1)})", text)
    return text.replace("<svg ", f'<svg class="chart" role="img" aria-label="{escape(label)}" ', 1).strip()


# --------------------------------------------------------------------------------------------------
# tables and text


def _cell(v, unit: str | None, text_class: str = "") -> str:
    if is_number(v):
        x = v.item() if hasattr(v, "item") else v
        if isinstance(x, float) and not math.isfinite(x):
            return '<td class="num na">–</td>'
        return f'<td class="num" data-value="{escape(repr(x))}">{escape(format_number(x, unit))}</td>'
    if v is None:
        return '<td class="na">–</td>'
    return f'<td class="{text_class}">{escape(v)}</td>' if text_class else f"<td>{escape(v)}</td>"


def frame_table(frame, caption: str, table_id: str | None = None, *, max_rows: int | None = None) -> str:
    """A pandas frame as an HTML table, numbers formatted by the unit in their column header.

    Parameters
    ----------
    frame : pandas.DataFrame
        Units in brackets at the end of the headers (``duty [kW]``).
    caption : str
    table_id : str, optional
        ``id`` of the table.
    max_rows : int, optional
        Rows shown at most; a line under the table says how many more are in the workbook.

    Examples
    --------
    >>> import pandas as pd
    >>> frame_table(pd.DataFrame({"duty [kW]": [1234.56]}), "Duties")
    '<div class="table-wrap"><table><caption>Duties</caption><thead><tr><th scope="col">duty [kW]</th></tr></thead><tbody><tr><td class="num" data-value="1234.56">1,234.6</td></tr></tbody></table></div>'
    """
    units = column_units(frame)
    ident = f' id="{escape(table_id)}"' if table_id else ""
    head = "".join(f'<th scope="col">{escape(c)}</th>' for c in frame.columns)
    rows = []
    data = list(frame.itertuples(index=False, name=None))
    shown = data if max_rows is None or len(data) <= max_rows else data[:max_rows]
    for values in shown:
        rows.append("<tr>" + "".join(_cell(v, u) for v, u in zip(values, units)) + "</tr>")
    more = ""
    if len(shown) < len(data):
        more = f'<p class="more">{len(data) - len(shown)} more rows in the workbook.</p>'
    return (f'<div class="table-wrap"><table{ident}><caption>{escape(caption)}</caption><thead><tr>{head}</tr>'
            f"</thead><tbody>{''.join(rows)}</tbody></table></div>{more}")


def long_table(rows: Sequence[tuple], caption: str, table_id: str | None = None) -> str:
    """(quantity, value, unit) rows as a three-column table, each value formatted by its unit.

    Examples
    --------
    >>> table = long_table([("hot utility", 1250.0, "kW"), ("units", 3, "-")], "Targets")
    >>> re.findall(r">([^<>]+)</td>", table)
    ['1,250.0', 'kW', '3', '-']
    """
    ident = f' id="{escape(table_id)}"' if table_id else ""
    body = "".join(f"<tr><th scope=\"row\">{escape(q)}</th>{_cell(v, u, 'val')}<td>{escape(u)}</td></tr>"
                   for q, v, u in rows)
    return (f'<div class="table-wrap"><table class="facts"{ident}><caption>{escape(caption)}</caption>'
            '<thead><tr><th scope="col">quantity</th><th scope="col">value</th><th scope="col">unit</th></tr>'
            f"</thead><tbody>{body}</tbody></table></div>")


def missing_box(what: str, reason: str) -> str:
    """The box that stands where a result or a figure could not be given, saying why."""
    return f'<div class="not-computed"><strong>Not computed: {escape(what)}.</strong> {escape(reason)}</div>'


def notes_list(items: Sequence[str], title: str = "Notes") -> str:
    """A titled bullet list of notes; nothing when there are none."""
    if not items:
        return ""
    return f"<h3>{escape(title)}</h3><ul class=\"notes\">" + "".join(f"<li>{escape(n)}</li>" for n in items) + "</ul>"


def paragraph(text: str) -> str:
    """Plain text as one paragraph.

    Examples
    --------
    >>> paragraph("ΔTmin < 10 K")
    '<p>ΔTmin &lt; 10 K</p>'
    """
    return f"<p>{escape(text)}</p>"


# --------------------------------------------------------------------------------------------------
# the page


class Page:
    """Collects the figures of a page and what could not be computed, while its sections are built.

    Attributes
    ----------
    figures : int
        Figures drawn so far (numbered in order).
    sections : list of (str, str, str)
        (id, title, body) of each section built (filled by :func:`build_page`).
    skipped : list of (str, str)
        (where, why) of every result or figure left out.
    """

    def __init__(self) -> None:
        self.figures = 0
        self.sections: list[tuple[str, str, str]] = []    # (id, title, body)
        self.skipped: list[tuple[str, str]] = []

    def figure(self, key: str, make: Callable[[], object], caption: str, *, wide: bool = False) -> str:
        """A numbered figure drawn by ``make()``, or a box saying why drawing it failed.

        Parameters
        ----------
        key : str
            ``id`` of the figure, prefix of the ids inside its SVG (see :func:`figure_svg`).
        make : callable
            Returns the matplotlib figure.
        caption : str
        wide : bool
            Keep the figure's own width (up to the page's) instead of the standard one: grid diagrams grow
            with the number of units.
        """
        try:
            svg = figure_svg(make(), key, caption)
            if wide:   # grid diagrams grow with the number of units: keep their own size, up to the page width
                svg = svg.replace('class="chart"', 'class="chart wide"', 1)
        except Exception as e:  # noqa: BLE001 - a figure that fails must not cost the whole report
            self.skipped.append((f"figure: {caption}", f"{type(e).__name__}: {e}"))
            return missing_box(f"figure “{caption}”", f"drawing it failed ({type(e).__name__}: {e})")
        self.figures += 1
        return (f'<figure id="{escape(key)}" class="figure">{svg}<figcaption><strong>Figure {self.figures}.</strong> '
                f"{escape(caption)}</figcaption></figure>")

    def missing(self, section: str, what: str, reason: str) -> str:
        """The box of a result that was not computed, recorded as left out of ``section``."""
        self.skipped.append((section, f"{what}: {reason}"))
        return missing_box(what, reason)


def assumptions_section(study, page: Page) -> str:
    """The assumptions table and notes of any study with ``assumption_rows()`` and ``notes`` (process or site)."""
    body = "".join(f"<tr><th scope=\"row\">{escape(a)}</th><td>{escape(v)}</td><td>{escape(b)}</td></tr>"
                   for a, v, b in study.assumption_rows())
    table = ('<div class="table-wrap"><table id="assumptions-table"><caption>Assumptions and defaults in force'
             '</caption><thead><tr><th scope="col">assumption</th><th scope="col">value</th><th scope="col">basis'
             f"</th></tr></thead><tbody>{body}</tbody></table></div>")
    return table + notes_list(study.notes, "Notes on the inputs")


def safety_section(study, page: Page) -> str:
    """The cautions of any study with ``cautions()``: the first one boxed, the others listed under it."""
    items = study.cautions()
    return (f'<div class="caution"><p><strong>{escape(items[0])}</strong></p></div>'
            + "<ul class=\"cautions\">" + "".join(f"<li>{escape(c)}</li>" for c in items[1:]) + "</ul>")


def methods_table(used: Sequence[tuple[str, str, str]], caption: str) -> str:
    """The (method, used for, reference) rows of a run as the report's methods table."""
    body = "".join(f"<tr><th scope=\"row\">{escape(m)}</th><td>{escape(w)}</td><td>{escape(r)}</td></tr>"
                   for m, w, r in used)
    return ("<p>Only the methods this run used are listed.</p>"
            f'<div class="table-wrap"><table id="methods-table"><caption>{escape(caption)}</caption><thead><tr>'
            '<th scope="col">method</th><th scope="col">used for</th><th scope="col">reference</th></tr></thead>'
            f"<tbody>{body}</tbody></table></div>")


def about_table(study, command: str = "") -> str:
    """The "about this report" table of any study with ``version``, ``created`` and ``sources``.

    Rows: the heatloom version and the date of the run, every input file by role, the workbook beside the
    page and, when there is one, the command line that made the report.
    """
    rows = [("made by", f"heatloom {study.version}"), ("made on", study.created)]
    rows += [(f"input: {k}", v) for k, v in study.sources.items()]
    rows.append(("workbook", "study.xlsx beside this page: every table, one sheet per result"))
    if command:
        rows.append(("command", command))
    body = "".join(f"<tr><th scope=\"row\">{escape(a)}</th><td>{escape(b)}</td></tr>" for a, b in rows)
    return f'<div class="table-wrap"><table id="about-table"><tbody>{body}</tbody></table></div>'


_CSS = """
:root { color-scheme: light; }
body { margin: 0; background: #ffffff; color: #1d1d1d; line-height: 1.45; font-size: 15px;
  font-family: "DejaVu Sans", "Segoe UI", "Helvetica Neue", Arial, sans-serif; }
header, nav, main, footer { max-width: 1120px; margin: 0 auto; padding: 0 28px; }
header { padding-top: 26px; padding-bottom: 12px; border-bottom: 3px solid #8c2d19; }
h1 { font-size: 1.75em; margin: 0 0 4px 0; }
.lede { color: #444444; margin: 0; }
nav ol { columns: 2; margin: 10px 0 0 0; padding-left: 22px; }
nav a, main a { color: #2f4b7c; }
h2 { font-size: 1.3em; margin: 2.1em 0 0.6em 0; padding-bottom: 3px; border-bottom: 1px solid #b5b5b5; }
h3 { font-size: 1.05em; margin: 1.4em 0 0.4em 0; }
.table-wrap { overflow-x: auto; }
table { border-collapse: collapse; margin: 0.5em 0 1.1em 0; font-size: 0.86em; }
caption { text-align: left; font-weight: bold; padding: 4px 0 5px 0; }
th, td { padding: 3px 9px; border-bottom: 1px solid #dddddd; vertical-align: top; text-align: left; }
thead th { background: #f1f1f1; border-bottom: 2px solid #555555; }
tbody th { font-weight: normal; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
td.na { color: #777777; text-align: center; }
table.facts td.num { min-width: 7em; }
.not-computed { border-left: 5px solid #7a7a7a; background: #f3f3f3; padding: 7px 12px; margin: 0.8em 0; }
.caution { border-left: 5px solid #8c2d19; background: #f8efec; padding: 2px 14px; margin: 0.8em 0; }
figure { margin: 1.2em 0 1.8em 0; }
figure svg.chart { display: block; width: 100%; max-width: 820px; height: auto; }
figure svg.chart.wide { width: auto; max-width: 100%; }
#assumptions-table tbody th { min-width: 10em; }
td.val { text-align: right; }
p.basis { font-size: 0.9em; color: #333333; }
figcaption { font-size: 0.88em; color: #3a3a3a; margin-top: 4px; }
.more { font-size: 0.85em; color: #555555; margin-top: -0.6em; }
footer { margin-top: 3em; padding-top: 10px; padding-bottom: 30px; border-top: 1px solid #b5b5b5;
  font-size: 0.85em; color: #555555; }
@media print { nav { display: none; } figure, table { break-inside: avoid; } body { font-size: 11pt; } }
"""


@dataclass(frozen=True)
class RenderedReport:
    """The HTML of a report and what it holds.

    Attributes
    ----------
    html : str
    sections : tuple of (str, str)
        (id, title) of each section, in order.
    figures : int
        Figures in the page (each an inline ``<svg>``).
    not_computed : tuple of (str, str)
        (where, why) of every result or figure the report had to leave out.
    """

    html: str
    sections: tuple[tuple[str, str], ...]
    figures: int
    not_computed: tuple[tuple[str, str], ...]


def build_page(study, plan, page: Page, *, lede: str, workbook: str = "study.xlsx") -> RenderedReport:
    """Build every section of a plan into one page (shared by the study and the site reports).

    Parameters
    ----------
    study : object
        With ``title``, ``version``, ``created`` and ``safety_note``; passed to each section builder.
    plan : sequence of (str, str, callable)
        (id, title, build) of each section, in order; ``build(study, page)`` returns the section's HTML.
    page : Page
    lede : str
        What the page is ("Heat-integration study", "Site study").
    workbook : str
        Name of the workbook written beside the page.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> run = SimpleNamespace(title="Demo", version="0", created="today", safety_note="Check it.")
    >>> r = build_page(run, [("one", "One", lambda s, p: paragraph("first"))], Page(), lede="Demo page")
    >>> r.sections, r.figures, '<section id="one"><h2>1. One</h2><p>first</p></section>' in r.html
    ((('one', 'One'),), 0, True)
    """
    body = []
    for number, (key, title, build) in enumerate(plan, 1):
        body.append(f'<section id="{key}"><h2>{number}. {escape(title)}</h2>{build(study, page)}</section>')
        page.sections.append((key, title, ""))
    sections = tuple((k, t) for k, t, _ in page.sections)
    nav = "".join(f'<li><a href="#{k}">{escape(t)}</a></li>' for k, t in sections)
    skipped = ""
    if page.skipped:
        skipped = ('<p class="lede">Not computed in this run: ' + "; ".join(escape(w) for w, _ in page.skipped)
                   + " (each section says why).</p>")
    doc = (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8" />\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1" />\n'
        f'<meta name="generator" content="heatloom {escape(study.version)}" />\n'
        f'<meta name="heatloom-figures" content="{page.figures}" />\n'
        f'<meta name="heatloom-sections" content="{len(sections)}" />\n'
        f"<title>{escape(study.title)}</title>\n<style>{_CSS}</style>\n</head>\n<body>\n"
        f"<header><h1>{escape(study.title)}</h1>"
        f'<p class="lede">{escape(lede)} made with heatloom {escape(study.version)} on {escape(study.created)}. '
        f'This report has <span id="section-count">{len(sections)}</span> sections and '
        f'<span id="figure-count">{page.figures}</span> figures; every table is also in the workbook '
        f"{escape(workbook)}.</p>{skipped}</header>\n"
        f'<nav aria-label="Contents"><ol>{nav}</ol></nav>\n<main>\n' + "\n".join(body) + "\n</main>\n"
        f"<footer>{escape(study.safety_note or defaults.SAFETY_TEXT)}</footer>\n</body>\n</html>\n")
    return RenderedReport(doc, sections, page.figures, tuple(page.skipped))
