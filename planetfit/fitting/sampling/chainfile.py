"""samples.h5, the chain file: written as the chain grows, checked before a resume, read for reports.

emcee's HDF5 backend holds the walkers' chain (group ``chain``); planetfit
adds a group ``planetfit`` with the sampled parameters' names, the facts of
the run (JSON) and the autocorrelation history. A nested-sampling run has
group ``nested`` instead of ``chain``: its equal-weight samples, the
weighted points (``points``, ``log_weights``, ``log_likelihood``). No other
module opens the file.
"""

import json
import time

import emcee
import h5py
import numpy as np
from emcee.ensemble import walkers_independent

from planetfit.core.errors import InputError
from planetfit.core.storage import require_room
from planetfit.fitting.sampling.modes import Mode
from planetfit.fitting.sampling.proposal import FittedProposal
from planetfit.inputs.schema import SamplingMethod

#: The chain's group (emcee's) and planetfit's group in samples.h5.
CHAIN_GROUP, FACTS_GROUP, MODES_GROUP = "chain", "planetfit", "modes"
#: A nested-sampling run's group is named after its method (as in every earlier samples.h5).
NESTED_GROUP, PROPOSAL_GROUP = SamplingMethod.NESTED.value, "proposal"
#: Attribute of the chain group: seconds the run has taken so far, over all its segments.
SECONDS_ATTR = "planetfit_seconds"
#: Room kept beyond twice the steps' bytes for HDF5's chunks and metadata when flushing.
FLUSH_MARGIN_BYTES = 1 << 20
_RESUME_FIX = (
    "move samples.h5 away (it is never overwritten silently) and run again, or use --force to start a new "
    "fit in this folder."
)


class BufferedHDFBackend(emcee.backends.HDFBackend):
    """emcee's HDF5 chain file, written in batches of steps at most ``flush_seconds`` apart.

    emcee's own backend opens the file for every step (about 10 ms, as long
    as twenty log-probabilities of a two-planet system). Steps wait in
    memory until ``flush_seconds`` have passed, any read of the chain, or
    :meth:`flush`; an interrupted run loses at most that much sampling.
    The walkers' positions are also kept in memory once read, so the
    convergence checks do not reread the whole file (0.3 s for 6,000 steps
    of 56 walkers in 27 dimensions).
    """

    def __init__(self, filename, name, flush_seconds=1.0):
        super().__init__(filename, name=name)
        self.flush_seconds = flush_seconds
        self._pending = []
        self._last_flush = time.monotonic()
        self._positions = None  # (capacity, walkers, ndim) copy of the chain ...
        self._stored = 0  # ... filled up to here (counted here: reading the file's count opens it)
        self._opened, self._seconds_before = time.monotonic(), self._saved_seconds()

    def _saved_seconds(self):
        """Seconds of sampling the file records from earlier segments of the run (0 for a new file)."""
        try:
            with h5py.File(self.filename, "r") as fh:
                return float(fh[self.name].attrs.get(SECONDS_ATTR, 0.0))
        except (OSError, KeyError):
            return 0.0

    @property
    def seconds(self):
        """Seconds of the run in all its segments: earlier ones (before a --resume) and this one."""
        return self._seconds_before + time.monotonic() - self._opened

    def reset(self, nwalkers, ndim):
        self._pending = []
        self._seconds_before = 0.0
        self._positions, self._stored = np.empty((0, nwalkers, ndim)), 0
        super().reset(nwalkers, ndim)

    def grow(self, ngrow, blobs):
        self.flush()
        super().grow(ngrow, blobs)

    def save_step(self, state, accepted):
        coords = np.array(state.coords)
        if self._positions is not None:
            if self._stored == len(self._positions):  # double the capacity
                more = np.empty((max(self._stored, 64),) + self._positions.shape[1:])
                self._positions = np.concatenate([self._positions, more])
            self._positions[self._stored] = coords
            self._stored += 1
        self._pending.append((coords, np.array(state.log_prob), np.array(accepted), state.random_state))
        if time.monotonic() - self._last_flush >= self.flush_seconds:
            self.flush()

    def flush(self):
        """Write the steps held in memory."""
        self._last_flush = time.monotonic()
        if not self._pending:
            return
        coords, log_prob, accepted, _ = zip(*self._pending)
        # Checked first: HDF5 cannot recover from a write that fails half-way (the chain would be lost).
        require_room(self.filename, FLUSH_MARGIN_BYTES + 2 * sum(c.nbytes + p.nbytes for c, p in zip(coords, log_prob)))
        with self.open("a") as f:
            g = f[self.name]
            first = g.attrs["iteration"]
            g["chain"][first : first + len(coords)] = np.stack(coords)
            g["log_prob"][first : first + len(coords)] = np.stack(log_prob)
            g["accepted"][:] += np.sum(accepted, axis=0)
            for i, v in enumerate(self._pending[-1][3]):
                g.attrs[f"random_state_{i}"] = v
            g.attrs[SECONDS_ATTR] = self.seconds
            g.attrs["iteration"] = first + len(coords)
        self._pending = []

    @property
    def iteration(self):
        return super().iteration + len(self._pending)

    @property
    def accepted(self):
        self.flush()
        return super().accepted

    @property
    def random_state(self):
        self.flush()
        return super().random_state

    def get_value(self, name, flat=False, thin=1, discard=0):
        self.flush()
        if name != "chain":
            return super().get_value(name, flat=flat, thin=thin, discard=discard)
        if self._positions is None:  # a chain continued from the file: read it once
            self._positions = super().get_value("chain")
            self._stored = len(self._positions)
        value = self._positions[discard + thin - 1 : self._stored : thin]
        return value.reshape(-1, value.shape[-1]) if flat else value


