"""Crystal geometry: the reciprocal lattice, the chain direction, and Q along and across it.

The sample block gives the lattice (a, b, c in Å; α, β, γ in degrees, 90 by default) and the
chain direction: a crystal axis (``chain: c``, the default, ``a`` or ``b``) or a real-space
vector ``[u, v, w]`` in lattice units (the direction u a + v b + w c).

A wavevector given by its Miller indices h = (H, K, L) in reciprocal-lattice units is
Q = 2π B h in a Cartesian frame, with B the matrix of Busing & Levy (1967): x along a*, y in
the a*–b* plane, z along c.  It is then split into components along three fixed orthonormal
directions:

- t, the unit vector along the chain;
- n₁, the part of the *next crystal axis* perpendicular to the chain, normalised.  The
  chain's own axis is the crystal axis closest to it in angle (the declared axis for
  ``chain: a``, ``b`` or ``c``); the next axis follows it in the cycle a → b → c → a, so
  n₁ ∥ a for a chain along c, ∥ b for a chain along a, ∥ c for a chain along b (in an
  orthogonal cell);
- n₂ = t × n₁, so that (n₁, n₂, t) is right-handed.

Q_∥ = Q·t, Q_⊥ = Q·n₁ and Q_⊥₂ = Q·n₂ (Å⁻¹).  Since a*, b*, c* are dual to a, b, c
(a_i · a*_j = δ_ij with the 2π outside), Q·R = 2π (h·u) for any lattice vector R = u·(a, b, c):
for a chain along c, Q_∥ = 2π L / c in any cell.

References
----------
W. R. Busing and H. A. Levy, Acta Cryst. 22, 457 (1967): the B matrix;
G. H. Stout and L. H. Jensen, X-ray Structure Determination (Wiley, 1989), ch. 2 (metric
tensor G and reciprocal metric G* = G⁻¹; volume V² = det G; reciprocal angles).  The
formulas are written from memory; the tests check B against G* = G⁻¹ built independently.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError

__all__ = ["Geometry", "make_geometry", "metric_tensor", "b_matrix", "AXES",
           "crystal_wavevectors"]

#: crystal axes by name, in the cycle that picks the next axis
AXES = ("a", "b", "c")


def _cos_sin(deg: float):
    """cos and sin of an angle in degrees, exact (0 and 1) at 90°."""
    if deg == 90.0:
        return 0.0, 1.0
    r = math.radians(deg)
    return math.cos(r), math.sin(r)


def _volume_factor(alpha, beta, gamma) -> float:
    """1 − cos²α − cos²β − cos²γ + 2 cosα cosβ cosγ (V² / (abc)²)."""
    ca, cb, cg = (_cos_sin(x)[0] for x in (alpha, beta, gamma))
    return 1.0 - ca * ca - cb * cb - cg * cg + 2.0 * ca * cb * cg


def metric_tensor(a, b, c, alpha, beta, gamma) -> np.ndarray:
    """Real-space metric tensor G_ij = a_i · a_j.

    Parameters
    ----------
    a, b, c : float
        Cell lengths in Å.
    alpha, beta, gamma : float
        Cell angles in degrees (α between b and c, β between a and c, γ between a and b).

    Returns
    -------
    ndarray, shape (3, 3)
        G in Å².

    References
    ----------
    Stout & Jensen, X-ray Structure Determination (1989), ch. 2.
    """
    ca, cb, cg = (_cos_sin(x)[0] for x in (alpha, beta, gamma))
    return np.array([[a * a, a * b * cg, a * c * cb],
                     [a * b * cg, b * b, b * c * ca],
                     [a * c * cb, b * c * ca, c * c]])


def b_matrix(a, b, c, alpha, beta, gamma) -> np.ndarray:
    """The B matrix of Busing & Levy: Cartesian reciprocal-lattice vectors, without 2π.

    Parameters
    ----------
    a, b, c : float
        Cell lengths in Å.
    alpha, beta, gamma : float
        Cell angles in degrees.

    Returns
    -------
    ndarray, shape (3, 3)
        B in Å⁻¹; its columns are a*, b*, c* (|a*| = 1/d₁₀₀) in the frame x ∥ a*, y in the
        a*–b* plane, z ∥ c.  Q = 2π B h for Miller indices h = (H, K, L).

    References
    ----------
    W. R. Busing and H. A. Levy, Acta Cryst. 22, 457 (1967):
    B = [[a*, b* cos γ*, c* cos β*], [0, b* sin γ*, −c* sin β* cos α], [0, 0, 1/c]].
    """
    ca, sa = _cos_sin(alpha)
    cb, sb = _cos_sin(beta)
    cg, sg = _cos_sin(gamma)
    vol = a * b * c * math.sqrt(_volume_factor(alpha, beta, gamma))
    ar, br, cr = b * c * sa / vol, a * c * sb / vol, a * b * sg / vol
    # reciprocal angles (Busing & Levy 1967; Stout & Jensen 1989, ch. 2)
    cbr = (ca * cg - cb) / (sa * sg)
    cgr = (ca * cb - cg) / (sa * sb)
    sbr, sgr = math.sqrt(max(0.0, 1.0 - cbr * cbr)), math.sqrt(max(0.0, 1.0 - cgr * cgr))
    return np.array([[ar, br * cgr, cr * cbr],
                     [0.0, br * sgr, -cr * sbr * ca],
                     [0.0, 0.0, 1.0 / c]])


@dataclass(frozen=True)
class Geometry:
    """Lattice and chain direction of a sample, and the Q components they define.

    Attributes
    ----------
    a, b, c : float
        Cell lengths in Å.
    alpha, beta, gamma : float
        Cell angles in degrees.
    chain : tuple of float
        Real-space direction of the chain in lattice units (u, v, w).
    chain_label : str
        How the case file named it (``"c"``, ``"[1, 0, 1]"``).

    Notes
    -----
    Build with :func:`make_geometry`, which validates the input.
    """

    a: float
    b: float
    c: float
    alpha: float = 90.0
    beta: float = 90.0
    gamma: float = 90.0
    chain: tuple = (0.0, 0.0, 1.0)
    chain_label: str = "c"

    # ---------------------------------------------------------------- matrices
    @property
    def B(self) -> np.ndarray:
        """Busing–Levy B matrix in Å⁻¹ (columns a*, b*, c*, no 2π)."""
        return b_matrix(self.a, self.b, self.c, self.alpha, self.beta, self.gamma)

    @property
    def real_basis(self) -> np.ndarray:
        """Columns a, b, c in Å in the frame of :attr:`B` (A = (B⁻¹)ᵀ, so Aᵀ B = 1)."""
        return np.linalg.inv(self.B).T

    @property
    def is_default(self) -> bool:
        """Chain along c in a cell with three right angles (the layout of q_par/q_perp in
        r.l.u.: L along the chain, H across it)."""
        return (self.alpha == self.beta == self.gamma == 90.0
                and tuple(self.chain) == (0.0, 0.0, 1.0))

    @property
    def chain_axis(self) -> int:
        """Index (0, 1, 2 for a, b, c) of the crystal axis closest in angle to the chain."""
        A, t = self.real_basis, self.directions[0]
        cosines = [abs(float(A[:, i] @ t)) / float(np.linalg.norm(A[:, i])) for i in range(3)]
        return int(np.argmax(cosines))

    @property
    def chain_vector(self) -> np.ndarray:
        """The chain's lattice vector R = u a + v b + w c, Cartesian, in Å."""
        return self.real_basis @ np.asarray(self.chain, float)

    @property
    def directions(self) -> tuple:
        """(t, n₁, n₂): unit vectors along the chain and the two fixed directions across it.

        n₁ is the part of the next crystal axis (after the chain's axis in the cycle
        a → b → c → a) perpendicular to t; n₂ = t × n₁.
        """
        A = self.real_basis
        R = A @ np.asarray(self.chain, float)
        t = R / np.linalg.norm(R)
        cosines = [abs(float(A[:, i] @ t)) / float(np.linalg.norm(A[:, i])) for i in range(3)]
        nxt = A[:, (int(np.argmax(cosines)) + 1) % 3]
        perp = nxt - (nxt @ t) * t
        n1 = perp / np.linalg.norm(perp)
        n2 = np.cross(t, n1)
        return t, n1, n2

    # ---------------------------------------------------------------- wavevectors
    def q_cartesian(self, H, K, L) -> np.ndarray:
        """Q = 2π B h in Å⁻¹, shape (n, 3), for Miller indices of shape (n,)."""
        h = np.stack([np.asarray(H, float), np.asarray(K, float), np.asarray(L, float)])
        return (2.0 * math.pi * (self.B @ h)).T

    def components(self, H, K, L):
        """Q_∥, Q_⊥ and Q_⊥₂ in Å⁻¹ of wavevectors given in reciprocal-lattice units.

        Parameters
        ----------
        H, K, L : array_like, shape (n,)
            Miller indices (r.l.u.).

        Returns
        -------
        Q_par, Q_perp, Q_perp2 : ndarray, shape (n,)
            Q·t, Q·n₁, Q·n₂ (see :attr:`directions`); their squares sum to |Q|².

        References
        ----------
        Busing & Levy, Acta Cryst. 22, 457 (1967) (Q = 2π B h).
        """
        Q = self.q_cartesian(H, K, L)
        t, n1, n2 = self.directions
        return Q @ t, Q @ n1, Q @ n2

    def interchain_vectors(self) -> np.ndarray:
        """The two crystal axes other than the chain's, projected on the plane across the
        chain, as (n₁, n₂) components in Å: shape (2, 2), rows the next axis and the one
        after it.  For a chain along c in an orthogonal cell: [[a, 0], [0, b]].
        """
        A = self.real_basis
        _, n1, n2 = self.directions
        i = self.chain_axis
        rows = [A[:, (i + 1) % 3], A[:, (i + 2) % 3]]
        return np.array([[r @ n1, r @ n2] for r in rows])

    def rlu_width_factors(self) -> tuple:
        """Å⁻¹ per r.l.u. of a momentum width along the chain and across it (along n₁).

        Along the chain Q_∥ = 2π (h·u)/|R|; across it, at fixed Q_∥, Q_⊥ changes by
        2π/|X⊥| per unit of the next axis's index (X⊥ that axis's part across the chain).
        For the default geometry these are 2π/c and 2π/a.
        """
        R = self.chain_vector
        nxt = self.real_basis[:, (self.chain_axis + 1) % 3]
        t = R / np.linalg.norm(R)
        perp = nxt - (nxt @ t) * t
        return 2.0 * math.pi / float(np.linalg.norm(R)), 2.0 * math.pi / float(
            np.linalg.norm(perp))

    def describe(self) -> str:
        """One line: the cell and the chain direction."""
        ang = ("" if self.alpha == self.beta == self.gamma == 90.0 else
               f", α={self.alpha:g}° β={self.beta:g}° γ={self.gamma:g}°")
        return (f"a={self.a:g} b={self.b:g} c={self.c:g} Å{ang}; chain along "
                f"{self.chain_label}")


