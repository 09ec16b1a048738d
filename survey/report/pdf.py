"""The site report laid out as a PDF with fpdf2.

Text is set in the PDF core fonts (Helvetica), so it is real text: searchable,
copyable, and small.  Core fonts carry Latin-1 only, so a few typographic
characters are written in plain equivalents, accented letters outside Latin-1
as their base letter, and anything else (another script, a control character)
as "?", with a line under the header saying how many (see ``_latin1``).  Figures are
the engine's Pillow images at print resolution (about 300 dpi at their printed
width), embedded as indexed (256-colour) PNG: exact for drawings with at most
256 colours, an adaptive palette without dithering for the density shading, so
a five-page report stays well under 1 MB to e-mail.
"""

from __future__ import annotations

import datetime as _dt
import unicodedata

from fpdf import FPDF
from fpdf.enums import XPos, YPos
from fpdf.fonts import FontFace

from ..figures import indexed_for_print

MARGIN_MM = 15.0
BODY_PT = 9.5
SMALL_PT = 8.0
LINE_MM = 4.6

_PLAIN = {"–": "-", "—": "-", "…": "...", "≈": "~", "≤": "<=", "≥": ">=", "→": "->", "’": "'", "‘": "'",
          "“": '"', "”": '"', "−": "-",
          "\u2009": " ", "\u202f": " "}


REPLACEMENT = "?"


def _settable(c: str) -> str | None:
    """One character as the core fonts can set it: itself, a plain equivalent,
    the base letter of an accented letter outside Latin-1, "" for a combining
    mark (its letter carries on), or None when there is nothing to set."""
    c = _PLAIN.get(c, c)
    if len(c) != 1:
        return c
    o = ord(c)
    if c in "\n":
        return c
    if c == "\t":
        return " "
    if o < 0x20 or 0x7F <= o <= 0x9F:  # control characters: nothing to print
        return None
    if o <= 0xFF:
        return c
    if unicodedata.combining(c):
        return ""
    base = unicodedata.normalize("NFKD", c).encode("latin-1", "ignore").decode("latin-1")
    return base or None


def _latin1(text) -> str:
    """Text the core fonts can set (``_settable``), REPLACEMENT for the rest.  The
    HTML and JSON keep the text as typed; the PDF says when it replaced any
    (``unprintable_count``)."""
    return "".join(REPLACEMENT if (t := _settable(c)) is None else t for c in str(text))


def unprintable_count(value) -> int:
    """How many different characters in the strings of ``value`` (the report
    model) the PDF prints as REPLACEMENT: a user's script the core fonts do not
    carry."""
    found: set[str] = set()
    todo = [value]
    while todo:
        v = todo.pop()
        if isinstance(v, str):
            found.update(c for c in set(v) if _settable(c) is None)
        elif isinstance(v, dict):
            todo.extend(v.values())
        elif isinstance(v, (list, tuple)):
            todo.extend(v)
    return len(found)


