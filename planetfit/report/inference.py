"""The posterior by walker and draw: groups for posterior.nc and the exports, and arviz's convergence diagnostics.

Each emcee walker is one chain and each kept step one draw, the way
arviz reads ensemble samplers. The walkers of an ensemble are not
independent chains (every move uses the others), which R-hat and the
effective sample sizes assume; they are reported beside planetfit's own
autocorrelation times, not instead of them.
"""

import logging
import math
import os
import warnings

import emcee
import numpy as np

from planetfit.fitting.sampling.chainfile import read_sample_stats

log = logging.getLogger("planetfit")

#: R-hat above this is a warning (Vehtari et al. 2021 recommend 1.01).
RHAT_LIMIT = 1.01
#: R-hat this far above the value the chain length explains is a warning (common practice, no published source).
RHAT_MARGIN = 0.01
#: Group holding the derived quantities, beside arviz's standard groups.
DERIVED_GROUP = "derived"
INSTALL_HINT = "install the 'stats' extra (pip install 'planetfit[stats]') for posterior.nc, R-hat and ESS"


def by_walker(flat, walkers):
    """Flat samples in emcee's order (step-major) as (walker, draw) arrays."""
    flat = np.asarray(flat, dtype=float)
    return flat.reshape(-1, walkers).T


def posterior_groups(checked, derived, sample_stats):
    """Every group of the posterior as ``{group: {variable: array}}``, first two axes (walker, draw).

    Parameters
    ----------
    checked : pipeline.Checked
        The datasets give the ``observed_data`` group (one axis per dataset).
    derived : dict
        :func:`planetfit.context.derived.derive` output after context.
    sample_stats : tuple
        :func:`planetfit.fitting.sampling.chainfile.read_sample_stats` output.

    Returns
    -------
    dict
        ``posterior`` (sampled parameters in physical units, by their
        summary.json names), ``derived`` (``star.<key>``, ``<planet>.<key>``),
        ``sample_stats`` (``lp``, ``accepted``) and ``observed_data``
        (``<dataset>.time_bjd`` and the flux or RV with its errors).
    """
    log_prob, accepted, _ = sample_stats
    walkers = log_prob.shape[1]
    posterior = {n: by_walker(derived["parameters"][n], walkers) for n in derived["parameter_names"]}
    quantities = {f"star.{k}": v for k, v in derived["star"].items()}
    for planet, values in derived["planets"].items():
        quantities.update({f"{planet}.{k}": v for k, v in values.items()})
    observed = {}
    for d in checked.photometry:
        observed.update({f"{d.name}.time_bjd": d.time, f"{d.name}.flux": d.flux, f"{d.name}.flux_error": d.error})
    for d in checked.velocities:
        observed.update({f"{d.name}.time_bjd": d.time, f"{d.name}.rv_ms": d.rv, f"{d.name}.rv_error_ms": d.error})
    return {
        "posterior": posterior,
        DERIVED_GROUP: {k: by_walker(v, walkers) for k, v in quantities.items() if np.size(v) == log_prob.size},
        "sample_stats": {"lp": log_prob.T, "accepted": accepted.T},
        "observed_data": observed,
    }


def _arviz():
    """arviz, or None when the optional ``stats`` extra is not installed."""
    try:
        import arviz
    except ImportError:
        return None
    return arviz


def inference_data(groups, attrs):
    """The groups as an arviz InferenceData (None without arviz)."""
    az = _arviz()
    if az is None:
        return None
    dims = {k: [k.rpartition(".")[0] + ".point"] for k in groups["observed_data"]}
    with warnings.catch_warnings():
        # arviz guesses a transposed array when a short run has more walkers than draws; ours are (walker, draw).
        warnings.filterwarnings("ignore", message="More chains", category=UserWarning)
        warnings.filterwarnings("ignore", message="the default dims", category=UserWarning)  # as we mean them
        idata = az.from_dict(
            posterior=groups["posterior"],
            sample_stats=groups["sample_stats"],
            observed_data=groups["observed_data"],
            dims=dims,
            attrs=attrs,
        )
        idata.add_groups({DERIVED_GROUP: groups[DERIVED_GROUP]}, warn_on_custom_groups=False)
    return idata


def diagnostics(idata, chain_after_burn_in, names, drawn=None, thin=1):
    """Per parameter: rank-normalised split R-hat, bulk and tail ESS (arviz), and emcee's autocorrelation.

    Parameters
    ----------
    idata : arviz.InferenceData or None
    chain_after_burn_in : ndarray, shape (steps, walkers, ndim)
        Sampler coordinates, not thinned (the autocorrelation times are in steps).
    names : list of str
        The sampled parameters, in the chain's order.
    drawn : dict, optional
        {name: (walker, draw) array} of parameters drawn after sampling (the
        marginalised linear ones): their autocorrelation times are those of
        the kept draws, times ``thin``.
    thin : int

    Returns
    -------
    dict
        ``{name: {"rhat", "ess_bulk", "ess_tail", "autocorr_steps"}}``; the
        arviz entries are absent without arviz.
    """
    tau = emcee.autocorr.integrated_time(chain_after_burn_in, tol=0, quiet=True)
    out = {n: {"autocorr_steps": round(float(t), 2)} for n, t in zip(names, tau)}
    for n, by_draw in (drawn or {}).items():
        t = emcee.autocorr.integrated_time(np.asarray(by_draw).T[:, :, None], tol=0, quiet=True)[0]
        out[n] = {"autocorr_steps": round(float(t) * thin, 2)}
    if idata is None:
        return out
    az = _arviz()
    rhat = az.rhat(idata.posterior, method="rank")
    bulk = az.ess(idata.posterior, method="bulk")
    tail = az.ess(idata.posterior, method="tail")
    for n in out:
        out[n].update(rhat=_rounded(rhat[n], 4), ess_bulk=_rounded(bulk[n]), ess_tail=_rounded(tail[n]))
    return out


