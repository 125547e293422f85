"""Tests of shoreline.report: structure of the self-contained HTML and a real browser render.

The output folder is the invented one of tests/test_figures.py (``build_output_folder``): its
values exercise structure only. The HTML is parsed with the standard library's html.parser;
the render check uses a headless Chromium when one is installed (skipped otherwise).
"""

from __future__ import annotations

import base64
import importlib.util
import json
import os
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import geopandas as gpd
import numpy as np
import pytest
from PIL import Image

from shoreline.cautions import CAUTION
from shoreline.errors import OutputError
from shoreline.report import write_report

_spec = importlib.util.spec_from_file_location(
    "_figure_fixture", Path(__file__).with_name("test_figures.py")
)
_fixture_module = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_fixture_module)
build_output_folder = _fixture_module.build_output_folder

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
VOID = {"meta", "img", "br", "hr", "link", "input", "source", "col", "area", "base", "wbr"}


class _Page(HTMLParser):
    """Collect what the tests need: tags in order, ids, caution texts, tables, links."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.events: list[tuple[str, dict]] = []  # (tag, attrs) in document order
        self.stack: list[tuple[str, dict]] = []
        self.caution_text: dict[str, str] = {}
        self.hotspot_rows: dict[str, int] = {}
        self.h4: list[str] = []
        self.text: list[str] = []
        self._caution_box: str | None = None
        self._in_caution_text = False
        self._table: str | None = None
        self._in_tbody = False
        self._in_h4 = False

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.events.append((tag, a))
        if tag not in VOID:
            self.stack.append((tag, a))
        classes = (a.get("class") or "").split()
        if "caution" in classes and tag == "div":
            self._caution_box = a.get("id")
        if "caution-text" in classes and self._caution_box:
            self._in_caution_text = True
            self.caution_text[self._caution_box] = ""
        if tag == "table" and "hotspots" in classes:
            self._table = a.get("data-scenario")
            self.hotspot_rows[self._table] = 0
        if tag == "tbody" and self._table is not None:
            self._in_tbody = True
        if tag == "tr" and self._in_tbody:
            self.hotspot_rows[self._table] += 1
        if tag == "h4":
            self._in_h4 = True
            self.h4.append("")

    def handle_endtag(self, tag):
        if self.stack and self.stack[-1][0] == tag:
            self.stack.pop()
        if tag == "p":
            self._in_caution_text = False
        if tag == "div":
            self._caution_box = None
        if tag == "table":
            self._table = None
            self._in_tbody = False
        if tag == "h4":
            self._in_h4 = False

    def handle_data(self, data):
        self.text.append(data)
        if self._in_caution_text and self._caution_box:
            self.caution_text[self._caution_box] += data
        if self._in_h4:
            self.h4[-1] += data

    def index_of(self, tag: str, **attrs) -> int:
        for i, (t, a) in enumerate(self.events):
            if t == tag and all(a.get(k) == v for k, v in attrs.items()):
                return i
        raise AssertionError(f"<{tag} {attrs}> not found")


def _placeholder_figures(out: Path) -> None:
    """Write small stand-in PNGs (the report only embeds them; tests/test_figures.py draws)."""
    names = {"reference": FIGURES[:3], "storm-sw": FIGURES, "event-ne": FIGURES}
    for folder, files in names.items():
        for i, name in enumerate(files):
            img = Image.new("RGB", (320, 200), "white")
            img.paste((40 * i, 90, 160), (20, 20, 300, 180))
            img.save(out / folder / name, dpi=(150, 150))


FIGURES = ("map.png", "alongshore.png", "wave_climate.png", "vs_reference.png")


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    scenarios = ("reference", "storm-sw", "event-ne")
    out = build_output_folder(tmp_path_factory.mktemp("rep") / "out", scenarios=scenarios)
    _placeholder_figures(out)
    before = {p.relative_to(out) for p in out.rglob("*")}
    path = write_report(out)
    after = {p.relative_to(out) for p in out.rglob("*")}
    text = path.read_text(encoding="utf-8")
    page = _Page()
    page.feed(text)
    page.close()
    return {"out": out, "path": path, "text": text, "page": page, "new": after - before}


def test_report_is_one_file_at_the_expected_place(report) -> None:
    assert report["path"] == report["out"] / "report.html"
    assert report["new"] == {Path("report.html")}, "only report.html is added (no temp file)"


def test_caution_verbatim_at_top_and_end(report) -> None:
    page = report["page"]
    assert page.caution_text["caution-top"] == CAUTION
    assert page.caution_text["caution-end"] == CAUTION
    top = page.index_of("div", id="caution-top")
    study = page.index_of("section", id="study")
    warnings = page.index_of("section", id="warnings")
    end = page.index_of("div", id="caution-end")
    assert page.index_of("h1") < top < study, "the caution comes right after the title"
    assert warnings < end, "the caution closes the report"
    assert end == max(i for i, (t, a) in enumerate(page.events) if t == "div"), "last box"


def test_every_section_present_in_order(report) -> None:
    page = report["page"]
    order = [page.index_of("section", id=s) for s in ("study", "method", "results", "warnings")]
    assert order == sorted(order)
    base = page.index_of("section", id="scenario-reference")
    storm = page.index_of("section", id="scenario-storm-sw")
    event = page.index_of("section", id="scenario-event-ne")
    assert order[2] < base < storm < event < order[3], "reference first, then run.json order"


def test_run_date_version_inputs_and_settings_shown(report) -> None:
    run = json.loads((report["out"] / "run.json").read_text(encoding="utf-8"))
    text = " ".join(report["page"].text)
    assert run["started_utc"] in text
    assert f"shoreline {run['version']}" in text
    for path, digest in run["inputs"].items():
        assert path in text and digest in text
    # One table per settings section, under its own heading.
    assert set(run["settings"]) <= set(report["page"].h4)
    assert "closure.depth_m" in text  # nested settings are flattened, not dropped


def test_method_cites_the_published_sources(report) -> None:
    text = " ".join(report["page"].text)
    for needle in (
        "III-2-7",
        "Shore Protection Manual",
        "Kamphuis",
        "Larson",
        "Hallermeier",
        "Dean",
        "Moore",
        "Pelnard-Consid\u00e8re",
        "Snell",
    ):
        assert needle in text, needle


def test_hotspot_table_rows_match_each_scenario(report) -> None:
    page = report["page"]
    for name in ("reference", "storm-sw", "event-ne"):
        gpkg = report["out"] / name / "results.gpkg"
        n = len(gpd.read_file(gpkg, layer="hotspots"))
        assert page.hotspot_rows[name] == n
    assert page.hotspot_rows["reference"] != page.hotspot_rows["storm-sw"]  # fixture: 2 vs 3


def test_images_are_embedded_png_data_uris(report) -> None:
    imgs = [a for t, a in report["page"].events if t == "img"]
    # 3 figures in the reference folder, 4 (with vs_reference) in each other scenario.
    assert len(imgs) == 11
    for a in imgs:
        src = a["src"]
        assert src.startswith("data:image/png;base64,")
        assert base64.b64decode(src.split(",", 1)[1])[:8] == PNG_SIGNATURE
        assert a.get("alt")


def test_no_external_reference_of_any_kind(report) -> None:
    text, page = report["text"], report["page"]
    assert "http://" not in text and "https://" not in text
    assert "url(" not in text and "@import" not in text
    tags = {t for t, _ in page.events}
    assert "script" not in tags and "link" not in tags and "iframe" not in tags
    for tag, attrs in page.events:
        for key in ("src", "href", "srcset", "data", "action", "poster"):
            value = attrs.get(key)
            if value is None:
                continue
            assert not value.startswith("//"), (tag, key)
            if key == "src":
                assert value.startswith("data:"), (tag, value[:40])
            else:
                assert value.startswith("#") and "//" not in value, (tag, value)
    styles = [t for t, _ in page.events if t == "style"]
    assert len(styles) == 1


def test_strings_from_files_are_escaped(report) -> None:
    # run.json carries a warning with a script tag and an ampersand: it must be text.
    text, page = report["text"], report["page"]
    assert "<script>" not in text
    assert "&lt;script&gt;alert(&#x27;x&#x27;)&lt;/script&gt; &amp; Hs &lt; 0" in text
    assert any("<script>alert('x')</script>" in t for t in page.text)
    assert "Invented <bay> test" in " ".join(page.text)  # the study name, shown as text


def test_storm_event_table_and_changes_against_reference(report) -> None:
    text = " ".join(report["page"].text)
    # The event's hotspot layer has shift columns: the table says so in its headings.
    assert "Mean shift [m]" in text and "Volume over the storm [m\u00b3]" in text
    assert "Mean rate [m/yr]" in text  # the yearly scenarios keep the rate headings
    # The fixture's versus_reference record of "storm-sw": hotspot 3 (erosion) is new.
    assert "new hotspots: E3" in text
    assert "worsened: E1" in text
    assert "A storm event" in text


def test_report_without_figures_says_they_are_missing(tmp_path: Path) -> None:
    out = build_output_folder(tmp_path / "out", scenarios=("reference",))
    text = write_report(out).read_text(encoding="utf-8")
    assert text.count("not found in the folder") == 3
    assert "<img" not in text


def test_draw_figures_option_draws_each_folder_against_the_reference(
    tmp_path: Path, monkeypatch
) -> None:
    # Wiring only (drawing is tested in tests/test_figures.py): each scenario folder is drawn,
    # the others against the reference folder, before the report embeds the PNGs.
    import shoreline.report as report_module

    out = build_output_folder(tmp_path / "out", scenarios=("reference", "storm-sw"))
    calls = []

    def fake_write_figures(folder, reference_dir=None):
        calls.append((Path(folder).name, None if reference_dir is None else Path(reference_dir)))
        Image.new("RGB", (40, 30), "grey").save(Path(folder) / "map.png")

    monkeypatch.setattr(report_module, "write_figures", fake_write_figures)
    text = write_report(out, draw_figures=True).read_text(encoding="utf-8")
    assert calls == [("reference", None), ("storm-sw", out / "reference")]
    assert text.count('src="data:image/png;base64,') == 2


def test_missing_run_record_raises_output_error(tmp_path: Path) -> None:
    with pytest.raises(OutputError, match="run.json"):
        write_report(tmp_path)
    with pytest.raises(OutputError, match="not a folder"):
        write_report(tmp_path / "nowhere")


def _chromium() -> str | None:
    if os.access("/usr/bin/chromium", os.X_OK):
        return "/usr/bin/chromium"
    for name in ("chromium", "chromium-browser"):
        found = shutil.which(name)
        if found:
            return found
    return None


def test_report_renders_in_a_headless_browser(report, tmp_path: Path) -> None:
    browser = _chromium()
    if browser is None:
        pytest.skip("chromium not installed: apt-get install chromium")
    shot = tmp_path / "shot.png"
    cmd = [
        browser,
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--disable-dev-shm-usage",
        f"--user-data-dir={tmp_path / 'profile'}",
        f"--screenshot={shot}",
        "--window-size=1200,2000",
        report["path"].resolve().as_uri(),
    ]
    proc = subprocess.run(cmd, capture_output=True, text=True, timeout=120, check=False)
    assert shot.is_file(), f"no screenshot (exit {proc.returncode}): {proc.stderr[-500:]}"
    with Image.open(shot) as img:
        rgb = np.asarray(img.convert("RGB"), dtype=float)
    assert rgb.shape[:2] == (2000, 1200)
    grey = rgb.mean(axis=2)
    assert grey.std() > 20.0, "the screenshot is blank"
    assert (grey < 128).mean() > 0.01, "almost no dark pixels: text did not render"
    # The inline style was applied: the caution box's dark-red border is near the top.
    top = rgb[:600]
    red = (top[..., 0] > 120) & (top[..., 1] < 60) & (top[..., 2] < 60)
    assert red.sum() > 500, "caution border not drawn: inline CSS not applied?"


def _section_text(text: str, anchor: str, end: str) -> str:
    """The visible text of the report between two element ids (tags and images dropped)."""
    import html as html_module
    import re

    part = text[text.index(f'id="{anchor}"') : text.index(f'id="{end}"')]
    part = re.sub(r"data:image/png;base64,[A-Za-z0-9+/=]+", "", part)
    return " ".join(html_module.unescape(re.sub(r"<[^>]+>", " ", part)).split())


def test_storm_event_numbers_are_for_the_event_not_per_year(report) -> None:
    # A storm event's strongest erosion is its most negative shoreline shift [m] over the
    # storm, and nothing in its part of the report is a rate per year.
    summary = json.loads((report["out"] / "event-ne" / "summary.json").read_text("utf-8"))
    shift = summary["strongest_erosion"]["shift_m"]
    section = _section_text(report["text"], "scenario-event-ne", "warnings")
    expected = f"Strongest erosion {shift:.2f} m at transect".replace("-", "\u2212")
    assert expected in section
    assert "m/yr" not in section and "per_yr" not in section
    assert "for the storm as a whole, not per year" in section
    # the yearly scenarios keep their rate
    yearly = _section_text(report["text"], "scenario-storm-sw", "scenario-event-ne")
    assert "m/yr at transect" in yearly
    method = _section_text(report["text"], "method", "results")
    assert "numbers are for the event, not per year" in method


def test_old_event_folder_takes_its_strongest_erosion_from_the_shift(tmp_path: Path) -> None:
    # An event folder written before events had their own units recorded a yearly rate as its
    # strongest erosion; the report shows the most negative shift of the layer instead.
    out = build_output_folder(tmp_path / "out", scenarios=("reference", "event-ne"))
    path = out / "event-ne" / "summary.json"
    summary = json.loads(path.read_text("utf-8"))
    worst = summary["strongest_erosion"]
    shift = worst.pop("shift_m")
    worst["rate_m_per_yr"] = -417.97
    path.write_text(json.dumps(summary), encoding="utf-8")
    section = _section_text(write_report(out).read_text("utf-8"), "scenario-event-ne", "warnings")
    assert f"Strongest erosion {shift:.2f} m at".replace("-", "\u2212") in section
    assert "417" not in section
