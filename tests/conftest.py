"""Test helpers shared by every test folder.

The synthetic-system writers (``synthetic``, ``variability``) and a headless browser (``browser``).
"""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))

import pytest  # noqa: E402


@pytest.fixture(autouse=True, scope="session")
def signing_key_outside_home(tmp_path_factory):
    """The machine key that signs checkpoints (planetfit.core.signing) in a temporary folder, not the user's."""
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("PLANETFIT_KEY_DIR", str(tmp_path_factory.mktemp("planetfit-key")))
        yield
