"""Worker processes sharing one log-probability: batches of walkers and optimiser starts evaluated side by side."""

import multiprocessing
import traceback

import numpy as np
from threadpoolctl import threadpool_limits


def _evaluate_share(log_prob, thetas):
    """Log-probabilities of one process's share of a batch of walkers."""
    return log_prob.log_prob_many(thetas)


def _serve(conn, log_prob):
    """Worker loop: receive (function, arguments), send back function(log_prob, *arguments) or the error."""
    threadpool_limits(limits=1)  # BLAS was loaded before the fork: environment variables would come too late
    while True:
        try:
            function, args = conn.recv()
        except EOFError:  # the parent has gone
            return
        try:
            conn.send(("ok", function(log_prob, *args)))
        except Exception:
            conn.send(("error", traceback.format_exc()))


class WorkerProcesses:
    """Work on one log-probability shared by ``cores`` processes: this one and ``cores - 1`` forked workers.

    The workers inherit the log-probability at the fork; only the tasks'
    arguments and results travel, through pipes. Called on an (n, ndim)
    batch (emcee's ``vectorize`` call) it splits the walkers into one share
    per process, this process taking the first.

    Parameters
    ----------
    log_prob : LogProbability
        Anything with ``log_prob_many((n, ndim)) -> (n,)``.
    cores : int
    """

    def __init__(self, log_prob, cores):
        self.log_prob = log_prob
        self.workers = []
        context = multiprocessing.get_context("fork")
        for _ in range(max(cores, 1) - 1):
            mine, theirs = context.Pipe()
            process = context.Process(target=_serve, args=(theirs, log_prob), daemon=True)
            process.start()
            theirs.close()
            self.workers.append((process, mine))

    def map(self, function, tasks):
        """``[function(log_prob, *task) for task in tasks]``, the tasks shared out among the processes."""
        results = []
        size = len(self.workers) + 1
        for first in range(0, len(tasks), size):
            group = tasks[first : first + size]
            for (_, conn), task in zip(self.workers, group[1:]):
                conn.send((function, task))
            results.append(function(self.log_prob, *group[0]))
            for (process, conn), _ in zip(self.workers, group[1:]):
                status, value = conn.recv()
                if status == "error":
                    raise RuntimeError(f"worker process {process.pid} failed:\n{value}")
                results.append(value)
        return results

    def __call__(self, thetas):
        shares = np.array_split(np.asarray(thetas, dtype=float), len(self.workers) + 1)
        return np.concatenate(self.map(_evaluate_share, [(share,) for share in shares]))

    def close(self):
        for process, conn in self.workers:
            conn.close()
            process.terminate()
            process.join()
        self.workers = []

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
