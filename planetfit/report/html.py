"""report.html: the whole run on one self-contained page (figures embedded, no scripts, fonts or network).

The page is rendered by jinja2 from ``templates/report.html.j2``. Blocks
of summary.json that this module has no words for (a new planet block, a
top-level block such as ``dynamics``, a new sampling fact) are shown as
nested key-value tables, so new outputs appear without a change here.
"""

import base64
import importlib.metadata
import platform
import re
import struct
from pathlib import Path

import jinja2

from planetfit.inputs.schema import SamplingMethod
from planetfit.report import captions
from planetfit.report.files import write_text_atomic
from planetfit.report.rounding import number_text, value_text
from planetfit.report.style import PNG_DPI
from planetfit.report.tables import NOTE_TEXT, prior_text, star_note

#: Distributions whose versions the page lists (those not installed are left out).
DISTRIBUTIONS = (
    "planetfit",
    "numpy",
    "scipy",
    "emcee",
    "batman-package",
    "radvel",
    "astropy",
    "celerite2",
    "matplotlib",
    "corner",
    "h5py",
    "pydantic",
    "jinja2",
    "arviz",
    "xarray",
    "h5netcdf",
)
#: summary.json blocks with a section of their own; any other top-level block gets a generic one.
KNOWN_TOP = ("system", "star", "planets", "fitted_parameters", "sampling", "data")
#: Planet entries shown in the verdict and context sections rather than among the other planet blocks.
CONTEXT_BLOCKS = ("composition", "climate", "atmosphere")
#: Sampling facts shown in their own tables or lists.
SAMPLING_SPECIAL = ("warnings", "parameter_diagnostics", "modes")
#: Headline quantities of each planet's verdict.
HEADLINE = (("mass_earth", "Mass", "M⊕"), ("radius_earth", "Radius", "R⊕"), ("density_gcc", "Density", "g cm⁻³"))
#: PNG figures larger than this are left out of the page (it stays under 15 MB).
MAX_FIGURE_BYTES = 6_000_000
#: Lists of texts with one longer than this are shown as bullets, not joined by commas.
LONG_TEXT = 40
#: CSS pixels per inch of a figure on the page: a journal-column figure (3.4 in) shows 510 px wide.
DISPLAY_PX_PER_IN = 150

_ENV = jinja2.Environment(
    loader=jinja2.PackageLoader("planetfit.report", "templates"),
    autoescape=True,
    undefined=jinja2.StrictUndefined,
    trim_blocks=True,
    lstrip_blocks=True,
)


def _is_stat(value):
    return isinstance(value, dict) and {"median", "lower", "upper"} <= set(value)


def display(value):
    """A summary.json value as the template shows it: text, ``{"bullets": texts}``, or (key, display) pairs.

    STATs become ``1.23 +0.05 -0.04``; lists of sentences become bullets,
    other lists of plain values are joined;
    dicts and lists of dicts nest; numbers keep four significant digits.
    """
    if _is_stat(value):
        return value_text(value) + (" (prior only)" if value.get("prior_only") else "")
    if isinstance(value, dict):
        return [(str(k), display(v)) for k, v in value.items()]
    if isinstance(value, (list, tuple)):
        if value and all(isinstance(v, str) for v in value) and max(map(len, value)) > LONG_TEXT:
            return {"bullets": list(value)}
        if all(not isinstance(v, (dict, list, tuple)) for v in value):
            return ", ".join(display(v) for v in value) if value else "none"
        return [(f"[{i}]", display(v)) for i, v in enumerate(value)]
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.4g}"
    return "null" if value is None else str(value)


def _texts(value):
    """A text or a list of texts as a list."""
    if not value:
        return []
    return [value] if isinstance(value, str) else [str(v) for v in value]


def _climate_line(clim):
    """One sentence of a planet's climate block, or "" without one."""
    if not clim:
        return ""

    def pct(x):
        return "n/a" if x is None else f"{x:.0%}"

    return (
        f"Insolation {value_text(clim.get('insolation_earth'))} times Earth's; grey-greenhouse surface temperature "
        f"{value_text(clim.get('surface_temp_k'))} K; inside the conservative habitable zone with probability "
        f"{pct(clim.get('p_conservative_hz'))}, the optimistic one {pct(clim.get('p_optimistic_hz'))} "
        "(Kopparapu et al. 2014; a screening, see Context)."
    )


def columns_table(entries):
    """``{column name: {key: value}}`` as a table with one row per key (every key, in first-seen order)."""
    keys = list(dict.fromkeys(k for entry in entries.values() for k in entry))
    rows = [(k, [display(entry[k]) if k in entry else "–" for entry in entries.values()]) for k in keys]
    return {"columns": list(entries), "rows": rows}


def _verdicts(summary):
    """Per planet: headline values, the composition verdict and the assumptions beside it."""
    out = []
    for name, p in summary["planets"].items():
        minimum = p.get("mass_is_minimum")
        headline = [
            (("Minimum mass" if minimum and key == "mass_earth" else label), value_text(p.get(key)), unit)
            for key, label, unit in HEADLINE
            if p.get(key) is not None
        ]
        comp = p.get("composition") or {}
        clim = p.get("climate") or {}
        out.append(
            {
                "name": name,
                "transits": p.get("transits"),
                "headline": headline,
                "verdict": " ".join(t for t in (comp.get("verdict"), comp.get("star_iron_verdict")) if t) or None,
                "note": p.get("note"),
                "assumptions": _texts(comp.get("assumptions")),
                "climate": _climate_line(clim),
            }
        )
    return out


