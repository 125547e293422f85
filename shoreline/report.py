"""The report: one self-contained HTML file built only from the files of an output folder.

:func:`write_report` reads ``run.json`` and, for each scenario folder, ``summary.json``,
``results.gpkg`` and the figure PNGs, and writes ``report.html``: figures embedded as base64
data URIs, styles in one ``<style>`` element, no script and no external address of any kind, so
the file opens offline, prints cleanly and can be sent by e-mail. Every string taken from a
file is HTML-escaped. Nothing is recomputed, so ``shoreline report OUT`` can rebuild the report
of an old run.
"""

from __future__ import annotations

import base64
import datetime as _dt
import html
import json
import os
import re
import tempfile
from pathlib import Path

import numpy as np

from shoreline import __version__
from shoreline.cautions import CAUTION
from shoreline.errors import OutputError
from shoreline.figures import (
    ScenarioData,
    hotspot_label,
    read_json,
    read_scenario,
    read_structures,
    scenario_metric,
    write_figures,
)

__all__ = ["FIGURE_CAPTIONS", "REFERENCES", "write_report"]

REFERENCES = (
    "USACE (2002). Coastal Engineering Manual. Engineer Manual EM 1110-2-1100, U.S. Army Corps "
    "of Engineers, Washington, DC. Part II-1 (water wave mechanics), Part II-4 (surf zone "
    "hydrodynamics, breaker index Eq. II-4-12), Part III-2 (longshore sediment transport, "
    "Eq. III-2-7, and the one-line shoreline change equation).",
    "USACE (1984). Shore Protection Manual, 4th edition. Coastal Engineering Research Center, "
    "Vicksburg, Mississippi.",
    "Kamphuis, J.W. (1991). Alongshore sediment transport rate. Journal of Waterway, Port, "
    "Coastal, and Ocean Engineering 117(6): 624\u2013640.",
    "del Valle, R., Medina, R., Losada, M.A. (1993). Dependence of coefficient K on grain size. "
    "Journal of Waterway, Port, Coastal, and Ocean Engineering 119(5): 568\u2013574.",
    "Larson, M., Hoan, L.X., Hanson, H. (2010). Direct formula to compute wave height and angle "
    "at incipient breaking. Journal of Waterway, Port, Coastal, and Ocean Engineering 136(2): "
    "119\u2013122.",
    "Dean, R.G. (1977). Equilibrium beach profiles: U.S. Atlantic and Gulf coasts. Ocean "
    "Engineering Report No. 12, Department of Civil Engineering, University of Delaware.",
    "Moore, B.D. (1982). Beach profile evolution in response to changes in water level and wave "
    "height. M.S. thesis, University of Delaware.",
    "Hallermeier, R.J. (1981). A profile zonation for seasonal sand beaches from wave climate. "
    "Coastal Engineering 4: 253\u2013277.",
    "Bruun, P. (1962). Journal of the Waterways and Harbors Division, ASCE 88(WW1): 117\u2013130.",
    "Hanson, H. (1989). Journal of Coastal Research 5(1): 1\u201327.",
    "Dean, R.G., Dalrymple, R.A. (2002). Coastal Processes with Engineering Applications. "
    "Cambridge University Press (chapter on shoreline change).",
    "Hairer, E., Wanner, G. (1996). Solving Ordinary Differential Equations II, 2nd edition. "
    "Springer (linearly implicit methods).",
    "Pelnard-Consid\u00e8re, R. (1956). Essai de th\u00e9orie de l\u2019\u00e9volution des "
    "formes de rivage en plages de sable et de galets. 4es Journ\u00e9es de l\u2019Hydraulique, "
    "Les \u00c9nergies de la Mer, Question III, Rapport 1. Soci\u00e9t\u00e9 Hydrotechnique "
    "de France.",
)

_METHOD_PARAGRAPHS = (
    "<strong>Waves to breaking.</strong> The offshore waves of each time step (significant "
    "height H<sub>s</sub>, peak period T<sub>p</sub>, the direction they come from) are carried "
    "to breaking on every shore-normal transect with linear wave theory: the dispersion "
    "relation, refraction by Snell\u2019s law over straight, parallel depth contours and "
    "shoaling by conservation of energy flux, until the height reaches the breaker index times "
    "the depth, H<sub>b</sub> = \u03b3 d<sub>b</sub> (CEM Part II-1 and II-4, Eq. II-4-12). "
    "The explicit breaking formula of Larson, Hoan &amp; Hanson (2010) is available as an "
    "option. Waves from more than 90\u00b0 off the seaward normal come from land: they move "
    "no sand and the transect counts as sheltered for that time step; so do waves from a "
    "direction in which a straight ray from the breaker zone meets land (the coast itself, "
    "islands and breakwaters of the study, structures): a geometric shadow, without "
    "diffraction. Storm scenarios given by a wind grow their deep-water waves over the fetch "
    "and duration (CEM Part II-2); with an automatic fetch every transect gets its own fetch "
    "over water toward the wind.",
    "<strong>Longshore transport.</strong> The CERC formula, I<sub>l</sub> = K P<sub>l</sub> "
    "(CEM 2002 Part III-2, Eq. III-2-7; K = 0.39 with significant height, SPM 1984, or K from "
    "the grain size after del Valle, Medina &amp; Losada 1993), and the formula of Kamphuis "
    "(1991), which also uses wave period, beach slope and grain size. Transport is positive "
    "toward increasing chainage; the net, gross and one-way rates are averaged over the wave "
    "record, each time step weighted by the time it stands for. Where the study gives "
    "structures across the shore, the transport passing each is its bypass share of what "
    "arrives, and the rest is trapped updrift (sand is conserved).",
    "<strong>Beach profile.</strong> The beach slope and the closure depth are taken from the "
    "study or estimated: the slope from the equilibrium profile h = A y<sup>2/3</sup> "
    "(Dean 1977) with A from the grain size (Moore 1982), the closure depth from the wave "
    "record after Hallermeier (1981). The settings above say which was used.",
    "<strong>Shoreline change.</strong> The one-line sediment balance (Pelnard-Consid\u00e8re "
    "1956; CEM Part III-2): \u2202y/\u2202t = \u2212(1/(D<sub>B</sub> + D<sub>C</sub>)) "
    "\u2202Q/\u2202x, with D<sub>B</sub> the berm height and D<sub>C</sub> the closure depth. "
    "A positive rate is accretion (the shoreline moves seaward), a negative one erosion. For a "
    "storm event the same balance over the storm\u2019s duration gives a shoreline shift in "
    "metres instead of a rate. Values within the stable band count as stable; runs of eroding "
    "or accreting transects at least the minimum hotspot length long are hotspots "
    "(E = erosion, A = accretion).",
    "<strong>Storm events.</strong> A scenario with a duration is a storm event, and its "
    "numbers are for the event, not per year: the shoreline shift [m] and the volume change "
    "[m\u00b3 per m of shore] over the storm, the longshore transport as the volume [m\u00b3] "
    "carried past each transect while the storm lasts, and hotspot volumes gained or lost over "
    "the storm [m\u00b3]. Its files use the same names (<code>shoreline_shift_m</code>, "
    "<code>q_cerc_m3</code>, <code>volume_m3</code>, \u2026) and carry no yearly rate. "
    "A storm\u2019s shift is not to be multiplied up to a year, nor compared with a yearly "
    "rate as if it were one.",
    "<strong>Projection.</strong> Where the study asks for it, the one-line balance is stepped "
    "forward year by year (Pelnard-Consid\u00e8re 1956; numerical form after Hanson 1989): "
    "the shoreline moves along each fixed transect, and at every step the transport is "
    "recomputed from the shore\u2019s current orientation, the wave record stepping through "
    "in its own order (repeated) or in whole years drawn at random (resampled). The steps are "
    "linearly implicit (stable for any step; sand conserved). Sea-level rise moves the "
    "shoreline landward by the Bruun rule (Bruun 1962), R = S L<sub>*</sub>/(B + "
    "h<sub>*</sub>), with L<sub>*</sub> the width of the equilibrium profile to the closure "
    "depth; nourishments are placed as rectangles over the active height; a structure passes "
    "more sand as its updrift shoreline nears its tip (Hanson 1989). Storm events are not "
    "projected. A projection repeats the past waves: it is a scenario, not a forecast.",
)

