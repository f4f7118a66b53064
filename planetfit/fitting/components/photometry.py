"""What every light curve has besides its baseline and kernel: a jitter and a dilution.

The jitter (ppm) is added in quadrature to the reported errors by the
dataset's noise model (:mod:`~planetfit.fitting.components.noise`,
:mod:`~planetfit.fitting.components.gp`). The dilution D is the fraction
of the aperture's flux from other stars: the flux deficits of the terms
are multiplied by 1 - D (:mod:`planetfit.fitting.likelihoods`). A dilution
fixed at 0 (the default) declares no parameter.
"""

from planetfit.core.quantities import DATASET
from planetfit.fitting.components.base import DILUTIONS, JITTERS
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema


@JITTERS.register(schema.PhotometryBlock)
class PhotometricJitter:
    """A light curve's jitter, ppm of its relative flux.

    Parameters
    ----------
    block : photometry block of the schema
    """

    def __init__(self, block):
        self.jitter = Parameter(block.name, "jitter_ppm", block.jitter_ppm, DATASET["jitter_ppm"])
        self.parameters = [self.jitter]


@DILUTIONS.register(schema.PhotometryBlock)
class Dilution:
    """A light curve's contaminating flux fraction D: ``parameter`` is None when D is fixed at 0.

    Parameters
    ----------
    block : photometry block of the schema
    """

    def __init__(self, block):
        undiluted = block.dilution.fixed and block.dilution.value == 0.0
        self.parameter = None if undiluted else Parameter(block.name, "dilution", block.dilution, DATASET["dilution"])
        self.parameters = [] if undiluted else [self.parameter]