def _table_sections(rows):
    """Table rows grouped under their headings, with plain-text priors and values."""
    sections = []
    for row in rows:
        if row.quantity is None:
            sections.append({"heading": row.heading, "top": row.heading.endswith("parameters"), "rows": []})
            continue
        sections[-1]["rows"].append(
            {
                "label": row.label,
                "prior": prior_text(row.prior) if row.prior is not None else "",
                "value": value_text(row.stat) if row.key else number_text(row.stat["median"]),
                "unit": row.quantity.unit_text,
                "key": row.key or "(fixed)",
            }
        )
    return sections


def _width_in(path, svg):
    """A figure's width in inches, from its SVG's ``width`` (points) or its PNG header (pixels at PNG_DPI)."""
    if svg is not None:
        match = re.search(rb'<svg[^>]*\swidth="([0-9.]+)pt"', svg)
        if match:
            return float(match.group(1)) / 72
    with open(path, "rb") as fh:
        header = fh.read(24)  # PNG signature, IHDR length and type, then width and height (big-endian)
    return struct.unpack(">I", header[16:20])[0] / PNG_DPI


def _figure(path):
    """A figure as the page embeds it: a data URI of its SVG when there is one, else of its PNG.

    ``width`` is the width in CSS pixels at which it is shown (the page
    narrows wider ones), :data:`DISPLAY_PX_PER_IN` per inch of the figure.
    """
    svg_path = path.with_suffix(".svg")
    svg = svg_path.read_bytes() if svg_path.exists() else None
    width = round(_width_in(path, svg) * DISPLAY_PX_PER_IN)
    if svg is not None:
        return {"src": "data:image/svg+xml;base64," + base64.b64encode(svg).decode("ascii"), "width": width}
    size = path.stat().st_size
    if size > MAX_FIGURE_BYTES:
        return {"omitted": f"{path.name} ({size / 1e6:.1f} MB) is too large to embed; open it from figures/"}
    return {"src": "data:image/png;base64," + base64.b64encode(path.read_bytes()).decode("ascii"), "width": width}


def _figures(folder, planets):
    """Every figure of the run in reading order, with its caption and embedded image."""
    if not folder.is_dir():
        return []
    stems = captions.order([p.stem for p in folder.glob("*.png")])
    out = []
    for stem in stems:
        out.append({"name": stem, "caption": captions.caption(stem, planets), **_figure(folder / f"{stem}.png")})
    return out


def _versions():
    """``(name, version)`` of Python and of each installed distribution in :data:`DISTRIBUTIONS`."""
    out = [("Python", platform.python_version())]
    for name in DISTRIBUTIONS:
        try:
            out.append((name, importlib.metadata.version(name)))
        except importlib.metadata.PackageNotFoundError:
            continue
    return out


def _other_blocks(summary):
    """Blocks the page has no own section for: top-level ones, and each planet's extra blocks."""
    top = [(k, display(v)) for k, v in summary.items() if k not in KNOWN_TOP]
    planet = []
    for name, p in summary["planets"].items():
        extra = {k: v for k, v in p.items() if isinstance(v, dict) and not _is_stat(v) and k not in CONTEXT_BLOCKS}
        if extra:
            planet.append((f"Planet {name}", display(extra)))
    return top + planet


def _planet_facts(p):
    """What was fitted for one planet: transiting or not, the orbit, and the period."""
    return {"transits": p.get("transits"), "orbit": p.get("orbit"), "period_days": p.get("period_days")}


def page_context(summary, rows, figures_folder):
    """Everything the template shows, from summary.json, the table rows and the figures folder."""
    sampling = summary["sampling"]
    planets = list(summary["planets"])
    figures = _figures(Path(figures_folder), planets)
    return {
        "system": summary["system"],
        "sampling": sampling,
        "method": SamplingMethod.of_facts(sampling),
        "sampling_facts": [(k, display(v)) for k, v in sampling.items() if k not in SAMPLING_SPECIAL],
        "diagnostics": sampling.get("parameter_diagnostics") or {},
        "modes": display(sampling["modes"]) if sampling.get("modes") else None,
        "warnings": list(sampling.get("warnings") or []),
        "verdicts": _verdicts(summary),
        "planets": columns_table({name: _planet_facts(p) for name, p in summary["planets"].items()}),
        "data": columns_table(summary.get("data") or {}),
        "tables": _table_sections(rows),
        "table_note": f"{NOTE_TEXT} {star_note(summary)}".strip(),
        "figures": [f for f in figures if f["name"] != "convergence"],
        "convergence_figure": next((f for f in figures if f["name"] == "convergence"), None),
        "context": [
            (name, [(k, display(p[k])) for k in CONTEXT_BLOCKS if p.get(k)]) for name, p in summary["planets"].items()
        ],
        "other_blocks": _other_blocks(summary),
        "versions": _versions(),
    }


def render(summary, rows, figures_folder):
    """The report's HTML text."""
    return _ENV.get_template("report.html.j2").render(**page_context(summary, rows, figures_folder))


def write_report(path, summary, rows, figures_folder):
    """Write report.html."""
    write_text_atomic(path, render(summary, rows, figures_folder))
