"""Independent single-parabolic-band reference built on mpmath (not on kappa's quadrature).

F_j(eta) = -Gamma(j+1) Li_{j+1}(-e^eta) (mpmath.polylog); S and L from the formulas in
tests/reference_values.py (lambda = scattering exponent, tau ~ E^(lambda-1/2)); eta from |S| by
mpmath.findroot. Used only by the tests.
"""

import mpmath as mp

KB_E = mp.mpf("1.380649e-23") / mp.mpf("1.602176634e-19")  # k_B/e [V/K], exact SI constants


def fd(j, eta):
    with mp.workdps(40):
        return mp.re(-mp.gamma(j + 1) * mp.polylog(j + 1, -mp.exp(eta)))


def seebeck(eta, lam=0):
    with mp.workdps(40):
        return KB_E * ((2 + lam) * fd(1 + lam, eta) / ((1 + lam) * fd(lam, eta)) - eta)


def lorenz(eta, lam=0):
    with mp.workdps(40):
        f0, f1, f2 = fd(lam, eta), fd(1 + lam, eta), fd(2 + lam, eta)
        return KB_E**2 * ((1 + lam) * (3 + lam) * f0 * f2 - (2 + lam) ** 2 * f1**2) / (
            (1 + lam) ** 2 * f0**2)


def eta_from_seebeck(s_abs, lam=0):
    """eta with seebeck(eta) = s_abs [V/K] (mpmath's bracketed Illinois solver, then checked)."""
    with mp.workdps(40):
        s = mp.mpf(s_abs)
        x = mp.findroot(lambda x: seebeck(x, lam) / s - 1, (mp.mpf(-40), mp.mpf(5000)),
                        solver="illinois", tol=mp.mpf(10) ** -30, verify=False, maxsteps=400)
        assert abs(seebeck(x, lam) / s - 1) < 1e-14
        return x


def lorenz_from_seebeck(s_abs, lam=0):
    return float(lorenz(eta_from_seebeck(s_abs, lam), lam))
