"""Checks on JSON text and parsed JSON values that Python's json module does not make.

- :func:`nesting_depth` measures how deep ``[`` and ``{`` nest without recursion, so a text of
  50,000 ``[`` is refused before the parser's recursion would exhaust the stack.
- :func:`has_lone_surrogate` finds text that is valid JSON escape syntax (``"\\ud800"``) but no
  Unicode scalar value, which cannot be written as UTF-8 (RFC 8259 section 8.2, RFC 3629).
"""

from __future__ import annotations


def nesting_depth(text: str) -> int:
    """The deepest nesting of ``[`` and ``{`` outside strings, counted without recursion.

    >>> nesting_depth('{"a": [1, {"b": "[[["}]}')
    3
    """
    depth = deepest = 0
    in_string = escaped = False
    for ch in text:
        if in_string:
            if escaped:
                escaped = False
            elif ch == "\\":
                escaped = True
            elif ch == '"':
                in_string = False
        elif ch == '"':
            in_string = True
        elif ch in "[{":
            depth += 1
            deepest = max(deepest, depth)
        elif ch in "]}":
            depth -= 1
    return deepest


def has_lone_surrogate(value) -> bool:
    """Whether any text in a parsed JSON value, key or value, holds a lone surrogate.

    >>> has_lone_surrogate({"a": ["ok", "\\ud800"]}), has_lone_surrogate({"a": "\\U0001F525"})
    (True, False)
    """
    pending = [value]
    while pending:
        item = pending.pop()
        if isinstance(item, dict):
            pending.extend(item.keys())
            pending.extend(item.values())
        elif isinstance(item, list):
            pending.extend(item)
        elif isinstance(item, str):
            try:
                item.encode("utf-8")
            except UnicodeEncodeError:
                return True
    return False