def _rounded(value, digits=None):
    """``round(value, digits)``, or None (null in summary.json) where arviz gives NaN: a walker that never moved."""
    value = float(value)
    return round(value, digits) if np.isfinite(value) else None


def rhat_expected(tau, steps):
    """Split R-hat that chains of ``steps`` steps and autocorrelation time ``tau`` show from their length alone.

    Each half-chain holds about N / (2 tau) independent draws, so the
    between-chain variance of the half-chain means is 2 tau / N of the
    posterior variance: R-hat ~ sqrt(1 + 2 tau / N) (common practice, no
    published source; 1.02 at planetfit's rule N = 50 tau, 1.01 at 100 tau).
    """
    return float(np.sqrt(1.0 + 2.0 * tau / steps))


def sampling_facts(per_parameter, steps_after_burn_in):
    """summary.json sampling entries from :func:`diagnostics`, and the warnings they call for.

    A parameter is flagged when its R-hat exceeds both :data:`RHAT_LIMIT` and
    what its autocorrelation time explains (:func:`rhat_expected` plus
    :data:`RHAT_MARGIN`): walkers that disagree more than their chain length
    allows (a stuck walker, unmixed modes). A short chain is the
    autocorrelation rule's business, not a second warning.
    """
    facts = {"parameter_diagnostics": per_parameter}
    # An undefined R-hat (None: a walker that never moved) counts as the worst.
    rhats = {n: math.inf if d["rhat"] is None else d["rhat"] for n, d in per_parameter.items() if "rhat" in d}
    if not rhats:
        return facts, []
    worst = max(rhats, key=rhats.get)
    facts.update(
        rhat_max=per_parameter[worst]["rhat"],
        ess_bulk_min=_least(d["ess_bulk"] for d in per_parameter.values()),
        ess_tail_min=_least(d["ess_tail"] for d in per_parameter.values()),
    )
    limits = {
        n: max(RHAT_LIMIT, rhat_expected(per_parameter[n]["autocorr_steps"], steps_after_burn_in) + RHAT_MARGIN)
        for n in rhats
    }
    high = sorted((n for n in rhats if rhats[n] > limits[n]), key=rhats.get, reverse=True)
    if not high:
        return facts, []
    first = high[0]
    return facts, [
        f"R-hat above what the chain length explains for {len(high)} of {len(rhats)} parameters (largest "
        f"{_rhat_text(per_parameter[first]['rhat'])} for {first}, against {limits[first]:.3f} expected from its "
        f"autocorrelation time of {per_parameter[first]['autocorr_steps']:.0f} steps over {steps_after_burn_in} "
        "steps): the walkers, read "
        "as separate chains, do not share one distribution (not yet mixed from their starts, a stuck walker, or "
        "unmixed modes). Do not quote these "
        "uncertainties before a longer run agrees"
    ]


def _rhat_text(rhat):
    return "undefined (a walker never moved)" if rhat is None else f"{rhat:.3f}"


def _least(values):
    """The smallest of ``values``, or None when any is undefined (None)."""
    values = list(values)
    return None if any(v is None for v in values) else min(values)


def run_attrs(checked):
    """Attributes of the exported posterior: the system, and what chains and draws are."""
    return {
        "system": str(checked.config.system),
        "chains": "emcee walkers (not independent chains)",
        "draws": "steps after burn-in, thinned as the run's posterior samples",
        "observed_data": "points used in the fit, times in BJD_TDB (photometry far from transits left out)",
    }


def write_netcdf(idata, path):
    """Write ``idata`` to ``path`` (NetCDF 4 through h5netcdf) by way of a temporary file and a rename."""
    tmp = path.with_name(f".{path.name}.tmp")
    try:
        idata.to_netcdf(str(tmp))
        os.replace(tmp, path)
    finally:
        tmp.unlink(missing_ok=True)


def write_posterior(run_dir, checked, derived, facts):
    """Write posterior.nc (with arviz) and return the diagnostics' summary.json entries and warnings.

    Parameters
    ----------
    run_dir : planetfit.rundir.RunDirectory
        Holds samples.h5; receives posterior.nc.
    checked : pipeline.Checked
    derived : dict
        :func:`planetfit.context.derived.derive` output after context.
    facts : dict
        The run's sampling facts (``discard``, ``thin``).
    """
    stats = read_sample_stats(run_dir.samples, facts["discard"], facts["thin"])
    groups = posterior_groups(checked, derived, stats)
    idata = inference_data(groups, run_attrs(checked))
    if idata is None:
        log.info("no posterior.nc, R-hat or ESS: %s", INSTALL_HINT)
    else:
        try:
            write_netcdf(idata, run_dir.posterior_nc)
        except (ImportError, ValueError) as exc:  # arviz without a NetCDF engine: the run's other outputs go on
            log.warning("posterior.nc not written (%s): %s", exc, INSTALL_HINT)
    sampled = derived.get("sampled_names", derived["parameter_names"])
    drawn = {n: groups["posterior"][n] for n in derived["parameter_names"] if n not in sampled}
    return sampling_facts(diagnostics(idata, stats[2], sampled, drawn, facts["thin"]), len(stats[2]))
