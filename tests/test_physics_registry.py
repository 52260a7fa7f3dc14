"""Specification of pacing.physics.registry.ModelRegistry: published models by name, the old
spellings of renamed names still accepted on lookup, only the current names listed."""

from __future__ import annotations

import pytest

from pacing.errors import InputError
from pacing.physics.air import (
    AIR_DENSITY_MODELS,
    DEFAULT_AIR_DENSITY_MODEL,
    SATURATION_VAPOUR_PRESSURE_MODELS,
    air_density,
    air_density_ideal_gas,
    saturation_vapour_pressure_hardy_1998,
)
from pacing.physics.registry import ModelRegistry

REGISTRY = ModelRegistry({"first-model": 1, "second-model": 2},
                         aliases={"first_model": "first-model"}, what="test model")


def test_lists_only_the_current_names_in_order():
    assert list(REGISTRY) == ["first-model", "second-model"]
    assert len(REGISTRY) == 2
    assert dict(REGISTRY) == {"first-model": 1, "second-model": 2}


def test_old_spellings_are_accepted_on_lookup():
    assert REGISTRY["first_model"] == REGISTRY["first-model"] == 1
    assert "first_model" in REGISTRY
    assert REGISTRY.get("first_model") == 1
    assert REGISTRY.canonical("first_model") == "first-model"
    assert REGISTRY.canonical("second-model") == "second-model"
    assert REGISTRY.resolve("first_model") == 1


def test_unknown_names_raise_key_error_or_a_one_line_input_error():
    assert "third-model" not in REGISTRY
    with pytest.raises(KeyError):
        REGISTRY["third-model"]
    with pytest.raises(InputError, match="unknown test model 'third'; choose one of "
                                         "first-model, second-model"):
        REGISTRY.resolve("third")


def test_aliases_must_point_to_registered_models():
    with pytest.raises(ValueError, match="unknown models"):
        ModelRegistry({"a-model": 1}, aliases={"b_model": "b-model"})


def test_the_registry_is_read_only():
    with pytest.raises(TypeError):
        REGISTRY["new-model"] = 3  # a Mapping has no __setitem__


def test_physics_registries_use_hyphens_and_accept_the_underscore_keys_of_earlier_versions():
    # Registry keys are spelled like the command line's values ("minetti-2002"); stored plans
    # and files of earlier versions hold "cipm_2007" and "ideal_gas".
    assert list(AIR_DENSITY_MODELS) == ["cipm-2007", "ideal-gas"]
    assert DEFAULT_AIR_DENSITY_MODEL == "cipm-2007"
    assert AIR_DENSITY_MODELS["cipm_2007"] is AIR_DENSITY_MODELS["cipm-2007"] is air_density
    assert AIR_DENSITY_MODELS["ideal_gas"] is air_density_ideal_gas
    assert list(SATURATION_VAPOUR_PRESSURE_MODELS) == [
        "hardy-1998", "cipm-2007", "magnus-alduchov-eskridge-1996"]
    assert SATURATION_VAPOUR_PRESSURE_MODELS["hardy_1998"] is (
        saturation_vapour_pressure_hardy_1998)
    for registry in (AIR_DENSITY_MODELS, SATURATION_VAPOUR_PRESSURE_MODELS):
        assert all("_" not in name for name in registry)
        assert all(alias.replace("_", "-") == name for alias, name in registry.aliases.items())
