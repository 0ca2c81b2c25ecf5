"""The generic prediction layer: one family, one dataset, a batch of parameter sets.

A :class:`DatasetPredictor` adds to a family's model part what every family shares:

spectra      I(Q, E) = s |F(Q)|² S(Q, E) + b₀ + b₁ E + e G(E; σ)
             (s intensity scale, F the dipole magnetic form factor with g, b₀ + b₁ E the
             background, e the elastic-line area with the resolution Gaussian G); powder
             data are averaged over the directions of Q first.
chi(T)       χ(T) = χ_model(T) + χ₀ + C_imp / T      (emu/mol of magnetic ion)
C(T)         C(T) = C_model(T) + γ_e T + β T³        (J/(mol K) of magnetic ion)
S_mag(T)     S(T) = S_model(T)                       (magnetic part alone)

Nuisance parameters are named ``<dataset>:<what>`` (``map:scale``, ``map:background``,
``map:slope``, ``map:elastic``, ``<dataset>:inflate``); the sample-level extras are ``chi0``
(emu/mol), ``c_imp`` (emu K/mol), ``gamma_e`` (J/(mol K²)) and ``beta_lattice``
(J/(mol K⁴)), shared by all datasets of their kind.  The dataset's kind object
(:attr:`Dataset.spec <evidence1d.data.kinds.Dataset.spec>`) names them, gives their default
priors and the extras' terms; this layer does the arithmetic.

References
----------
G. L. Squires, Introduction to the Theory of Thermal Neutron Scattering (CUP, 1978), ch. 7
(magnetic cross-section, form factor); International Tables for Crystallography Vol. C,
§4.4.5 (dipole form factor ⟨j0⟩ + (1 − 2/g)⟨j2⟩).
"""
from __future__ import annotations

import numpy as np

from ..data import SAMPLE_EXTRAS, Dataset
from ..errors import InputError
from .base import Family, SpectralPoints

__all__ = ["DatasetPredictor", "PowderAverage", "SAMPLE_EXTRAS"]


def _q_sigmas(dataset, sample) -> tuple[float, float]:
    """Momentum-resolution standard deviations (Å⁻¹) along and across the chain.

    ``resolution.q_fwhm`` holds FWHMs in the dataset's wavevector unit; r.l.u. along the
    chain (c) and across it (a) convert with 2π/c and 2π/a, as the wavevectors do.
    """
    from ..physics.neutron import FWHM_PER_SIGMA
    qf = (dataset.options.get("resolution") or {}).get("q_fwhm")
    if not qf:
        return 0.0, 0.0
    f_par, f_perp = float(qf[0]), float(qf[1])
    if dataset.units.get("wavevector") == "rlu":
        geo = getattr(sample, "geometry", None)
        if geo is None:
            k_par, k_perp = 2.0 * np.pi / sample.lattice["c"], 2.0 * np.pi / sample.lattice["a"]
        else:
            k_par, k_perp = geo.rlu_width_factors()
        f_par, f_perp = f_par * k_par, f_perp * k_perp
    return f_par / FWHM_PER_SIGMA, f_perp / FWHM_PER_SIGMA


def _interchain(dataset, sample):
    """Wavevector components along the two interchain lattice vectors, their lengths, |Q|.

    The families see a chain with neighbouring chains at R₁ and R₂ (the other two crystal
    axes, projected across the chain; :meth:`Geometry.interchain_vectors`) through the
    phases Q⊥·R₁ = Q_a a_⊥ and Q⊥·R₂ = Q_b b_⊥, so Q_a = Q⊥·R̂₁ and Q_b = Q⊥·R̂₂.  For a
    chain along c in an orthogonal cell this is Q_a = Q_⊥ (along a), Q_b = Q_⊥2 (along b).
    |Q| (for the form factor) comes from the orthonormal components.

    Returns
    -------
    (Q_a, a_perp), (Q_b, b_perp), Q : arrays in Å⁻¹ and lengths in Å
    """
    x = dataset.x
    Q_par, Qp1 = x["Q_par"], x["Q_perp"]
    Qp2 = x.get("Q_perp2", np.zeros_like(Q_par))
    Q = np.sqrt(Q_par ** 2 + Qp1 ** 2 + Qp2 ** 2)
    geo = getattr(sample, "geometry", None)
    if geo is None or geo.is_default:
        return (Qp1, sample.lattice["a"]), (Qp2, sample.lattice["b"]), Q
    R = geo.interchain_vectors()
    L1, L2 = float(np.hypot(*R[0])), float(np.hypot(*R[1]))
    return ((Qp1 * R[0, 0] + Qp2 * R[0, 1]) / L1, L1), \
        ((Qp1 * R[1, 0] + Qp2 * R[1, 1]) / L2, L2), Q


