"""Model cards: YAML files that declare a model family's parameters, units and priors.

A card names the registered :class:`~evidence1d.families.base.Family` that computes its
predictions, says whether the family is one-dimensional, and lists its physical parameters
in sampling order with units, descriptions and default priors.  Bundled cards live in the
top-level ``models/`` folder of the source tree (the one copy in version control); the build
ships that folder inside the wheel as ``evidence1d/models/`` (pyproject.toml maps it).  A case
file may point at a card file of the user's own.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from .errors import InputError, closest_key
from .schema import (Field, Spec, as_any, as_bool, as_float, as_mapping, as_str,
                     check_mapping, load_yaml)

__all__ = ["ModelCard", "load_card", "bundled_cards", "card_path", "CARD_DIRS"]

_PACKAGE = Path(__file__).resolve().parent


def _card_dirs() -> tuple:
    """Folders that hold the bundled cards: the copy inside an installed wheel
    (``evidence1d/models/``), then the source tree's top-level ``models/`` (a checkout or an
    editable install; recognised by the ``pyproject.toml`` beside it, so that an unrelated
    ``models`` folder next to an installed package is never read)."""
    dirs = [_PACKAGE / "models"]
    if (_PACKAGE.parent / "pyproject.toml").is_file():
        dirs.append(_PACKAGE.parent / "models")
    return tuple(dirs)


#: folders searched for bundled cards, in order (the first card of a name wins)
CARD_DIRS = _card_dirs()


def _as_str_list(v, where):
    if isinstance(v, str):
        v = [v]
    if not isinstance(v, list) or not all(isinstance(s, str) for s in v):
        raise InputError(f"expected a list of strings; got {v!r}", key=where)
    return list(v)


_PARAM_SPEC = Spec({
    "unit": Field(as_str, required=True, help="unit of the parameter, e.g. meV or 1"),
    "description": Field(as_str, required=True, help="what the parameter is"),
    "prior": Field(as_any, required=True, help="default prior {kind: ..., ...}"),
    "latex": Field(as_str, default=None, help="LaTeX symbol for tables and figures"),
}, what="a model-card parameter")

_NESTED_SPEC = Spec({
    "parameter": Field(as_str, required=True, help="parameter that vanishes in the 1D limit"),
    "value": Field(as_float, required=True, help="its value in the 1D limit"),
    "equals": Field(as_str, default=None, help="the family this one is at the limit (same "
                    "likelihood, same priors on shared parameters), if it is one; then the "
                    "direct Bayes factor is checked against the Savage–Dickey ratio"),
}, what="nested_1d_limit")

_CARD_SPEC = Spec({
    "name": Field(as_str, required=True, help="name used in case files"),
    "title": Field(as_str, required=True, help="one-line title"),
    "family": Field(as_str, required=True, help="registered family class"),
    "one_dimensional": Field(as_bool, required=True, help="whether the family is 1D physics"),
    "parameters": Field(as_any, required=True, help="mapping of parameters"),
    "nested_1d_limit": Field(as_any, default=None),
    "assumptions": Field(_as_str_list, default=[]),
    "limitations": Field(_as_str_list, default=[]),
    "references": Field(_as_str_list, default=[]),
    "options": Field(as_mapping, default={}, help="family options"),
}, what="a model card")


@dataclass(frozen=True)
class ModelCard:
    """A validated model card.

    Attributes
    ----------
    name, title, family : str
    one_dimensional : bool
    parameters : dict of str to dict
        ``{name: {"unit", "description", "prior" (a Prior), "latex"}}`` in sampling order.
    nested_1d_limit : dict or None
        ``{"parameter": str, "value": float, "equals": str or None}`` if the family
        contains its 1D limit; ``equals`` names the family it then is, if any.
    assumptions, limitations, references : list of str
    options : dict
    path : pathlib.Path
    """

    name: str
    title: str
    family: str
    one_dimensional: bool
    parameters: dict
    nested_1d_limit: dict | None
    assumptions: list = field(default_factory=list)
    limitations: list = field(default_factory=list)
    references: list = field(default_factory=list)
    options: dict = field(default_factory=dict)
    path: Path | None = None


def bundled_cards() -> dict:
    """Names and paths of the bundled model cards."""
    out = {}
    for d in CARD_DIRS:
        if d.is_dir():
            for p in sorted(d.glob("*.yaml")):
                out.setdefault(p.stem, p)
    return out


def card_path(name: str) -> Path:
    """Path of the bundled card called ``name``.

    Raises
    ------
    InputError
        If no bundled card has that name (the closest name is suggested).
    """
    cards = bundled_cards()
    if name not in cards:
        hint = closest_key(name, cards).replace("valid keys", "bundled models")
        raise InputError(f"unknown model '{name}'; {hint}; or give a card file with "
                         "'card: path/to/card.yaml'")
    return cards[name]


def load_card(path) -> ModelCard:
    """Read and validate a model card.

    Parameters
    ----------
    path : str or pathlib.Path

    Returns
    -------
    ModelCard

    Raises
    ------
    InputError
        Missing file, YAML error, unknown or missing key, bad prior, unknown family class.
    """
    from .families import FAMILY_CLASSES  # registry; imported lazily (no import cycle)
    from .inference.prior_specs import prior_from_spec

    doc = load_yaml(path)
    card = check_mapping(doc.data, _CARD_SPEC, "", doc)
    if card["family"] not in FAMILY_CLASSES:
        hint = closest_key(card["family"], FAMILY_CLASSES).replace("valid keys", "known families")
        raise doc.error(f"unknown family '{card['family']}'; {hint}", "family")
    params = card["parameters"]
    if not isinstance(params, dict) or not params:
        raise doc.error("expected a mapping of parameter names to {unit, description, prior}",
                        "parameters")
    checked = {}
    for pname, pblock in params.items():
        where = f"parameters.{pname}"
        p = check_mapping(pblock, _PARAM_SPEC, where, doc)
        p["prior"] = prior_from_spec(p["prior"], f"{where}.prior", doc)
        checked[str(pname)] = p
    cls = FAMILY_CLASSES[card["family"]]
    if cls.declaration_problem() is not None:
        raise doc.error(cls.declaration_problem(), "family")
    missing = [p for p in cls.parameters if p not in checked]
    extra = [p for p in checked if p not in cls.parameters]
    if missing or extra:
        raise doc.error(f"the parameters must be those of family '{card['family']}' "
                        f"({', '.join(cls.parameters)}); missing: {', '.join(missing) or '-'}; "
                        f"unknown: {', '.join(extra) or '-'}", "parameters")
    nested = card["nested_1d_limit"]
    if nested is not None:
        nested = check_mapping(nested, _NESTED_SPEC, "nested_1d_limit", doc)
        if nested["parameter"] not in checked:
            raise doc.error(f"nested_1d_limit names '{nested['parameter']}', which is not a "
                            "parameter of this card", "nested_1d_limit.parameter")
    return ModelCard(name=card["name"], title=card["title"], family=card["family"],
                     one_dimensional=card["one_dimensional"], parameters=checked,
                     nested_1d_limit=nested, assumptions=card["assumptions"],
                     limitations=card["limitations"], references=card["references"],
                     options=card["options"], path=Path(path))
