"""From datasets to samples. The model side lives here: parameters and their layout, the model's
components, one likelihood per dataset, linear parameters, the joint log-probability and predictions; the
samplers (ensemble MCMC, nested), their optimiser start, modes and samples.h5 in
:mod:`planetfit.fitting.sampling`. Imports :mod:`planetfit.core` and :mod:`planetfit.inputs` only."""