def _chain(value, where: str):
    """(u, v, w), label of a chain declaration."""
    if isinstance(value, str):
        name = value.strip().lower()
        if name in AXES:
            vec = [0.0, 0.0, 0.0]
            vec[AXES.index(name)] = 1.0
            return tuple(vec), name
        raise InputError(f"unknown chain direction {value!r}; expected a crystal axis (a, b or "
                         "c) or a real-space vector [u, v, w] in lattice units", key=where)
    if (not isinstance(value, (list, tuple)) or len(value) != 3
            or not all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in value)):
        raise InputError(f"expected a crystal axis (a, b or c) or a real-space vector "
                         f"[u, v, w] of three numbers; got {value!r}", key=where)
    vec = tuple(float(x) for x in value)
    if not all(math.isfinite(x) for x in vec):
        raise InputError(f"chain vector {list(value)!r} must hold finite numbers", key=where)
    if all(x == 0.0 for x in vec):
        raise InputError(f"chain vector {list(value)!r} has zero length; give a crystal axis "
                         "(a, b or c) or a non-zero vector [u, v, w]", key=where)
    return vec, "[" + ", ".join(f"{x:g}" for x in vec) + "]"


def make_geometry(lattice: dict, chain=None, *, where: str = "sample") -> Geometry:
    """Validate a lattice and a chain direction and build their :class:`Geometry`.

    Parameters
    ----------
    lattice : dict
        ``a``, ``b``, ``c`` (Å, > 0) and optionally ``alpha``, ``beta``, ``gamma`` (degrees,
        default 90).
    chain : str or sequence of 3 numbers, optional
        ``"a"``, ``"b"``, ``"c"`` (default) or a real-space vector [u, v, w].
    where : str
        Dotted key of the sample block (for messages).

    Returns
    -------
    Geometry

    Raises
    ------
    InputError
        An angle outside (0°, 180°), angles that make no cell (one angle at least the sum of
        the other two, or the three summing to 360° or more), an unknown or zero-length
        chain direction.  The message names the key.
    """
    ang = {}
    for k in ("alpha", "beta", "gamma"):
        v = lattice.get(k, 90.0)
        v = 90.0 if v is None else float(v)
        if not (0.0 < v < 180.0) or not math.isfinite(v):
            raise InputError(f"cell angle {k} = {v:g}° is outside (0°, 180°); give the angle "
                             "in degrees", key=f"{where}.lattice.{k}")
        ang[k] = v
    for k, others in (("alpha", ("beta", "gamma")), ("beta", ("alpha", "gamma")),
                      ("gamma", ("alpha", "beta"))):
        if ang[k] >= ang[others[0]] + ang[others[1]]:
            raise InputError(f"angles alpha = {ang['alpha']:g}°, beta = {ang['beta']:g}°, "
                             f"gamma = {ang['gamma']:g}° make no cell: {k} must be smaller "
                             f"than {others[0]} + {others[1]}", key=f"{where}.lattice.{k}")
    if sum(ang.values()) >= 360.0:
        k = max(ang, key=ang.get)
        raise InputError(f"angles alpha = {ang['alpha']:g}°, beta = {ang['beta']:g}°, "
                         f"gamma = {ang['gamma']:g}° make no cell: their sum must be below "
                         "360°", key=f"{where}.lattice.{k}")
    if _volume_factor(ang["alpha"], ang["beta"], ang["gamma"]) <= 1e-12:
        raise InputError("the cell angles give a cell of zero volume", key=f"{where}.lattice")
    vec, label = _chain("c" if chain is None else chain, f"{where}.chain")
    return Geometry(a=float(lattice["a"]), b=float(lattice["b"]), c=float(lattice["c"]),
                    alpha=ang["alpha"], beta=ang["beta"], gamma=ang["gamma"], chain=vec,
                    chain_label=label)


