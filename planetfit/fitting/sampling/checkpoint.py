"""dynesty's checkpoint, signed: written with this machine's keyed digest, unpickled only after checking it.

dynesty saves its sampler as a pickle (``sampler.save``, every
``checkpoint_every`` seconds of ``run_nested``), and a pickle runs code when
read. :func:`attach` makes the sampler save through :func:`save`, which puts
an HMAC-SHA256 digest (:mod:`planetfit.core.signing`) in front of the same
pickle; :func:`restore` checks it before dynesty reads a byte of it.
"""

import contextlib
import importlib
import os
import pickle
import sys
import tempfile
from pathlib import Path

import dynesty

from planetfit.core import signing

#: dynesty's own checkpoint layout (``dynesty.utils.save_sampler``), format 1.
_FORMAT_VERSION = 1
#: Modules a checkpoint of an earlier planetfit names that have moved since: old name -> new name.
MOVED_MODULES = {"planetfit.fitting.nested": "planetfit.fitting.sampling.nested"}


class _SignedSave:
    """``sampler.save(fname)`` of one sampler, signed (set as an instance attribute, left out of the pickle)."""

    def __init__(self, sampler):
        self.sampler = sampler

    def __call__(self, fname):
        save(self.sampler, fname)


def attach(sampler):
    """Make ``sampler``'s checkpoints signed; return it."""
    sampler.save = _SignedSave(sampler)
    return sampler


def save(sampler, fname):
    """Write ``sampler`` as dynesty would, with the machine key's digest in front, atomically."""
    saver = vars(sampler).pop("save", None)
    try:
        payload = pickle.dumps({"sampler": sampler, "version": dynesty.__version__, "format_version": _FORMAT_VERSION})
    finally:
        if saver is not None:
            sampler.save = saver
    tmp = Path(f"{fname}.tmp")
    tmp.write_bytes(signing.signed(payload))
    os.replace(tmp, fname)


def restore(path, pool):
    """The sampler saved in ``path``, its signature checked first (InputError if it does not match)."""
    payload = signing.verified(path, "the nested-sampling checkpoint")
    with tempfile.TemporaryDirectory() as folder:  # private (mode 0700): dynesty reads the checked bytes from here
        copy = Path(folder) / "checkpoint.pkl"
        copy.write_bytes(payload)
        with moved_modules():
            return attach(dynesty.NestedSampler.restore(str(copy), pool=pool))


@contextlib.contextmanager
def moved_modules():
    """While unpickling, the old names of :data:`MOVED_MODULES` find the modules at their new place."""
    added = [old for old in MOVED_MODULES if old not in sys.modules]
    for old in added:
        sys.modules[old] = importlib.import_module(MOVED_MODULES[old])
    try:
        yield
    finally:
        for old in added:
            sys.modules.pop(old, None)