def open_chain(h5_path):
    """The chain file for writing and resuming."""
    return BufferedHDFBackend(str(h5_path), name=CHAIN_GROUP)


def saved_steps(h5_path):
    """Steps of the chain saved in ``h5_path`` (0 if there is no file or no chain in it)."""
    try:
        with h5py.File(h5_path, "r") as fh:
            return int(fh[CHAIN_GROUP].attrs["iteration"])
    except (OSError, KeyError, ValueError):
        return 0


def check_resumable(h5_path, ndim, walkers):
    """Check that ``samples.h5`` holds a chain this config can continue; return its steps.

    Parameters
    ----------
    h5_path : Path
    ndim : int
        Free parameters of the config.
    walkers : int
        Walkers the config asks for (raised to ``2 ndim`` as the sampler does).

    Raises
    ------
    InputError
        If the file is unreadable or its chain has other walkers or dimension.
    """
    try:
        with h5py.File(h5_path, "r") as fh:
            chain = fh[CHAIN_GROUP]
            steps = int(chain.attrs["iteration"])
            shape = (int(chain.attrs["nwalkers"]), int(chain.attrs["ndim"]))
    except (OSError, KeyError, ValueError) as exc:
        raise InputError(
            f"samples.h5 is truncated or not a planetfit chain ({exc}).", file=h5_path, fix=_RESUME_FIX
        ) from None
    expected = (max(walkers, 2 * ndim), ndim)
    if steps > 0 and shape != expected:
        raise InputError(
            f"the saved chain has {shape[0]} walkers x {shape[1]} parameters, but this config "
            f"needs {expected[0]} x {expected[1]}.",
            file=h5_path,
            fix="resume with the config that started the run (sampling.walkers, sampling.linear_parameters and "
            "the free parameters must not change; a chain of an older planetfit sampled the linear parameters: "
            "'sampling: {linear_parameters: sampled}' continues it), or " + _RESUME_FIX,
        )
    if steps > 0:
        _check_last_step(h5_path)
    return steps


def _check_last_step(h5_path):
    """Raise if the saved chain's last step cannot start the walkers again (zeroed, or walkers not independent)."""
    backend = emcee.backends.HDFBackend(str(h5_path), name=CHAIN_GROUP, read_only=True)
    last = backend.get_last_sample()
    if not np.all(np.isfinite(last.coords)) or not walkers_independent(last.coords):
        raise InputError(
            f"the last saved step ({backend.iteration}) of the chain is damaged: its walkers' positions are not "
            "finite or not independent of each other (a step zeroed or written twice), so sampling cannot go on "
            "from it.",
            file=h5_path,
            fix=_RESUME_FIX,
        )


def write_facts(h5_path, names, facts, history):
    """Store the sampled parameters' names, the run's facts (JSON) and the autocorrelation history."""
    with h5py.File(h5_path, "a") as fh:
        g = fh.require_group(FACTS_GROUP)
        g.attrs["parameter_names"] = names
        g.attrs["sampling_json"] = json.dumps(facts)
        if "autocorr_history" in g:
            del g["autocorr_history"]
        g["autocorr_history"] = np.array(history, dtype=float).reshape(-1, 2)


def write_nested(h5_path, names, facts, result):
    """Write a nested-sampling run: equal-weight samples, the weighted points and their log-likelihoods, the facts.

    Parameters
    ----------
    h5_path : Path
    names : list of str
        The sampled parameters' names.
    facts : dict
        The run's ``sampling`` facts (JSON).
    result : NestedResult
    """
    with h5py.File(h5_path, "w") as fh:
        g = fh.create_group(NESTED_GROUP)
        g["samples"] = result.samples
        g["points"] = result.points
        g["log_weights"] = result.log_weights
        g["log_likelihood"] = result.log_likelihood
    write_facts(h5_path, names, facts, [])