class DatasetPredictor:
    """Predictions of one family for one dataset.

    Parameters
    ----------
    family : Family
        The model family (its physical parameters are read from ``p`` by name).
    dataset : Dataset
        The dataset (internal units).
    sample : Sample
        The case's sample (ion, charge, spacings).

    Attributes
    ----------
    kind : DatasetKind
        The dataset's kind object.
    nuisance : list of str
        Names of this dataset's own nuisance parameters.
    extras : list of str
        Names of the sample-level extras this dataset uses.

    Raises
    ------
    InputError
        If the family does not predict the dataset's kind.
    """

    def __init__(self, family: Family, dataset: Dataset, sample):
        self.family = family
        self.dataset = dataset
        self.sample = sample
        self.kind = kind = dataset.spec
        if not family.supports(kind):
            raise InputError(family.unsupported_message(kind, dataset.name))
        opt = dataset.options
        self.nuisance, self.extras = kind.nuisance_names(dataset.name, opt)
        self._powder = None
        self._sigma = None
        if kind.is_spectrum:
            from ..physics import neutron
            E = dataset.x["energy"]
            self._sigma = neutron.resolution_sigma(E, opt["resolution"]["fwhm"])
            self._E = E
            if kind.single_crystal:
                Q_par = dataset.x["Q_par"]
                (Q_a, a_perp), (Q_b, b_perp), self._Q = _interchain(dataset, sample)
                sq_par, sq_perp = _q_sigmas(dataset, sample)
                self._pts = SpectralPoints(Q_par=Q_par, Q_a=Q_a, Q_b=Q_b,
                                           d=sample.spin_spacing, a_perp=a_perp,
                                           b_perp=b_perp, energy=E,
                                           sigma=self._sigma,
                                           temperature=float(opt["temperature"]),
                                           sigma_Q_par=sq_par, sigma_Q_perp=sq_perp)
                self._ndir = 1
            else:
                self._Q = dataset.x["Q"]
                self._powder = PowderAverage(family, self._Q, E, self._sigma,
                                             float(opt["temperature"]), sample,
                                             opt.get("powder_average"))
            self._elastic_shape = neutron.elastic_line(E, self._sigma)

    # ------------------------------------------------------------------ priors
    def default_priors(self) -> dict:
        """Default prior specs of this dataset's nuisances and extras, scaled to the data.

        Returns
        -------
        dict of str to dict
            Prior specs (``{kind: ..., ...}``), from the kind's
            :meth:`~evidence1d.data.kind_base.DatasetKind.default_priors`.
            Scale: log-uniform over four decades around the data's intensity span times the
            energy span (S(Q,E) is ~1/energy); background: uniform over a band one span wide
            around the data; slope: ± span per energy range; elastic: uniform
            [0, 10 span σ]; χ₀: uniform ± max|χ|; C_imp: uniform [0, max χT]; γ_e: uniform
            [0, max C/T]; β: uniform [0, max C/T³]; error inflation: log-uniform [1, 10].
        """
        return self.kind.default_priors(self.dataset, self.nuisance, self.extras, self._sigma)

    # ------------------------------------------------------------------ linear parts
    @property
    def linear(self) -> list:
        """Names of the parameters that enter this dataset's prediction linearly."""
        return [n for n in self.nuisance if not n.endswith(":inflate")] + list(self.extras)

    def linear_design(self, p: dict, names) -> tuple:
        """The prediction as offset + Σ_j column_j · a_j for the linear parameters ``names``.

        Parameters
        ----------
        p : dict of str to ndarray (k, 1)
            Physical parameters (and any non-linear nuisances).
        names : list of str
            Linear parameters to expose (a subset of :attr:`linear`).

        Returns
        -------
        offset : ndarray, shape (k, n)
            The part that does not depend on ``names``.
        columns : list of ndarray
            The column multiplying each of ``names``, in their order, each of shape (k, n)
            or (n,) (broadcastable to (k, n); never copied to the full shape here).
        """
        ds = self.dataset
        m = self.magnetic(p)
        n = m.shape[1]
        if self.kind.is_spectrum:
            column = {f"{ds.name}:scale": m, f"{ds.name}:background": np.ones(n),
                      f"{ds.name}:slope": self._E, f"{ds.name}:elastic": self._elastic_shape}
        else:
            T = ds.x["T"]
            column = {e.name: e.column(T) for e in self.kind.extras}
        zero = np.zeros((m.shape[0], 1))
        offset = self.predict({**p, **{nm: zero for nm in names}}, magnetic=m)
        return offset, [column[nm] for nm in names]

    # ------------------------------------------------------------------ predictions
    def magnetic(self, p: dict) -> np.ndarray:
        """The family's model part at the dataset's points (before nuisances), (k, n)."""
        ds, fam = self.dataset, self.family
        if self.kind.is_spectrum:
            from ..physics import neutron
            g = p.get("g", 2.0)
            if self._powder is not None:
                S = self._powder.average(p)
            else:
                S = self._in_parts(p)
            F = neutron.magnetic_form_factor(self._Q, self.sample.ion, self.sample.charge, g)
            return F ** 2 * S
        return self.kind.model_part(fam, p, ds.x["T"], ds.options)

    def _in_parts(self, p: dict) -> np.ndarray:
        """The family's spectrum at the points, (k, n), in batches of at most the family's
        ``max_pairs_per_call`` (set, point) pairs (its working memory grows with them; a
        set's values do not depend on the other sets of its batch)."""
        fam, k = self.family, _batch_size(p)

        def one(q):
            if self._pts.has_q_resolution and not fam.handles_q_resolution:
                from .qresolution import q_averaged_spectrum
                return q_averaged_spectrum(fam, q, self._pts)
            return fam.spectrum(q, self._pts)

        limit = getattr(fam, "max_pairs_per_call", None)
        n = max(int(np.size(self._E)), 1)
        if not limit or k * n <= limit or k == 1:
            return one(p)
        step = max(1, int(limit) // n)
        return np.concatenate([one(_rows(p, slice(i, i + step), k))
                               for i in range(0, k, step)])

    def predict(self, p: dict, magnetic: np.ndarray | None = None) -> np.ndarray:
        """Predicted values at the dataset's points, in the dataset's internal units.

        Parameters
        ----------
        p : dict of str to ndarray (k, 1)
            Physical parameters, this dataset's nuisances and the sample extras.
        magnetic : ndarray (k, n), optional
            The family's model part if already computed (:meth:`magnetic`).

        Returns
        -------
        ndarray, shape (k, n)
        """
        ds, name = self.dataset, self.dataset.name
        m = self.magnetic(p) if magnetic is None else magnetic
        if self.kind.is_spectrum:
            out = p[f"{name}:scale"] * m
            if f"{name}:background" in p:
                out = out + p[f"{name}:background"]
            if f"{name}:slope" in p:
                out = out + p[f"{name}:slope"] * self._E
            if f"{name}:elastic" in p:
                out = out + p[f"{name}:elastic"] * self._elastic_shape
            return out
        T = ds.x["T"]
        for e in self.extras:
            if e in p:
                m = m + self.kind.extra(e).term(p[e], T)
        return m


# ------------------------------------------------------------------------ powder average
def _rows(p: dict, rows, k: int) -> dict:
    """The parameter sets ``rows`` of a batch ``p`` of ``k`` sets."""
    return {n: (np.asarray(v)[rows] if np.ndim(v) and np.shape(v)[0] == k else v)
            for n, v in p.items()}


def _batch_size(p: dict) -> int:
    return max([np.shape(v)[0] for v in p.values() if np.ndim(v)] or [1])


class PowderAverage:
    """The powder average of a family's spectrum at a dataset's (|Q|, E) points.

    A family with ``chain_only`` true gets the exact one-dimensional average over the chain
    phase (:func:`evidence1d.physics.powder.adaptive_chain_average`, one grid per energy
    for every |Q|, with the family's polarisation factor averaged over the azimuth of Q by
    :meth:`~evidence1d.families.base.Family.chain_terms`); any other family the adaptive sphere average
    (:func:`evidence1d.physics.powder.adaptive_sphere_average`), with the interchain
    phases along the sample's interchain lattice vectors.  Both are refined until the
    tolerance of ``options`` (the case file's ``powder_average`` block) is met.

    Parameters
    ----------
    family : Family
    Q, E, sigma : ndarray, shape (n,)
        |Q| in Å⁻¹, energy and resolution σ in meV of every point.
    temperature : float
        Sample temperature in K.
    sample : Sample
        Spin spacing and interchain geometry.
    options : dict, optional
        ``tolerance``, ``phase_step``, ``max_grid`` (see
        :class:`evidence1d.physics.powder.PowderSettings`).

    References
    ----------
    G. L. Squires, Introduction to the Theory of Thermal Neutron Scattering (CUP, 1978),
    Ch. 7 (powder average of the magnetic cross-section).
    """

    def __init__(self, family: Family, Q, E, sigma, temperature: float, sample,
                 options=None):
        from ..physics.powder import PowderSettings
        self.settings = PowderSettings(**{k: v for k, v in (options or {}).items()
                                          if v is not None})
        self.family = family
        self.Q = np.asarray(Q, dtype=float)
        self.E = np.asarray(E, dtype=float)
        self.sigma = np.asarray(sigma, dtype=float)
        self.temperature = float(temperature)
        self.d = float(sample.spin_spacing)
        self.chain_only = bool(getattr(family, "chain_only", False))
        geo = getattr(sample, "geometry", None)
        if geo is None or geo.is_default:
            R = np.array([[sample.lattice["a"], 0.0], [0.0, sample.lattice["b"]]])
        else:
            R = np.asarray(geo.interchain_vectors(), dtype=float)
        self.a_perp, self.b_perp = float(np.hypot(*R[0])), float(np.hypot(*R[1]))
        # frame across the chain with its first axis along R₁: Q_b = Q⊥·R̂₂
        self._cos = float(R[0] @ R[1]) / (self.a_perp * self.b_perp)
        self._sin = float(np.sqrt(max(1.0 - self._cos ** 2, 0.0)))
        self.mirror = abs(self._cos) < 1e-9
        keys, inverse = np.unique(np.stack([self.E, self.sigma], axis=1), axis=0,
                                  return_inverse=True)
        self._E_group, self._sigma_group = keys[:, 0], keys[:, 1]
        self._group = np.asarray(inverse).ravel()

    def _points(self, Q_par, Q1, Q2, E, sigma) -> SpectralPoints:
        return SpectralPoints(Q_par=Q_par, Q_a=Q1, Q_b=self._cos * Q1 + self._sin * Q2,
                              d=self.d, a_perp=self.a_perp, b_perp=self.b_perp, energy=E,
                              sigma=sigma, temperature=self.temperature)

    def average(self, p: dict, details: bool = False):
        """⟨S⟩ over the directions of Q at every point, shape (n_sets, n), in 1/meV.

        With ``details`` also the grid each (set, point) converged on: the chain grid n
        (``chain_only``) or the number of directions, negative where the largest grid was
        reached before convergence.
        """
        from ..physics import powder
        fam, k = self.family, _batch_size(p)
        if self.chain_only:
            def evaluate(rows, q, g):
                zero = np.zeros_like(q)
                return fam.chain_terms(_rows(p, rows, k),
                                       self._points(q / self.d, zero, zero, self._E_group[g],
                                                    self._sigma_group[g]))
            avg, grid = powder.adaptive_chain_average(
                evaluate, self.Q * self.d, self._group, self._E_group.size, k, self.settings)
            grid = np.take(grid, self._group, axis=1)
        else:
            def evaluate(row, u, i):
                Qv = self.Q[i][:, None] * u
                return fam.spectrum(_rows(p, [row], k),
                                    self._points(Qv[:, 0], Qv[:, 1], Qv[:, 2], self.E[i],
                                                 self.sigma[i]))
            avg, grid = powder.adaptive_sphere_average(
                evaluate, self.Q, (self.d, self.a_perp, self.b_perp), k, self.settings,
                mirror=self.mirror)
        return (avg, grid) if details else avg
