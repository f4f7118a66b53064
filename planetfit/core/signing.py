"""Files only this machine wrote: a keyed digest (HMAC-SHA256) in front of their bytes.

A pickle runs code when it is read, so planetfit reads one (dynesty's
checkpoint) only after checking its digest with a key that never lies in the
run directory: ``$PLANETFIT_KEY_DIR``, else ``$XDG_CONFIG_HOME/planetfit``,
else ``~/.config/planetfit``, file ``signing.key`` (32 random bytes, created
once with mode 0600). A run directory copied from another machine, or a file
planted in it, is refused before any of its bytes are unpickled.
"""

import hashlib
import hmac
import os
import secrets
from pathlib import Path

from planetfit.core.errors import InputError

#: First bytes of a signed file, then the hex digest of the rest and a newline.
MAGIC = b"planetfit-hmac-sha256 "
_DIGEST_HEX = 64
KEY_NAME, KEY_BYTES = "signing.key", 32


def key_dir():
    """The folder of the machine's key (see the module's text for the order)."""
    if os.environ.get("PLANETFIT_KEY_DIR"):
        return Path(os.environ["PLANETFIT_KEY_DIR"])
    base = os.environ.get("XDG_CONFIG_HOME") or Path.home() / ".config"
    return Path(base) / "planetfit"


def machine_key(create=True):
    """The machine's key, created (mode 0600) when missing and ``create``; None if missing and not ``create``."""
    path = key_dir() / KEY_NAME
    if not path.exists():
        if not create:
            return None
        try:
            path.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
            fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
            with os.fdopen(fd, "wb") as fh:
                fh.write(secrets.token_bytes(KEY_BYTES))
        except FileExistsError:
            pass  # another process made it first
        except OSError as exc:
            raise InputError(
                f"planetfit cannot create its signing key ({exc.strerror}).",
                file=path,
                fix="set PLANETFIT_KEY_DIR (or XDG_CONFIG_HOME) to a writable folder outside the run directory.",
            ) from None
    return path.read_bytes()


def signed(payload):
    """``payload`` (bytes) with the machine key's digest in front."""
    digest = hmac.new(machine_key(), payload, hashlib.sha256).hexdigest().encode()
    return MAGIC + digest + b"\n" + payload


def verified(path, what):
    """The payload of signed file ``path``, or an InputError if its digest is missing or does not match.

    ``what`` names the file in the message (e.g. "the nested-sampling checkpoint").
    """
    data = Path(path).read_bytes()
    head = len(MAGIC) + _DIGEST_HEX + 1
    key = machine_key(create=False)
    fix = (
        "start the fit again with --force (a file planetfit did not write on this machine is never loaded: "
        "it could run code)."
    )
    if not data.startswith(MAGIC) or len(data) < head or data[head - 1 : head] != b"\n":
        raise InputError(f"{what} carries no planetfit signature, so it is not loaded.", file=path, fix=fix)
    if key is None or not hmac.compare_digest(
        data[len(MAGIC) : head - 1], hmac.new(key, data[head:], hashlib.sha256).hexdigest().encode()
    ):
        raise InputError(
            f"{what} was not written by planetfit on this machine (its signature does not match this "
            f"machine's key in {key_dir()}), so it is not loaded.",
            file=path,
            fix=fix,
        )
    return data[head:]
