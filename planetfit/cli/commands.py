"""What each sub-command does: calls the pipeline (or a context function) and prints the result."""

import json

from planetfit.core.errors import InputError


def print_summary(run):
    """The end of a run (a ``pipeline.FinishedRun``): sampling facts, each planet's mass, radius, density, warnings."""
    from planetfit.report.markdown import sampling_text

    summary = run.summary
    s = summary.sampling
    print(f"\n{summary.system}: {sampling_text(s)}")
    for name, p in summary.planets.items():
        parts = []
        for key, label, unit in (
            ("mass_earth", "M", "M_earth"),
            ("radius_earth", "R", "R_earth"),
            ("density_gcc", "rho", "g/cm3"),
        ):
            st = p.stat(key)
            if st:
                parts.append(f"{label} = {st.median:.3g} +{st.plus:.2g} -{st.minus:.2g} {unit}")
        if p.mass_is_minimum:
            parts[0] = parts[0].replace("M =", "M sin i =")
        print(f"  {name}: " + ", ".join(parts))
        if p.composition:
            print(f"     {p.composition['verdict']}")
    for warning in s.warnings or []:
        print(f"WARNING: {warning}")
    print(f"outputs in {run.path}; open {run.directory.report} for the whole run on one page")


def run(args, config=None):
    """``planetfit run`` (and ``demo``, which passes its bundled config)."""
    from planetfit import pipeline

    config = args.config if config is None else config
    args.config_used = config  # for the resume hint after Ctrl-C
    if args.cores < 1:
        raise InputError(f"--cores must be at least 1, got {args.cores}.", fix="use e.g. --cores 2.")
    finished = pipeline.run(
        config,
        output=args.out,
        resume=args.resume,
        force=args.force,
        cores=args.cores,
        quiet=args.quiet,
        figures=not args.no_figures,
    )
    print_summary(finished)


def batch(args):
    """Exit code: 0 if every system succeeded, else 2 (a bad input) or 1 (an internal failure)."""
    from planetfit.batch import STATUS_INPUT, STATUS_OK, run_batch
    from planetfit.cli import EXIT_INPUT, EXIT_INTERNAL, EXIT_OK

    def show(rows):
        r = rows[0]
        note = f"{r['seconds']} s" if r["status"] == STATUS_OK else r["error"]
        print(f"{r['status']:>14s}  {r['config']}: {note}", flush=True)

    path, rows = run_batch(
        args.configs,
        out_dir=args.out,
        workers=args.workers,
        scheduler=args.scheduler,
        figures=args.figures,
        force=args.force,
        on_result=show,
    )
    failed = {r["config"]: r["status"] for r in rows if r["status"] != STATUS_OK}
    print(f"{len(args.configs) - len(failed)} of {len(args.configs)} systems fitted; summary in {path}")
    if not failed:
        return EXIT_OK
    return EXIT_INPUT if set(failed.values()) == {STATUS_INPUT} else EXIT_INTERNAL


def compare(args):
    """``planetfit compare``: each config fitted (or reused) by nested sampling, the models ranked by evidence."""
    from planetfit.compare import compare as compare_models

    if args.cores < 1:
        raise InputError(f"--cores must be at least 1, got {args.cores}.", fix="use e.g. --cores 2.")

    def show(path, run_dir, reused):
        print(f"{'reused' if reused else 'fitted'}  {path}: {run_dir}", flush=True)

    rows, warnings, paths = compare_models(args.configs, args.out, cores=args.cores, quiet=args.quiet, on_model=show)
    print(
        f"\n{'model':<24s} {'free':>4s} {'ln Z':>16s} {'Delta ln Z':>10s} {'B':>9s}  {'reading':<36s} {'max ln L':>9s}"
    )
    for r in rows:
        z = f"{r['ln_evidence']:.2f} +- {r['ln_evidence_error']:.2f}"
        print(
            f"{r['model']:<24s} {r['free_parameters']:>4d} {z:>16s} {r['delta_ln_evidence']:>10.2f} "
            f"{r['bayes_factor']:>9.3g}  {r['reading']:<36s} {r['max_log_likelihood']:>9.2f}"
        )
    print("(reading: Kass & Raftery 1995 scale of 2 ln B, B = Z_best / Z of the model)")
    for warning in warnings:
        print(f"WARNING: {warning}")
    print("written: " + ", ".join(str(p) for p in paths))


