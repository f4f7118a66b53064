"""The bundled demo system: an invented K dwarf, Keldra-4, with two planets.

``planetfit demo`` fits ``demo.yaml`` against the tables in ``data/``;
``python -m planetfit.demo.generate`` writes those tables again from a fixed
seed and the true parameters in :data:`planetfit.demo.generate.TRUTH`.
"""

from pathlib import Path

DEMO_DIR = Path(__file__).resolve().parent
DEMO_CONFIG = DEMO_DIR / "demo.yaml"
#: Further bundled examples (``planetfit demo --example NAME``); ``hot-giant`` is written by
#: ``python -m planetfit.demo.hot_giant``.
EXAMPLES = {"hot-giant": DEMO_DIR / "hot-giant" / "hot-giant.yaml"}
