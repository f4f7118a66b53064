"""The parameter table: rows from summary.json and their LaTeX form (table.tex).

Two floats: fitted parameters with their priors, then derived parameters.
Numbers follow the rounding rule of :mod:`planetfit.report.rounding`.
"""

import dataclasses

from planetfit.core import quantities as q
from planetfit.report.rounding import number_text, value_tex
from planetfit.report.summary_types import PLANET_KEYS, Stat

#: Planet quantities of the derived table: summary.json's, less those the fitted table shows.
_PLANET_DERIVED = tuple(
    k for k in PLANET_KEYS if k not in ("period_days", "transit_bjd", "radius_ratio", "impact", "rv_amplitude_ms")
)
_STAR_FITTED = ("mass_msun", "radius_rsun")
_STAR_DERIVED = ("density_gcc", "teff_k", "age_gyr")
NOTE_FITTED = (
    r"Values are posterior medians with the 15.87th and 84.13th percentiles. Priors: "
    r"$\mathcal{U}$ uniform, $\log\mathcal{U}$ log-uniform, $\mathcal{N}$(mean, standard deviation) "
    r"normal, truncated where an interval is given."
)
NOTE_DERIVED = (
    r"Values are posterior medians with the 15.87th and 84.13th percentiles. $T_\mathrm{eq}$ assumes "
    r"zero Bond albedo and full heat redistribution. $T_\mathrm{eff}$ and the age do not enter the "
    r"fit: their posterior is their prior."
)
NOTE_TEXT = (
    "Values are posterior medians with the 15.87th and 84.13th percentiles. Priors: U uniform, logU "
    "log-uniform, N(mean, sd) normal, truncated where an interval is given. T_eq assumes zero Bond "
    "albedo and full heat redistribution. Teff and the age do not enter the fit: their posterior is "
    "their prior."
)


_STAR_UNITS = {"mass_msun": ("mass", "M_sun"), "radius_rsun": ("radius", "R_sun")}


def star_note(summary):
    """Where the star's mass and radius priors came from, and the density check, as plain sentences ("" if none)."""
    star = summary.star
    parts = []
    for key, source in (star.mass_radius_source or {}).items():
        label, unit = _STAR_UNITS[key]
        if "intrinsic_scatter" in source:
            parts.append(
                f"{label} prior {source['prior']} {unit} from the {source['from']} (intrinsic scatter "
                f"{source['intrinsic_scatter']}, propagated with the uncertainties of {source['inputs']} by "
                "Monte Carlo)"
            )
        else:
            parts.append(f"{label} prior {source['prior']} {unit} given in the config")
    text = f"Stellar {'; '.join(parts)}." if parts else ""
    tension = star.density_tension_sigma
    if tension is not None:
        text += f" The transit moves the stellar density {tension:.1f} prior sigma from its prior."
    return text.strip()


# ----------------------------------------------------------------- priors

_PRIOR_FORMS = {  # config spelling -> (text symbol, LaTeX symbol)
    "uniform": ("U", r"\mathcal{U}"),
    "loguniform": ("logU", r"\log\mathcal{U}"),
    "normal": ("N", r"\mathcal{N}"),
    "truncnormal": ("N", r"\mathcal{N}"),
}


def prior_text(prior, tex=False):
    """A prior as ``U(0, 1)`` / ``N(0.45, 0.1) in [0, 1]`` / ``fixed``, or in LaTeX."""
    spec = prior.as_config()
    if not isinstance(spec, dict):
        return "fixed"
    ((kind, args),) = spec.items()
    text_sym, tex_sym = _PRIOR_FORMS[kind]
    head = ", ".join(number_text(a) for a in args[:2])
    tail = f" in [{number_text(args[2])}, {number_text(args[3])}]" if len(args) == 4 else ""
    if not tex:
        return f"{text_sym}({head}){tail}"
    tail = f" on $[{number_text(args[2])}, {number_text(args[3])}]$" if len(args) == 4 else ""
    return f"${tex_sym}({head})${tail}"


# ----------------------------------------------------------------- rows