def _read_samples(h5_path, facts):
    """The posterior samples of a run: the nested run's equal-weight ones, or the chain without burn-in, thinned."""
    if SamplingMethod.of_facts(facts).weighted:
        with h5py.File(h5_path, "r") as fh:
            return fh[NESTED_GROUP]["samples"][()]
    backend = emcee.backends.HDFBackend(str(h5_path), name=CHAIN_GROUP, read_only=True)
    return backend.get_chain(discard=facts["discard"], thin=facts["thin"], flat=True)


def read_posterior(h5_path):
    """The run's facts and its posterior samples (burn-in discarded, thinned as the run did).

    Raises
    ------
    InputError
        If the file is missing, unreadable or incomplete.
    """
    if not h5_path.exists():
        raise InputError("no samples.h5 in this folder.", file=h5_path.parent, fix="give the folder of a finished run.")
    try:
        with h5py.File(h5_path, "r") as fh:
            facts = json.loads(fh[FACTS_GROUP].attrs["sampling_json"])
        samples = _read_samples(h5_path, facts)
    except (OSError, KeyError, ValueError) as exc:
        raise InputError(
            f"samples.h5 is unreadable or incomplete ({exc}).",
            file=h5_path,
            fix="rerun the fit with --resume (if it was interrupted) or --force.",
        ) from None
    return facts, samples


def parameter_names(h5_path):
    """The sampled parameters' names stored with the chain, or None if the file holds none (an unfinished run)."""
    with h5py.File(h5_path, "r") as fh:
        names = fh[FACTS_GROUP].attrs.get("parameter_names") if FACTS_GROUP in fh else None
    return None if names is None else [n.decode() if isinstance(n, bytes) else str(n) for n in names]


def read_chain(h5_path):
    """The autocorrelation history ((step, largest tau) rows) and the whole chain, (steps, walkers, ndim)."""
    with h5py.File(h5_path, "r") as fh:
        history = np.asarray(fh[FACTS_GROUP]["autocorr_history"], dtype=float).reshape(-1, 2)
    return history, emcee.backends.HDFBackend(str(h5_path), name=CHAIN_GROUP, read_only=True).get_chain()


def read_sample_stats(h5_path, discard, thin):
    """Log-probability and acceptance of the kept steps, (kept steps, walkers), and the chain after burn-in.

    The kept steps are those of the posterior samples (``discard``, ``thin``);
    the chain after burn-in, (steps, walkers, ndim), is not thinned (for
    autocorrelation times). emcee stores only each walker's count of accepted moves; a step was
    accepted where the walker's position differs from the step before it.
    """
    backend = emcee.backends.HDFBackend(str(h5_path), name=CHAIN_GROUP, read_only=True)
    chain = backend.get_chain()
    moved = np.concatenate([np.ones((1, chain.shape[1]), bool), np.any(chain[1:] != chain[:-1], axis=-1)])
    kept = slice(discard + thin - 1, None, thin)  # the steps emcee's get_chain(discard, thin) returns
    return backend.get_log_prob()[kept], moved[kept], chain[discard:]


def save_modes(path, modes):
    """Write the optimiser's modes (position, log-probability, Laplace covariance) into the chain file."""
    with h5py.File(path, "a") as f:
        if MODES_GROUP in f:
            del f[MODES_GROUP]
        g = f.create_group(MODES_GROUP)
        g["theta"] = np.array([m.theta for m in modes])
        g["log_prob"] = np.array([m.log_prob for m in modes])
        g["cov"] = np.array([m.cov for m in modes])


def load_modes(path):
    """The modes :func:`save_modes` wrote (none for a chain file written without them)."""
    with h5py.File(path, "r") as f:
        if MODES_GROUP not in f:
            return []
        g = f[MODES_GROUP]
        return [Mode(theta, float(lp), cov) for theta, lp, cov in zip(g["theta"][()], g["log_prob"][()], g["cov"][()])]


def save_proposal(path, proposal, burn_in_steps):
    """Write the staged sampler's fitted proposal and its burn-in's length into the chain file (for a resume)."""
    with h5py.File(path, "a") as f:
        if PROPOSAL_GROUP in f:
            del f[PROPOSAL_GROUP]
        g = f.create_group(PROPOSAL_GROUP)
        for name, value in proposal.arrays().items():
            g[name] = value
        g.attrs["burn_in_steps"] = int(burn_in_steps)


def load_proposal(path):
    """(proposal, burn-in steps) as :func:`save_proposal` wrote them; (None, 0) for a differential-evolution chain."""
    with h5py.File(path, "r") as f:
        if PROPOSAL_GROUP not in f:
            return None, 0
        g = f[PROPOSAL_GROUP]
        proposal = FittedProposal(g["weights"][()], g["locations"][()], g["shapes"][()], float(g["df"][()]))
        return proposal, int(g.attrs["burn_in_steps"])
