"""From datasets to samples: parameters and their layout, the model's components, one likelihood per
dataset, the joint posterior, the optimiser start, the samplers (ensemble MCMC, nested) and samples.h5.
Imports :mod:`planetfit.core` and :mod:`planetfit.inputs` only."""
