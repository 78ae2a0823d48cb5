"""An SVG drawn by matplotlib, made fit to place inside a page under a strict style policy.

A Content-Security-Policy without ``'unsafe-inline'`` styles ignores ``style="..."`` attributes
and ``<style>`` elements in the page, and matplotlib writes its colours, line widths and fonts
that way. Every property it writes there (fill, stroke and its widths, joins, caps and dashes,
opacities, font size and family, text anchor) is also an SVG presentation attribute, so each
``style`` attribute becomes attributes, and the one ``<style>`` rule matplotlib adds (round line
joins and butt caps for every element) becomes attributes of the root, which inherit.

References
----------
- W3C SVG 1.1 (Second Edition), section 6.4 "Specifying properties using the presentation
  attributes", and appendix N (the property index).
"""

from __future__ import annotations

import re
from html import escape

STYLE_ATTRIBUTE = re.compile(r' style="([^"]*)"')
STYLE_ELEMENT = re.compile(r"\s*<style[^>]*>(.*?)</style>", re.S)
UNIVERSAL_RULE = re.compile(r"^\s*\*\s*\{([^}]*)\}\s*$", re.S)
# Properties matplotlib writes that are SVG presentation attributes (SVG 1.1 appendix N).
PRESENTATION = frozenset({
    "fill", "fill-opacity", "fill-rule", "stroke", "stroke-width", "stroke-linecap", "stroke-linejoin",
    "stroke-miterlimit", "stroke-dasharray", "stroke-dashoffset", "stroke-opacity", "opacity",
    "font-size", "font-family", "font-style", "font-weight", "text-anchor", "clip-path",
})  # fmt: skip


class InlineSvgError(ValueError):
    """A style the converter does not know how to carry over (the chart would change)."""


def _attributes(declarations: str) -> str:
    parts = []
    for declaration in declarations.split(";"):
        if not declaration.strip():
            continue
        name, _, value = declaration.partition(":")
        name, value = name.strip(), value.strip()
        if name not in PRESENTATION:
            raise InlineSvgError(f"The SVG style property {name!r} has no presentation attribute here.")
        parts.append(f' {name}="{escape(value, quote=True)}"')
    return "".join(parts)


def presentation_attributes(svg: str) -> str:
    """``svg`` (one ``<svg>`` element) with its styles as presentation attributes.

    >>> presentation_attributes('<svg><style>*{stroke-linecap: butt}</style><path style="fill: #fff"/></svg>')
    '<svg stroke-linecap="butt"><path fill="#fff"/></svg>'
    """
    root_attributes = ""
    for rules in STYLE_ELEMENT.findall(svg):
        universal = UNIVERSAL_RULE.match(rules)
        if universal is None:
            raise InlineSvgError("The SVG has a style sheet other than one rule for every element.")
        root_attributes += _attributes(universal.group(1))
    svg = STYLE_ELEMENT.sub("", svg)
    svg = STYLE_ATTRIBUTE.sub(lambda match: _attributes(match.group(1)), svg)
    return svg.replace("<svg", "<svg" + root_attributes, 1)