@dataclasses.dataclass
class Row:
    """One table line; a heading when ``quantity`` is None."""

    heading: str
    quantity: q.Quantity = None
    qualifier: str = ""  # band or dataset a parameter belongs to
    prior: object = None  # Prior, or None for derived quantities
    stat: Stat = None
    key: str = ""  # dotted path in summary.json ("" for fixed parameters)

    @property
    def prior_only(self):
        """Whether no data constrain the quantity (its posterior is its prior)."""
        return bool(self.stat and self.stat.prior_only)

    @property
    def label(self):
        """Plain-text label, e.g. ``Limb darkening q1 (camera)``."""
        base = f"{self.quantity.label} {self.quantity.symbol_text}".rstrip()
        base = f"{base} ({self.qualifier})" if self.qualifier else base
        return f"{base} (prior only)" if self.prior_only else base


def _fitted_rows(summary, parameters):
    """Rows of the fitted parameters, by group: the star, each planet, the instruments and bands."""
    fitted = summary.fitted_parameters

    def row(p):
        if p.prior.fixed:
            v = p.prior.value
            return Row("", p.quantity, p.qualifier, p.prior, Stat(v, v, v))
        return Row("", p.quantity, p.qualifier, p.prior, fitted[p.name], f"fitted_parameters.{p.name}")

    rows = [Row("Fitted parameters"), Row("Star")] + [row(p) for p in parameters if p.group == "star"]
    for pname, planet in summary.planets.items():
        rows.append(Row(f"Planet {pname}"))
        # A transit-only planet's K is held at 0 so that no mass is sampled: not a value to table.
        held = {"rv_amplitude_ms"} if planet.mass_measured is False else set()
        rows += [row(p) for p in parameters if p.group == "planet" and p.owner == pname and p.key not in held]
    instruments = [row(p) for p in parameters if p.group == "instrument"]
    return rows + ([Row("Instruments")] + instruments if instruments else [])


def _derived_rows(summary, priors, eccentric):
    """Rows of the derived quantities (and of the prior-only ones, with their priors)."""
    rows = [Row("Derived parameters"), Row("Star")]
    star = summary.star.stats
    rows += [
        Row("", q.STAR[k], "", priors.get(f"star.{k}"), star[k], f"star.{k}")
        for k in _STAR_FITTED + _STAR_DERIVED
        if k in star and (k in _STAR_DERIVED or (star[k] and star[k].prior_only))
    ]
    for pname, p in summary.planets.items():
        rows.append(Row(f"Planet {pname}" + ("" if eccentric[pname] else " (circular orbit)")))
        for k in _PLANET_DERIVED:
            if p.stat(k) is None or (not eccentric[pname] and k in ("eccentricity", "omega_deg")):
                continue
            prior = priors.get(f"{pname}.{k}") if p.stat(k).prior_only else None
            rows.append(Row("", q.planet_quantity(k, p.transits), "", prior, p.stat(k), f"planets.{pname}.{k}"))
        rows += _light_rows(pname, p)
    return rows


_LIGHT_BAND_DERIVED = ("dayside_brightness_temp_k", "nightside_brightness_temp_k", "geometric_albedo_max")
_LIGHT_PLANET_DERIVED = ("e_cos_w", "e_sin_w", "eclipse_bjd", "bond_albedo", "heat_redistribution")


def _light_rows(pname, p):
    """Rows of what a planet's fitted light gives (none without ``planet_light``)."""
    rows = []
    for band, block in (p.planet_light or {}).items():
        key = f"planets.{pname}.planet_light.{band}"
        rows += [
            Row("", q.band_quantity(k, band), "", None, block[k], f"{key}.{k}") for k in _LIGHT_BAND_DERIVED if block[k]
        ]
    return rows + [
        Row("", q.LIGHT[k], "", None, p.stat(k), f"planets.{pname}.{k}") for k in _LIGHT_PLANET_DERIVED if p.stat(k)
    ]


