"""The model's parts, each declaring its parameters once and evaluating cheaply for a batch of walkers.

One module per family: :mod:`~.orbits` (orbit shapes and the :class:`~.orbits.SolvedOrbit`),
:mod:`~.planets` (star and planets), :mod:`~.transit` (light curve, limb darkening, transit term),
:mod:`~.exposure` (sub-exposures), :mod:`~.light` (the planet's light), :mod:`~.baselines`,
:mod:`~.photometry` (a light curve's jitter and dilution), :mod:`~.noise` (white noise),
:mod:`~.gp` (kernels, GP noise), :mod:`~.velocity` (spectrograph terms, trends), :mod:`~.timing`
(individual transit times), :mod:`~.stability` (Hill-stability prior). Each family's interface is a
Protocol in :mod:`~.base`; :mod:`~.registry` maps schema blocks to the classes that implement them.
"""
