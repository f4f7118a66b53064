"""Test helpers shared by every test folder: the synthetic-system writers (``synthetic``, ``variability``)."""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