FIGURE_CAPTIONS = {
    "map.png": (
        "Map. Transects are drawn as ticks of equal length from the shore point seaward (full "
        "lengths are in results.gpkg), coloured by the shoreline change rate (for a storm "
        "event: the shoreline shift over the storm): red erosion, blue accretion, pale near "
        "zero. In grey print darker means a larger value of either sign, so the sign is also "
        "marked beyond the tick: \u2018\u2212\u2019 eroding and \u2018+\u2019 accreting beyond "
        "the stable band. Hotspots are outlined along the shore (solid E#, erosion; dashed A#, "
        "accretion). Grey dotted ticks are sheltered transects. The north arrow points to grid "
        "north of the working CRS; the angle to true north at the map centre is written under it."
    ),
    "alongshore.png": (
        "Along the shore. Top: net longshore transport of each formula (primary formula solid "
        "black, others dashed or dotted), positive toward increasing chainage (for a storm "
        "event: the volume carried over the storm). Bottom: "
        "shoreline change rate (for a storm event: the shift over the storm) with the stable "
        "band shaded grey and hotspots hatched (/// erosion, dots accretion). Separate shore "
        "parts are drawn side by side with a gap and a dashed separator; chainage restarts at 0 "
        "in each part and lines never join across parts. Marks at the foot of the lower panel "
        "are sheltered transects."
    ),
    "wave_climate.png": (
        "Offshore wave climate. Bars point to the directions waves come FROM (clockwise from "
        "true north); their length is the share of time, stacked by H<sub>s</sub> class (light "
        "to dark = small to large). The dashed line is the mean seaward normal of the coast: "
        "waves from near it reach the shore square on; waves from more than 90\u00b0 off the "
        "local normal come from land."
    ),
    "projection/shift.png": (
        "Projected shoreline shift along the shore for each report year (later years darker "
        "and more solid), positive seaward; nourishment stretches hatched, structures as "
        "vertical bars, the setback distance (if given) dashed."
    ),
    "projection/map.png": (
        "Today\u2019s shoreline (black) and the projected shorelines of the report years. The "
        "shifts are drawn along each transect, exaggerated across the shore by the factor in "
        "the title where they would otherwise be too small to see; the true positions are in "
        "projection/shorelines.geojson."
    ),
    "vs_reference.png": (
        "Comparison with the reference. Shoreline change rate of this scenario (solid black) "
        "and of the reference (dashed blue) along the shore; the scenario\u2019s hotspots are "
        "shaded. For a storm event, whose shift in metres does not share an axis with a rate "
        "per year, the reference\u2019s rate is drawn in its own panel above."
    ),
}

_FIGURE_ORDER = ("map.png", "alongshore.png", "wave_climate.png", "vs_reference.png")

#: The projection's figures, in the scenario's ``projection`` folder.
_PROJECTION_FIGURES = ("projection/shift.png", "projection/map.png")

_CLASS_ORDER = ("erosion", "accretion", "stable", "sheltered")

_STYLE = """
:root { color-scheme: light; }
body { font-family: "Segoe UI", "Helvetica Neue", Arial, "Liberation Sans", sans-serif;
       color: #111; background: #fff; line-height: 1.45; margin: 0 auto; max-width: 1100px;
       padding: 1.2rem 1.5rem 3rem; }
h1 { font-size: 1.6rem; margin: 0.2rem 0 0.3rem; }
h2 { font-size: 1.3rem; border-bottom: 2px solid #333; padding-bottom: 0.15rem;
     margin-top: 2rem; }
h3 { font-size: 1.12rem; margin-top: 1.6rem; }
h4 { font-size: 1rem; margin: 1rem 0 0.3rem; }
p.meta { color: #333; margin: 0 0 0.6rem; }
.caution { border: 3px solid #a00000; background: #fff5f5; padding: 0.7rem 1rem;
           margin: 1rem 0; }
.caution .caution-title { font-weight: bold; letter-spacing: 0.04em; margin: 0 0 0.3rem; }
.caution .caution-text { margin: 0; }
nav ol { margin: 0.3rem 0; padding-left: 1.4rem; }
a { color: #0b4f8a; }
table { border-collapse: collapse; margin: 0.4rem 0 1rem; font-size: 0.92rem; }
th, td { border: 1px solid #888; padding: 0.22rem 0.5rem; text-align: left;
         vertical-align: top; }
thead th { background: #eee; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
code, .mono { font-family: "DejaVu Sans Mono", Consolas, "Liberation Mono", monospace;
              font-size: 0.88em; word-break: break-all; }
figure { margin: 1rem 0 1.6rem; break-inside: avoid; page-break-inside: avoid; }
figure img { max-width: 100%; height: auto; border: 1px solid #bbb; }
figcaption { font-size: 0.9rem; color: #222; margin-top: 0.3rem; }
.missing { color: #7a0000; font-style: italic; }
ol.refs li { margin-bottom: 0.25rem; }
.settings-grid { display: flex; flex-wrap: wrap; gap: 0 2rem; align-items: flex-start; }
footer { margin-top: 2rem; font-size: 0.85rem; color: #333; }
@media print {
  body { color: #000; background: #fff; max-width: none; padding: 0; font-size: 10.5pt; }
  .caution { background: #fff; border-color: #000; }
  a { color: #000; text-decoration: none; }
  nav { display: none; }
  h2, h3, h4 { break-after: avoid; page-break-after: avoid; }
  thead th { background: #fff; }
  table, tr { break-inside: avoid; page-break-inside: avoid; }
  section.scenario { break-before: page; page-break-before: always; }
}
"""


