"""Writing run-directory files atomically (temporary file, then rename)."""

import os
import tempfile
from pathlib import Path


def write_text_atomic(path, text):
    """Write ``text`` to ``path`` so readers see the old file or the new one, never half of one."""
    path = Path(path)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "w") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
