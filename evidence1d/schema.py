"""YAML documents with line numbers, and one declarative validation engine.

Case files and model cards are YAML.  :func:`load_yaml` parses a file once for its values and
once for the line of every key, so that :class:`~evidence1d.errors.InputError` can name
``file:line`` and the dotted key of any mistake.  :class:`Spec` declares what a mapping may
hold (required and optional keys, their types and defaults) and :func:`check_mapping` checks
a mapping against it, suggesting the closest valid key for an unknown one.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

import yaml

from .errors import InputError, closest_key

__all__ = ["YamlDoc", "load_yaml", "Field", "Spec", "check_mapping", "as_float",
           "as_positive_float", "as_int", "as_bool", "as_str", "as_float_list"]


class _LineLoader(yaml.SafeLoader):
    """Safe loader that rejects duplicate keys (a common silent mistake)."""


def _construct_mapping(loader, node, deep=False):
    seen = {}
    for key_node, _ in node.value:
        key = loader.construct_object(key_node, deep=deep)
        if key in seen:
            raise InputError(f"duplicated key '{key}' (first at line {seen[key]}); "
                             "each key may appear once", line=key_node.start_mark.line + 1)
        seen[key] = key_node.start_mark.line + 1
    return yaml.SafeLoader.construct_mapping(loader, node, deep=deep)


_LineLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _construct_mapping)


@dataclass
class YamlDoc:
    """A parsed YAML document and the line of every key path.

    Attributes
    ----------
    data : object
        The document as plain Python objects.
    path : pathlib.Path
        The file it came from.
    lines : dict of str to int
        1-based line of each dotted key path (``"datasets[0].units.energy"``).
    """

    data: Any
    path: Path
    lines: dict = field(default_factory=dict)

    def error(self, message: str, key: str) -> InputError:
        """An :class:`InputError` located at ``key`` (nearest known parent line)."""
        k = key
        while k and k not in self.lines:
            cut = max(k.rfind("."), k.rfind("["))
            k = k[:cut] if cut > 0 else ""
        return InputError(message, file=self.path, line=self.lines.get(k), key=key)


def _walk(node, prefix, lines):
    if isinstance(node, yaml.MappingNode):
        for k, v in node.value:
            name = f"{prefix}.{k.value}" if prefix else str(k.value)
            lines[name] = k.start_mark.line + 1
            _walk(v, name, lines)
    elif isinstance(node, yaml.SequenceNode):
        for i, v in enumerate(node.value):
            name = f"{prefix}[{i}]"
            lines[name] = v.start_mark.line + 1
            _walk(v, name, lines)


def load_yaml(path) -> YamlDoc:
    """Read a YAML file with key line numbers.

    Parameters
    ----------
    path : str or pathlib.Path

    Returns
    -------
    YamlDoc

    Raises
    ------
    InputError
        Missing or unreadable file, YAML syntax error (with its line and column), duplicated
        key, or an empty document.
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("file not found; check the path (relative paths are resolved "
                         "against the case file's folder)", file=path)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the file ({exc.__class__.__name__}); expected UTF-8 "
                         "text", file=path) from None
    try:
        data = yaml.load(text, Loader=_LineLoader)  # noqa: S506 - SafeLoader subclass
        node = yaml.compose(text, Loader=yaml.SafeLoader)
    except InputError as exc:
        raise exc.located(file=path) from None
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark else None
        col = f" column {mark.column + 1}" if mark else ""
        raise InputError(f"YAML syntax error{col}: {exc.problem or exc.context}; check "
                         "indentation, colons and quotes", file=path, line=line) from None
    except yaml.YAMLError as exc:
        raise InputError(f"YAML error: {exc}", file=path) from None
    if data is None:
        raise InputError("the file is empty; expected a YAML mapping", file=path)
    lines: dict = {}
    _walk(node, "", lines)
    return YamlDoc(data=data, path=path, lines=lines)


