"""``planetfit export``: the posterior of a run in formats other tools read (CSV, JSON, NetCDF).

Every format holds the same numbers: the groups of
:func:`planetfit.report.inference.posterior_groups`, by walker (chain)
and kept step (draw).
"""

import io
import json
from pathlib import Path

import numpy as np

from planetfit.core.errors import InputError
from planetfit.report import inference
from planetfit.report.files import write_text_atomic

FORMATS = ("csv", "json", "nc")
#: Groups with one value per (walker, draw), in the order of the CSV's columns.
SAMPLE_GROUPS = ("posterior", inference.DERIVED_GROUP, "sample_stats")


def csv_text(groups):
    """One row per sample: ``chain``, ``draw``, then every variable of :data:`SAMPLE_GROUPS` (``group/name``).

    Numbers have 17 significant digits, so they read back as the same floats.
    """
    columns = {f"{g}/{name}": a for g in SAMPLE_GROUPS for name, a in groups[g].items()}
    walkers, draws = groups["sample_stats"]["lp"].shape
    chain, draw = np.meshgrid(np.arange(walkers), np.arange(draws), indexing="ij")
    table = np.column_stack([chain.ravel(), draw.ravel()] + [np.ravel(a).astype(float) for a in columns.values()])
    buf = io.StringIO()
    buf.write(",".join(["chain", "draw", *columns]) + "\n")
    np.savetxt(buf, table, delimiter=",", fmt=["%d", "%d"] + ["%.17g"] * len(columns))
    return buf.getvalue()


def json_text(groups, attrs):
    """``{"attrs", <group>: {variable: nested lists}}``; sample groups nest as [chain][draw], NaN as null."""

    def as_list(a):
        a = np.asarray(a, dtype=float)
        return np.where(np.isfinite(a), a, None).tolist()

    out = {"attrs": attrs}
    out.update({g: {name: as_list(a) for name, a in groups[g].items()} for g in (*SAMPLE_GROUPS, "observed_data")})
    return json.dumps(out, separators=(",", ":")) + "\n"


def _check_destination(path):
    """Refuse an output path that is a folder or lies in a folder that does not exist."""
    if path.is_dir():
        raise InputError("--out names a folder.", file=path, key="--out", fix="give a file name, e.g. --out DIR/x.csv.")
    if not path.parent.is_dir():
        raise InputError(
            "the folder of --out does not exist.",
            file=path.parent,
            key="--out",
            fix="create it first, or give another.",
        )


def write_export(groups, fmt, path, attrs):
    """Write ``groups`` to ``path`` as ``fmt`` (one of :data:`FORMATS`); return the path.

    Raises
    ------
    InputError
        For an unknown format, or NetCDF without the optional ``stats`` extra.
    """
    if fmt not in FORMATS:
        raise InputError(f"unknown export format '{fmt}'.", key="--format", fix=f"use one of {', '.join(FORMATS)}.")
    _check_destination(Path(path))
    if fmt == "csv":
        write_text_atomic(path, csv_text(groups))
    elif fmt == "json":
        write_text_atomic(path, json_text(groups, attrs))
    else:
        idata = inference.inference_data(groups, attrs)
        if idata is None:
            raise InputError("NetCDF export needs arviz.", key="--format", fix=inference.INSTALL_HINT + ".")
        inference.write_netcdf(idata, path)
    return path