def check(args):
    """``planetfit check``: the data overview, the free parameters and every warning; no fit."""
    from planetfit import pipeline

    checked = pipeline.check(args.config)
    c = checked.config
    print(
        f"{c.system}: {len(c.planets)} planet(s), {len(c.photometry)} photometric and "
        f"{len(c.velocities)} RV dataset(s); config OK"
    )
    for row in pipeline.overview(checked):
        print("  {:<18s} {:<10s} {:6d} points ({} NaN rows dropped), BJD_TDB {:.3f} to {:.3f}, {}".format(*row))
    for key, source in c.star.mass_radius_source.items():
        relation = source.get("intrinsic_scatter")
        origin = f"the {source['from']}, scatter {relation}, from {source['inputs']}" if relation else source["from"]
        print(f"  star {key}: {source['prior']} ({origin})")
    layout, everything = checked.log_probability.layout, checked.log_probability.model.layout
    print(f"  {layout.ndim} sampled parameters: {', '.join(layout.free)}")
    marginalised = [n for n in everything.free if n not in layout.free]
    if marginalised:
        print(f"  {len(marginalised)} linear parameter(s) marginalised analytically: {', '.join(marginalised)}")
    for warning in checked.warnings:
        print(f"  WARNING: {warning}")


def interior(args):
    """``planetfit interior``: the composition verdict for a Gaussian mass and radius."""
    from planetfit.context.interior import quick_verdict

    for name, (value, sig) in (("--mass", args.mass), ("--radius", args.radius)):
        if not value > 0 or not sig >= 0:
            raise InputError(
                f"{name} needs a positive value and a non-negative uncertainty, got {value} {sig}.",
                fix=f"e.g. {name} 5.0 0.8 (Earth units).",
            )
    if args.teq_k is not None and not args.teq_k > 0:
        raise InputError(
            f"--teq-k needs a positive equilibrium temperature in K, got {args.teq_k}.", fix="e.g. --teq-k 700."
        )
    result = quick_verdict(args.mass[0], args.mass[1], args.radius[0], args.radius[1], teq_k=args.teq_k)
    if args.json:
        print(json.dumps(result, indent=2))
        return
    print(
        f"p_rocky = {result['p_rocky']:.3f}, p_volatile_rich = {result['p_volatile_rich']:.3f}, "
        f"p_denser_than_earth_like = {result['p_denser_than_earth_like']:.3f}"
    )
    radii = ", ".join(f"{k} {v:.3f}" for k, v in result["reference_radii_earth"].items())
    print(f"reference radii at M = {args.mass[0]:g} M_earth: {radii} R_earth")
    world = result["water_world_radius_earth"]
    if args.teq_k is not None and world is not None:
        upper = "unknown" if world["upper"] is None else f"{world['upper']:.3f}"
        print(
            f"50% water world at T_eq {args.teq_k:g} K (water layer: {result['water_layer']}): {world['lower']:.3f} to "
            f"{upper} R_earth ({result['water_world_relation']}); p_water_rich_consistent = "
            f"{result['p_water_rich_consistent']:.3f}, p_needs_envelope = {result['p_needs_envelope']:.3f}, "
            f"p_water_or_gas_undetermined = {result['p_water_or_gas_undetermined']:.3f}"
        )
    print(result["verdict"])


