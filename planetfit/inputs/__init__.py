"""What the user gives: the config (safe YAML with line numbers, the pydantic schema, the only place config
words are decoded), priors, data tables and FITS light curves, time systems, cleaning; the datasets the fit
reads. Imports only :mod:`planetfit.core`."""
