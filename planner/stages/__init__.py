"""Stage synthesis: the stage network, from minimised forms to plate nodes and branches.

A stage is one plate node with one plate load; it computes
``NOT(OR over branches of AND over the branch's inputs)``, or copies its input
(a follower).  This package turns a :class:`planner.spec.Design` into a proven
:class:`Network` under the limits of :class:`SynthesisOptions`, offers every
block's candidates for the integer program, repairs fan-out (buffer trees,
duplicated drivers, followers) and simulates and proves networks.  See ``docs/stages.md``.

Public API
----------
- :class:`Branch`, :class:`Stage`, :class:`Network`, :class:`NetworkCost`, :func:`stage_view`, :data:`MEANS`
- :class:`SynthesisOptions`, :data:`DEFAULT_MAX_BRANCHES`
- :func:`synthesise` -> :class:`Synthesis` (``network``, ``candidates``: :class:`Candidate`)
- :func:`cached_network` (``synthesise(...).network`` kept on disk across runs), :func:`network_key`;
  :func:`cached_multilevel` (``multilevel(...)`` likewise), :func:`multilevel_key`
- :func:`repair_fanout` (buffer trees, duplicated drivers, followers), :class:`FanoutError`,
  :data:`STRATEGIES`, :func:`describe_net`
- :func:`simulate`, :func:`input_patterns`, :func:`prove`, :class:`ProofError`
- :func:`multilevel` -> :class:`MultiLevel` (the whole design restructured and mapped by the ABC
  engine onto :func:`stage_library` cells, :class:`StageCell`; :func:`genlib_text`,
  :func:`engine_binary`, :class:`EngineError` (:class:`EngineMissing` when not installed),
  :data:`ENGINE_SCRIPTS`, :data:`COLLAPSE_SCRIPTS`)
"""

from .fanout import STRATEGIES, FanoutError, describe_net, repair_fanout
from .network_cache import cached_multilevel, cached_network, multilevel_key, network_key
from .network import MEANS, SECTIONS_PER_BRANCH, Branch, Network, NetworkCost, Stage, stage_view
from .options import DEFAULT_MAX_BRANCHES, MODES, SynthesisOptions
from .simulate import ProofError, input_patterns, prove, simulate
from .engine import (COLLAPSE_SCRIPTS, ENGINE_SCRIPTS, EngineError, EngineMissing, MultiLevel, StageCell,
                     engine_binary, genlib_text, multilevel, stage_library)
from .synthesis import Candidate, Synthesis, synthesise

__all__ = [
    "COLLAPSE_SCRIPTS", "ENGINE_SCRIPTS", "EngineError", "EngineMissing", "MultiLevel", "StageCell", "engine_binary",
    "genlib_text", "multilevel", "stage_library",
    "Branch", "Candidate", "DEFAULT_MAX_BRANCHES", "FanoutError", "MEANS", "MODES", "Network", "NetworkCost",
    "ProofError", "SECTIONS_PER_BRANCH", "STRATEGIES", "Stage", "Synthesis", "SynthesisOptions", "cached_multilevel",
    "cached_network", "describe_net", "input_patterns", "multilevel_key", "network_key", "prove", "repair_fanout",
    "simulate", "stage_view", "synthesise",
]
