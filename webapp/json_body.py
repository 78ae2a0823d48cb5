"""Reading a request's JSON body: one object of plain values, or a 400 in plain words.

JSON text is UTF-8 (RFC 8259, section 8.1). Before parsing, the body's nesting is measured
without recursion (:mod:`glowtemp.firinglog.json_text`), so "[[[[..." cannot exhaust Python's stack; integers are held to
:data:`LONGEST_INTEGER` digits and the non-standard ``NaN`` and ``Infinity`` are refused
(RFC 8259, section 6, has no such numbers); every text, key or value, must be Unicode scalar
values (a lone surrogate such as ``"\\ud800"`` is valid JSON escape syntax but cannot be
stored as UTF-8, RFC 3629).
"""

from __future__ import annotations

import json

from flask import request

from glowtemp.firinglog.json_text import has_lone_surrogate, nesting_depth

from .errors import ApiError

DEEPEST_NESTING = 8  # a request object holds plain values; a list or two is plenty
LONGEST_INTEGER = 30  # digits: far beyond any temperature, id or count


def _integer(text: str) -> int:
    if len(text.lstrip("-")) > LONGEST_INTEGER:
        raise ApiError(f"A number in the request has {len(text.lstrip('-'))} digits; at most {LONGEST_INTEGER} make sense here.")
    return int(text)


def _no_constant(name: str):
    raise ApiError(f"The request holds {name}, which is not a JSON number; send a plain number.")


def json_object(example: str) -> dict:
    """The request's JSON body as a dict; ``example`` shows a right body in the error message."""
    try:
        text = request.get_data(cache=True).decode("utf-8")
    except UnicodeDecodeError:
        raise ApiError("The request body is not UTF-8 text; JSON must be sent as UTF-8.") from None
    if nesting_depth(text) > DEEPEST_NESTING:
        raise ApiError(f"The request body nests lists or objects more than {DEEPEST_NESTING} deep; send a flat JSON object.")
    try:
        body = json.loads(text, parse_int=_integer, parse_constant=_no_constant)
    except ValueError as error:
        raise ApiError(f"The request body is not valid JSON ({error}); send a JSON object such as {example}.") from None
    if not isinstance(body, dict):
        raise ApiError(f"The request body must be a JSON object such as {example}.")
    if has_lone_surrogate(body):
        raise ApiError(
            "The request holds text with a lone surrogate (such as \\ud800), which is not a character; "
            "send plain Unicode text."
        )
    return body
