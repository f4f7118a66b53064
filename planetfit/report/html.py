"""report.html: the whole run on one self-contained page (figures embedded, no scripts, fonts or network).

The page is rendered by jinja2 from ``templates/report.html.j2``. Blocks
of summary.json that this module has no words for (a new planet block, a
top-level block such as ``dynamics``, a new sampling fact) are shown as
nested key-value tables, so new outputs appear without a change here.
"""

import base64
import importlib.metadata
import platform
from pathlib import Path

import jinja2

from planetfit.report import captions
from planetfit.report.files import write_text_atomic
from planetfit.report.rounding import number_text, value_text
from planetfit.report.tables import NOTE_TEXT, prior_text

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
MAX_FIGURE_BYTES = 3_000_000

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
    """A summary.json value as the template shows it: text, or a list of (key, display) pairs.

    STATs become ``1.23 +0.05 -0.04``; lists of plain values are joined;
    dicts and lists of dicts nest; numbers keep four significant digits.
    """
    if _is_stat(value):
        return value_text(value) + (" (prior only)" if value.get("prior_only") else "")
    if isinstance(value, dict):
        return [(str(k), display(v)) for k, v in value.items()]
    if isinstance(value, (list, tuple)):
        if all(not isinstance(v, (dict, list, tuple)) for v in value):
            return ", ".join(display(v) for v in value) if value else "none"
        return [(f"[{i}]", display(v)) for i, v in enumerate(value)]
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.4g}"
    return "null" if value is None else str(value)


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
                "verdict": comp.get("verdict"),
                "note": p.get("note"),
                "assumptions": list(comp.get("assumptions") or []),
                "climate": clim,
                "cautions": list(clim.get("cautions") or []),
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


def _figure(path):
    """A figure as the page embeds it: a data URI of its SVG when there is one, else of its PNG."""
    svg = path.with_suffix(".svg")
    if svg.exists():
        return {"src": "data:image/svg+xml;base64," + base64.b64encode(svg.read_bytes()).decode("ascii")}
    size = path.stat().st_size
    if size > MAX_FIGURE_BYTES:
        return {"omitted": f"{path.name} ({size / 1e6:.1f} MB) is too large to embed; open it from figures/"}
    return {"src": "data:image/png;base64," + base64.b64encode(path.read_bytes()).decode("ascii")}


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


def page_context(summary, rows, figures_folder):
    """Everything the template shows, from summary.json, the table rows and the figures folder."""
    sampling = summary["sampling"]
    planets = list(summary["planets"])
    figures = _figures(Path(figures_folder), planets)
    return {
        "system": summary["system"],
        "sampling": sampling,
        "sampling_facts": [(k, display(v)) for k, v in sampling.items() if k not in SAMPLING_SPECIAL],
        "diagnostics": sampling.get("parameter_diagnostics") or {},
        "modes": display(sampling["modes"]) if sampling.get("modes") else None,
        "warnings": list(sampling.get("warnings") or []),
        "verdicts": _verdicts(summary),
        "planets": [
            (name, display({k: p.get(k) for k in ("transits", "orbit")})) for name, p in summary["planets"].items()
        ],
        "data": [(name, display(counts)) for name, counts in (summary.get("data") or {}).items()],
        "tables": _table_sections(rows),
        "table_note": NOTE_TEXT,
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
