"""The template engine of the HTML report: jinja2 over ``templates/`` with autoescape on.

Every ``{{ value }}`` a template shows is escaped by the engine, so text the user wrote (design,
input and output names, winding names, file names) reads as text, never as markup. A fragment
that is already markup goes in only as ``markupsafe.Markup``, where the caller says why it is safe.
"""

from __future__ import annotations

from functools import cache

import jinja2


@cache
def environment() -> jinja2.Environment:
    """The engine for the report package's templates (built once; it keeps the compiled templates).

    ``trim_blocks`` and ``lstrip_blocks`` let a block tag stand on its own line without leaving a
    blank one; ``keep_trailing_newline`` keeps a template's last line ending; ``StrictUndefined``
    makes a misspelt name an error rather than empty text.

    >>> environment().from_string("<b>{{ name }}</b>").render(name="<i>&\\"'")
    '<b>&lt;i&gt;&amp;&#34;&#39;</b>'
    """
    return jinja2.Environment(loader=jinja2.PackageLoader("planner.report", "templates"), autoescape=True,
                              trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True,
                              undefined=jinja2.StrictUndefined)


def render(template: str, **values) -> str:
    """``template`` (a file in ``templates/``) rendered with ``values``. Cost: one render; compiled once."""
    return environment().get_template(template).render(**values)