# --------------------------------------------------------------------------- validation
@dataclass(frozen=True)
class Field:
    """One key a mapping may hold.

    Parameters
    ----------
    convert : callable
        ``convert(value, where) -> value``; raises :class:`InputError` (``where`` is the
        dotted key) when the value is of the wrong kind.
    required : bool
        Whether the key must be present.
    default : object
        Value used when the key is absent (ignored if ``required``).
    help : str
        What the key means, with its unit (used in messages and docs).
    """

    convert: Callable[[Any, str], Any] = lambda v, where: v
    required: bool = False
    default: Any = None
    help: str = ""


@dataclass(frozen=True)
class Spec:
    """The keys of a mapping, declared once: ``Spec({"name": Field(...), ...})``."""

    fields: dict
    what: str = "mapping"


def check_mapping(value, spec: Spec, where: str, doc: YamlDoc | None = None) -> dict:
    """Validate ``value`` against ``spec`` and return a dict with defaults filled in.

    Parameters
    ----------
    value : object
        The parsed YAML value.
    spec : Spec
    where : str
        Dotted key path of ``value`` (``""`` for the document root).
    doc : YamlDoc, optional
        Used to attach file and line to errors.

    Raises
    ------
    InputError
        Not a mapping; unknown key (closest valid key suggested); missing required key; a
        value rejected by its field's converter.
    """
    def err(msg, key):
        return doc.error(msg, key) if doc is not None else InputError(msg, key=key or None)

    if not isinstance(value, dict):
        raise err(f"expected a mapping ({spec.what}) with keys "
                  f"{', '.join(spec.fields)}; got {type(value).__name__}", where)
    out = {}
    for key in value:
        if key not in spec.fields:
            k = f"{where}.{key}" if where else str(key)
            raise err(f"unknown key '{key}' in {spec.what}; {closest_key(str(key), spec.fields)}",
                      k)
    for key, fld in spec.fields.items():
        k = f"{where}.{key}" if where else key
        if key not in value or value[key] is None and fld.required:
            if fld.required:
                raise err(f"missing required key '{key}' in {spec.what}"
                          + (f" ({fld.help})" if fld.help else ""), where or k)
            out[key] = fld.default
            continue
        try:
            out[key] = fld.convert(value[key], k)
        except InputError as exc:
            if doc is not None and exc.file is None:
                raise doc.error(exc.message, exc.key or k) from None
            raise
    return out


# ------------------------------------------------------------------ value converters
def as_float(v, where):
    """A finite real number."""
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
        raise InputError(f"expected a finite number; got {v!r}", key=where)
    return float(v)


def as_positive_float(v, where):
    """A finite number > 0."""
    x = as_float(v, where)
    if x <= 0:
        raise InputError(f"expected a number > 0; got {v!r}", key=where)
    return x


def as_int(v, where):
    """An integer."""
    if isinstance(v, bool) or not isinstance(v, int):
        raise InputError(f"expected an integer; got {v!r}", key=where)
    return int(v)


def as_positive_int(v, where):
    """An integer >= 1."""
    x = as_int(v, where)
    if x < 1:
        raise InputError(f"expected an integer >= 1; got {v!r}", key=where)
    return x


def as_bool(v, where):
    """true or false."""
    if not isinstance(v, bool):
        raise InputError(f"expected true or false; got {v!r}", key=where)
    return v


def as_str(v, where):
    """A non-empty string."""
    if not isinstance(v, str) or not v.strip():
        raise InputError(f"expected a non-empty string; got {v!r}", key=where)
    return v.strip()


def as_float_list(v, where):
    """A number or a list of numbers."""
    if isinstance(v, (int, float)) and not isinstance(v, bool):
        v = [v]
    if not isinstance(v, list) or not v:
        raise InputError(f"expected a number or a list of numbers; got {v!r}", key=where)
    return [as_float(x, f"{where}[{i}]") for i, x in enumerate(v)]


def one_of(*choices):
    """A converter accepting one of ``choices`` (strings)."""
    def conv(v, where):
        if v not in choices:
            hint = closest_key(str(v), choices).replace("valid keys", "valid values")
            raise InputError(f"unknown value {v!r}; {hint}", key=where)
        return v
    return conv
