"""The site report: PDF, HTML and JSON for every demo site, checked by reading
the files back with tools we did not write (pypdf for the PDF text and page
size, the standard library's HTML parser, Pillow for the embedded images)."""

from __future__ import annotations

import base64
import io
import json
from datetime import datetime, timezone
from html.parser import HTMLParser

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from PIL import Image
from pypdf import PdfReader

from survey.assess import assess
from survey.cli import main
from survey.horizon import HorizonMask
from survey.pipeline import FleetChoice, run_site
from survey.report import (
    load_report_inputs,
    recommendations,
    report_model,
    write_report,
)
from survey.report import (
    render_report as _render_report,
)
from survey.site import load_site

from .helpers import DEMO, MINIMAL_SITE

DEMOS = ("alder-brook-farm", "mill-lane-terrace", "tussock-ridge-croft")
WHEN = datetime(2026, 12, 1, 12, 0, tzinfo=timezone.utc)
# Page sizes in PostScript points (1/72 in): ISO 216 A4 is 210 x 297 mm; ANSI US Letter is 8.5 x 11 in.
PAGE_PT = {"a4": (210 / 25.4 * 72, 297 / 25.4 * 72), "letter": (612.0, 792.0)}


_RENDERED: dict = {}


def render_report(run, fmt, paper="a4", **kw):
    """survey.report.render_report, kept per run, format and paper within this
    module (the figures take most of a report's time; several tests read the
    same file).  The run is kept with its bytes, so its id is never reused."""
    key = (id(run), fmt, paper, tuple(sorted(kw.items())))
    if key not in _RENDERED:
        _RENDERED[key] = (run, _render_report(run, fmt, paper, **kw))
    return _RENDERED[key][1]


@pytest.fixture(scope="module")
def runs():
    """Each demo site assessed once over a short window (6 h at 30 s keeps the suite quick)."""
    return {d: run_site(load_site(DEMO / d / "site.toml"), hours=6, step_s=30) for d in DEMOS}


def _pdf_text(data: bytes) -> tuple[PdfReader, str]:
    reader = PdfReader(io.BytesIO(data))
    return reader, "\n".join(page.extract_text() for page in reader.pages)


@pytest.mark.parametrize("demo, paper", [(d, "a4") for d in DEMOS] + [("alder-brook-farm", "letter")])
def test_pdf_is_text_with_the_verdict_and_blocked_fraction(runs, demo, paper):
    run = runs[demo]
    data = render_report(run, "pdf", paper, generated=WHEN)
    assert data.startswith(b"%PDF-")
    reader, text = _pdf_text(data)
    flat = " ".join(text.split())
    facts = json.loads(render_report(run, "json", generated=WHEN))["result"]
    assert run.site.name in flat
    assert f"VERDICT: {facts['verdict'].upper()}" in flat
    # The blocked fraction as the report prints it (two decimals, per cent) equals the JSON's.
    assert f"Blocked fraction {100 * facts['blocked_fraction']:.2f} %" in flat
    assert f"Interruption {100 * facts['interruption']:.2f} %" in flat
    for heading in ("Sky view", "Obstructions, costliest first", "Drop-outs over the window", "Measured horizon",
                    "Method and sources", "Safety", "Sign-off", "SGP4", "WMM2025", "Not modelled"):
        assert heading in flat
    assert "fall protection" in flat and "power lines" in flat  # DEVELOPERS "Safety"
    assert 2 <= len(reader.pages) <= 5  # "at most a few pages"
    w, h = PAGE_PT[paper]
    for page in reader.pages:
        assert float(page.mediabox.width) == pytest.approx(w, abs=0.5)
        assert float(page.mediabox.height) == pytest.approx(h, abs=0.5)
    # The figures are images, the words are not: sky, panorama, timeline, and the plan when there is one.
    assert sum(len(page.images) for page in reader.pages) == 3 + (run.site.plan is not None)
    assert ("Mounting spots" in flat) == (run.site.plan is not None)