def climate(args):
    """``planetfit climate``: temperatures and habitable-zone position for one star and orbit."""
    from planetfit.context.climate import quick_climate

    for name, value, ok, what in (
        ("--teff", args.teff, args.teff > 0, "a positive temperature in K"),
        ("--radius-rsun", args.radius_rsun, args.radius_rsun > 0, "a positive radius"),
        ("--a-au", args.a_au, args.a_au > 0, "a positive semi-major axis"),
        ("--albedo", args.albedo, 0 <= args.albedo < 1, "a Bond albedo in [0, 1)"),
        ("--tau", args.tau, args.tau >= 0, "an optical depth >= 0"),
    ):
        if not ok:
            raise InputError(f"{name} needs {what}, got {value}.", fix="see 'planetfit climate --help'.")
    result = quick_climate(args.teff, args.radius_rsun, args.a_au, albedo=args.albedo, tau=args.tau)
    if args.json:
        print(json.dumps(result, indent=2))
        return
    for key in (
        "insolation_earth",
        "equilibrium_temp_k",
        "surface_temp_k",
        "p_conservative_hz",
        "p_optimistic_hz",
        "p_surface_liquid_water",
    ):
        print(f"{key:>24s}: {result[key]}")
    if result.get("hz_limits_au"):
        print(
            "   habitable-zone limits (au): "
            + ", ".join(f"{k} {v:.3f}" for k, v in result["hz_limits_au"].items() if v is not None)
        )
    for c in result["cautions"]:
        print(f"  note: {c}")


def demo(args):
    """``planetfit demo``: ``run`` on the bundled demo config (or ``--example``), into ``./planetfit-<name>``."""
    from planetfit.demo import DEMO_CONFIG, EXAMPLES

    example = getattr(args, "example", None)
    if args.out is None:
        args.out = f"planetfit-{example}" if example else "planetfit-demo"
    run(args, EXAMPLES[example] if example else DEMO_CONFIG)


def redraw(args):
    """``planetfit redraw``: figures and tables again from a run's saved samples."""
    from planetfit import pipeline

    pipeline.redraw(args.rundir, cores=args.cores)
    print(f"figures and tables rebuilt in {args.rundir}")


def plan(args):
    """``planetfit plan``: expected mass precision and verdict per number of new RVs, from a finished run."""
    from planetfit.planning.job import plan_run

    if args.draws < 10:
        raise InputError(f"--draws must be at least 10, got {args.draws}.", fix="use e.g. --draws 300.")
    result, paths = plan_run(
        args.rundir,
        args.out,
        rv_error_ms=args.rv_error_ms,
        jitter_ms=args.jitter_ms,
        counts=args.counts,
        window=args.window_days,
        per_night=args.per_night,
        target_precision=args.target_precision,
        draws=args.draws,
        mass_guess=None if args.mass_guess is None else tuple(args.mass_guess),
        seed=args.seed,
    )
    for name, p in result["planets"].items():
        print(f"planet {name}:")
        for row in p["counts"]:
            text = f"  {row['n_rvs']:4d} new RVs: sigma_M/M {100 * row['mass_precision']['median']:.1f}%"
            if "p_decisive" in row:
                text += f", p_rocky {row['p_rocky']['median']:.2f}, decisive verdict {100 * row['p_decisive']:.0f}%"
            print(text)
        needed = p["n_rvs_for_target"]
        print(f"  for sigma_M/M <= {p['target_precision']:g}: {needed if needed is not None else 'not reached'}")
    for warning in result["warnings"]:
        print(f"WARNING: {warning}")
    print(f"plan written to {paths[0].parent} ({result['seconds']:.1f} s)")


def export(args):
    """``planetfit export``: the posterior of a finished run in another format."""
    from planetfit import pipeline

    path = pipeline.export(args.rundir, args.format, out=args.out)
    print(f"posterior written to {path}")


def schema(args):
    """``planetfit schema``: the config's JSON Schema, for editors."""
    from planetfit.inputs.schema import json_schema

    print(json.dumps(json_schema(), indent=2))