def write_report(out_dir: str | os.PathLike, *, draw_figures: bool = False) -> Path:
    """Write ``out_dir/report.html``, one self-contained HTML file, from the run's files.

    Parameters
    ----------
    out_dir : str or path-like
        An output folder written by ``shoreline run``: ``run.json`` and one folder per
        scenario (``summary.json``, ``results.gpkg`` and the figure PNGs).
    draw_figures : bool
        If true, (re)draw every scenario's figures first with
        :func:`shoreline.figures.write_figures` (from the same files); otherwise embed the PNGs
        that are there and say which are missing.

    Returns
    -------
    pathlib.Path
        The report file, written atomically (temporary file in the same folder, then rename).

    Raises
    ------
    OutputError
        If ``run.json`` or a scenario's files cannot be read, or the report cannot be written.

    Notes
    -----
    Sections: title with run date and tool version and the caution; the study (input files
    with SHA-256, the settings used); the method in brief with references; results per
    scenario (reference first: counts, hotspot table, figures); warnings; the caution again.
    """
    out = Path(out_dir)
    if not out.is_dir():
        raise OutputError(f"{out}: not a folder; expected the output folder of `shoreline run`")
    run = read_json(out / "run.json")
    folders, missing = _scenario_folders(out, run)
    if draw_figures:
        base = next((f for f in folders if f.name == "reference"), None)
        for folder in folders:
            write_figures(folder, reference_dir=base if folder != base else None)
    scenarios = [read_scenario(folder) for folder in folders]
    text = _render(run, scenarios, missing)
    return _write_atomic(out / "report.html", text)


# --------------------------------------------------------------------------------------------
# Collecting
# --------------------------------------------------------------------------------------------


def _scenario_folders(out: Path, run: dict) -> tuple[list[Path], list[str]]:
    """Return the scenario folders (reference first, then run.json order) and listed-but-absent."""
    found = {p.name: p for p in out.iterdir() if p.is_dir() and (p / "summary.json").is_file()}
    listed = [str(s) for s in run.get("scenarios", []) if isinstance(s, str | int | float)]
    order = ["reference"] + listed + sorted(found)
    folders, seen = [], set()
    for name in order:
        if name in found and name not in seen:
            seen.add(name)
            folders.append(found[name])
    missing = [name for name in dict.fromkeys(listed) if name not in found]
    return folders, missing


# --------------------------------------------------------------------------------------------
# Rendering
# --------------------------------------------------------------------------------------------


def _esc(value) -> str:
    return html.escape(str(value), quote=True)


def _fmt_setting(value) -> str:
    """Return an escaped, readable form of one setting value."""
    if value is None:
        return '<span class="missing">not set</span>'
    if isinstance(value, bool):
        return "<code>true</code>" if value else "<code>false</code>"
    if isinstance(value, int | float):
        return f"<code>{_esc(repr(value))}</code>"
    if isinstance(value, str):
        return f"<code>{_esc(value)}</code>"
    return f"<code>{_esc(json.dumps(value, ensure_ascii=False, default=str))}</code>"


