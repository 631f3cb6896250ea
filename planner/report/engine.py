"""The template engine of the HTML report: jinja2 over ``templates/`` with autoescape on.

Every ``{{ value }}`` a template shows is escaped by the engine, so text the user wrote (design,
input and output names, winding names, file names) reads as text, never as markup. A fragment
that is already markup goes in only as ``markupsafe.Markup``, where the caller says why it is safe.
"""

from __future__ import annotations

import os
from functools import cache

import jinja2

from planner.diskcache import cache_dir


class _TemplateCodeCache(jinja2.FileSystemBytecodeCache):
    """jinja2's cache of compiled templates, in ``templates/`` of tubeplan's cache directory.

    Compiling the report's templates is most of writing report.html (about 20 ms); jinja2 keys
    each entry by the template's name and checks the source's checksum and the Python version,
    so an entry is never used for another template text. Like every cache entry it is safe to
    delete; one that cannot be written or read only costs the next run the compile.
    """

    def load_bytecode(self, bucket: jinja2.bccache.Bucket) -> None:
        try:
            super().load_bytecode(bucket)
        except (OSError, EOFError, ValueError, TypeError):  # unreadable or corrupt: compile again
            bucket.reset()

    def dump_bytecode(self, bucket: jinja2.bccache.Bucket) -> None:
        try:
            os.makedirs(self.directory, exist_ok=True)
            super().dump_bytecode(bucket)
        except OSError:
            pass


@cache
def environment() -> jinja2.Environment:
    """The engine for the report package's templates (built once; it keeps the compiled templates,
    and across runs in the cache directory, :class:`_TemplateCodeCache`, when there is one).

    ``trim_blocks`` and ``lstrip_blocks`` let a block tag stand on its own line without leaving a
    blank one; ``keep_trailing_newline`` keeps a template's last line ending; ``StrictUndefined``
    makes a misspelt name an error rather than empty text.

    >>> environment().from_string("<b>{{ name }}</b>").render(name="<i>&\\"'")
    '<b>&lt;i&gt;&amp;&#34;&#39;</b>'
    """
    directory = cache_dir()
    code_cache = None if directory is None else _TemplateCodeCache(str(directory / "templates"))
    return jinja2.Environment(loader=jinja2.PackageLoader("planner.report", "templates"), autoescape=True,
                              trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True,
                              undefined=jinja2.StrictUndefined, bytecode_cache=code_cache)


def render(template: str, **values) -> str:
    """``template`` (a file in ``templates/``) rendered with ``values``. Cost: one render; compiled once."""
    return environment().get_template(template).render(**values)
