"""Planning RV follow-up: how many new RVs a planet needs for its mass and its composition verdict.

``planetfit plan RUNDIR`` reads a finished run (:mod:`~planetfit.planning.run`), schedules new RVs
(:mod:`~planetfit.planning.schedule`), adds their Fisher information to the run's posterior
(:mod:`~planetfit.planning.fisher`, :mod:`~planetfit.planning.forecast`), summarises the expected mass precision
and ``p_rocky`` per number of RVs (:mod:`~planetfit.planning.plan`) and writes plan.json, plan.md and a figure
(:mod:`~planetfit.planning.outputs`). A transit-only run gets its mass from a published mass-radius relation
(:mod:`~planetfit.planning.massprior`) or the user's guess.
"""
