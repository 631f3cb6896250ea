"""Planning end to end: which networks are tried, which plan wins, and ``tubeplan plan``'s files.

The two branches of the flow meet here: the stage networks (``logic -> stages``) and the
logic family (``catalogue -> electrical``) go into the integer program (``mapping``) once per
candidate network, the best plan is kept, and ``report`` writes it.

Public API
----------
- :func:`plan_design` ``(design, stock, options=MappingOptions()) -> Plan``, raising :class:`Shortage`
- :func:`design_rules`: the electrical rules a stock implies
- :func:`plan_files`, :class:`PlanResult`: read the files, plan, write the plan directory
- :func:`network_document`: the candidate networks for ``tubeplan logic --networks``

See docs/architecture.md.
"""

from ._design import design_rules, plan_design
from ._files import PlanResult, network_document, plan_files
from ._shortage import Shortage

__all__ = ["PlanResult", "Shortage", "design_rules", "network_document", "plan_design", "plan_files"]