def _num(value, digits: int = 2, thousands: bool = False) -> str:
    """Format a number with a typographic minus; '\u2013' when missing or not finite."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        return "\u2013"
    if not np.isfinite(x):
        return "\u2013"
    text = f"{x:,.{digits}f}" if thousands else f"{x:.{digits}f}"
    return text.replace(",", "\u2009").replace("-", "\u2212")


def _flatten(prefix: str, value) -> list[tuple[str, object]]:
    if isinstance(value, dict) and value:
        rows = []
        for key, sub in value.items():
            rows += _flatten(f"{prefix}.{key}" if prefix else str(key), sub)
        return rows
    return [(prefix, value)]


def _caution_box(box_id: str, title: str) -> str:
    return (
        f'<div class="caution" id="{box_id}" role="note">'
        f'<p class="caution-title">{_esc(title)}</p>'
        f'<p class="caution-text">{_esc(CAUTION)}</p></div>'
    )


def _key_value_table(rows: list[tuple[str, str]], css: str = "") -> str:
    body = "".join(f"<tr><th>{_esc(k)}</th><td>{v}</td></tr>" for k, v in rows)
    cls = f' class="{css}"' if css else ""
    return f"<table{cls}><tbody>{body}</tbody></table>"


def _study_title(run: dict) -> str:
    study = run.get("study") if isinstance(run.get("study"), dict) else {}
    for candidate in (study.get("name"), study.get("title")):
        if isinstance(candidate, str) and candidate.strip():
            return candidate
    inner = study.get("study")
    if isinstance(inner, dict):
        for key in ("name", "title"):
            if isinstance(inner.get(key), str) and inner[key].strip():
                return inner[key]
    study_file = run.get("study_file")
    if not study_file:
        return "unnamed study"
    path = Path(str(study_file))
    return f"{path.parent.name}/{path.name}" if path.parent.name else path.name


def _render_study(run: dict) -> str:
    parts = ['<section id="study"><h2>1. The study</h2>']
    rows = [
        ("Study file", f"<code>{_esc(run.get('study_file', 'not recorded'))}</code>"),
        ("Command", f"<code>{_esc(' '.join(map(str, run.get('command', []))))}</code>"),
        ("Working CRS", _esc(run.get("working_crs", "not recorded"))),
    ]
    counts = run.get("counts")
    if isinstance(counts, dict):
        for key, value in counts.items():
            rows.append((f"Count: {key}", _esc(value)))
    timings = run.get("timings_s")
    if isinstance(timings, dict) and timings:
        text = ", ".join(f"{_esc(k)} {_num(v, 2)} s" for k, v in timings.items())
        rows.append(("Time taken", text))
    parts.append(_key_value_table(rows, "run"))

    parts.append("<h3>Input files</h3>")
    inputs = run.get("inputs")
    if isinstance(inputs, dict) and inputs:
        body = []
        for path, digest in inputs.items():
            if isinstance(digest, dict):
                digest = digest.get("sha256", json.dumps(digest, default=str))
            body.append(
                f'<tr><td><code>{_esc(path)}</code></td><td class="mono">{_esc(digest)}</td></tr>'
            )
        parts.append(
            '<table class="inputs"><thead><tr><th>File</th><th>SHA-256</th></tr></thead>'
            f"<tbody>{''.join(body)}</tbody></table>"
        )
    else:
        parts.append('<p class="missing">No input files are recorded in run.json.</p>')

    parts.append("<h3>Settings used (defaults filled in)</h3>")
    settings = run.get("settings")
    if isinstance(settings, dict) and settings:
        parts.append('<div class="settings-grid">')
        loose = [(k, v) for k, v in settings.items() if not isinstance(v, dict)]
        if loose:
            rows = [(k, _fmt_setting(v)) for k, v in loose]
            parts.append(f"<div><h4>general</h4>{_key_value_table(rows, 'settings')}</div>")
        for section, values in settings.items():
            if not isinstance(values, dict):
                continue
            rows = [(k, _fmt_setting(v)) for k, v in _flatten("", values)]
            table = _key_value_table(rows, "settings") if rows else '<p class="missing">empty</p>'
            parts.append(f"<div><h4>{_esc(section)}</h4>{table}</div>")
        parts.append("</div>")
    else:
        parts.append('<p class="missing">No settings are recorded in run.json.</p>')
    parts.append("</section>")
    return "".join(parts)


def _render_method() -> str:
    paragraphs = "".join(f"<p>{p}</p>" for p in _METHOD_PARAGRAPHS)
    refs = "".join(f"<li>{_esc(r)}</li>" for r in REFERENCES)
    return (
        '<section id="method"><h2>2. The method in brief</h2>'
        f'{paragraphs}<h3>References</h3><ol class="refs">{refs}</ol></section>'
    )


def _anchor(name: str) -> str:
    return "scenario-" + (re.sub(r"[^A-Za-z0-9_-]+", "-", name).strip("-") or "unnamed")


#: Hotspot value columns: (column, heading, digits) for yearly rates and for storm events.
_HOTSPOT_VALUES = (
    ("mean_rate_m_per_yr", "Mean rate [m/yr]", 2),
    ("peak_rate_m_per_yr", "Peak rate [m/yr]", 2),
    ("volume_m3_per_yr", "Volume [m\u00b3/yr]", 0),
)
_EVENT_HOTSPOT_VALUES = (
    ("mean_shift_m", "Mean shift [m]", 2),
    ("peak_shift_m", "Peak shift [m]", 2),
    ("volume_m3", "Volume over the storm [m\u00b3]", 0),
)


def _hotspot_table(data: ScenarioData) -> str:
    hot = data.hotspots
    if len(hot) == 0:
        return '<p class="no-hotspots">No erosion or accretion hotspot in this scenario.</p>'
    if "hotspot_id" in hot.columns:
        hot = hot.sort_values("hotspot_id", kind="stable")
    event = any(c in hot.columns for c, _, _ in _EVENT_HOTSPOT_VALUES)
    values = _EVENT_HOTSPOT_VALUES if event else _HOTSPOT_VALUES
    head = (
        "<thead><tr><th>Hotspot</th><th>Class</th><th>Part</th>"
        '<th class="num">Chainage [km]</th><th class="num">Length [m]</th>'
        + "".join(f'<th class="num">{_esc(h)}</th>' for _, h, _ in values)
        + "</tr></thead>"
    )
    rows = []
    for _, h in hot.iterrows():
        hclass = str(h.get("class", ""))
        label = hotspot_label(h.get("hotspot_id", 0), hclass)
        chain = (
            f"{_num(_km(h.get('start_chainage_m')), 2)}\u2013"
            f"{_num(_km(h.get('end_chainage_m')), 2)}"
        )
        cells = "".join(
            f'<td class="num">{_num(h.get(c), d, thousands=d == 0)}</td>' for c, _, d in values
        )
        rows.append(
            f"<tr><td><strong>{_esc(label)}</strong></td><td>{_esc(hclass)}</td>"
            f'<td>{_esc(h.get("part_id", ""))}</td><td class="num">{chain}</td>'
            f'<td class="num">{_num(h.get("length_m"), 0, True)}</td>{cells}</tr>'
        )
    return (
        f'<table class="hotspots" data-scenario="{_esc(data.name)}">{head}'
        f"<tbody>{''.join(rows)}</tbody></table>"
    )


def _structure_table(data: ScenarioData) -> str:
    """What each structure of the study traps in this scenario ('' where there are none)."""
    frame = read_structures(data.folder)
    if frame is None:
        return ""
    # a storm event's layer holds volumes over the event (q_arriving_m3, ...)
    event = "trapped_m3" in frame.columns
    suffix, unit = ("_m3", "m\u00b3 over the storm") if event else ("_m3_per_yr", "m\u00b3/yr")
    head = (
        "<thead><tr><th>Structure</th><th>Part</th>"
        '<th class="num">Chainage [km]</th><th class="num">Bypass</th>'
        f'<th class="num">Arriving [{unit}]</th><th class="num">Passing [{unit}]</th>'
        f'<th class="num">Trapped [{unit}]</th></tr></thead>'
    )
    rows = [
        f"<tr><td>{_esc(r.get('structure_id', ''))}</td><td>{_esc(r.get('part_id', ''))}</td>"
        f'<td class="num">{_num(_km(r.get("chainage_m")), 2)}</td>'
        f'<td class="num">{_num(r.get("bypass"), 2)}</td>'
        f'<td class="num">{_num(r.get("q_arriving" + suffix), 0, True)}</td>'
        f'<td class="num">{_num(r.get("q_passing" + suffix), 0, True)}</td>'
        f'<td class="num">{_num(r.get("trapped" + suffix), 0, True)}</td></tr>'
        for _, r in frame.iterrows()
    ]
    return (
        "<h4>Structures</h4><p>Gross transport arriving at each structure, the share passing "
        "it and the rest trapped updrift (one-line balance; sand conserved).</p>"
        f'<table class="structures">{head}<tbody>{"".join(rows)}</tbody></table>'
    )


def _km(value_m) -> float:
    try:
        return float(value_m) / 1000.0
    except (TypeError, ValueError):
        return float("nan")


def _hotspot_classes(data: ScenarioData | None) -> dict[int, str]:
    if data is None or len(data.hotspots) == 0 or "hotspot_id" not in data.hotspots.columns:
        return {}
    ids = data.hotspots["hotspot_id"].to_numpy(int)
    classes = data.hotspots.get("class", [""] * len(ids))
    return {int(i): str(c) for i, c in zip(ids, classes, strict=True)}


def _versus_reference(data: ScenarioData, reference: ScenarioData | None) -> str | None:
    """Return an escaped sentence on the hotspots created, removed, worsened; None if unknown."""
    info = data.summary.get("info") if isinstance(data.summary.get("info"), dict) else {}
    vs = info.get("versus_reference")
    if not isinstance(vs, dict):
        record = data.folder / "scenario.json"
        try:
            vs = json.loads(record.read_text(encoding="utf-8")).get("versus_reference")
        except (OSError, ValueError, AttributeError):
            vs = None
    if not isinstance(vs, dict) or not vs:
        return None
    if vs.get("event"):
        return (
            "A storm event: its hotspots are of shoreline shift over the storm and are listed "
            "as its own (not matched with the reference\u2019s hotspots of yearly rate)."
        )
    own, base = _hotspot_classes(data), _hotspot_classes(reference)

    def labels(ids, classes) -> str:
        out = []
        for i in ids if isinstance(ids, list) else []:
            try:
                out.append(hotspot_label(int(i), classes.get(int(i), "")))
            except (TypeError, ValueError):
                out.append(str(i))
        return ", ".join(out) or "none"

    parts = [
        f"new hotspots: {_esc(labels(vs.get('created'), own))}",
        f"reference hotspots gone: {_esc(labels(vs.get('removed_reference'), base))}",
    ]
    worse = []
    for w in vs.get("worsened", []) if isinstance(vs.get("worsened"), list) else []:
        if not isinstance(w, dict):
            continue
        worse.append(
            f"{_esc(labels([w.get('hotspot_id')], own))} (peak "
            f"{_num(w.get('peak_rate_m_per_yr'), 2)} m/yr; reference "
            f"{_esc(labels([w.get('reference_hotspot_id')], base))} "
            f"{_num(w.get('reference_peak_rate_m_per_yr'), 2)} m/yr)"
        )
    parts.append("worsened: " + (", ".join(worse) if worse else "none"))
    return "; ".join(parts) + "."


_WAVE_NAMES = {
    "kind": "kind",
    "source": "source",
    "hours": "hours [h]",
    "records": "records",
    "records_skipped": "records skipped",
    "hs_m": "Hs [m]",
    "tp_s": "Tp [s]",
    "dir_deg": "direction from [\u00b0]",
    "hs_mean_m": "mean Hs [m]",
    "hs_max_m": "largest Hs [m]",
    "depth_m": "depth of the input [m]",
}


def _plain(value) -> str:
    """Escaped short text for a value from a JSON file (numbers rounded for reading)."""
    if isinstance(value, float):
        return _esc(f"{value:.4g}")
    if isinstance(value, dict | list):
        return _esc(json.dumps(value, ensure_ascii=False, default=str))
    return _esc(value)


def _render_scenario(data: ScenarioData, reference: ScenarioData | None = None) -> str:
    s = data.summary
    tr = data.transects
    classes = tr["class"].astype(str).value_counts().to_dict()
    class_text = ", ".join(f"{classes.get(c, 0)} {c}" for c in _CLASS_ORDER)
    others = {k: v for k, v in classes.items() if k not in _CLASS_ORDER}
    if others:
        class_text += ", " + ", ".join(f"{v} {k}" for k, v in others.items())
    shore = data.shoreline
    length_m = (
        float(np.nansum(shore["length_m"].to_numpy(float)))
        if "length_m" in shore.columns
        else float(shore.geometry.length.sum())
    )
    n_hot = s.get("hotspots") if isinstance(s.get("hotspots"), dict) else {}
    metric = scenario_metric(data)
    info = s.get("info") if isinstance(s.get("info"), dict) else {}
    shown = _esc(metric.label)
    if metric.event:
        shown += (
            ". <strong>A storm event: every number of this scenario is for the storm as a "
            "whole, not per year</strong> (shift and volume change over the storm, transport "
            "as the volume carried while it lasts)."
        )
    rows = [
        ("Shown", shown),
        ("Transects", f"{len(tr)} ({_esc(class_text)})"),
        ("Shore parts", f"{len(shore)}, {_num(length_m / 1000.0, 2)} km in total"),
        (
            "Hotspots",
            f"{_esc(n_hot.get('erosion', 0))} erosion, {_esc(n_hot.get('accretion', 0))} accretion",
        ),
        ("Primary formula", _esc(s.get("primary", "not recorded"))),
        ("Formulas run", _esc(", ".join(map(str, s.get("formulas", []))) or "not recorded")),
        ("Stable band", f"\u00b1{_num(metric.band, 2)} {_esc(metric.unit)}"),
        ("Minimum hotspot length", f"{_num(s.get('min_hotspot_length_m'), 0)} m"),
    ]
    if "closure_depth_m" in s:
        rows.append(("Closure depth", f"{_num(s.get('closure_depth_m'), 2)} m"))
    if "berm_height_m" in s:
        rows.append(("Berm height", f"{_num(s.get('berm_height_m'), 2)} m"))
    if "event_duration_h" in info:
        rows.append(("Storm duration", f"{_num(info.get('event_duration_h'), 1)} h"))
    rows += [
        ("Mean seaward normal", f"{_num(s.get('mean_normal_az_deg'), 1)}\u00b0 from true north"),
        ("Working CRS", _esc(s.get("working_crs_name") or s.get("working_crs", "not recorded"))),
    ]
    worst = _strongest_erosion(data, metric)
    if worst:
        rows.append(
            (
                "Strongest erosion",
                f"{_num(worst.get('value'), 2)} {_esc(metric.unit)} at transect "
                f"{_esc(worst.get('transect_id', '?'))} (part {_esc(worst.get('part_id', '?'))}, "
                f"chainage {_num(_km(worst.get('chainage_m')), 2)} km)"
                + (" over the storm" if metric.event else ""),
            )
        )
    waves = s.get("waves")
    if isinstance(waves, dict) and waves:
        text = "; ".join(f"{_esc(_WAVE_NAMES.get(k, k))} {_plain(v)}" for k, v in waves.items())
        rows.append(("Offshore waves", text))
    spec = info.get("scenario")
    if isinstance(spec, dict) and spec:
        text = "; ".join(f"{_esc(k)} {_plain(v)}" for k, v in spec.items())
        rows.append(("Scenario definition", text))
    versus = _versus_reference(data, reference) if data.name != "reference" else None
    if versus:
        rows.append(("Against the reference", versus))
    anchor = _anchor(data.name)
    parts = [
        f'<section class="scenario" id="{_esc(anchor)}">',
        f"<h3>Scenario \u201c{_esc(data.name)}\u201d</h3>",
        f"<p>Folder <code>{_esc(data.folder.name)}</code>.</p>",
        _key_value_table(rows, "counts"),
        "<h4>Hotspots</h4>",
        _hotspot_table(data),
        _structure_table(data),
        _ensemble_section(data),
        _projection_section(data),
        "<h4>Figures</h4>",
    ]
    for name in _FIGURE_ORDER:
        path = data.folder / name
        if name == "vs_reference.png" and not path.is_file():
            continue
        if not path.is_file():
            parts.append(
                f'<p class="missing">Figure {_esc(name)} not found in the folder (run '
                "<code>shoreline report</code> with figures redrawn to make it).</p>"
            )
            continue
        try:
            payload = base64.b64encode(path.read_bytes()).decode("ascii")
        except OSError as exc:
            raise OutputError(f"{path}: cannot be read ({exc})") from exc
        alt = FIGURE_CAPTIONS[name].split(".")[0]
        parts.append(
            f'<figure><img src="data:image/png;base64,{payload}" alt="{_esc(alt)} \u2014 '
            f'scenario {_esc(data.name)}"><figcaption>{FIGURE_CAPTIONS[name]}'
            f"{_ensemble_caption(data, name)}</figcaption>"
            "</figure>"
        )
    parts.append("</section>")
    return "".join(parts)


def _figure(data: ScenarioData, name: str) -> str:
    """One embedded figure of a scenario folder, or a note that it is missing."""
    path = data.folder / name
    if not path.is_file():
        return (
            f'<p class="missing">Figure {_esc(name)} not found in the folder (run '
            "<code>shoreline report</code> with figures redrawn to make it).</p>"
        )
    try:
        payload = base64.b64encode(path.read_bytes()).decode("ascii")
    except OSError as exc:
        raise OutputError(f"{path}: cannot be read ({exc})") from exc
    alt = FIGURE_CAPTIONS[name].split(".")[0]
    return (
        f'<figure><img src="data:image/png;base64,{payload}" alt="{_esc(alt)} \u2014 '
        f'scenario {_esc(data.name)}"><figcaption>{FIGURE_CAPTIONS[name]}</figcaption>'
        "</figure>"
    )


def _sea_level_text(spec) -> str:
    """The sea-level rise of a projection's settings in words."""
    if not isinstance(spec, dict):
        return "none"
    if "m_per_yr" in spec:
        return f"{float(spec['m_per_yr']) * 1000:g} mm/yr"
    table = spec.get("m_at_years_after_start") or {}
    return ", ".join(f"{v:g} m at year {k}" for k, v in table.items()) or "none"


