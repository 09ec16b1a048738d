"""The report as one self-contained HTML page (figures as data URIs), readable
on a phone and printable."""

from __future__ import annotations

import base64
import html

from ..palette import TEXT, TEXT_SOFT, VERDICT, hex_code
from .model import FIGURE_CAPTIONS

_CSS = """
:root {{ --ink: {ink}; --soft: {soft}; --rule: #bbb; --band: #f2f2f2; }}
* {{ box-sizing: border-box; }}
body {{ font: 16px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; color: var(--ink);
       margin: 0 auto; padding: 1rem; max-width: 56rem; }}
h1 {{ font-size: 1.5rem; margin: 0 0 .2rem; }} h2 {{ font-size: 1.15rem; margin: 1.6rem 0 .5rem;
     border-bottom: 2px solid var(--ink); padding-bottom: .15rem; }}
.id {{ color: var(--soft); font-size: .9rem; }}
table {{ border-collapse: collapse; width: 100%; font-size: .95rem; }}
th, td {{ text-align: left; padding: .3rem .5rem; border-bottom: 1px solid var(--rule); vertical-align: top; }}
th {{ background: var(--band); }}
.scroll {{ overflow-x: auto; }}
.kv th {{ width: 11rem; background: none; font-weight: 600; }}
.verdict {{ border: 3px solid var(--ink); padding: .6rem .8rem; margin: 1rem 0; }}
.verdict b {{ font-size: 1.35rem; letter-spacing: .04em; }}
.verdict.qualified {{ border-left: 14px solid {qualified}; }}
.verdict.marginal {{ border-left: 14px dashed {marginal}; }}
.verdict.not-qualified {{ border-left: 14px double {not_qualified}; }}
figure {{ margin: 1rem 0; }} figure img {{ width: 100%; height: auto; border: 1px solid var(--rule); }}
figcaption {{ color: var(--soft); font-size: .9rem; }}
.num {{ text-align: right; white-space: nowrap; }}
.safety {{ border: 2px solid var(--ink); padding: .4rem 1rem; background: var(--band); }}
.sign {{ display: grid; grid-template-columns: 1fr 1fr; gap: 1.5rem; margin-top: 1rem; }}
.sign div {{ border-top: 1px solid var(--ink); padding-top: .3rem; min-height: 4.5rem; }}
@media (max-width: 36rem) {{ .sign {{ grid-template-columns: 1fr; }} .kv th {{ width: auto; }} body {{ font-size: 15px; }} }}
@media print {{ body {{ max-width: none; }} h2 {{ break-after: avoid; }} figure, table {{ break-inside: avoid; }} }}
""".format(  # the verdict hues from the one palette (survey/palette.py)
    ink=hex_code(TEXT), soft=hex_code(TEXT_SOFT), qualified=hex_code(VERDICT["qualified"]), marginal=hex_code(VERDICT["marginal"]),
    not_qualified=hex_code(VERDICT["not-qualified"]))


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _kv_table(rows) -> str:
    body = "".join(f"<tr><th>{_e(k)}</th><td>{_e(v)}</td></tr>" for k, v in rows)
    return f'<div class="scroll"><table class="kv">{body}</table></div>'


def _grid_table(head, rows, numeric=()) -> str:
    th = "".join(f'<th class="num">{_e(h)}</th>' if i in numeric else f"<th>{_e(h)}</th>"
                 for i, h in enumerate(head))
    trs = "".join("<tr>" + "".join(f'<td class="num">{_e(c)}</td>' if i in numeric else f"<td>{_e(c)}</td>"
                                   for i, c in enumerate(r)) + "</tr>" for r in rows)
    return f'<div class="scroll"><table><thead><tr>{th}</tr></thead><tbody>{trs}</tbody></table></div>'


def _figure_html(image, alt: str, caption: str) -> str:
    from ..figures import encode_png, indexed_for_print

    data = base64.b64encode(encode_png(indexed_for_print(image))).decode("ascii")
    return (f'<figure><img src="data:image/png;base64,{data}" alt="{_e(alt)}">'
            f"<figcaption>{_e(caption)}</figcaption></figure>")