def table_rows(summary, model, star):
    """Rows of the parameter table.

    Parameters
    ----------
    summary : planetfit.report.summary_types.Summary
    model : Model
        Its parameters (fixed and free, in layout order) and prior-only parameters give labels and priors.
    star : schema.StarBlock
        The star's Teff and age priors.

    Returns
    -------
    list of Row
    """
    priors = {p.name: p.prior for p in model.prior_only} | star_priors(star)
    eccentric = {p.name: p.orbit.eccentric for p in model.planets}
    return _fitted_rows(summary, list(model.layout.parameters.values())) + _derived_rows(summary, priors, eccentric)


def star_priors(star):
    """Star Teff and age priors by the names :func:`table_rows` looks up."""
    out = {"star.teff_k": star.teff_k}
    if star.age_gyr is not None:
        out["star.age_gyr"] = star.age_gyr
    return out


# ----------------------------------------------------------------- LaTeX

_TEX_SPECIAL = {
    "\\": r"\textbackslash{}",
    "&": r"\&",
    "%": r"\%",
    "$": r"\$",
    "#": r"\#",
    "_": r"\_",
    "{": r"\{",
    "}": r"\}",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
}


def tex_escape(text):
    """Escape LaTeX's special characters in plain text."""
    return "".join(_TEX_SPECIAL.get(c, c) for c in str(text))


def _label_tex(row, with_prior):
    qual = f" ({tex_escape(row.qualifier)})" if row.qualifier else ""
    label = f"{row.quantity.label}{qual}, {row.quantity.symbol_tex}"
    if not with_prior and row.prior is not None:
        label += f" (prior{' only' if row.prior_only else ''} {prior_text(row.prior, tex=True)})"
    return label


def _float(caption, label, rows, with_prior, note):
    """One ``table*`` float; every value row ends with a comment naming its summary.json key."""
    ncol = 4 if with_prior else 3
    out = [
        r"\begin{table*}",
        r"\centering\small",
        f"\\caption{{{caption}}}",
        f"\\label{{{label}}}",
        f"\\begin{{tabular}}{{{'l' * ncol}}}",
        r"\hline\hline",
        ("Parameter & Prior & Value & Unit \\\\" if with_prior else "Parameter & Value & Unit \\\\"),
        r"\hline",
    ]
    for row in rows:
        if row.quantity is None:
            out.append(f"\\multicolumn{{{ncol}}}{{l}}{{\\textbf{{{tex_escape(row.heading)}}}}} \\\\")
            continue
        cells = [_label_tex(row, with_prior)]
        if with_prior:
            cells.append(prior_text(row.prior, tex=True))
        cells += [value_tex(row.stat) if row.key else f"${number_text(row.stat.median)}$", row.quantity.unit_tex]
        out.append(" & ".join(cells) + f" \\\\ % {row.key or 'fixed'}")
    out += [
        r"\hline",
        r"\end{tabular}",
        "",
        f"\\smallskip\\parbox{{0.9\\textwidth}}{{\\footnotesize {note}}}",
        r"\end{table*}",
    ]
    return out


def latex_table(summary, rows):
    """table.tex text: two ``table*`` floats (fitted parameters with priors; derived parameters).

    Standard LaTeX only (tabular, hline, math mode), so it compiles in the common journal classes.
    """
    system = tex_escape(summary.system)
    slug = "".join(c if c.isalnum() else "-" for c in str(summary.system).lower())
    split = next(i for i, r in enumerate(rows) if r.quantity is None and r.heading == "Derived parameters")
    fitted = [r for r in rows[:split] if r.heading != "Fitted parameters"]
    out = [
        f"% Parameters of {system}, written by planetfit from summary.json.",
        "% Each value row ends with a comment naming the summary.json key it comes from.",
    ]
    out += _float(f"Fitted parameters of {system} and their priors.", f"tab:{slug}-fitted", fitted, True, NOTE_FITTED)
    out.append("")
    note = f"{NOTE_DERIVED} {tex_escape(star_note(summary))}".strip()
    out += _float(f"Derived parameters of {system}.", f"tab:{slug}-derived", rows[split + 1 :], False, note)
    return "\n".join(out) + "\n"
