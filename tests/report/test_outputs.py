"""Tests of planetfit.report: rounding rule, table.tex / summary.md against summary.json, figures.

One small fit of the demo system (a few hundred photometry points, both
cadences, both spectrographs, 200 steps) is run once for the module; its
figures come from ``planetfit redraw`` so the redraw path is what is tested.
"""

import json
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
import yaml
from matplotlib.image import imread

import planetfit
from planetfit import pipeline
from planetfit.fitting.sampling.chainfile import read_chain
from planetfit.report import outputs, rounding, tables
from planetfit.report.summary import STAR_KEYS
from planetfit.report.summary_types import Stat

DEMO = Path(planetfit.__file__).parent / "demo"
FIGURES = (
    "transit_b_camera-2min",
    "transit_b_camera-30min",
    "light_curve_camera-2min",
    "light_curve_camera-30min",
    "rv_phase_b",
    "rv_phase_c",
    "rv_time",
    "corner_b",
    "corner_c",
    "corner_sampled",
    "mass_radius",
    "habitable_zone",
    "convergence",
)
VALUE = re.compile(r"\$(-?[0-9.]+)(?:\^\{\+([0-9.]+)\}_\{-([0-9.]+)\}| \\pm ([0-9.]+))?\$")


def _small_demo(folder):
    """The demo config on a subset of its data: 2-min points near two transits of b, 300 long-cadence points."""
    config = yaml.safe_load((DEMO / "demo.yaml").read_text())
    phot = np.genfromtxt(DEMO / "data" / "camera-2min.csv", delimiter=",", names=True)
    bjd = phot["btjd"] + 2457000.0
    period, t0 = 6.13714, 2460003.4167  # near the demo truth of planet b
    near = np.abs((bjd - t0 + period / 2) % period - period / 2) < 0.15
    near &= bjd < t0 + 1.5 * period
    header = ",".join(phot.dtype.names)
    np.savetxt(folder / "short.csv", phot[near].tolist(), delimiter=",", header=header, comments="", fmt="%.6f")
    long_cadence = np.genfromtxt(DEMO / "data" / "camera-30min.csv", delimiter=",", names=True)[:300]
    np.savetxt(folder / "long.csv", long_cadence.tolist(), delimiter=",", header=header, comments="", fmt="%.6f")
    config["photometry"][0]["file"] = str(folder / "short.csv")
    config["photometry"][1]["file"] = str(folder / "long.csv")
    for entry in config["velocities"]:
        entry["file"] = str(DEMO / entry["file"])
    config["sampling"] = {"walkers": 48, "max_steps": 200}
    config["output"] = str(folder / "run")
    path = folder / "config.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    """A finished small run, its table.tex as the fit wrote it, and the figures the redraw saved."""
    folder = tmp_path_factory.mktemp("report")
    captured = {"figures": {}}
    real_write_all, real_save = outputs.write_all, outputs.save_figure
    with pytest.MonkeyPatch.context() as mp:
        # The fit itself writes the tables only; the redraw below draws every figure.
        mp.setattr(outputs, "figure_builders", lambda *args: [])
        run_dir = pipeline.run(_small_demo(folder), quiet=True).path
    table_from_fit = (run_dir / "table.tex").read_bytes()

    def capture(*args, **kwargs):
        captured["args"] = args
        real_write_all(*args, **kwargs)

    def keep(fig, folder, name):
        captured["figures"][name] = fig
        return real_save(fig, folder, name)

    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(outputs, "write_all", capture)
        mp.setattr(outputs, "save_figure", keep)
        pipeline.redraw(run_dir)
    return {
        "dir": run_dir,
        "table_from_fit": table_from_fit,
        "args": captured["args"],
        "figures": captured["figures"],
        "summary": json.loads((run_dir / "summary.json").read_text()),
    }


# ----------------------------------------------------------------- rounding rule


@pytest.mark.parametrize(
    "value, plus, minus, expected",
    [
        # common practice, no published source: two significant digits of the smaller uncertainty,
        # value and the other uncertainty to the same decimal place.
        (0.12345, 0.0067, 0.0061, ("0.1235", "0.0067", "0.0061")),
        (-0.12345, 0.0067, 0.0061, ("-0.1235", "0.0067", "0.0061")),
        (10.0, 0.012, 0.5, ("10.000", "0.012", "0.500")),
        (1.23456, 0.0996, 0.2, ("1.23", "0.10", "0.20")),  # 0.0996 rounds up to 0.10: still two digits
        (4567.0, 123.0, 150.0, ("4570", "120", "150")),
        (2460003.416739, 0.000524, 0.000465, ("2460003.41674", "0.00052", "0.00047")),
        (2.5, 0.0, 0.0, ("2.5", None, None)),
    ],
)
def test_rounding_rule_worked_cases(value, plus, minus, expected):
    assert rounding.round_uncertain(value, plus, minus) == expected


def test_prior_text_keeps_every_digit():
    from planetfit.inputs.priors import Fixed, TruncNormal, Uniform

    assert tables.prior_text(Uniform(2460003.35, 2460003.48)) == "U(2460003.35, 2460003.48)"
    assert tables.prior_text(TruncNormal(0.45, 0.1, 0, 1), tex=True) == r"$\mathcal{N}(0.45, 0.1)$ on $[0, 1]$"
    assert tables.prior_text(Fixed(0.0)) == "fixed"


# ----------------------------------------------------------------- table.tex and summary.md


def _lookup(summary, key):
    node = summary
    head, _, name = key.partition(".")
    if head == "fitted_parameters":  # parameter names hold a dot themselves
        return summary[head][name]
    for part in key.split("."):
        node = node[part]
    return node


def _check_printed(printed, stat):
    """Printed value and uncertainties agree with the STAT to the printed precision, two digits on the smaller."""
    value, plus, minus = printed
    assert rounding.stat_parts(Stat.from_json(stat)) == (value, plus, minus)
    decimals = len(plus.split(".")[1]) if "." in plus else 0
    half_unit = 0.5 * 10.0**-decimals * (1 + 1e-9)
    med = stat["median"]
    assert abs(float(value) - med) <= half_unit * (1 + 1e-9 * abs(med))
    assert abs(float(plus) - (stat["upper"] - med)) <= half_unit
    assert abs(float(minus) - (med - stat["lower"])) <= half_unit
    smaller = min(plus, minus, key=float)
    assert len(smaller.replace(".", "").lstrip("0")) == 2 or float(smaller) >= 10


def _expected_keys(summary):
    keys = {f"fitted_parameters.{n}" for n in summary["fitted_parameters"]}
    # the star's quantities (not its density check or the source of its priors, which the table's note states)
    keys |= {f"star.{k}" for k in STAR_KEYS if k in summary["star"] and k != "mass_msun" and k != "radius_rsun"}
    for name, p in summary["planets"].items():
        keys |= {
            f"planets.{name}.{k}"
            for k in ("mass_earth", "density_gcc", "semi_major_axis_au", "equilibrium_temp_k", "insolation_earth")
            if k in p
        }
    return keys


def test_table_numbers_equal_summary_json(run):
    summary = run["summary"]
    seen = set()
    for line in (run["dir"] / "table.tex").read_text().splitlines():
        if " % " not in line or line.endswith("% fixed"):
            continue
        body, key = line.rsplit(" % ", 1)
        cells = [c.strip() for c in re.split(r"(?<!\\)&", body.strip().removesuffix("\\\\"))]
        assert len(cells) in (3, 4), line  # fitted (with prior) / derived
        m = VALUE.fullmatch(cells[-2])
        assert m, cells[-2]
        value, plus, minus, sym = m.groups()
        _check_printed((value, plus or sym, minus or sym), _lookup(summary, key))
        seen.add(key)
    assert _expected_keys(summary) <= seen
    assert "planets.c.radius_earth" not in seen  # c does not transit: no radius


def test_markdown_numbers_equal_summary_json(run):
    summary = run["summary"]
    seen = set()
    pattern = re.compile(r"(-?[0-9.]+)(?: \+([0-9.]+) -([0-9.]+)| ± ([0-9.]+))")
    for line in (run["dir"] / "summary.md").read_text().splitlines():
        cells = [c.strip() for c in line.strip("|").split("|")]
        if len(cells) != 5 or not cells[4].startswith("`"):
            continue
        key = cells[4].strip("`")
        value, plus, minus, sym = pattern.fullmatch(cells[2]).groups()
        _check_printed((value, plus or sym, minus or sym), _lookup(summary, key))
        seen.add(key)
    assert _expected_keys(summary) <= seen
    assert summary["planets"]["b"]["composition"]["verdict"] in (run["dir"] / "summary.md").read_text()


def test_table_is_well_formed_latex(run):
    text = (run["dir"] / "table.tex").read_text()
    code = "\n".join(line.split(" % ")[0] for line in text.splitlines() if not line.startswith("%"))
    unescaped = re.sub(r"\\.", "", code)
    assert unescaped.count("{") == unescaped.count("}")
    assert unescaped.count("$") % 2 == 0
    assert "%" not in unescaped and "#" not in unescaped and "_" not in re.sub(r"\$[^$]*\$", "", unescaped)
    envs = re.findall(r"\\(begin|end)\{(\w+\*?)\}", code)
    stack = []
    for kind, name in envs:
        if kind == "begin":
            stack.append(name)
        else:
            assert stack.pop() == name
    assert not stack and [n for k, n in envs if k == "begin"] == ["table*", "tabular"] * 2
    fitted, derived = code.split(r"\end{table*}")[:2]
    for block, columns in ((fitted, 4), (derived, 3)):
        assert f"\\begin{{tabular}}{{{'l' * columns}}}" in block
        rows = [r for r in block.split("\\\\") if "&" in r]
        assert rows and all(re.sub(r"\\&", "", r).count("&") == columns - 1 for r in rows)


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="no TeX engine installed")
@pytest.mark.parametrize("preamble", [r"\documentclass[twocolumn]{article}", r"\documentclass{emulateapj}"])
def test_table_compiles(run, tmp_path, preamble):
    if "emulateapj" in preamble and subprocess.run(["kpsewhich", "emulateapj.cls"], capture_output=True).returncode:
        pytest.skip("emulateapj class not installed")
    shutil.copy(run["dir"] / "table.tex", tmp_path / "table.tex")
    (tmp_path / "paper.tex").write_text(
        f"{preamble}\n\\begin{{document}}\nText.\n\\input{{table}}\n\\end{{document}}\n"
    )
    done = subprocess.run(
        ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "paper.tex"],
        cwd=tmp_path,
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert done.returncode == 0, done.stdout[-2000:]
    log = (tmp_path / "paper.log").read_text(errors="replace")
    assert "Overfull \\hbox" not in log


def test_redraw_reproduces_table_byte_for_byte(run):
    assert (run["dir"] / "table.tex").read_bytes() == run["table_from_fit"]


# ----------------------------------------------------------------- figures


def test_every_figure_file_opens(run):
    for name in FIGURES:
        image = imread(run["dir"] / "figures" / f"{name}.png")
        assert image.ndim == 3 and min(image.shape[:2]) > 300 and image.std() > 0.01, name
        assert (run["dir"] / "figures" / f"{name}.pdf").read_bytes()[:5] == b"%PDF-"


def test_figure_names(run):
    assert sorted(run["figures"]) == sorted(FIGURES)


@pytest.fixture(scope="module")
def parts(run):
    run_dir, checked, log_prob, samples, derived, summary = run["args"]
    return {"log_prob": log_prob, "derived": derived, "summary": summary, "dir": run_dir, "fig": run["figures"]}


def test_transit_figure_axes_labels_and_depth(parts):
    top, bottom = parts["fig"]["transit_b_camera-30min"].axes
    assert top.get_ylabel() == "Relative flux $-$ 1 [ppm]" and bottom.get_ylabel() == "Residual [ppm]"
    assert bottom.get_xlabel() == "Time from mid-transit [h]"
    model = [line for line in top.get_lines() if line.get_label() == "median model"][0].get_ydata()
    depth_ppm = parts["summary"].fitted_parameters["b.radius_ratio"].median ** 2 * 1e6
    # source: Winn (2010, arXiv:1001.2010), eq. 20: depth ~ k^2, deepened up to ~1.3x by limb darkening
    assert 0.8 * depth_ppm < -model.min() < 1.5 * depth_ppm
    assert abs(model[0]) < 1 and abs(model[-1]) < 1  # out of transit at the window edges


def test_rv_figures_axes_labels_and_amplitude(parts):
    for name in ("b", "c"):
        top, bottom = parts["fig"][f"rv_phase_{name}"].axes
        assert top.get_ylabel() == "Radial velocity [m/s]" and bottom.get_xlabel() == "Phase (0 = conjunction)"
        model = [line for line in top.get_lines() if line.get_label() == "median model"][0].get_ydata()
        k = parts["summary"].fitted_parameters[f"{name}.rv_amplitude_ms"].to_json()
        # source: Keplerian RV, v = K [cos(f + w) + e cos w]: peak-to-peak is exactly 2K for any e
        assert k["lower"] < (model.max() - model.min()) / 2 < k["upper"]
    fig = parts["fig"]["rv_time"]
    # The demo has an activity GP: velocity, activity (the GP's prediction over the data), residuals.
    assert len(fig.axes) == 3 and fig.axes[2].get_xlabel().startswith("Time [BJD")
    assert fig.axes[1].get_ylabel() == "Activity [m/s]" and "planets and trend removed" in fig.axes[1].get_title("left")
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert labels[-4:] == [
        "spectrograph-a",
        "spectrograph-b",
        "GP mean ± 1σ (spectrograph-a)",
        "GP mean ± 1σ (spectrograph-b)",
    ]
    assert "activity (GP mean) removed" in fig.legends[0].get_title().get_text()
    assert "activity (GP mean) removed" in parts["fig"]["rv_phase_b"].legends[0].get_title().get_text()


def test_corner_figures_axes_and_labels(parts):
    fig = parts["fig"]["corner_b"]
    assert len(fig.axes) == 36
    bottom_row = [ax.get_xlabel() for ax in fig.axes[30:]]
    assert bottom_row[:3] == [r"$M_p$ [$M_\oplus$]", r"$R_p$ [$R_\oplus$]", r"$\rho_p$ [g$\,$cm$^{-3}$]"]
    fig = parts["fig"]["corner_c"]
    assert len(fig.axes) == 16
    assert fig.axes[12].get_xlabel() == r"$M_p\sin i$ [$M_\oplus$]" and fig.axes[15].get_xlabel() == "$e$"
    names = parts["derived"]["parameter_names"]
    (ax,) = parts["fig"]["corner_sampled"].axes  # one axes holds every panel
    labels = [t.get_text().split("\n")[0] for t in ax.texts]
    assert labels == [name for name in names for _ in range(2)]  # under its column and left of its row
    assert ax.get_xlim() == ax.get_ylim() == (0, len(names))


def test_mass_radius_and_habitable_zone_figures(parts):
    (ax,) = parts["fig"]["mass_radius"].axes
    assert ax.get_xscale() == "log" and ax.get_yscale() == "log"
    assert ax.get_xlabel() == r"Mass [$M_\oplus$]" and ax.get_ylabel() == r"Radius [$R_\oplus$]"
    legend = {t.get_text() for t in ax.get_legend().get_texts()}
    assert {"100% iron", "Earth-like (32.5% iron)", "100% silicate", "50% water", "planet b"} <= legend
    assert {"Mercury", "Venus", "Earth", "Mars", "Uranus", "Neptune"} <= {t.get_text() for t in ax.texts}
    (ax,) = parts["fig"]["habitable_zone"].axes
    left, right = ax.get_xlim()
    assert left > right  # insolation falls to the right
    for name in ("b", "c"):
        s = parts["summary"].planets[name].stat("insolation_earth").median
        assert right < s < left
    assert ax.get_ylabel() == r"Stellar $T_\mathrm{eff}$ [K]"
    assert {"optimistic HZ", "conservative HZ", "planet b", "planet c"} <= {
        t.get_text() for t in ax.get_legend().get_texts()
    }


def test_convergence_figure(parts):
    log_prob = parts["log_prob"]
    history, chain = read_chain(parts["dir"].samples)
    assert chain.shape[0] == parts["summary"].sampling.steps and history[-1, 0] <= chain.shape[0]
    fig = parts["fig"]["convergence"]
    assert len(fig.axes) == 4
    assert fig.axes[0].get_ylabel() == "Autocorrelation\ntime [steps]"
    assert all(ax.texts[0].get_text() in log_prob.layout.free for ax in fig.axes[1:])
    assert fig.axes[-1].get_xlabel().startswith("Step")
