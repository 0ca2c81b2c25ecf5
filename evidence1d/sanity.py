"""Physics sanity of a validated case: warnings that ``evidence1d check`` prints.

What is certainly wrong is an error when the case is loaded (temperatures <= 0, a resolution
width <= 0, impossible cell angles, a sample spin a chosen family does not describe).  What
is only suspicious is a one-line warning here, with the numbers:

- a spectrum whose energy-resolution FWHM exceeds its whole energy window;
- energies beyond what every chosen family can produce over its prior (for energy gain,
  at the dataset's temperature): a unit or sign mistake is the usual cause;
- a spin spacing that is not the lattice repeat along the chain divided by a whole number;
- wavevector information the prediction layer does not use (the second component across the
  chain, or interchain spacings that differ from the sample's geometry).

The family's reach is measured, not assumed: each family's own ``spectrum`` is evaluated
for prior draws on a grid of wavevectors (one chain zone, interchain zone centre and
boundary) and energies up to ten times the data's, with the dataset's resolution and
temperature.  Its reach is the largest |E| where the first-moment density
|E| · max_Q S(Q, E) is at least 10⁻³ of its maximum (our choice); energies beyond twice the
reach of every family draw a warning (our choice of "far").
"""
from __future__ import annotations

import numpy as np

__all__ = ["case_warnings", "family_energy_reach"]

#: fraction of the peak first-moment density that counts as "weight" (our choice)
REACH_FRACTION = 1e-3
#: data energies beyond this multiple of every family's reach draw a warning (our choice)
FAR = 2.0


def _fwhm(ds, E):
    return np.polynomial.polynomial.polyval(np.asarray(E, float),
                                            ds.options["resolution"]["fwhm"])


def resolution_warnings(ds) -> list:
    """A spectrum's resolution FWHM wider than its whole energy window."""
    E = np.asarray(ds.x["energy"], float)
    window = float(np.ptp(E))
    if window <= 0:          # a constant-energy cut has no window to resolve
        return []
    fw = _fwhm(ds, E)
    if float(np.min(fw)) > window:
        return [f"warning: dataset '{ds.name}': the resolution FWHM ({np.min(fw):.3g} to "
                f"{np.max(fw):.3g} meV over the data) is wider than the whole energy window "
                f"{E.min():.3g} to {E.max():.3g} meV ({window:.3g} meV); the spectrum's shape "
                "cannot be resolved: check resolution.fwhm and the energy unit"]
    return []


def family_energy_reach(problem, ds, *, n_draws: int = 16, seed: int = 0) -> tuple:
    """How far in energy a family puts spectral weight over its prior, for one dataset.

    Parameters
    ----------
    problem : JointProblem
        The family's problem (its family, prior and the sample's spacings).
    ds : Dataset
        A spectrum (its temperature, resolution and largest |E| set the grid).
    n_draws : int
        Random prior draws, besides the prior's lower corner, centre and upper corner.
    seed : int
        Seed of the draws (the check is deterministic).

    Returns
    -------
    (gain, loss) : tuple of float
        On the energy-gain (E < 0) and energy-loss (E > 0) sides, the |E| in meV of the grid
        point just beyond the last one where |E| · max_Q S(Q, E) reaches
        :data:`REACH_FRACTION` of its maximum for any draw (an upper bound, within a factor
        1.21 of the grid's spacing); ``inf`` when the grid's top (10 max|E| of the data) is
        reached or the family cannot be evaluated.

    References
    ----------
    Detailed balance S(−E) = e^{−E/k_BT} S(E) is part of each family's spectrum (Squires,
    Introduction to the Theory of Thermal Neutron Scattering, 1978, ch. 7); the first-moment
    density |E| S weighs a continuum evenly up to its upper edge (Hohenberg & Brinkman,
    Phys. Rev. B 10, 128 (1974), first-moment sum rule).
    """
    from .families.base import SpectralPoints
    from .physics import neutron
    e_max = float(np.max(np.abs(ds.x["energy"])))
    if not e_max > 0:
        return np.inf, np.inf
    pr = next(p for p in problem.predictors if p.dataset is ds)
    pts0 = getattr(pr, "_pts", None)
    geo = getattr(pts0, "d", None), getattr(pts0, "a_perp", None), getattr(pts0, "b_perp", None)
    if any(v is None for v in geo):
        return np.inf, np.inf
    d, ap, bp = geo
    q = np.linspace(np.pi / 16, np.pi, 16)
    qa, qb = np.array([0.0, np.pi]), np.array([0.0, np.pi])
    Qp, Qa, Qb = (g.ravel() for g in np.meshgrid(q / d, qa / ap, qb / bp, indexing="ij"))
    top = 10.0 * e_max
    e = np.geomspace(top * 1e-4, top, 48)
    E = np.concatenate([-e[::-1], e])
    lo, hi = float(np.min(ds.x["energy"])), float(np.max(ds.x["energy"]))
    sig = neutron.resolution_sigma(np.clip(E, lo, hi), ds.options["resolution"]["fwhm"])
    nQ = Qp.size
    pts = SpectralPoints(Q_par=np.tile(Qp, E.size), Q_a=np.tile(Qa, E.size),
                         Q_b=np.tile(Qb, E.size), d=d, a_perp=ap, b_perp=bp,
                         energy=np.repeat(E, nQ), sigma=np.repeat(sig, nQ),
                         temperature=float(ds.options["temperature"]))
    prior = problem.prior
    rng = np.random.default_rng(seed)
    u = np.vstack([rng.uniform(0.02, 0.98, (n_draws, prior.n_free)),
                   np.full((1, prior.n_free), 0.005), np.full((1, prior.n_free), 0.5),
                   np.full((1, prior.n_free), 0.995)])
    try:
        p = prior.expand(prior.transform(u))
        with np.errstate(all="ignore"):
            S = np.asarray(problem.family.spectrum(p, pts), float)
    except Exception:        # a family that cannot be evaluated here is not judged
        return np.inf, np.inf
    S = np.where(np.isfinite(S), S, 0.0).reshape(len(u), E.size, nQ).max(axis=2)
    w = np.abs(E)[None, :] * np.clip(S, 0.0, None)
    peak = w.max(axis=1, keepdims=True)
    ok = ((w >= REACH_FRACTION * peak) & (peak > 0)).any(axis=0)

    def edge(side):          # the grid point beyond the last one with weight (an upper bound)
        hit = np.flatnonzero(side)
        if hit.size == 0:
            return float(e[0])
        return float(e[hit[-1] + 1]) if hit[-1] + 1 < e.size else np.inf
    return edge(ok[:e.size][::-1]), edge(ok[e.size:])


