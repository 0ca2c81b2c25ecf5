"""Linear-Gaussian test problems with analytic evidences and posteriors."""
import numpy as np
from scipy import stats

from evidence1d.inference.priors import JointPrior, Normal, Uniform


def linear_gaussian(rng, d, prior_kind="normal", prior_width=10.0, corr=0.0, noise=0.5):
    """y = θ + e, e ~ N(0, C), C = noise² [(1 − corr) I + corr 11ᵀ].

    Analytic evidence: Gaussian prior N(0, w² I) gives Z = N(y; 0, C + w² I) (Bishop, Pattern
    Recognition and Machine Learning, Springer 2006, eq. 2.115); a uniform box [−w, w]^d much
    wider than the likelihood gives ln Z = ln ∫ N(y; θ, C) dθ − d ln(2w) = −d ln(2w) up to the
    box's truncation of the Gaussian, which is computed exactly when C is diagonal.
    """
    C = noise**2 * ((1 - corr) * np.eye(d) + corr * np.ones((d, d)))
    Ci = np.linalg.inv(C)
    ld = np.linalg.slogdet(C)[1]
    y = rng.normal(size=d)

    def loglike(theta):
        r = y[None, :] - theta
        return (-0.5 * np.einsum("ki,ij,kj->k", r, Ci, r) - 0.5 * ld
                - 0.5 * d * np.log(2 * np.pi))

    names = [f"p{i}" for i in range(d)]
    if prior_kind == "normal":
        prior = JointPrior(names, [Normal(0.0, prior_width)] * d)
        truth = stats.multivariate_normal(np.zeros(d), C + prior_width**2 * np.eye(d)).logpdf(y)
        post_cov = np.linalg.inv(Ci + np.eye(d) / prior_width**2)
        post_mean = post_cov @ Ci @ y
    else:
        prior = JointPrior(names, [Uniform(-prior_width, prior_width)] * d)
        # Mass of N(θ; y, C) inside the box is 1 to within 1e-12 when the box is > 7 sd
        # wider than |y| on each side; the check below keeps that so.
        assert prior_width - np.abs(y).max() > 7 * noise
        truth = -d * np.log(2 * prior_width)
        post_cov, post_mean = C, y
    return loglike, prior, float(truth), post_mean, post_cov
