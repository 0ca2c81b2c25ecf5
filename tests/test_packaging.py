"""The built wheel carries everything an installed evidence1d needs: every module, every
bundled model card (from the top-level models/ folder, the one copy in version control) and
every shipped table; an unpacked wheel finds its cards without the source tree.  Building
the wheel needs the build back-end from the package index (pip's build isolation)."""
from __future__ import annotations

import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

import evidence1d
from evidence1d.cli import main

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def wheel(tmp_path_factory):
    """Build the wheel from a copy of the sources (the working tree stays clean)."""
    src = tmp_path_factory.mktemp("src")
    for name in ("pyproject.toml", "README.md", "MANIFEST.in"):
        if (ROOT / name).is_file():
            shutil.copy2(ROOT / name, src / name)
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc", "*.egg-info")
    for name in ("evidence1d", "models"):
        shutil.copytree(ROOT / name, src / name, ignore=ignore)
    out = tmp_path_factory.mktemp("dist")
    proc = subprocess.run([sys.executable, "-m", "pip", "wheel", str(src), "--no-deps",
                           "-q", "-w", str(out)], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr[-3000:]
    wheels = list(out.glob("evidence1d-*.whl"))
    assert len(wheels) == 1, wheels
    return wheels[0]


def _names(whl):
    with zipfile.ZipFile(whl) as z:
        return set(z.namelist())


@pytest.mark.slow  # builds a wheel (about 10 s)
def test_wheel_holds_every_card_byte_for_byte(wheel):
    names = _names(wheel)
    cards = sorted((ROOT / "models").glob("*.yaml"))
    assert len(cards) >= 3
    with zipfile.ZipFile(wheel) as z:
        for card in cards:
            member = f"evidence1d/models/{card.name}"
            assert member in names, f"{member} missing from the wheel"
            assert z.read(member) == card.read_bytes()
    shipped = {n for n in names if n.startswith("evidence1d/models/") and n.endswith(".yaml")}
    assert shipped == {f"evidence1d/models/{c.name}" for c in cards}


@pytest.mark.slow  # builds a wheel (about 10 s)
def test_wheel_holds_every_table_and_module(wheel):
    names = _names(wheel)
    tables = sorted(p for p in (ROOT / "evidence1d/physics/tables").iterdir() if p.is_file()
                    and p.suffix in (".npz", ".json"))
    assert tables, "no shipped tables found in the source tree"
    for t in tables:
        assert f"evidence1d/physics/tables/{t.name}" in names
    modules = sorted(p.relative_to(ROOT).as_posix() for p in (ROOT / "evidence1d").rglob("*.py")
                     if "__pycache__" not in p.parts)
    missing = [m for m in modules if m not in names]
    assert not missing, f"modules missing from the wheel (add the subpackage to " \
                        f"pyproject.toml's packages): {missing}"
    meta = next(n for n in names if n.endswith(".dist-info/METADATA"))
    with zipfile.ZipFile(wheel) as z:
        text = z.read(meta).decode()
        entry = z.read(meta.replace("METADATA", "entry_points.txt")).decode()
    assert f"\nVersion: {evidence1d.__version__}\n" in text
    assert "evidence1d = evidence1d.cli:main" in entry


@pytest.mark.slow  # builds a wheel (about 10 s)
def test_unpacked_wheel_finds_its_own_cards(wheel, tmp_path):
    """With the wheel's files alone on the path (no source tree), every bundled card is found
    inside the package and loads."""
    site = tmp_path / "site"
    with zipfile.ZipFile(wheel) as z:
        z.extractall(site)
    code = ("import evidence1d.cards as c, sys\n"
            "cards = c.bundled_cards()\n"
            "print(sorted(cards))\n"
            "assert all(str(p).startswith(sys.argv[1]) for p in cards.values()), cards\n"
            "for n in cards: c.load_card(c.card_path(n))\n")
    proc = subprocess.run([sys.executable, "-c", code, str(site)], cwd=tmp_path,
                          env={"PYTHONPATH": str(site), "PATH": "/usr/bin:/bin"},
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr[-3000:]
    expected = sorted(p.stem for p in (ROOT / "models").glob("*.yaml"))
    assert proc.stdout.strip() == repr(expected)


def test_one_copy_of_each_card_in_the_source_tree():
    cards = {p.name for p in (ROOT / "models").glob("*.yaml")}
    assert cards
    copies = [p for p in (ROOT / "evidence1d").rglob("*.yaml") if p.name in cards]
    assert not copies, "model cards belong in models/ only (the build ships them in the wheel)"


def test_version_option(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["--version"])
    assert exc.value.code == 0
    assert capsys.readouterr().out.strip() == f"evidence1d {evidence1d.__version__}"