def energy_warnings(case, ds) -> list:
    """Energies of a spectrum beyond every chosen family's reach (see module notes)."""
    E = np.asarray(ds.x["energy"], float)
    reach = {}
    for name in case.models:
        reach[name] = family_energy_reach(case.problem(name), ds)
    out = []
    gain = max(r[0] for r in reach.values())
    loss = max(r[1] for r in reach.values())

    def each(i, sign):
        return ", ".join(f"{n} {sign}{r[i]:.3g} meV" for n, r in reach.items())
    if E.max() > FAR * loss:
        out.append(f"warning: dataset '{ds.name}': energies reach {E.max():.3g} meV, but over "
                   f"their priors the chosen models put spectral weight only up to about "
                   f"{each(1, '')}; check the energy unit")
    if E.min() < 0 and -E.min() > FAR * gain:
        out.append(f"warning: dataset '{ds.name}': energies go down to {E.min():.3g} meV "
                   f"(neutron energy gain), but at T = {ds.options['temperature']:g} K the "
                   f"chosen models put weight there only down to about {each(0, '-')}; "
                   "check the sign of the energy axis and the temperature")
    return out


def spacing_warnings(sample) -> list:
    """A spin spacing that does not divide the lattice repeat along the chain.

    Equally spaced spins on a chain along the lattice vector R repeat after |R|, so |R| = n d
    for a whole number n (translational symmetry; common practice).
    """
    geo = getattr(sample, "geometry", None)
    if geo is None:
        return []
    with np.errstate(all="ignore"):
        R = float(np.linalg.norm(geo.chain_vector))
        ratio = R / sample.spin_spacing
    if not np.isfinite(ratio):
        return []
    n = round(ratio)
    if n >= 1 and abs(ratio - n) <= 0.02 * n:
        return []
    return [f"warning: sample: spin_spacing {sample.spin_spacing:g} Å does not divide the "
            f"lattice repeat along the chain ({geo.chain_label}: {R:.4g} Å; ratio "
            f"{ratio:.3g}); the chain phase q = Q_par d assumes equally spaced spins whose "
            "spacing divides the repeat: check spin_spacing, the lattice and chain"]


def geometry_warnings(case) -> list:
    """Wavevector information that the prediction layer does not pass on to the families."""
    out = []
    crystal = [ds for ds in case.datasets if ds.spec.single_crystal]
    if not crystal or not case.models:
        return out
    problem = case.problem(next(iter(case.models)))
    geo = case.sample.geometry
    for ds in crystal:
        pts = getattr(next(p for p in problem.predictors if p.dataset is ds), "_pts", None)
        q2 = np.asarray(ds.x.get("Q_perp2", 0.0))
        if pts is not None and np.any(q2) and not np.allclose(pts.Q_b, q2):
            out.append(f"warning: dataset '{ds.name}': the second wavevector component "
                       f"across the chain (Q_perp2, up to {np.max(np.abs(q2)):.3g} 1/A) is "
                       "not passed to the models, which see it as 0")
    pts = getattr(problem.predictors[case.datasets.index(crystal[0])], "_pts", None)
    if geo is not None and pts is not None:
        want = geo.interchain_vectors()
        used = np.array([[pts.a_perp, 0.0], [0.0, pts.b_perp]])
        if not np.allclose(want, used, rtol=1e-6, atol=1e-9):
            fmt = lambda v: f"({v[0]:.3g}, {v[1]:.3g})"  # noqa: E731
            out.append(f"warning: sample: across the chain ({geo.chain_label}) the lattice "
                       f"vectors are {fmt(want[0])} and {fmt(want[1])} Å along (n1, n2), but "
                       f"the models take them as {fmt(used[0])} and {fmt(used[1])} Å; "
                       "interchain phases of families with interchain terms are approximate")
    return out


def case_warnings(case) -> list:
    """Every sanity warning of a validated case, one line each (``warning: ...``).

    Parameters
    ----------
    case : Case

    Returns
    -------
    list of str
    """
    with np.errstate(all="ignore"):          # absurd but accepted inputs must not crash
        out = spacing_warnings(case.sample) + geometry_warnings(case)
        for ds in case.datasets:
            if ds.spec.is_spectrum:
                out += resolution_warnings(ds)
                out += energy_warnings(case, ds)
    return out