def _projection_section(data: ScenarioData) -> str:
    """The scenario's forward projection ('' where it has none): numbers, fills, figures."""
    proj = data.summary.get("projection")
    if not isinstance(proj, dict):
        return ""
    st = proj.get("settings") if isinstance(proj.get("settings"), dict) else {}
    start = st.get("start_year")
    slr = st.get("sea_level_rise")
    intro = (
        f"<p>The shoreline carried forward {_esc(st.get('years', '?'))} years"
        + (f" from {_esc(start)}" if start is not None else "")
        + (
            f" with whole years of the wave record drawn at random (seed {_esc(st.get('seed'))})"
            if st.get("climate") == "resample"
            else " with the wave record repeated"
        )
        + f"; sea-level rise {_esc(_sea_level_text(slr))}; {_esc(st.get('steps', '?'))} "
        "steps of at most "
        f"{_num(st.get('max_step_yr', float('nan')) * 365.25, 1)} days "
        f"({_esc(st.get('scheme', ''))}). A scenario of the past waves repeated, not a "
        "forecast.</p>"
    )
    years = proj.get("years") if isinstance(proj.get("years"), dict) else {}
    head = (
        "<thead><tr><th>Year</th>"
        '<th class="num">Largest retreat [m]</th><th class="num">Largest advance [m]</th>'
        '<th class="num">Mean shift [m]</th><th class="num">Sea-level rise [m]</th>'
        '<th class="num">Bruun retreat, mean [m]</th></tr></thead>'
    )
    rows = []
    for year, v in years.items():
        if not isinstance(v, dict):
            continue
        label = f"{year}" + (f" ({int(start) + int(year)})" if start is not None else "")
        rows.append(
            f"<tr><td>{_esc(label)}</td>"
            f'<td class="num">{_num(v.get("shift_min_m"), 2)}</td>'
            f'<td class="num">{_num(v.get("shift_max_m"), 2)}</td>'
            f'<td class="num">{_num(v.get("shift_mean_m"), 2)}</td>'
            f'<td class="num">{_num(v.get("sea_level_rise_m"), 3)}</td>'
            f'<td class="num">{_num(v.get("bruun_retreat_mean_m"), 2)}</td></tr>'
        )
    parts = [
        "<h4>Projection</h4>",
        intro,
        f'<table class="projection">{head}<tbody>{"".join(rows)}</tbody></table>',
    ]
    fills = proj.get("nourishments") or []
    if fills:
        report_years = [str(y) for y in proj.get("report_years", [])]
        fhead = (
            "<thead><tr><th>Nourishment</th><th>Part</th>"
            '<th class="num">From–to [km]</th><th class="num">Volume [m\u00b3]</th>'
            '<th class="num">Year</th>'
            + "".join(f'<th class="num">Kept, year {_esc(y)}</th>' for y in report_years)
            + "</tr></thead>"
        )
        frows = []
        for f in fills:
            kept = f.get("retained_fraction") or {}
            frows.append(
                f"<tr><td>{_esc(f.get('name', ''))}</td><td>{_esc(f.get('part_id', ''))}</td>"
                f'<td class="num">{_num(_km(f.get("from_chainage_m")), 2)}\u2013'
                f"{_num(_km(f.get('to_chainage_m')), 2)}</td>"
                f'<td class="num">{_num(f.get("volume_m3"), 0, True)}</td>'
                f'<td class="num">{_num(f.get("year"), 1)}</td>'
                + "".join(
                    '<td class="num">'
                    + ("\u2013" if kept.get(y) is None else f"{_num(100 * kept[y], 0)} %")
                    + "</td>"
                    for y in report_years
                )
                + "</tr>"
            )
        parts += [
            "<p>Share of each nourishment\u2019s volume still within its own stretch: the "
            "projection with it less the same projection without any nourishment.</p>",
            f'<table class="nourishments">{fhead}<tbody>{"".join(frows)}</tbody></table>',
        ]
    for warning in proj.get("warnings") or []:
        parts.append(f'<p class="missing">{_esc(warning)}</p>')
    parts += [_figure(data, name) for name in _PROJECTION_FIGURES]
    return "".join(parts)


