"""The logic family's on-disk cache: equal to a fresh design, keyed by everything it depends on."""

import dataclasses
import pickle

from planner.catalogue import builtin_catalogue
from planner.electrical import DesignRules, Rails, cached_family, design_family, family_key


def _tubes():
    catalogue = builtin_catalogue()
    return [(catalogue.get("12AU7"), 0.7), (catalogue.get("6AU6"), 0.8)]


def test_cached_family_equals_a_fresh_design(tmp_path):
    rails, rules = Rails(250, -100), DesignRules()
    fresh = design_family(rails, _tubes(), rules)
    stored = cached_family(rails, _tubes(), rules, directory=tmp_path)  # a miss: designs and stores
    assert len(list(tmp_path.glob("family-*.pickle"))) == 1
    again = cached_family(rails, _tubes(), rules, directory=tmp_path)  # a hit: read back
    assert stored == fresh and again == fresh
    assert pickle.dumps(again) == pickle.dumps(fresh)  # the same values to the last bit


def test_a_changed_catalogue_value_misses_the_cache(tmp_path):
    rails, rules = Rails(250, -100), DesignRules()
    tubes = _tubes()
    cached_family(rails, tubes, rules, directory=tmp_path)
    tube, wear = tubes[0]
    changed = dataclasses.replace(tube, max_plate_watts=tube.max_plate_watts * 0.5)
    assert family_key(rails, [(changed, wear)] + tubes[1:], rules) != family_key(rails, tubes, rules)
    family = cached_family(rails, [(changed, wear)] + tubes[1:], rules, directory=tmp_path)
    assert family == design_family(rails, [(changed, wear)] + tubes[1:], rules)
    assert len(list(tmp_path.glob("family-*.pickle"))) == 2
    # Conditions, rails and rules are part of the key too.
    assert family_key(rails, [(tube, 0.6)] + tubes[1:], rules) != family_key(rails, tubes, rules)
    assert family_key(Rails(240, -100), tubes, rules) != family_key(rails, tubes, rules)
    assert family_key(rails, tubes, DesignRules(series="E12")) != family_key(rails, tubes, rules)


def test_a_corrupt_entry_is_ignored_and_rebuilt(tmp_path):
    rails, rules = Rails(250, -100), DesignRules()
    cached_family(rails, _tubes(), rules, directory=tmp_path)
    (entry,) = tmp_path.glob("family-*.pickle")
    entry.write_bytes(b"not a pickle")
    assert cached_family(rails, _tubes(), rules, directory=tmp_path) == design_family(rails, _tubes(), rules)
    assert pickle.loads(entry.read_bytes())[0] == family_key(rails, _tubes(), rules)  # rewritten whole
    assert not list(tmp_path.glob(".family-*"))  # no temporary file left behind


def test_no_directory_means_no_cache(tmp_path, monkeypatch):
    monkeypatch.setenv("TUBEPLAN_CACHE_DIR", "")
    rails = Rails(250, -100)
    assert cached_family(rails, _tubes()[:1]) == design_family(rails, _tubes()[:1])
    assert not list(tmp_path.iterdir())


def test_cached_network_equals_a_fresh_one_and_a_changed_design_misses(tmp_path):
    from planner.spec import load_design, parse_expression
    from planner.spec.design import OutputSpec
    from planner.stages import SynthesisOptions, cached_network, network_key, synthesise

    design = load_design("inventory_demo/design.yaml")
    options = SynthesisOptions(mode="nand")
    fresh = synthesise(design, options).network
    assert cached_network(design, options, directory=tmp_path) == fresh  # a miss, stored
    assert cached_network(design, options, directory=tmp_path) == fresh  # a hit
    assert len(list(tmp_path.glob("network-*.pickle"))) == 1
    changed = dataclasses.replace(design, outputs=design.outputs[:-1] + (
        OutputSpec("equal", parse_expression("a1 & b1"), None, "a1 & b1"),))
    assert network_key(changed, options) != network_key(design, options)
    assert network_key(design, SynthesisOptions(mode="nor")) != network_key(design, options)
    assert cached_network(changed, options, directory=tmp_path) == synthesise(changed, options).network


def test_heater_elevations_are_part_of_the_key():
    rails, rules = Rails(250, -100), DesignRules()
    assert family_key(rails, _tubes(), rules, (0.0, 60.0)) != family_key(rails, _tubes(), rules)
    assert family_key(rails, _tubes(), rules, (0.0,)) == family_key(rails, _tubes(), rules, ())


def test_every_field_of_an_input_is_part_of_the_network_key():
    from planner.spec import load_design
    from planner.stages import SynthesisOptions, network_key

    design = load_design("inventory_demo/design.yaml")
    limited = dataclasses.replace(design, inputs=(dataclasses.replace(design.inputs[0], fanout=2),)
                                  + design.inputs[1:])
    assert network_key(limited, SynthesisOptions()) != network_key(design, SynthesisOptions())


def test_the_network_key_hashes_the_formula_module_with_the_synthesising_packages(tmp_path, monkeypatch):
    from planner import diskcache
    from planner.stages import SynthesisOptions, network_cache, network_key
    from planner.spec import load_design

    module = tmp_path / "formula.py"
    module.write_text("A = 1\n")
    before = diskcache.source_digest([module])
    module.write_text("A = 2\n")
    assert diskcache.source_digest([module]) != before  # a single module file is hashed
    hashed = []
    monkeypatch.setattr(network_cache, "source_digest", lambda paths: hashed.extend(paths) or "digest")
    network_key(load_design("inventory_demo/design.yaml"), SynthesisOptions())
    assert sorted(p.name for p in hashed) == ["formula.py", "logic", "spec", "stages"]
