"""YAML documents with line numbers, and the one validation engine of every user setting.

Case files and model cards are YAML.  :func:`load_yaml` parses a file once for its values and
once for the line of every key, so that :class:`~evidence1d.errors.InputError` can name
``file:line`` and the dotted key of any mistake.  :class:`Spec` declares what a mapping may
hold (required and optional keys, their converters and defaults, checks across keys) and
:func:`check_mapping` checks a mapping against it, suggesting the closest valid key for an
unknown one; :func:`check_tagged` checks a mapping whose ``kind`` selects its Spec (priors).
The same engine checks the settings passed to the samplers as function arguments.

Every message has one shape: one line, the dotted key, what is wrong and what is expected
(``key 'sampler.steps': expected an integer >= 1; got 0``).  Every number goes through one
parser, :func:`as_float` (integers through :func:`as_int`), which accepts numeric strings:
YAML 1.1, which PyYAML follows, reads ``1e-3`` (no dot) as a string, and a setting must mean
the same wherever it is written.
"""
from __future__ import annotations

import copy
import math
import numbers
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

import yaml

from .errors import InputError, closest_key

__all__ = ["YamlDoc", "load_yaml", "Field", "Spec", "check_mapping", "check_tagged",
           "as_float", "as_positive_float", "as_int", "as_positive_int", "as_bool", "as_str",
           "as_float_list", "as_mapping", "as_any", "real", "integer", "one_of",
           "unique_names"]


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
        Value used when the key is absent (ignored if ``required``); every mapping that
        takes it gets its own copy.
    help : str
        What the key means, with its unit (used in messages and docs).
    """

    convert: Callable[[Any, str], Any] = lambda v, where: v
    required: bool = False
    default: Any = None
    help: str = ""


@dataclass(frozen=True)
class Spec:
    """The keys of a mapping, declared once: ``Spec({"name": Field(...), ...})``.

    Parameters
    ----------
    fields : dict of str to Field
    what : str
        What the mapping is, for messages (``"the sampler block"``).
    checks : tuple of callable
        ``check(values, where)`` run on the converted mapping (defaults filled in); each
        raises :class:`InputError` naming its key for a rule across keys
        (``lower < upper``).
    """

    fields: dict
    what: str = "mapping"
    checks: tuple = ()


def _located(exc: InputError, doc, key):
    """``exc`` with the file and line of ``key`` (or its own key) when ``doc`` is known."""
    if doc is not None and exc.file is None:
        return doc.error(exc.message, exc.key or key)
    if exc.key is None and key:
        return exc.located(key=key)
    return exc


def check_mapping(value, spec: Spec, where: str, doc: YamlDoc | None = None) -> dict:
    """Validate ``value`` against ``spec`` and return a dict with defaults filled in.

    Parameters
    ----------
    value : object
        The parsed YAML value (or the settings passed to a function, ``where=""``).
    spec : Spec
    where : str
        Dotted key path of ``value`` (``""`` for the document root).
    doc : YamlDoc, optional
        Used to attach file and line to errors.

    Raises
    ------
    InputError
        Not a mapping; unknown key (closest valid key suggested); missing required key; a
        value rejected by its field's converter; a failed check across keys.
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
            out[key] = copy.deepcopy(fld.default)
            continue
        try:
            out[key] = fld.convert(value[key], k)
        except InputError as exc:
            raise _located(exc, doc, k) from None
    for check in spec.checks:
        try:
            check(out, where)
        except InputError as exc:
            raise _located(exc, doc, where) from None
    return out


def check_tagged(value, tag: str, specs: dict, where: str, doc: YamlDoc | None = None,
                 what: str = "mapping") -> dict:
    """Validate a mapping whose key ``tag`` selects its :class:`Spec` (e.g. a prior's kind).

    Parameters
    ----------
    value : object
    tag : str
        The selecting key, e.g. ``"kind"``.
    specs : dict of str to Spec
        One Spec per value of ``tag``; each lists ``tag`` among its fields.
    where, doc
        As in :func:`check_mapping`.
    what : str
        What the mapping is (``"prior"``): messages say ``unknown prior kind 'x'``.

    Returns
    -------
    dict
        As :func:`check_mapping` with ``specs[value[tag]]``.
    """
    head = value if not isinstance(value, dict) else {tag: value.get(tag)}
    selector = Spec({tag: Field(one_of(*specs, what=f"{what} {tag}"), required=True,
                                help=f"one of {', '.join(specs)}")}, what=f"a {what}")
    chosen = check_mapping(head, selector, where, doc)[tag]
    return check_mapping(value, specs[chosen], where, doc)


