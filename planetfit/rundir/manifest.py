"""manifest.json: what a run was started with, so a resume, a redraw or an export can tell whether it still matches.

Written when a run starts: the config (every key but ``output``, the
sampling block and the data files' paths), the sampler's settings (all but
its stopping rule, which a resume may change), every data file's size and
SHA-256, the sampled parameters' names and the planetfit version. A resumed,
redrawn, exported or planned run is compared with the manifest of the
config and data as they are now; any difference is refused with a list of
what changed. The file is JSON read with a size cap: nothing in it can run
code.
"""

import datetime
import hashlib
import json
from pathlib import Path

import yaml

from planetfit import __version__
from planetfit.core.errors import InputError

MANIFEST_FORMAT = 1
#: Sampling settings that only say when to stop: a resume may change them.
STOPPING_RULE = frozenset(
    {"max_steps", "check_every", "autocorr_factor", "autocorr_tolerance", "dlogz", "min_effective_samples"}
    | {"max_likelihood_calls"}
)
#: Largest manifest read (bytes); a real one is a few kB.
MAX_MANIFEST_BYTES = 4_000_000
#: Longest value quoted in a difference.
_QUOTE_CHARS = 80
_CHUNK = 1 << 20


def file_digest(path):
    """SHA-256 of a file's bytes (hex), read in 1 MiB chunks."""
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        while chunk := fh.read(_CHUNK):
            h.update(chunk)
    return h.hexdigest()


def _data_files(config):
    """(label, path) of every file the config's datasets read, band responses included."""
    out = []
    for section, items in (("photometry", config.photometry), ("velocities", config.velocities)):
        for c in items:
            out += [(f"{section} '{c.name}' {Path(f).name}", Path(f)) for f in c.files]
            if getattr(c, "band_response", None) is not None:
                out.append((f"{section} '{c.name}' band response", Path(c.band_response_path)))
    return out


def _model_config(resolved_yaml):
    """The config as resolved, without what may differ between two runs of one model (folder, file paths)."""
    raw = yaml.safe_load(resolved_yaml)
    raw.pop("output", None)
    raw.pop("sampling", None)
    for section in ("photometry", "velocities"):
        for entry in raw.get(section) or []:
            entry.pop("file", None)
            entry.pop("band_response", None)
    return raw


def _data_entries(config):
    return [
        {"dataset": label, "file": str(path), "bytes": path.stat().st_size, "sha256": file_digest(path)}
        for label, path in _data_files(config)
    ]


def data_changes(saved, config):
    """What changed in the config's data files since the run of manifest ``saved`` started (lines of text)."""
    return _data_changes(saved.get("data", []), _data_entries(config))


def transformed_coordinates(parameter_names, sampled_labels):
    """Sampler coordinates other than a parameter itself or its logarithm (``b.impact^2``).

    Samples are saved in the sampler's coordinates; the manifest lists these so that samples saved in
    others (by a planetfit that sampled b, not b^2) are refused rather than misread.
    """
    return [label for name, label in zip(parameter_names, sampled_labels) if label not in (name, f"ln({name})")]


def build(config, resolved_yaml, parameter_names, sampled_labels=None):
    """The manifest of a config (as resolved) and its data as they are now (a JSON-ready dict).

    ``sampled_labels`` names the sampler's coordinate of each parameter (default: the parameters themselves).
    """
    model = _model_config(resolved_yaml)
    sampler = config.sampling.model_dump(mode="json")
    return {
        "format": MANIFEST_FORMAT,
        "planetfit_version": __version__,
        "started_utc": datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds"),
        "config_sha256": hashlib.sha256(json.dumps(model, sort_keys=True, default=str).encode()).hexdigest(),
        "config": json.loads(json.dumps(model, default=str)),
        "sampler": {k: v for k, v in sampler.items() if k not in STOPPING_RULE},
        "data": _data_entries(config),
        "parameters": list(parameter_names),
        "coordinates": transformed_coordinates(parameter_names, sampled_labels or parameter_names),
        "outputs": [],
    }


def read(path):
    """A manifest.json (a dict), or None if there is none.

    Raises
    ------
    InputError
        If it is larger than :data:`MAX_MANIFEST_BYTES`, not JSON or not a planetfit manifest.
    """
    path = Path(path)
    if not path.is_file():
        return None
    fix = "this folder was not written by planetfit as it is; start a new fit in another folder (--out)."
    with open(path, "rb") as fh:
        text = fh.read(MAX_MANIFEST_BYTES + 1)
    if len(text) > MAX_MANIFEST_BYTES:
        raise InputError(f"manifest.json is larger than {MAX_MANIFEST_BYTES} bytes.", file=path, fix=fix)
    try:
        manifest = json.loads(text)
    except ValueError as exc:
        raise InputError(f"manifest.json is not valid JSON ({str(exc)[:_QUOTE_CHARS]}).", file=path, fix=fix) from None
    if not isinstance(manifest, dict) or manifest.get("format") != MANIFEST_FORMAT:
        raise InputError("manifest.json is not a planetfit manifest of this version.", file=path, fix=fix)
    return manifest


def _quote(value):
    text = json.dumps(value, default=str)
    return text if len(text) <= _QUOTE_CHARS else text[: _QUOTE_CHARS - 3] + "..."


def _flatten(value, prefix=""):
    """Dotted key -> leaf value (lists are leaves)."""
    if not isinstance(value, dict) or not value:
        return {prefix: value}
    out = {}
    for k, v in value.items():
        out.update(_flatten(v, f"{prefix}.{k}" if prefix else str(k)))
    return out


def _changed(before, after, label):
    old, new = _flatten(before, label), _flatten(after, label)
    missing = object()
    lines = []
    for key in sorted(set(old) | set(new)):
        a, b = old.get(key, missing), new.get(key, missing)
        if a != b:
            lines.append(
                f"{key}: {'(absent)' if a is missing else _quote(a)} -> {'(absent)' if b is missing else _quote(b)}"
            )
    return lines


def _data_changes(before, after):
    lines = []
    old = {d["dataset"]: d for d in before}
    new = {d["dataset"]: d for d in after}
    for label in sorted(set(old) | set(new)):
        a, b = old.get(label), new.get(label)
        if a is None or b is None:
            lines.append(f"data {label}: {'added' if a is None else 'no longer read'}")
        elif a["sha256"] != b["sha256"]:
            lines.append(
                f"data {label}: changed since the run started ({a['bytes']} bytes, sha256 {a['sha256'][:12]} -> "
                f"{b['bytes']} bytes, sha256 {b['sha256'][:12]}; {b['file']})"
            )
    return lines


def differences(before, after):
    """What differs between two manifests that makes one run not a continuation of the other (lines of text)."""
    lines = _changed(before.get("sampler", {}), after["sampler"], "sampling")
    lines += _data_changes(before.get("data", []), after["data"])
    lines += _changed(before.get("config", {}), after["config"], "config")
    if list(before.get("parameters", [])) != after["parameters"]:
        lines.append(
            f"free parameters: {len(before.get('parameters', []))} ({_quote(before.get('parameters'))}) -> "
            f"{len(after['parameters'])} ({_quote(after['parameters'])})"
        )
    if before.get("coordinates", []) != after.get("coordinates", []):
        lines.append(
            f"sampler coordinates: {_quote(before.get('coordinates', []))} -> {_quote(after.get('coordinates', []))} "
            "(the saved samples are in the former)"
        )
    return lines
