"""Signed files: a keyed digest written and checked, the key kept outside the run directory with mode 0600."""

import hashlib
import hmac
import stat

import pytest

from planetfit.core import signing
from planetfit.core.errors import InputError

# common practice, no published source: HMAC-SHA256 (RFC 2104 with SHA-256) is the standard keyed digest; these
# tests check planetfit's use of it, no physics.


@pytest.fixture
def key_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("PLANETFIT_KEY_DIR", str(tmp_path / "keys"))
    return tmp_path / "keys"


def test_signed_bytes_come_back_and_the_key_is_private(key_dir, tmp_path):
    path = tmp_path / "run" / "file.bin"
    path.parent.mkdir()
    path.write_bytes(signing.signed(b"payload \x00\x01"))
    assert signing.verified(path, "the file") == b"payload \x00\x01"
    key = key_dir / signing.KEY_NAME
    assert stat.S_IMODE(key.stat().st_mode) == 0o600 and len(key.read_bytes()) == signing.KEY_BYTES
    head = path.read_bytes().split(b"\n", 1)[0]
    assert head == signing.MAGIC + hmac.new(key.read_bytes(), b"payload \x00\x01", hashlib.sha256).hexdigest().encode()


def test_unsigned_altered_or_foreign_files_are_refused(key_dir, tmp_path, monkeypatch):
    path = tmp_path / "file.bin"
    path.write_bytes(b"\x80\x04K\x01.")  # a pickle with no signature
    with pytest.raises(InputError, match="carries no planetfit signature"):
        signing.verified(path, "the file")
    data = signing.signed(b"payload")
    path.write_bytes(data[:-1] + b"X")  # one byte changed
    with pytest.raises(InputError, match="not written by planetfit on this machine") as err:
        signing.verified(path, "the file")
    assert "--force" in err.value.fix
    path.write_bytes(data)
    monkeypatch.setenv("PLANETFIT_KEY_DIR", str(tmp_path / "another-machine"))
    with pytest.raises(InputError, match="not written by planetfit on this machine"):
        signing.verified(path, "the file")
    assert not (tmp_path / "another-machine").exists()  # checking never creates a key


def test_an_unwritable_key_folder_is_a_clear_error(tmp_path, monkeypatch):
    (tmp_path / "file").write_text("")
    monkeypatch.setenv("PLANETFIT_KEY_DIR", str(tmp_path / "file" / "keys"))  # under a file: cannot be made
    with pytest.raises(InputError, match="cannot create its signing key") as err:
        signing.signed(b"x")
    assert "PLANETFIT_KEY_DIR" in err.value.fix