def _strongest_erosion(data: ScenarioData, metric) -> dict:
    """``value`` (in the metric's unit), transect, part and chainage of the strongest erosion.

    From ``summary.json`` (``shift_m`` for a storm event, else ``rate_m_per_yr``); for an
    event folder written before events had their own units, the most negative shift in the
    transect layer. Empty when unknown.
    """
    worst = data.summary.get("strongest_erosion")
    if not isinstance(worst, dict) or not worst:
        return {}
    key = "shift_m" if metric.event else "rate_m_per_yr"
    if key in worst:
        return worst | {"value": worst[key]}
    tr = data.transects
    if not metric.event or metric.column not in tr.columns:
        return {}
    values = tr[metric.column].to_numpy(float)
    if not np.isfinite(values).any():
        return {}
    row = tr.iloc[int(np.nanargmin(values))]
    return {
        "value": values[int(np.nanargmin(values))],
        "transect_id": row.get("transect_id", "?"),
        "part_id": row.get("part_id", "?"),
        "chainage_m": row.get("chainage_m"),
    }


def _render_warnings(run: dict) -> str:
    warnings = run.get("warnings", [])
    if isinstance(warnings, str):
        warnings = [warnings]
    if not isinstance(warnings, list):
        warnings = [json.dumps(warnings, default=str)]
    if warnings:
        items = "".join(f"<li>{_esc(w)}</li>" for w in warnings)
        body = f'<ul class="warnings">{items}</ul>'
    else:
        body = "<p>No warnings were recorded for this run.</p>"
    return f'<section id="warnings"><h2>4. Warnings</h2>{body}</section>'


