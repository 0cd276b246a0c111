"""Tests of the killing-horizon route's cross-section quadrature.

References: elementary integrals and the Beta-function formula
int_0^pi sin^p = sqrt(pi) Gamma((p+1)/2) / Gamma(p/2 + 1), evaluated here
with mpmath's Gamma function (independent of the quadrature under test).
"""

from __future__ import annotations

import mpmath

from crosscheck.routes import _killing_quadrature as kq


def test_smooth_integrands_by_gauss_legendre_with_honest_errors():
    # Source: int_0^pi sin = 2; int_0^pi int_0^(2 pi) (1 + cos^2 y) sin x = 2 * 3 pi (elementary, common practice).
    with mpmath.workdps(40):
        one = kq.quad(mpmath.sin, [[0, mpmath.pi]], 30)
        two = kq.quad(lambda x, y: mpmath.sin(x) * (1 + mpmath.cos(y) ** 2), [[0, mpmath.pi], [0, 2 * mpmath.pi]], 30)
        assert abs(one.value - 2) <= one.error < 1e-31
        assert abs(two.value - 6 * mpmath.pi) <= two.error < 1e-30


def test_endpoint_singularity_falls_back_to_tanh_sinh():
    # Source: int_0^pi sin^p = sqrt(pi) Gamma((p+1)/2)/Gamma(p/2+1) (Beta function, common practice), p = 1/2:
    # sqrt(sin) has infinite slope at the ends, where Gauss-Legendre does not converge geometrically.
    with mpmath.workdps(50):
        expected = mpmath.sqrt(mpmath.pi) * mpmath.gamma(mpmath.mpf(3) / 4) / mpmath.gamma(mpmath.mpf(5) / 4)
    with mpmath.workdps(40):
        result = kq.quad(lambda x: mpmath.sqrt(mpmath.sin(x)), [[0, mpmath.pi]], 25)
    with mpmath.workdps(50):
        assert abs(result.value - expected) <= result.error < 1e-20
    assert kq._gauss_legendre(lambda x: mpmath.sqrt(mpmath.sin(x)), [[0, mpmath.pi]], 25) is None
