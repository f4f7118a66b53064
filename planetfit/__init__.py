"""planetfit: joint transit + radial-velocity fits and what follows from them."""

__version__ = "0.1.0"