def _render(run: dict, scenarios: list[ScenarioData], missing: list[str]) -> str:
    title = f"Shoreline screening report \u2014 {_study_title(run)}"
    now = _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    tool = f"{run.get('tool', 'shoreline')} {run.get('version', '(version not recorded)')}"
    meta = (
        f"Run started {_esc(run.get('started_utc', 'at an unrecorded time'))} with "
        f"{_esc(tool)}. Report written {_esc(now)} by shoreline {_esc(__version__)}."
    )
    nav_items = [
        ("study", "The study"),
        ("method", "The method in brief"),
        ("results", "Results"),
        ("warnings", "Warnings"),
        ("caution-end", "Caution"),
    ]
    nav = "".join(f'<li><a href="#{a}">{_esc(t)}</a></li>' for a, t in nav_items)
    results = ['<section id="results"><h2>3. Results</h2>']
    if not scenarios:
        results.append('<p class="missing">No scenario folder (with summary.json) was found.</p>')
    else:
        names = ", ".join(
            f'<a href="#{_esc(_anchor(d.name))}">{_esc(d.name)}</a>' for d in scenarios
        )
        results.append(f"<p>Scenarios: {names}.</p>")
    for name in missing:
        results.append(
            f'<p class="missing">Scenario {_esc(name)} is listed in run.json but its folder '
            "was not found.</p>"
        )
    base = next((d for d in scenarios if d.name == "reference"), None)
    results += [_render_scenario(d, base) for d in scenarios]
    results.append("</section>")
    return "".join(
        [
            "<!DOCTYPE html>\n",
            '<html lang="en"><head><meta charset="utf-8">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            f'<meta name="generator" content="shoreline {_esc(__version__)}">',
            f"<title>{_esc(title)}</title><style>{_STYLE}</style></head><body>",
            f'<header id="top"><h1>{_esc(title)}</h1><p class="meta">{meta}</p>',
            _caution_box("caution-top", "CAUTION \u2014 READ BEFORE USING THESE RESULTS"),
            f"<nav><strong>Contents</strong><ol>{nav}</ol></nav></header><main>",
            _render_study(run),
            _render_method(),
            _render_ensemble_method(run),
            "".join(results),
            _render_warnings(run),
            "</main>",
            _caution_box("caution-end", "CAUTION"),
            f"<footer><p>{meta}</p></footer></body></html>\n",
        ]
    )


def _write_atomic(path: Path, text: str) -> Path:
    try:
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    except OSError as exc:
        raise OutputError(f"{path}: cannot write the report ({exc})") from exc
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
        os.chmod(tmp, 0o644)
        os.replace(tmp, path)
    except OSError as exc:
        raise OutputError(f"{path}: cannot write the report ({exc})") from exc
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return path


# --------------------------------------------------------------------------------------------
# The ensemble of [uncertainty] (shoreline/ensemble.py): drawn only where the files carry it
# --------------------------------------------------------------------------------------------

ENSEMBLE_REFERENCES = (
    "Mastrandrea, M.D., et al. (2010). Guidance Note for Lead Authors of the IPCC Fifth "
    "Assessment Report on Consistent Treatment of Uncertainties. Intergovernmental Panel on "
    "Climate Change (the likelihood scale, Table 1).",
    "Sobol\u2019, I.M. (2001). Global sensitivity indices for nonlinear mathematical models and "
    "their Monte Carlo estimates. Mathematics and Computers in Simulation 55: 271\u2013280.",
    "Saltelli, A., Annoni, P., Azzini, I., Campolongo, F., Ratto, M., Tarantola, S. (2010). "
    "Variance based sensitivity analysis of model output. Design and estimator for the total "
    "sensitivity index. Computer Physics Communications 181: 259\u2013270.",
    "Efron, B., Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.",
)

_ENSEMBLE_CAPTION = (
    "Sensitivity. For the coast\u2019s mean net transport and each hotspot\u2019s mean rate "
    "(storm: mean shift), the first-order index of each uncertain input: the share of the "
    "spread among the members that the input explains by itself (Sobol\u2019 2001; estimator "
    "of Saltelli et al. 2010). Darker and larger means more; the largest of each row is boxed. "
    "The indices of a row add up to less than one where inputs act together (a coefficient "
    "times a wave height, say)."
)