# ------------------------------------------------------------------ value converters
def as_float(v, where):
    """A finite real number: an int or a float, or a string that reads as one.

    The one number parser of every setting: YAML 1.1 reads ``1e-3`` as a string, which is
    accepted here as the number it spells.  Booleans are rejected.
    """
    x = None
    if isinstance(v, str):
        try:
            x = float(v.strip())
        except ValueError:
            x = None
    elif isinstance(v, numbers.Real) and not isinstance(v, bool):
        x = float(v)
    if x is None or not math.isfinite(x):
        raise InputError(f"expected a finite number; got {v!r}", key=where)
    return x


def as_int(v, where):
    """An integer: an int, or a number or numeric string of integral value (``1e3``)."""
    if isinstance(v, numbers.Integral) and not isinstance(v, bool):
        return int(v)
    if isinstance(v, str):
        try:
            return int(v.strip())
        except ValueError:
            pass
    try:
        x = as_float(v, where)
    except InputError:
        x = None
    if x is None or x != math.floor(x):
        raise InputError(f"expected an integer; got {v!r}", key=where)
    return int(x)


def _range_text(lower, upper, lower_open, upper_open) -> str:
    if lower is not None and upper is not None:
        return (f"in {'(' if lower_open else '['}{lower:g}, {upper:g}"
                f"{')' if upper_open else ']'}")
    if lower is not None:
        return f"{'>' if lower_open else '>='} {lower:g}"
    return f"{'<' if upper_open else '<='} {upper:g}"


def real(lower=None, upper=None, *, lower_open=False, upper_open=False, note=""):
    """A converter: a finite number (:func:`as_float`) within the given bounds.

    Parameters
    ----------
    lower, upper : float, optional
        Bounds (none: unbounded on that side).
    lower_open, upper_open : bool
        Whether the bound itself is excluded.
    note : str
        Why the bound, added to the message in brackets (``"2 m + 2"``).
    """
    def conv(v, where):
        x = as_float(v, where)
        bad = ((lower is not None and (x <= lower if lower_open else x < lower))
               or (upper is not None and (x >= upper if upper_open else x > upper)))
        if bad:
            what = _range_text(lower, upper, lower_open, upper_open)
            raise InputError(f"expected a number {what}{f' ({note})' if note else ''}; "
                             f"got {v!r}", key=where)
        return x
    return conv


def integer(minimum=None, maximum=None, *, note=""):
    """A converter: an integer (:func:`as_int`) from ``minimum`` to ``maximum``.

    Parameters
    ----------
    minimum, maximum : int, optional
        Inclusive bounds.
    note : str
        Why the bound, added to the message in brackets.
    """
    def conv(v, where):
        x = as_int(v, where)
        if (minimum is not None and x < minimum) or (maximum is not None and x > maximum):
            what = (f"from {minimum} to {maximum}" if minimum is not None
                    and maximum is not None else _range_text(minimum, maximum, False, False))
            raise InputError(f"expected an integer {what}{f' ({note})' if note else ''}; "
                             f"got {v!r}", key=where)
        return x
    return conv


#: a finite number > 0
as_positive_float = real(0.0, lower_open=True)
#: an integer >= 1
as_positive_int = integer(1)


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


def as_mapping(v, where):
    """A mapping (checked further by its own Spec where it is used)."""
    if not isinstance(v, dict):
        raise InputError(f"expected a mapping; got {type(v).__name__}", key=where)
    return v


def as_any(v, where):
    """Any value (checked where it is used)."""
    return v


def as_float_list(v, where):
    """A number or a list of numbers (each read by :func:`as_float`)."""
    if isinstance(v, numbers.Real) and not isinstance(v, bool):
        v = [v]
    elif isinstance(v, str):
        try:
            v = [as_float(v, where)]
        except InputError:
            pass
    if not isinstance(v, list) or not v:
        raise InputError(f"expected a number or a list of numbers; got {v!r}", key=where)
    return [as_float(x, f"{where}[{i}]") for i, x in enumerate(v)]


def one_of(*choices, what="value"):
    """A converter accepting one of ``choices`` (strings); ``what`` names them in messages
    (``unknown prior kind 'flat'; did you mean 'fixed'?``)."""
    def conv(v, where):
        if not isinstance(v, str) or v not in choices:
            hint = closest_key(str(v), choices).replace("valid keys", "valid values")
            raise InputError(f"unknown {what} {v!r}; {hint}", key=where)
        return v
    return conv


def unique_names(v, where):
    """A list of distinct non-empty strings (parameter names)."""
    names = [as_str(x, f"{where}[{i}]") for i, x in enumerate(list(v))]
    dup = sorted({n for n in names if names.count(n) > 1})
    if dup:
        raise InputError(f"names must be unique; repeated: {', '.join(dup)}", key=where)
    return names
