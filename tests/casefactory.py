"""A small valid case written to a folder, which tests mutate one thing at a time."""
from __future__ import annotations

import numpy as np

CASE_YAML = """\
title: test case
sample:
  name: test chain
  ion: Cu
  charge: 2
  spin: 0.5
  g: {kind: normal, mean: 2.1, sd: 0.05}
  spin_spacing: 3.0
  lattice: {a: 7.0, b: 7.5, c: 6.0}
datasets:
  - name: map
    kind: crystal_spectrum
    file: map.csv
    units: {energy: meV, wavevector: rlu, intensity: arb}
    temperature: 2.0
    resolution: {fwhm: [0.1, 0.02]}
  - name: chi
    kind: susceptibility
    file: chi.csv
    units: {temperature: K, chi: emu/mol}
  - name: heat
    kind: heat_capacity
    file: heat.csv
    units: {temperature: K, heat_capacity: J/mol/K}
models:
  - spinon_continuum
sampler: {steps: 200, particles: 100, islands: 2}
seed: 7
output: out
"""


def write_valid_case(folder, case_text=CASE_YAML):
    """Write the small valid case and its data files into ``folder``; return the case path."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "case.yaml").write_text(case_text)
    q = np.repeat(np.linspace(0.05, 0.95, 6), 5)
    e = np.tile(np.linspace(0.5, 3.0, 5), 6)
    with open(folder / "map.csv", "w") as fh:
        fh.write("# test map\nq_par, q_perp, energy, intensity, error\n")
        for a, b in zip(q, e):
            fh.write(f"{a:.4f}, 0.0, {b:.4f}, 1.0, 0.1\n")
    T = np.linspace(2.0, 60.0, 12)
    with open(folder / "chi.csv", "w") as fh:
        fh.write("T chi error\n")
        for t in T:
            fh.write(f"{t:.3f} {0.375 / (t + 5):.6g} 1e-4\n")
    with open(folder / "heat.csv", "w") as fh:
        fh.write("T\tC\terror\n")
        for t in T:
            fh.write(f"{t:.3f}\t{0.01 * t:.6g}\t0.01\n")
    return folder / "case.yaml"


def edit_file(path, old, new):
    """Replace the first ``old`` in a file by ``new`` (the fixture text must contain it)."""
    text = path.read_text()
    assert old in text, f"fixture text changed: {old!r}"
    path.write_text(text.replace(old, new, 1))


def check_command(capsys, path):
    """Run ``evidence1d check PATH``; return (exit code, stripped standard error)."""
    from evidence1d.cli import main
    code = main(["check", str(path)])
    return code, capsys.readouterr().err.strip()