def crystal_wavevectors(cols, units, geometry, block) -> dict:
    """Q_par, Q_perp, Q_perp2 (Å⁻¹) of a crystal spectrum's points.

    Miller indices go through the reciprocal lattice (:meth:`Geometry.components`);
    ``q_par``/``q_perp`` in r.l.u. are L and H of the default geometry (2πL/c, 2πH/a, and
    ``q_perp2`` 2πK/b); in Å⁻¹ they are the components themselves (``q_perp2`` 0 if absent).

    Parameters
    ----------
    cols : dict of str to ndarray
        ``H``, ``K``, ``L`` (r.l.u.) or ``q_par``, ``q_perp`` (and ``q_perp2``).
    units : dict
        The data's units (``wavevector``: ``rlu`` or ``1/A``).
    geometry : Geometry
    block : dict
        The validated dataset block (``_where``, ``resolution.q_fwhm``).

    Returns
    -------
    dict of str to ndarray

    Raises
    ------
    InputError
        Components in r.l.u., or a momentum resolution in r.l.u., for a cell that is not the
        default one (chain along c, right angles).
    """
    where = block["_where"]
    if "H" in cols:
        qp, q1, q2 = geometry.components(cols["H"], cols["K"], cols["L"])
        x = {"Q_par": qp, "Q_perp": q1, "Q_perp2": q2}
    elif units["wavevector"] == "rlu":
        if not geometry.is_default:
            raise InputError("q_par and q_perp in r.l.u. are L and H of a cell with the chain "
                             f"along c and right angles, but the sample has "
                             f"{geometry.describe()}; give the wavevectors as columns H, K, L "
                             "(r.l.u.) or as q_par, q_perp in 1/A",
                             key=f"{where}.units.wavevector")
        # Q along the chain (c axis) = 2π L / c; across (a axis) = 2π H / a
        x = {"Q_par": 2.0 * math.pi * cols["q_par"] / geometry.c,
             "Q_perp": 2.0 * math.pi * cols["q_perp"] / geometry.a}
        x["Q_perp2"] = (2.0 * math.pi * cols["q_perp2"] / geometry.b if "q_perp2" in cols
                        else np.zeros_like(x["Q_par"]))
    else:
        x = {"Q_par": cols["q_par"].copy(), "Q_perp": cols["q_perp"].copy(),
             "Q_perp2": (cols["q_perp2"].copy() if "q_perp2" in cols
                         else np.zeros_like(cols["q_par"]))}
    qf = (block.get("resolution") or {}).get("q_fwhm")
    if qf and units["wavevector"] == "rlu":
        want = geometry.rlu_width_factors()
        used = (2.0 * math.pi / geometry.c, 2.0 * math.pi / geometry.a)
        if not np.allclose(want, used, rtol=1e-9):
            raise InputError("resolution.q_fwhm in r.l.u. is converted with 2π/c along the "
                             "chain and 2π/a across it, but for a sample with "
                             f"{geometry.describe()} one r.l.u. is {want[0]:.4g} and "
                             f"{want[1]:.4g} 1/A; give the data in 1/A (q_par, q_perp) or "
                             "leave q_fwhm out", key=f"{where}.resolution.q_fwhm")
    return x
