"""Proving a plan directory in ngspice: every input vector at nominal and at worst-case corners.

Public API
----------
- ``read_plan_directory(path) -> PlanDirectory`` (InputError for a bad directory)
- ``prove_plan(plan, executable, *, say=None, limit=VECTOR_LIMIT, seed=1) -> Proof``
- ``find_ngspice(executable=None) -> str`` (NgspiceMissing), ``NgspiceFailed``: ``planner.report``'s, here too
  for the command line; ``say(message)``: a progress line on stderr
- ``prove_directory(path, *, executable=None, limit=, seed=, say=None) -> (Proof, paths)``: all of it,
  writing prove.json and the reports' simulation section; ``format_proof(proof)``, ``proof_document(proof)``
- ``Corner``, ``plan_corners(params)``, ``deck_params(deck)``, ``input_vectors(count, limit, seed)``

See docs/outputs.md ("tubeplan prove").
"""

from planner.report import NgspiceFailed, NgspiceMissing, find_ngspice

from .corners import Corner, deck_params, plan_corners
from .directory import PlanDirectory, evaluate, read_plan_directory
from .output import format_proof, problems, proof_document, prove_directory, say, write_proof
from .run import VECTOR_LIMIT, OutputCorner, Proof, input_vectors, prove_plan

__all__ = ["VECTOR_LIMIT", "Corner", "NgspiceFailed", "NgspiceMissing", "OutputCorner", "PlanDirectory", "Proof",
           "deck_params", "evaluate", "find_ngspice", "format_proof", "input_vectors", "plan_corners", "problems",
           "proof_document", "prove_directory", "prove_plan", "read_plan_directory", "say", "write_proof"]
