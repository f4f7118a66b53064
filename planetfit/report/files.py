"""Writing run-directory files atomically (temporary file, then rename), with the user's normal permissions."""

import os
import tempfile
from pathlib import Path


def _umask():
    """The process's file-creation mask (read by setting it and setting it back)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def write_text_atomic(path, text):
    """Write ``text`` to ``path`` so readers see the old file or the new one, never half of one.

    The file gets the mode any new file of the user gets (0666 less the umask), not the temporary file's 0600.
    """
    path = Path(path)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        os.fchmod(fd, 0o666 & ~_umask())
        with os.fdopen(fd, "w") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