def test_pdf_header_carries_the_survey_table(runs):
    run = runs["alder-brook-farm"]
    _, text = _pdf_text(render_report(run, "pdf", generated=WHEN))
    flat = " ".join(text.split())
    for key in ("surveyor", "organisation", "customer"):
        assert run.site.survey[key] in flat
    assert "45.31820° N, 72.64150° W" in flat
    assert "Report LS-20261201-" in flat
    assert "Report made 2026-12-01 12:00 UTC" in flat
    assert "Surveyed on 2026-05-28 14:20 UTC" in flat  # [survey] date, as typed in the demo site file


class _Page(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.images, self.text, self.external = [], [], [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        a = dict(attrs)
        if tag == "img":
            self.images.append(a.get("src", ""))
        for key in ("src", "href"):
            if a.get(key, "").startswith(("http:", "https:", "//")) or tag in ("link", "script"):
                self.external.append((tag, a))

    def handle_data(self, data):
        self.text.append(data)


@pytest.mark.parametrize("demo", DEMOS)
def test_html_is_one_self_contained_page(runs, demo):
    run = runs[demo]
    page = _Page()
    page.feed(render_report(run, "html", generated=WHEN).decode("utf-8"))
    page.close()
    text = " ".join(" ".join(page.text).split())
    facts = run.assessment
    assert run.site.name in text
    assert facts.verdict.upper() in text
    assert f"{100 * facts.blocked_fraction:.2f} %" in text
    assert page.external == []  # nothing fetched from elsewhere: it works offline and on a phone
    assert "meta" in page.tags and len(page.images) == 3 + (run.site.plan is not None)
    for src in page.images:
        assert src.startswith("data:image/png;base64,")
        img = Image.open(io.BytesIO(base64.b64decode(src.split(",", 1)[1])))
        img.load()
        assert img.format == "PNG" and img.width >= 1000


def test_a_bad_survey_date_is_named(write_site, capsys):
    site_file = write_site(MINIMAL_SITE + '[survey]\ndate = "last tuesday"\n')
    assert main(["report", str(site_file), "--out", str(site_file.with_suffix(".pdf"))]) == 2
    err = capsys.readouterr().err
    assert "survey.date: expected an ISO 8601 UTC time" in err
    assert not site_file.with_suffix(".pdf").exists()


def test_html_escapes_what_the_installer_typed(write_site):
    site_file = write_site(MINIMAL_SITE.replace('name = "Test yard"', 'name = "Yard <b>&</b> shed"')
                           + '[survey]\nnotes = "<script>x</script>"\n')
    run = run_site(load_site(site_file), hours=1, step_s=60)
    doc = render_report(run, "html", generated=WHEN).decode()
    assert "<script>" not in doc and "&lt;script&gt;" in doc
    assert "Yard &lt;b&gt;&amp;&lt;/b&gt; shed" in doc


@pytest.mark.parametrize("demo", DEMOS)
def test_json_round_trips_to_the_same_figures(runs, demo, tmp_path):
    run = runs[demo]
    first = tmp_path / "first.json"
    write_report(run, first, generated=WHEN)
    doc = json.loads(first.read_text())
    assert doc["result"]["blocked_fraction"] == run.assessment.blocked_fraction
    # Run the report again from the JSON alone, as the command line does.
    saved = load_report_inputs(first)
    again = run_site(saved.site, saved.fleet_choice)
    second = json.loads(render_report(again, "json", generated=WHEN))
    for key in ("blocked_fraction", "availability", "interruption", "verdict", "usable_samples",
                "blocked_samples", "sectors", "outages", "window", "satellites", "declination_deg"):
        assert second["result"][key] == doc["result"][key], key
    assert second["inputs"] == doc["inputs"]


def test_site_document_reads_back_as_the_same_site(write_site):
    """Every kind of horizon point (with and without distance or label), the plan
    and the survey table survive site -> JSON inputs -> site."""
    from survey.report import site_document
    from survey.site import site_from_dict

    site = load_site(write_site(MINIMAL_SITE + """
[horizon]
points = [[10, 5], [40, 20, "pine"], [90, 30, 12.5], [130, 35, 20.0, "barn"]]
[survey]
surveyor = "Test surveyor"
date = "2026-05-01T10:00:00Z"
[[plan.pole]]
at = [3, 4]
min_height_m = 2
max_height_m = 6
"""))
    again = site_from_dict(json.loads(json.dumps(site_document(site))), site.path)
    assert again.horizon == site.horizon
    assert again.survey == site.survey
    assert again.plan.poles == site.plan.poles
    assert (again.mount, again.terminal, again.criteria, again.schedule) == \
        (site.mount, site.terminal, site.criteria, site.schedule)


def test_json_from_an_element_file_carries_the_elements(tmp_path, write_site):
    # The space station's element set that the two-line format's public descriptions use as
    # their example (from memory; our parser verifies both checksums, so a slip would fail here).
    tle = ("ISS (ZARYA)\n"
           "1 25544U 98067A   08264.51782528 -.00002182  00000-0 -11606-4 0  2927\n"
           "2 25544  51.6416 247.4627 0006703 130.5360 325.0288 15.72125391563537\n")
    (tmp_path / "one.tle").write_text(tle)
    site_file = write_site(MINIMAL_SITE)
    choice = FleetChoice(elements=tmp_path / "one.tle")
    run = run_site(load_site(site_file), choice, start=datetime(2008, 9, 20, tzinfo=timezone.utc), hours=3,
                   step_s=30)
    out = tmp_path / "r.json"
    write_report(run, out, generated=WHEN)  # the run carries the fleet file it read
    (tmp_path / "one.tle").unlink()  # the JSON must not need the original file
    saved = load_report_inputs(out)
    again = run_site(saved.site, saved.fleet_choice)
    assert again.assessment.usable_samples == run.assessment.usable_samples > 0


WRAP_AND_BARN = [(350, 0, ""), (10, 40, "oak"), (180, 0, ""), (200, 0, ""), (230, 50, "barn shed"), (260, 0, "")]


def test_what_if_cleared_matches_an_independent_reassessment(write_site):
    """Each recommendation re-assessed from scratch on a horizon whose first sector
    rises after the last reading and crosses north (README, "What the figures
    mean"): the hand-written readings with that obstruction's reading set to 0,
    interpolated with numpy, every usable sample recounted, and the link counted
    by the plain loop of the scheduling rule (test_metrics)."""
    from .helpers import plain_loop_down

    pts = ", ".join(f'[{a}, {e}, "{lbl}"]' if lbl else f"[{a}, {e}]" for a, e, lbl in WRAP_AND_BARN)
    site = load_site(write_site(MINIMAL_SITE + f'\n[horizon]\nreference = "true"\npoints = [{pts}]\n'))
    run = run_site(site, hours=6, step_s=30)
    a, t = run.assessment, run.tracks
    # Sector bounds by hand: the oak rises 0 -> 40 over 350..10 and passes 25 deg at
    # 350 + 20*25/40 = 2.5, falls 40 -> 0 over 10..180 and passes it at
    # 10 + 170*15/40 = 73.75; the barn passes it at 200 + 30*25/50 and 230 + 30*25/50.
    bounds = {s.labels: (s.from_deg, s.to_deg) for s in a.sectors}
    assert bounds[("oak",)] == pytest.approx((2.5, 73.75))
    assert bounds[("barn shed",)] == pytest.approx((215.0, 245.0))
    assert len(a.sectors) == 2 and sum(s.blocked_share for s in a.sectors) == pytest.approx(1.0)
    recs = recommendations(run)
    assert len(recs) == 2 and not any("2.5°-2.5°" in r["text"] or "2.5°–2.5°" in r["text"] for r in recs)
    readings = sorted(WRAP_AND_BARN)
    az = np.array([x[0] for x in readings], float)
    for rec in recs:
        sec = next(s for s in a.sectors if round(s.from_deg, 2) == rec["from_deg"])
        el = np.array([0.0 if lbl and lbl in sec.labels else e for _, e, lbl in readings])
        xp, fp = np.concatenate([az - 360, az, az + 360]), np.concatenate([el] * 3)

        def is_blocked(azimuth, elevation):
            return float(elevation) < np.interp(float(azimuth) % 360.0, xp, fp)

        blocked = np.array([is_blocked(x, e) for x, e in zip(t.az_deg, t.el_deg)])
        assert rec["blocked_fraction"] == pytest.approx(blocked.sum() / len(t), abs=1e-12)
        down = plain_loop_down((t.sat, t.time_index, t.az_deg, t.el_deg), t.count, t.window.step_s,
                               site.schedule.reassign_s, is_blocked)
        assert rec["interruption"] == pytest.approx(down.mean(), abs=1e-12)
        # The sector table's own "if cleared" figure says the same, and so does assess.
        assert sec.blocked_fraction_if_cleared == pytest.approx(rec["blocked_fraction"], abs=1e-12)
        assert 0 < rec["blocked_fraction"] < a.blocked_fraction
        assert f"{100 * rec['blocked_fraction']:.1f}\u00a0%" in rec["text"]  # no-break space (words.py)


def test_demo_advice_agrees_with_the_sector_table(runs):
    for run in runs.values():
        for rec in recommendations(run):
            sec = next(s for s in run.assessment.sectors if round(s.from_deg, 2) == rec["from_deg"])
            assert sec.blocked_fraction_if_cleared == pytest.approx(rec["blocked_fraction"], abs=1e-12)


def test_the_spot_section_says_what_the_ranking_says(runs):
    from survey.spots import rank_spots

    run = runs["alder-brook-farm"]
    ranking = rank_spots(run)
    doc = json.loads(render_report(run, "json", generated=WHEN))
    assert doc["spots"]["best"] == ranking.best.as_dict()
    assert doc["spots"]["candidates_total"] == len(ranking.results)
    _, text = _pdf_text(render_report(run, "pdf", generated=WHEN))
    flat = " ".join(text.split())
    b = ranking.best
    assert f"Best spot: {b.candidate.name} at {b.candidate.height_m:.1f} m" in flat  # 9 m: "9.0 m"
    assert f"to {100 * b.blocked_fraction:.1f} %" in flat
    assert "as the trees grow" in flat  # the demo's alders have growth rates


def test_clearing_every_sector_leaves_a_clear_sky(runs):
    run = runs["mill-lane-terrace"]
    mask = run.mask
    for sec in run.assessment.sectors:
        mask = mask.with_sector_cleared(sec.from_deg, sec.to_deg)
    assert assess(run.tracks, mask).blocked_samples == 0
    assert assess(run.tracks, HorizonMask.clear()).blocked_samples == 0


def test_report_command_writes_the_file(tmp_path, capsys):
    out = tmp_path / "alder.pdf"
    code = main(["report", str(DEMO / "alder-brook-farm/site.toml"), "--out", str(out), "--paper", "letter",
                 "--hours", "2", "--step", "60"])
    stdout, err = capsys.readouterr()
    assert code == 0, err
    assert f"report written to {out}" in stdout
    assert PdfReader(out).pages[0].mediabox.width == pytest.approx(612.0)


def test_report_command_remakes_a_report_from_its_json(tmp_path, capsys):
    first, second = tmp_path / "a.json", tmp_path / "b.html"
    assert main(["report", str(DEMO / "tussock-ridge-croft/site.toml"), "--out", str(first),
                 "--hours", "1", "--step", "60"]) == 0
    assert main(["report", str(first), "--out", str(second)]) == 0
    capsys.readouterr()
    assert json.loads(first.read_text())["result"]["window"]["hours"] == 1.0
    assert "Tussock Ridge" in second.read_text()


@pytest.mark.parametrize("argv, message", [
    (["--out", "r.docx"], "--out: "),
    (["--out", "missing-folder/r.pdf"], "does not exist"),
    (["--out", "r.pdf", "--paper", "a5"], "--paper"),
    (["--out", "r.pdf", "--hours", "-1"], "--hours"),
])
def test_bad_report_arguments_exit_2_with_one_line(tmp_path, capsys, monkeypatch, argv, message):
    monkeypatch.chdir(tmp_path)
    code = main(["report", str(DEMO / "alder-brook-farm/site.toml"), *argv])
    out, err = capsys.readouterr()
    assert code == 2 and message in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    assert list(tmp_path.iterdir()) == []  # nothing written


def test_a_failed_report_leaves_the_old_one_untouched(tmp_path, write_site, capsys):
    out = tmp_path / "report.pdf"
    out.write_bytes(b"the report from last week")
    bad = write_site(MINIMAL_SITE.replace("latitude = 45.0", "latitude = 95.0"), name="bad.toml")
    assert main(["report", str(bad), "--out", str(out)]) == 2
    assert "site.latitude" in capsys.readouterr().err
    assert out.read_bytes() == b"the report from last week"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bad.toml", "report.pdf"]


@pytest.mark.parametrize("content, message", [
    ("{not json", "not valid JSON"),
    ('{"report": {"kind": "something else"}}', "report.kind"),
    ('{"report": {"kind": "leosite-site-report"}, "inputs": {"site": {"site": {"name": "x"}}}}',
     "site.latitude: missing"),
])
def test_a_bad_report_json_is_a_clear_error(tmp_path, capsys, content, message):
    src = tmp_path / "old.json"
    src.write_text(content)
    assert main(["report", str(src), "--out", str(tmp_path / "new.pdf")]) == 2
    err = capsys.readouterr().err
    assert message in err and str(src) in err and "Traceback" not in err
    assert not (tmp_path / "new.pdf").exists()


def test_pdf_sets_names_outside_latin1_readably(write_site):
    site_file = write_site(MINIMAL_SITE.replace('name = "Test yard"', 'name = "Ōtaki ridge – upper paddock"'))
    run = run_site(load_site(site_file), hours=1, step_s=60)
    _, text = _pdf_text(render_report(run, "pdf", generated=WHEN))
    assert "Otaki ridge - upper paddock" in " ".join(text.split())
    assert "Ōtaki ridge – upper paddock" in render_report(run, "html", generated=WHEN).decode()


def test_every_report_carries_the_safety_note_for_its_mount(runs, write_site):
    """DEVELOPERS "Safety": fall protection, ladders, power lines, weather,
    grounding and bonding, deferring to local codes; vessels get radar and rigging."""
    from survey.safety import notes_for

    flat = " ".join(_pdf_text(render_report(runs["alder-brook-farm"], "pdf", generated=WHEN))[1].split())
    for phrase in ("fall protection", "1 in 4", "power lines", "lightning", "Ground and bond",
                   "Local building and electrical codes", "buried services"):
        assert phrase in flat
    boat = write_site(MINIMAL_SITE.replace('kind = "fixed"', 'kind = "marine"'))
    doc = json.loads(render_report(run_site(load_site(boat), hours=1, step_s=60), "json", generated=WHEN))
    assert doc["safety"] == list(notes_for("marine")) and any("radar" in x for x in doc["safety"])


@pytest.mark.parametrize("labels, plant", [
    (("alders", "tall alder"), True), (("hedges",),  True), (("old oak",), True),
    (("woodshed",), False), (("barn", "barn ridge"), False), (("fire station",), False), ((), False),
])
def test_advice_says_trim_only_for_plants(labels, plant):
    from survey.report.advice import _looks_like_vegetation

    assert _looks_like_vegetation(labels) is plant


@pytest.mark.parametrize("demo", DEMOS)
def test_demo_pdf_is_small_enough_to_email(runs, demo):
    """Figures are embedded at print resolution with an indexed palette: each demo
    report stays under 1 MB (it was about 2 MB with lossless RGB figures)."""
    data = render_report(runs[demo], "pdf", generated=WHEN)
    assert len(data) < 1_000_000
    reader, _ = _pdf_text(data)
    for page in reader.pages:  # the figures are still there, at print resolution
        for im in page.images:
            assert min(im.image.size) >= 700


def _strings(value):
    if isinstance(value, str):
        yield value
    elif isinstance(value, dict):
        for v in value.values():
            yield from _strings(v)
    elif isinstance(value, (list, tuple)):
        for v in value:
            yield from _strings(v)


def test_a_number_never_parts_from_its_unit(runs):
    """Every figure the report writes keeps its number and unit together (a
    no-break space, U+00A0, between them), and each kind of angle has one precision."""
    import re

    for run in runs.values():
        model = report_model(run, generated=WHEN)
        text = [t for k, v in model.items() if k not in ("inputs", "result") for t in _strings(v)]
        for t in text:
            assert not re.search(r"\d (%|m|s|min|h)(?![A-Za-z])", t), t
        for row in model["sectors"]:
            assert re.fullmatch(r"\d{1,3}\.\d°–\d{1,3}\.\d°|all round", row["span"]), row["span"]
            assert re.fullmatch(r"\d{1,2}\.\d°", row["peak"]), row["peak"]
        for row in model["horizon"]["rows"]:
            assert re.fullmatch(r"\d{1,3}\.\d°", row["true"]) and re.fullmatch(r"\d{1,3}\.\d°", row["measured"])
        if model["spots"]:
            for row in model["spots"]["rows"]:
                assert re.fullmatch(r"\d+\.\d{1,2}\u00a0m", row["height"]), row["height"]


def test_one_way_to_write_a_length():
    """words.length: to the centimetre (pole heights come in 0.25 m steps), one
    decimal at least, a no-break space before the unit."""
    from survey.words import length

    assert [length(x) for x in (9, 6.5, 2.25, 12.0, 0.1, -1.1)] == [
        "9.0\u00a0m", "6.5\u00a0m", "2.25\u00a0m", "12.0\u00a0m", "0.1\u00a0m", "-1.1\u00a0m"]


# ------------------------------------------------------------------ any text a user types
USER_TEXT_SITE = (MINIMAL_SITE.replace('name = "Test yard"', 'name = "USERTEXT"')
                  + '[horizon]\nreference = "true"\npoints = [[10, 30, 12.0, "USERTEXT"], [200, 20]]\n'
                  + '[survey]\nsurveyor = "USERTEXT"\nnotes = "USERTEXT"\n')


def _with_text(value, text: str):
    if isinstance(value, str):
        return value.replace("USERTEXT", text)
    if isinstance(value, dict):
        return {k: _with_text(v, text) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return type(value)(_with_text(v, text) for v in value)
    return value


@pytest.fixture(scope="module")
def user_text_report(tmp_path_factory):
    from survey.report.write import report_figures

    path = tmp_path_factory.mktemp("unicode") / "site.toml"
    path.write_text(USER_TEXT_SITE, encoding="utf-8")
    run = run_site(load_site(path), hours=1, step_s=120)
    return report_model(run, WHEN), report_figures(run, None)


# Printable Latin-1 by the code chart (ISO/IEC 8859-1): 0x20-0x7E and 0xA0-0xFF.
LATIN1_PRINTABLE = "".join(chr(o) for o in list(range(0x21, 0x7F)) + list(range(0xA1, 0x100)) if chr(o) != "\xad")


@settings(max_examples=25, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.text(st.characters(exclude_categories=("Cs",)), min_size=1, max_size=40))
def test_the_pdf_takes_any_text_a_user_types(user_text_report, text):
    """Safe to share: any Unicode in the site name, a label, the surveyor or the
    notes gives a PDF (never a crash), and when the font cannot set a character
    the PDF says so under the header."""
    from survey.report.pdf import render_pdf
    from survey.report.write import FIGURE_CAPTIONS

    model, figures = user_text_report
    data = render_pdf(_with_text(model, text), figures, "a4", FIGURE_CAPTIONS)
    _, pdf_text = _pdf_text(data)
    said = "not in this PDF's font" in " ".join(pdf_text.split())
    if all(c in LATIN1_PRINTABLE for c in text):  # what the core fonts carry: printed as typed, nothing said
        assert text in pdf_text and not said
    if any(0x4E00 <= ord(c) <= 0x9FFF or 0x1F300 <= ord(c) <= 0x1FAFF for c in text):  # CJK, emoji
        assert said


def test_a_script_the_font_lacks_is_said_and_kept_in_html(user_text_report):
    from survey.report.html import render_html
    from survey.report.pdf import render_pdf
    from survey.report.write import FIGURE_CAPTIONS

    model, figures = user_text_report
    model = _with_text(model, "東京 yard")
    _, pdf_text = _pdf_text(render_pdf(model, figures, "a4", FIGURE_CAPTIONS))
    flat = " ".join(pdf_text.split())
    assert "?? yard" in flat and "2 different characters typed for this site are not in this PDF's font" in flat
    assert "東京 yard" in render_html(model, figures)