class _ReportPDF(FPDF):
    def __init__(self, paper: str, footer_text: str):
        super().__init__(orientation="P", unit="mm", format="A4" if paper == "a4" else "Letter")
        self.footer_text = footer_text
        self.set_margins(MARGIN_MM, MARGIN_MM, MARGIN_MM)
        self.set_auto_page_break(True, margin=MARGIN_MM + 4)
        self.alias_nb_pages()

    def footer(self):
        self.set_y(-MARGIN_MM)
        self.set_font("Helvetica", "", SMALL_PT)
        self.set_text_color(85)
        self.cell(self.epw * 0.8, 5, _latin1(self.footer_text))
        self.cell(self.epw * 0.2, 5, f"page {self.page_no()} of {{nb}}", align="R")
        self.set_text_color(0)

    # -- building blocks ---------------------------------------------------
    def heading(self, text: str, keep_mm: float = 30.0):
        if self.get_y() + keep_mm > self.page_break_trigger:
            self.add_page()
        self.ln(3)
        self.set_font("Helvetica", "B", 12)
        self.cell(0, 7, _latin1(text), new_x=XPos.LMARGIN, new_y=YPos.NEXT)
        y = self.get_y()
        self.set_line_width(0.5)
        self.line(self.l_margin, y, self.l_margin + self.epw, y)
        self.set_line_width(0.2)
        self.ln(1.5)
        self.set_font("Helvetica", "", BODY_PT)

    def para(self, text: str, size: float = BODY_PT, style: str = ""):
        self.set_font("Helvetica", style, size)
        self.multi_cell(0, LINE_MM * size / BODY_PT, _latin1(text), new_x=XPos.LMARGIN, new_y=YPos.NEXT)
        self.set_font("Helvetica", "", BODY_PT)

    def bullets(self, items, size: float = BODY_PT):
        self.set_font("Helvetica", "", size)
        h = LINE_MM * size / BODY_PT
        for item in items:
            x = self.l_margin
            self.set_x(x)
            self.cell(5, h, "-")
            self.multi_cell(self.epw - 5, h, _latin1(item), new_x=XPos.LMARGIN, new_y=YPos.NEXT)
        self.set_font("Helvetica", "", BODY_PT)

    def grid(self, head, rows, widths, align=None, size: float = BODY_PT, key_column=False):
        """A table; ``head`` None for a key/value table (first column bold)."""
        self.set_font("Helvetica", "", size)
        align = align or ("LEFT",) * len(widths)
        with self.table(col_widths=widths, text_align=align, line_height=LINE_MM * size / BODY_PT,
                        first_row_as_headings=head is not None, borders_layout="HORIZONTAL_LINES",
                        headings_style=_heading_style(), padding=(0.8, 1.2), width=self.epw) as table:
            if head is not None:
                row = table.row()
                for h in head:
                    row.cell(_latin1(h))
            for r in rows:
                row = table.row()
                for i, c in enumerate(r):
                    row.cell(_latin1(c), style=_BOLD if key_column and i == 0 else None)
        self.set_font("Helvetica", "", BODY_PT)

    def figure_height(self, image, width_mm: float) -> float:
        """Height on the page of a figure set ``width_mm`` wide, with its caption."""
        return width_mm * image.height / image.width + 3 * LINE_MM + 2

    def figure(self, image, width_mm: float, caption: str):
        h = width_mm * image.height / image.width
        cap_h = 3 * LINE_MM
        if self.get_y() + h + cap_h > self.page_break_trigger:
            self.add_page()
        x = self.l_margin + (self.epw - width_mm) / 2
        self.image(indexed_for_print(image), x=x, y=self.get_y(), w=width_mm, h=h)
        self.set_y(self.get_y() + h + 1.5)
        self.set_text_color(70)
        self.para(caption, SMALL_PT)
        self.set_text_color(0)
        self.ln(2)


def _heading_style():
    return FontFace(emphasis="BOLD", fill_color=(235, 235, 235))


_BOLD = FontFace(emphasis="BOLD")


