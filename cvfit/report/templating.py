"""The HTML report's templates: one jinja2 environment, escaping on.

The templates are package data (``cvfit/report/templates``). Every value reaches them as
text already formatted for people (:mod:`cvfit.formatting`, :mod:`cvfit.report.html_view`);
jinja2's autoescape then escapes all of it the same way, in text and in attributes. jinja2
is imported only here, so only a run that writes the HTML report loads it.
"""

from __future__ import annotations

from functools import lru_cache
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    import jinja2

__all__ = ["render_template"]


@lru_cache(maxsize=1)
def _environment() -> jinja2.Environment:
    import jinja2

    return jinja2.Environment(
        loader=jinja2.PackageLoader("cvfit.report", "templates"),
        autoescape=True,  # every template is HTML, whatever its file name
        undefined=jinja2.StrictUndefined,  # a missing value is a bug, never an empty cell
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
    )


def render_template(name: str, **context: Any) -> str:
    """The text of template *name* with *context* (values escaped by autoescape)."""
    return _environment().get_template(name).render(**context)
