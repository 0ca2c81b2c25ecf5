"""P(one-dimensional | data) counting the nested one-dimensional limits of the families.

A family that is not one-dimensional but contains a one-dimensional limit (for example
J_⊥ = 0) is split into two hypotheses, the limit and the rest, each with half the family's
prior probability; the limit's evidence is Z × BF(limit / full) from the Savage–Dickey
ratio.  Reported always (``p_with_nested_limits``), and the headline P(1D) when the case
says ``one_dimensional_limits: include`` (:func:`with_nested_limits`).

References
----------
.. [1] H. Jeffreys, *Theory of Probability*, 3rd ed. (Oxford, 1961), §5.0 (from memory).
.. [2] J. M. Dickey, Ann. Math. Stat. 42, 204 (1971).
.. [3] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995).
"""
from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import special

from .compare import Comparison

__all__ = ["with_nested_limits", "p_one_dimensional_with_limits"]


def _p1_with_limits(lz, w, one_d, ln_bf) -> float:
    logs, is1 = [], []
    for i in range(lz.size):
        if one_d[i] or ln_bf[i] is None:
            logs.append(math.log(w[i]) + lz[i])
            is1.append(bool(one_d[i]))
        else:                                 # the limit and the rest of the family
            logs.append(math.log(w[i] / 2) + lz[i] + ln_bf[i])
            is1.append(True)
            logs.append(math.log(w[i] / 2) + lz[i])
            is1.append(False)
    logs = np.array(logs)
    p = np.exp(logs - special.logsumexp(logs))
    return float(p[np.array(is1)].sum())


def with_nested_limits(cmp_: Comparison, limits: dict) -> Comparison:
    """The comparison with P(one-dimensional | data) counting the nested limits.

    P and its error come from :func:`p_one_dimensional_with_limits`; the verdict sentence
    quotes them and names the limits counted.

    Parameters
    ----------
    cmp_ : Comparison
        From :func:`compare_models` (before the reliability is attached).
    limits : dict
        family -> (ln BF limit/full, its error), as :func:`p_one_dimensional_with_limits`.

    Returns
    -------
    Comparison

    References
    ----------
    .. [1] Dickey, Ann. Math. Stat. 42, 204 (1971); Kass & Raftery, JASA 90, 773 (1995).
    """
    counted = [n for n in cmp_.names if n in limits and not cmp_.one_dimensional[n]]
    if not counted:
        return dataclasses.replace(cmp_, one_dimensional_limits="include")
    p, err = p_one_dimensional_with_limits(cmp_, limits)
    old = (f"P(one-dimensional | data) = {cmp_.p_one_dimensional:.3g} ± "
           f"{cmp_.p_one_dimensional_err:.2g}")
    new = (f"P(one-dimensional | data) = {p:.3g} ± {err:.2g}, counting the nested "
           f"one-dimensional limits of {', '.join(counted)}")
    return dataclasses.replace(cmp_, p_one_dimensional=p, p_one_dimensional_err=err,
                               verdict=cmp_.verdict.replace(old, new),
                               one_dimensional_limits="include")


def p_one_dimensional_with_limits(cmp_: Comparison, limits: dict) -> tuple:
    """P(one-dimensional | data) counting the nested one-dimensional limits of the families.

    Each family that is not one-dimensional but contains a one-dimensional limit is split
    into two hypotheses, the limit and the rest of the family, each with half its prior
    probability (Jeffreys' convention for a point hypothesis; Kass & Raftery 1995, §2,
    from memory); the limit's evidence is Z × BF(limit / full), the Savage–Dickey ratio.

    Parameters
    ----------
    cmp_ : Comparison
    limits : dict
        family -> (ln BF limit/full, its error); ln BF = None or −inf for a limit with no
        posterior mass (it then counts nothing).

    Returns
    -------
    (float, float)
        P and its error (linear propagation of the ln Z and ln BF errors, by central
        differences).

    References
    ----------
    .. [1] H. Jeffreys, *Theory of Probability*, 3rd ed. (Oxford, 1961), §5.0 (from memory).
    .. [2] Dickey, Ann. Math. Stat. 42, 204 (1971).
    """
    names = list(cmp_.names)
    lz = np.array([cmp_.log_z[n] for n in names])
    w = np.array([cmp_.prior_probability[n] for n in names])
    one_d = [cmp_.one_dimensional[n] for n in names]
    bf, bf_err = [], []
    for n in names:
        v = limits.get(n)
        if v is None or cmp_.one_dimensional[n]:
            bf.append(None)
            bf_err.append(0.0)
        else:
            ln_bf, e = v
            ok = ln_bf is not None and math.isfinite(ln_bf)
            bf.append(float(ln_bf) if ok else -math.inf)
            bf_err.append(float(e) if ok and e is not None and math.isfinite(e) else 0.0)
    p = _p1_with_limits(lz, w, one_d, bf)
    var, h = 0.0, 1e-4
    for i, n in enumerate(names):
        for which, sig in (("z", cmp_.log_z_err[n]), ("bf", bf_err[i])):
            if not sig or not math.isfinite(sig) or (which == "bf" and bf[i] is None):
                continue
            up, dn = lz.copy(), lz.copy()
            bu, bd = list(bf), list(bf)
            if which == "z":
                up[i] += h
                dn[i] -= h
            else:
                bu[i] += h
                bd[i] -= h
            g = (_p1_with_limits(up, w, one_d, bu) - _p1_with_limits(dn, w, one_d, bd)) / (2 * h)
            var += (g * sig) ** 2
    return p, math.sqrt(var)
