"""The schema of ``summary.json``: one list of fields drives validation and documentation.

Each :class:`SummaryField` names a dotted path into the document, its type, its unit and
what it means.  Path tokens: ``*`` stands for any key of a mapping (a model or parameter
name), ``[]`` after a key for every item of a list.  :func:`validate_summary` checks a
document against :data:`SUMMARY_FIELDS` (presence, type, no undocumented keys in documented
objects); :func:`schema_markdown` renders the same list as a Markdown table for the README.

Types: ``string``, ``number`` (finite float or integer), ``integer``, ``boolean``,
``object`` (its keys are the documented child fields), ``mapping[T]`` (free keys, values of
type T), ``array[T]``; a trailing ``|null`` allows ``null``.  Numbers that are not finite
(an infinite Bayes factor, an undefined Pareto k) are written as ``null``, since JSON has no
infinity.

References
----------
.. [1] T. Bray (ed.), "The JavaScript Object Notation (JSON) Data Interchange Format",
   RFC 8259 (IETF, 2017): the value types used here.
"""
from __future__ import annotations

import math

from ..errors import InputError
from .summary_fields import SCHEMA_VERSION, SUMMARY_FIELDS, SummaryField

__all__ = ["SummaryField", "SUMMARY_FIELDS", "SCHEMA_VERSION", "validate_summary",
           "schema_markdown"]

# ------------------------------------------------------------------------ type checking
def _is_type(value, t: str) -> bool:
    if t == "null":
        return value is None
    if t == "string":
        return isinstance(value, str)
    if t == "boolean":
        return isinstance(value, bool)
    if t == "integer":
        return isinstance(value, int) and not isinstance(value, bool)
    if t == "number":
        return (isinstance(value, (int, float)) and not isinstance(value, bool)
                and math.isfinite(value))
    if t == "object":
        return isinstance(value, dict)
    for head, kind in (("mapping[", dict), ("array[", list)):
        if t.startswith(head) and t.endswith("]"):
            if not isinstance(value, kind):
                return False
            inner = t[len(head):-1]
            items = value.values() if kind is dict else value
            return all(_matches(v, inner) for v in items)
    raise ValueError(f"unknown schema type {t!r}")


def _matches(value, type_text: str) -> bool:
    # split on '|' only at the top level (not inside brackets)
    parts, depth, cur = [], 0, ""
    for ch in type_text:
        depth += ch == "["
        depth -= ch == "]"
        if ch == "|" and depth == 0:
            parts.append(cur)
            cur = ""
        else:
            cur += ch
    parts.append(cur)
    return any(_is_type(value, p) for p in parts)


def _nodes(doc, path: str):
    """Yield (location, parent, key) for every place the path can point to."""
    found = [("", doc)]
    tokens = path.split(".")
    for depth, tok in enumerate(tokens):
        last = depth == len(tokens) - 1
        nxt = []
        for loc, node in found:
            if not isinstance(node, dict):
                continue
            if tok == "*":
                nxt += [(f"{loc}.{k}".lstrip("."), v) for k, v in node.items()]
                continue
            key, is_list = (tok[:-2], True) if tok.endswith("[]") else (tok, False)
            if last and not is_list:
                yield loc, node, key
                continue
            if key not in node:
                continue
            value = node[key]
            here = f"{loc}.{key}".lstrip(".")
            if is_list and isinstance(value, list):
                if last:
                    raise ValueError("a schema path may not end in []")
                nxt += [(f"{here}[{i}]", v) for i, v in enumerate(value)]
            elif not is_list:
                nxt.append((here, value))
        found = nxt


def _children(path: str) -> set:
    out = set()
    for f in SUMMARY_FIELDS:
        p = f.path.replace("[]", "")
        if p.startswith(path + ".") and "." not in p[len(path) + 1:]:
            out.add(p[len(path) + 1:])
    return out


def validate_summary(doc: dict) -> None:
    """Check a summary.json document against :data:`SUMMARY_FIELDS`.

    Parameters
    ----------
    doc : dict
        The parsed document.

    Raises
    ------
    InputError
        The first problem found: a missing field, a value of the wrong type, or a key that
        the schema does not document, naming the dotted key.

    References
    ----------
    .. [1] RFC 8259 (2017): JSON value types.
    """
    if not isinstance(doc, dict):
        raise InputError(f"summary.json must hold a JSON object; got {type(doc).__name__}")
    for f in SUMMARY_FIELDS:
        for loc, parent, key in _nodes(doc, f.path):
            where = f"{loc}.{key}".lstrip(".")
            if key not in parent:
                if f.required:
                    raise InputError(f"summary.json lacks the field '{where}' ({f.meaning})",
                                     key=where)
                continue
            value = parent[key]
            if not _matches(value, f.type):
                raise InputError(f"summary.json field '{where}' must be of type {f.type}; "
                                 f"got {type(value).__name__} {value!r:.60}", key=where)
            _check_keys(value, f.type, f.path.replace("[]", ""), where)


def _check_keys(value, type_text: str, path: str, where: str) -> None:
    """No undocumented keys in objects, also inside mappings and lists of objects."""
    if value is None:
        return
    if type_text.startswith("object"):
        extra = sorted(set(value) - _children(path))
        if extra:
            raise InputError(f"summary.json field '{where}' holds '{extra[0]}', which the "
                             "schema does not document", key=where)
    elif type_text.startswith("mapping[") and "object" in type_text:
        inner = type_text[len("mapping["):-1]
        for k, v in value.items():
            _check_keys(v, inner, f"{path}.*", f"{where}.{k}")
    elif type_text.startswith("array[") and "object" in type_text:
        inner = type_text[len("array["):-1]
        for i, v in enumerate(value):
            _check_keys(v, inner, path, f"{where}[{i}]")


def schema_markdown() -> str:
    """The schema of summary.json as a Markdown table (for the README).

    Returns
    -------
    str
        A heading line, a note on path syntax and one table row per field.

    References
    ----------
    .. [1] RFC 8259 (2017): JSON value types.
    """
    def cell(s):
        return str(s).replace("|", "\\|")

    lines = [f"summary.json, layout version {SCHEMA_VERSION}. In a path, `*` stands for any "
             "key (a family or parameter name) and `[]` for every item of a list; numbers "
             "that are not finite are written as `null`.", "",
             "| field | type | unit | meaning |", "|---|---|---|---|"]
    for f in SUMMARY_FIELDS:
        opt = "" if f.required else " (optional)"
        lines.append(f"| `{f.path}` | {cell(f.type)} | {cell(f.unit)} | "
                     f"{cell(f.meaning)}{opt} |")
    return "\n".join(lines) + "\n"
