"""The import rules of the package: layers without back-edges (DEVELOPERS.md, "Layers").

Every ``import`` of an ``evidence1d`` module, at module level or inside a function, is read
from the source with :mod:`ast`; a module may import its own sub-package and strictly lower
layers only.  The report renders a results record and never imports model code.
"""
from __future__ import annotations

import ast
from pathlib import Path

import evidence1d

ROOT = Path(evidence1d.__file__).parent

#: layer of every top-level module or sub-package (lower numbers are lower layers)
LAYERS = {
    "errors": 0,
    "units": 1, "schema": 1, "gauss_rules": 1,
    "physics": 2, "data": 2, "inference": 2, "parallel": 2, "figure_settings": 2,
    "families": 3, "results": 3, "provenance": 3,
    "cards": 4, "problem": 4, "variant": 4,
    "case": 5, "sanity": 5,
    "simulate": 6, "analysis": 6, "init_case": 6,
    "runner": 7, "report": 7,
    "outputs": 8, "campaign": 8,
    "cli": 9, "__init__": 9, "__main__": 9,
}
#: what the report may import besides itself: it renders, it does not compute models
REPORT_MAY_IMPORT = {"errors", "units", "schema", "data", "inference", "parallel",
                     "figure_settings", "results", "provenance", "analysis"}


def _top(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else "__init__"


def _imports(root: Path = ROOT):
    """(importing module, imported module) for every evidence1d import in the package."""
    out = []
    for f in sorted(root.rglob("*.py")):
        rel = f.relative_to(root.parent).with_suffix("")
        mod = ".".join(rel.parts)
        is_pkg = f.name == "__init__.py"
        if is_pkg:
            mod = mod[: -len(".__init__")]
        pkg = mod if is_pkg else mod.rsplit(".", 1)[0]
        for node in ast.walk(ast.parse(f.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom):
                if node.level:
                    base = pkg.split(".")[: len(pkg.split(".")) - (node.level - 1)]
                    target = ".".join(base + ([node.module] if node.module else []))
                    targets = [target] if node.module else \
                        [f"{target}.{a.name}" for a in node.names]
                else:
                    targets = [node.module or ""]
            elif isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            else:
                continue
            out += [(mod, t) for t in targets if t.split(".")[0] == "evidence1d"]
    return out


def test_every_module_has_a_layer():
    tops = {_top(m) for m, _ in _imports()} | {_top(t) for _, t in _imports()}
    tops.discard("__version__")
    assert tops <= set(LAYERS), sorted(tops - set(LAYERS))


def _climbs(imports) -> list:
    bad = []
    for src, dst in imports:
        a, b = _top(src), _top(dst)
        if b == "__version__" or a == b:
            continue
        if LAYERS[b] >= LAYERS[a]:
            bad.append(f"{src} -> {dst} (layer {LAYERS[a]} -> {LAYERS[b]})")
    return bad


def test_no_import_climbs_a_layer():
    bad = _climbs(_imports())
    assert not bad, "\n".join(bad)


def test_the_report_imports_no_model_code():
    bad = [f"{s} -> {d}" for s, d in _imports()
           if _top(s) == "report" and _top(d) not in REPORT_MAY_IMPORT | {"report"}]
    assert not bad, "\n".join(bad)


def test_the_rule_catches_a_back_edge(tmp_path):
    """A back-edge inside a function of a made-up package is found (a check that cannot
    fail is none)."""
    pkg = tmp_path / "evidence1d"
    (pkg / "report").mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "report" / "__init__.py").write_text("")
    (pkg / "report" / "x.py").write_text("def f():\n    from ..runner import run\n")
    (pkg / "runner.py").write_text("from .results import RunResults\n")
    found = _imports(pkg)
    assert ("evidence1d.report.x", "evidence1d.runner") in found
    assert _climbs(found) == ["evidence1d.report.x -> evidence1d.runner (layer 7 -> 7)"]
