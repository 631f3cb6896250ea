"""tubeplan: plan digital logic built from vacuum tubes.

Layers, each knowing only those below it:
``spec`` -> ``logic`` -> ``stages`` -> ``electrical`` -> ``mapping`` -> ``report``.
``catalogue`` is tube data used by ``spec`` (type names, custom types),
``electrical``, ``mapping`` and ``report``.
"""

__version__ = "0.1.0"