def render_pdf(model: dict, figures: dict, paper: str, captions: dict) -> bytes:
    """The report as PDF bytes, laid out for ``paper`` (a4 | letter)."""
    r = model["report"]
    name = model["header"][0][1]
    pdf = _ReportPDF(paper, f"leosite site report {r['id']} - {name}")
    pdf.set_title(_latin1(f"{model['title']}: {name}"))
    pdf.set_subject(_latin1(f"Verdict {model['verdict']}"))
    pdf.set_creator(_latin1(f"leosite {r['leosite_version']}"))
    # The report's own time, not the clock: the same run and time give the same bytes.
    pdf.set_creation_date(_dt.datetime.strptime(r["generated"], "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=_dt.timezone.utc))
    surveyor = dict(model["header"]).get("Surveyed by", "")
    if surveyor and surveyor != "-":
        pdf.set_author(_latin1(surveyor))
    pdf.add_page()

    # Title block
    pdf.set_font("Helvetica", "B", 16)
    pdf.cell(pdf.epw * 0.65, 8, _latin1(model["title"]))
    pdf.set_font("Helvetica", "", SMALL_PT + 1)
    pdf.cell(pdf.epw * 0.35, 8, _latin1(f"Report {r['id']}"), align="R", new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    pdf.set_font("Helvetica", "B", 13)
    pdf.multi_cell(0, 6.5, _latin1(name), new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    pdf.ln(1)
    pdf.grid(None, model["header"][1:], (32, pdf.epw - 32), key_column=True)
    unprintable = unprintable_count(model)
    if unprintable:
        many = unprintable > 1
        pdf.para(f"{unprintable:,} different character{'s' if many else ''} typed for this site "
                 f"{'are' if many else 'is'} not in this PDF's font and {'are' if many else 'is'} printed as "
                 f"{REPLACEMENT}; the HTML and JSON reports keep the text as typed.", size=SMALL_PT, style="I")

    # Verdict box: a heavy frame and the word itself, so it reads in black and white.
    pdf.ln(3)
    y0 = pdf.get_y()
    pdf.set_x(pdf.l_margin + 4)
    pdf.set_font("Helvetica", "B", 15)
    pdf.cell(0, 9, _latin1(f"VERDICT: {model['verdict'].upper()}"), new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    pdf.set_x(pdf.l_margin + 4)
    pdf.set_font("Helvetica", "", BODY_PT)
    pdf.multi_cell(pdf.epw - 8, LINE_MM, _latin1(model["verdict_reason"]), new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    y1 = pdf.get_y() + 2
    pdf.set_line_width(0.9)
    pdf.rect(pdf.l_margin, y0, pdf.epw, y1 - y0)
    pdf.set_line_width(0.2)
    pdf.set_y(y1 + 2)

    pdf.heading("Figures")
    pdf.grid(("Figure", "Value", "Meaning"), model["figures"], (38, 26, pdf.epw - 64),
             align=("LEFT", "RIGHT", "LEFT"))
    pdf.heading("What was assessed")
    pdf.grid(None, model["setup"], (38, pdf.epw - 38), key_column=True)
    if model["notes"]:
        pdf.heading("Surveyor's notes", keep_mm=15)
        pdf.para(model["notes"])
    if model["warnings"]:
        pdf.heading("Warnings", keep_mm=15)
        pdf.bullets(model["warnings"], SMALL_PT + 0.5)

    pdf.add_page()
    pdf.heading("Sky view")
    pdf.figure(figures["sky"], min(112.0, pdf.epw), captions["sky"])
    if "photo" in figures and model.get("photo"):  # the customer's own sky, next to the sky plot
        pdf.para(model["photo"]["text"])
        pdf.figure(figures["photo"], pdf.epw, captions["photo"])
    pdf.figure(figures["panorama"], pdf.epw, captions["panorama"])

    pdf.heading("Obstructions, costliest first")
    if model["sectors"]:
        pdf.grid(("Azimuths (true)", "Peak", "Labels", "Share of blocked", "Blocked if cleared"),
                 [(x["span"], x["peak"], x["labels"], x["share"], x["if_cleared"]) for x in model["sectors"]],
                 (30, 16, pdf.epw - 30 - 16 - 30 - 32, 30, 32), align=("LEFT", "RIGHT", "LEFT", "RIGHT", "RIGHT"))
    else:
        pdf.para("No obstruction rises above the minimum elevation.")
    if model["recommendations"]:
        pdf.ln(2)
        if pdf.get_y() + 6 + 10 * len(model["recommendations"]) > pdf.page_break_trigger:
            pdf.add_page()  # keep the advice under its lead-in line
        pdf.para("What would help (each figure re-assessed with that sector cleared):", style="B")
        pdf.bullets([x["text"] for x in model["recommendations"]])

    sp = model["spots"]
    if sp:
        plan_w = min(112.0, pdf.epw)
        pdf.heading("Mounting spots", keep_mm=pdf.figure_height(figures["plan"], plan_w) + 25)
        pdf.para(sp["advice"], style="B")
        pdf.ln(1)
        pdf.figure(figures["plan"], plan_w, captions["plan"])
        pdf.para(f"Best position of each candidate ({sp['count']:,} ranked):", style="B")
        pdf.grid(("Spot", "Kind", "Position (m)", "Height", "Blocked", "Interruption"),
                 [(x["spot"], x["kind"], x["position"], x["height"], x["blocked"], x["interruption"])
                  for x in sp["rows"]], (pdf.epw - 126, 16, 34, 20, 26, 30),
                 align=("LEFT", "LEFT", "LEFT", "RIGHT", "RIGHT", "RIGHT"), size=SMALL_PT + 0.5)
        extra = sp["poles"] + ([f"The best spot as the trees grow: {'; '.join(sp['growth'])}."]
                               if sp["growth"] else []) + sp["warnings"]
        if extra:
            pdf.ln(1)
            pdf.bullets(extra, SMALL_PT + 0.5)

    pf = model.get("platform")
    if pf:
        _platform_pdf(pdf, pf, figures)

    pdf.heading("Drop-outs over the window", keep_mm=pdf.figure_height(figures["timeline"], pdf.epw) + 12)
    pdf.figure(figures["timeline"], pdf.epw, captions["timeline"])
    out = model["outages"]
    if out["rows"]:
        title = "Longest drop-outs" if out["longest_first"] else "All drop-outs"
        pdf.para(f"{title} (of {out['count']}):", style="B")
        pdf.grid(("Start", "Duration"), [(x["start"], x["duration"]) for x in out["rows"]], (60, 30),
                 align=("LEFT", "RIGHT"), size=SMALL_PT + 0.5)

    pdf.heading("Measured horizon")
    pdf.para(model["horizon"]["note"])
    if model["horizon"]["rows"]:
        pdf.ln(1)
        pdf.grid(("Bearing as measured", "True azimuth", "Elevation", "Distance", "Label"),
                 [(x["measured"], x["true"], x["elevation"], x["distance"], x["label"])
                  for x in model["horizon"]["rows"]],
                 (34, 28, 24, 24, pdf.epw - 110), align=("RIGHT", "RIGHT", "RIGHT", "RIGHT", "LEFT"),
                 size=SMALL_PT + 0.5)

    pdf.heading("Method and sources", keep_mm=50)
    for p in model["method"]:
        pdf.para(p, SMALL_PT + 0.5)
        pdf.ln(0.8)
    if pdf.get_y() + 6 + 4.2 * len(model["not_modelled"]) > pdf.page_break_trigger:
        pdf.add_page()  # keep the list under its lead-in line
    pdf.para("Not modelled:", SMALL_PT + 0.5, style="B")
    pdf.bullets(model["not_modelled"], SMALL_PT + 0.5)

    pdf.heading("Safety", keep_mm=55)
    y0 = pdf.get_y()
    pdf.ln(1)
    pdf.bullets(model["safety"])
    y1 = pdf.get_y() + 1
    pdf.set_line_width(0.6)
    pdf.rect(pdf.l_margin - 1.5, y0, pdf.epw + 3, y1 - y0)
    pdf.set_line_width(0.2)
    pdf.set_y(y1 + 1)

    pdf.heading("Sign-off", keep_mm=45)
    pdf.para("Installer and customer: the site was surveyed as described and the safety note was read.")
    col = (pdf.epw - 10) / 2
    for line in ("Name", "Signature", "Date"):
        pdf.ln(8)
        y = pdf.get_y()
        for k, who in enumerate(("Installer", "Customer")):
            x = pdf.l_margin + k * (col + 10)
            pdf.line(x, y, x + col, y)
            pdf.set_xy(x, y + 0.5)
            pdf.set_font("Helvetica", "", SMALL_PT)
            pdf.cell(col, 4, f"{who}: {line.lower()}")
        pdf.set_y(y + 4)
    return bytes(pdf.output())


def _platform_pdf(pdf, pf: dict, figures: dict) -> None:
    """The platform section of a vehicle or vessel (report/platform_section.py)."""
    image = figures[pf["figure"]]
    fig_w = min(112.0, pdf.epw) if pf["figure"] == "heading" else pdf.epw
    pdf.heading("Platform: vehicle or vessel", keep_mm=pdf.figure_height(image, fig_w) + 40)
    pdf.grid(None, pf["setup"], (38, pdf.epw - 38), key_column=True)
    part = pf["by_heading"] or pf["route"]
    pdf.ln(1)
    pdf.para(part["summary"], style="B")
    pdf.figure(image, fig_w, pf["caption"])
    if pf["by_heading"]:
        rows = part["rows"]
        half = (len(rows) + 1) // 2
        joined = [a + (b if b else ("", "", "")) for a, b in zip(rows[:half], rows[half:] + [None])]
        pdf.grid(("Heading", "Blocked", "Availability", "Heading", "Blocked", "Availability"), joined,
                 (pdf.epw / 6,) * 6, align=("LEFT", "RIGHT", "RIGHT", "LEFT", "RIGHT", "RIGHT"), size=SMALL_PT + 0.5)
    elif part["rows"]:
        pdf.grid(("Start", "Duration", "Along the route", "Where (lat, lon)"), part["rows"],
                 (50, 26, 34, pdf.epw - 110), align=("LEFT", "RIGHT", "RIGHT", "LEFT"), size=SMALL_PT + 0.5)
    if pf["sea_states"]:
        pdf.ln(1)
        pdf.para("By sea state (leosite's own presets, README \"Sea states\"):", style="B")
        pdf.grid(("Sea state", "Blocked", "Availability", "Interruption"), pf["sea_states"], (40, 30, 30, 30),
                 align=("LEFT", "RIGHT", "RIGHT", "RIGHT"), size=SMALL_PT + 0.5)