def _ensemble_caption(data: ScenarioData, name: str) -> str:
    """What an ensemble adds to a figure, for its caption ('' without one)."""
    if not isinstance(data.summary.get("ensemble"), dict):
        return ""
    if name == "alongshore.png":
        return (
            " The grey band holds the middle 90 % of the ensemble members (5 % to 95 %) and "
            "the dashed grey line is their median; the solid black line is the run at the "
            "study\u2019s own settings."
        )
    if name == "map.png":
        return (
            " The percentage beside a hotspot label is the share of ensemble members in which "
            "at least half of its stretch is in its class."
        )
    return ""


def _render_ensemble_method(run: dict) -> str:
    """The method of the ensemble, in plain words ('' for a run without [uncertainty])."""
    u = run.get("uncertainty")
    if not isinstance(u, dict):
        return ""
    dists = u.get("distributions") if isinstance(u.get("distributions"), dict) else {}
    items = []
    for name, d in dists.items():
        if not isinstance(d, dict):
            continue
        if d.get("distribution") == "uniform":
            items.append(
                f"{_esc(name)} uniform {_num(d.get('low'), 3)}\u2013{_num(d.get('high'), 3)}"
            )
        else:
            items.append(
                f"{_esc(name)} normal, mean {_num(d.get('mean'), 2)}, sd {_num(d.get('sd'), 3)}"
            )
    held = ", ".join(_esc(h) for h in u.get("held_at_study_values", []) or []) or "none"
    refs = "".join(f"<li>{_esc(r)}</li>" for r in ENSEMBLE_REFERENCES)
    return (
        '<section id="ensemble-method"><h2>2a. Uncertain inputs: the ensemble</h2>'
        f"<p>Every scenario was also run {_esc(u.get('members'))} times (seed "
        f"{_esc(u.get('seed'))}), each time with the uncertain inputs drawn at random from "
        f"their ranges: {'; '.join(items) or 'none'}; formulas: "
        f"{_esc(u.get('formulas'))}; the wave record resampled in blocks: "
        f"{_esc(u.get('record_blocks'))}. Held at the study\u2019s values: {held}. The same "
        "seed gives the same members, so a re-run gives the same numbers.</p>"
        "<p><strong>What the probabilities mean.</strong> A transect\u2019s p_erosion is the "
        "share of these runs in which it erodes faster than the stable band; a hotspot\u2019s "
        "probability is the share of runs in which at least half of its stretch is in its class. "
        "The words follow the likelihood scale of the IPCC (Mastrandrea et al. 2010): virtually "
        "certain 99\u2013100 %, very likely 90\u2013100 %, likely 66\u2013100 %, about as "
        "likely as not 33\u201366 %, unlikely 0\u201333 %, very unlikely 0\u201310 %. The band "
        "in the along-shore figure holds the middle 90 % of the runs (5 % to 95 %).</p>"
        "<p><strong>What they do not mean.</strong> They cover only the inputs listed above. "
        "They say nothing about the simplifications of the model itself, which every run shares: "
        "the one-line balance, the transport formulas, waves carried over straight parallel "
        "depth contours, no cross-shore storm erosion or sediment supply. \u201cVery likely "
        "erosion\u201d means very likely within this screening model, not a measured "
        "certainty; the caution above applies in full.</p>"
        f'<h3>References (ensemble)</h3><ol class="refs">{refs}</ol></section>'
    )


def _ensemble_section(data: ScenarioData) -> str:
    """How sure each hotspot is and what spreads it, with the sensitivity chart ('' if none)."""
    ens = data.summary.get("ensemble")
    if not isinstance(ens, dict):
        return ""
    metric = scenario_metric(data)
    counts = (
        ens.get("transects_by_confidence")
        if isinstance(ens.get("transects_by_confidence"), dict)
        else {}
    )
    count_text = ", ".join(f"{_esc(v)} {_esc(k)}" for k, v in sorted(counts.items()))
    parts = [
        "<h4>How sure: the ensemble</h4>",
        f"<p>{_esc(ens.get('members'))} members. Transects by likelihood: "
        f"{count_text or 'none'}. Each transect also carries the 5 %, 50 % and 95 % "
        f"quantiles of its {'shift' if metric.event else 'rate'} and net transport "
        "(columns <code>*_p05_*</code>, <code>*_p50_*</code>, <code>*_p95_*</code>), and "
        "<code>p_erosion</code>, <code>p_accretion</code>, <code>confidence</code>.</p>",
    ]
    hot = [h for h in ens.get("hotspots", []) if isinstance(h, dict)]
    if hot:
        head = (
            "<thead><tr><th>Hotspot</th><th>Class</th>"
            '<th class="num">Probability</th><th>Likelihood</th>'
            "<th>Input spreading it most</th>"
            '<th class="num">First-order index</th></tr></thead>'
        )
        rows = []
        for h in hot:
            main = h.get("main_input")
            first = (h.get("first_order") or {}).get(main)
            se = (h.get("first_order_se") or {}).get(main)
            index = f"{_num(first, 2)} \u00b1 {_num(se, 2)}" if first is not None else "\u2013"
            rows.append(
                f"<tr><td><strong>{_esc(hotspot_label(h.get('hotspot_id', 0), h.get('class')))}"
                f"</strong></td><td>{_esc(h.get('class', ''))}</td>"
                f'<td class="num">{_num(h.get("probability"), 3)}</td>'
                f"<td>{_esc(h.get('likelihood', ''))} {_esc(h.get('class', ''))}</td>"
                f"<td>{_esc((main or 'none').replace('_', ' '))}</td>"
                f'<td class="num">{index}</td></tr>'
            )
        parts.append(
            "<p>Probability: the share of members in which at least half of the hotspot\u2019s "
            "stretch is in its class. The index (\u00b1 its standard error by resampling the "
            "members) is the share of the spread of the hotspot\u2019s mean "
            f"{'shift' if metric.event else 'rate'} that the input explains by itself.</p>"
            f'<table class="ensemble">{head}<tbody>{"".join(rows)}</tbody></table>'
        )
    path = data.folder / "sensitivity.png"
    if path.is_file():
        try:
            payload = base64.b64encode(path.read_bytes()).decode("ascii")
        except OSError as exc:
            raise OutputError(f"{path}: cannot be read ({exc})") from exc
        parts.append(
            f'<figure><img src="data:image/png;base64,{payload}" alt="Sensitivity \u2014 '
            f'scenario {_esc(data.name)}"><figcaption>{_ENSEMBLE_CAPTION}</figcaption></figure>'
        )
    return "".join(parts)
