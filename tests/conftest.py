"""Test helpers shared by every test folder.

The synthetic-system writers (``synthetic``, ``variability``) and a headless browser (``browser``).
"""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