def render_html(model: dict, figures: dict) -> str:
    """One self-contained HTML page (figures as data URIs), readable on a phone."""
    r = model["report"]
    name = model["header"][0][1]
    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{_e(model['title'])}: {_e(name)}</title><style>{_CSS}</style></head><body>",
        f"<header><h1>{_e(model['title'])}</h1><div class=\"id\">Report {_e(r['id'])} &middot; "
        f"made {_e(r['generated'].replace('T', ' ').replace('Z', ' UTC'))} &middot; leosite {_e(r['leosite_version'])}"
        "</div></header>",
        _kv_table(model["header"]),
        f'<section class="verdict {_e(model["verdict"])}"><b>Verdict: {_e(model["verdict"].upper())}</b>'
        f"<br>{_e(model['verdict_reason'])}</section>",
        "<h2>Figures</h2>",
        _grid_table(("Figure", "Value", "Meaning"), model["figures"], numeric=(1,)),
        "<h2>What was assessed</h2>", _kv_table(model["setup"]),
    ]
    if model["notes"]:
        parts += ["<h2>Surveyor's notes</h2>", f"<p>{_e(model['notes'])}</p>"]
    if model["warnings"]:
        parts += ["<h2>Warnings</h2><ul>"] + [f"<li>{_e(w)}</li>" for w in model["warnings"]] + ["</ul>"]
    parts += ["<h2>Sky view</h2>",
              _figure_html(figures["sky"], "Sky plot of the site", FIGURE_CAPTIONS["sky"])]
    if "photo" in figures and model.get("photo"):  # the customer's own sky, next to the sky plot
        parts += [f"<p>{_e(model['photo']['text'])}</p>",
                  _figure_html(figures["photo"], "The photo with its skyline and the sky tracks",
                               FIGURE_CAPTIONS["photo"])]
    parts.append(_figure_html(figures["panorama"], "Horizon panorama", FIGURE_CAPTIONS["panorama"]))
    parts.append("<h2>Obstructions, costliest first</h2>")
    if model["sectors"]:
        parts.append(_grid_table(("Azimuths (true)", "Peak", "Labels", "Share of blocked", "Blocked if cleared"),
                                 [(x["span"], x["peak"], x["labels"], x["share"], x["if_cleared"])
                                  for x in model["sectors"]], numeric=(1, 3, 4)))
    else:
        parts.append("<p>No obstruction rises above the minimum elevation.</p>")
    if model["recommendations"]:
        parts += ["<h3>What would help</h3><ul>"] + [f"<li>{_e(x['text'])}</li>"
                                                     for x in model["recommendations"]] + ["</ul>"]
    sp = model["spots"]
    if sp:
        parts += ["<h2>Mounting spots</h2>", f"<p>{_e(sp['advice'])}</p>",
                  _figure_html(figures["plan"], "Site plan with candidate spots", FIGURE_CAPTIONS["plan"]),
                  f"<h3>Best position of each candidate ({sp['count']:,} ranked)</h3>",
                  _grid_table(("Spot", "Kind", "Position (m)", "Height", "Blocked", "Interruption"),
                              [(x["spot"], x["kind"], x["position"], x["height"], x["blocked"], x["interruption"])
                               for x in sp["rows"]], numeric=(3, 4, 5))]
        extra = sp["poles"] + ([f"The best spot as the trees grow: {'; '.join(sp['growth'])}."]
                               if sp["growth"] else []) + sp["warnings"]
        if extra:
            parts += ["<ul>"] + [f"<li>{_e(x)}</li>" for x in extra] + ["</ul>"]
    pf = model.get("platform")
    if pf:
        part = pf["by_heading"] or pf["route"]
        parts += ["<h2>Platform: vehicle or vessel</h2>", _kv_table(pf["setup"]), f"<p><b>{_e(part['summary'])}</b></p>",
                  _figure_html(figures[pf["figure"]], "Platform figure", pf["caption"])]
        if pf["by_heading"]:
            parts.append(_grid_table(("Heading", "Blocked", "Availability"), part["rows"], numeric=(1, 2)))
        elif part["rows"]:
            parts.append(_grid_table(("Start", "Duration", "Along the route", "Where (lat, lon)"), part["rows"],
                                     numeric=(1, 2)))
        if pf["sea_states"]:
            parts += ["<h3>By sea state (leosite's own presets)</h3>",
                      _grid_table(("Sea state", "Blocked", "Availability", "Interruption"), pf["sea_states"],
                                  numeric=(1, 2, 3))]
    parts += ["<h2>Drop-outs over the window</h2>",
              _figure_html(figures["timeline"], "Outage timeline", FIGURE_CAPTIONS["timeline"])]
    out = model["outages"]
    if out["rows"]:
        title = "Longest drop-outs" if out["longest_first"] else "All drop-outs"
        parts += [f"<h3>{title}</h3>", _grid_table(("Start", "Duration"),
                                                   [(x["start"], x["duration"]) for x in out["rows"]], numeric=(1,))]
    parts += ["<h2>Measured horizon</h2>", f"<p>{_e(model['horizon']['note'])}</p>"]
    if model["horizon"]["rows"]:
        parts.append(_grid_table(("Bearing as measured", "True azimuth", "Elevation", "Distance", "Label"),
                                 [(x["measured"], x["true"], x["elevation"], x["distance"], x["label"])
                                  for x in model["horizon"]["rows"]], numeric=(0, 1, 2, 3)))
    parts += ["<h2>Method and sources</h2>"] + [f"<p>{_e(p)}</p>" for p in model["method"]]
    parts += ["<p>Not modelled:</p><ul>"] + [f"<li>{_e(p)}</li>" for p in model["not_modelled"]] + ["</ul>"]
    parts += ['<h2>Safety</h2><div class="safety"><ul>'] + [f"<li>{_e(p)}</li>" for p in model["safety"]]
    parts += ["</ul></div>", "<h2>Sign-off</h2>", '<div class="sign">',
              "<div>Installer: name, signature, date</div>", "<div>Customer: name, signature, date</div>",
              "</div>", "</body></html>"]
    return "\n".join(parts)
