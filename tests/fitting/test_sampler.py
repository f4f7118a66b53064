"""The sampling block's variants and the one place that picks a sampler from them.

# common practice, no published source: these tests check planetfit's own config contract and software
# interface (which sampler a block asks for, the keys it keeps), no physics.
"""

import pytest
from pydantic import TypeAdapter

from planetfit.fitting.sampling import DynestySampler, EmceeSampler, sampler_for
from planetfit.inputs.schema import McmcSettings, NestedSettings, SamplingMethod, WalkerMoves
from planetfit.inputs.schema.settings import SamplingBlock

BLOCK = TypeAdapter(SamplingBlock)


@pytest.mark.parametrize(
    "raw, settings, sampler",
    [
        ({}, McmcSettings, EmceeSampler),
        ({"method": "mcmc", "moves": "fitted_proposal"}, McmcSettings, EmceeSampler),
        ({"method": "nested", "live_points": 100}, NestedSettings, DynestySampler),
    ],
)
def test_the_block_picks_its_variant_and_its_sampler(raw, settings, sampler):
    block = BLOCK.validate_python(raw)
    assert type(block) is settings and type(sampler_for(block)) is sampler
    assert sampler_for(block).kind is block.kind


def test_each_method_keeps_the_keys_of_the_other():
    # A config switched to nested sampling ('planetfit compare') keeps its walkers; manifests of earlier runs
    # list every key of the block, so both variants dump the same keys.
    nested = BLOCK.validate_python({"method": "nested", "walkers": 32, "moves": "fitted_proposal"})
    assert nested.walkers == 32 and nested.kind is SamplingMethod.NESTED
    assert set(nested.model_dump()) == set(BLOCK.validate_python({}).model_dump())
    assert nested.model_dump(mode="json")["method"] == "nested"


def test_facts_tell_their_method():
    # summary.json's sampling block of an MCMC run has no 'method' (it never had); a nested run's has.
    assert SamplingMethod.of_facts({"walkers": 24}) is SamplingMethod.MCMC
    assert SamplingMethod.of_facts({"method": "nested"}) is SamplingMethod.NESTED
    assert SamplingMethod.MCMC.has_walkers and not SamplingMethod.MCMC.weighted
    assert SamplingMethod.NESTED.weighted and not SamplingMethod.NESTED.has_walkers
    assert WalkerMoves("fitted_proposal") is WalkerMoves.FITTED_PROPOSAL
