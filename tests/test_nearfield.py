import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0, mu_0
from scipy.integrate import quad
from scipy.special import roots_legendre, spherical_jn

from thzarray import Filament, Medium, Plasma, far_field
from thzarray.base.band import trapezoid_weights
from thzarray.field import _near_kernels
from thzarray.field.energy import spectral_energy
from thzarray.field.nearfield import (
    MIN_DISTANCE_WAVELENGTHS,
    field_at,
    fields_at,
    magnetic_field_at,
    spectral_fluence,
)
from thzarray.field.surfaces import far_field_departure, line_scan, plane_scan, sphere_scan

HUMID = Medium.air(relative_humidity=0.5)


def jackson_dipole(p, centre, x, freq, medium):
    """Jackson, Classical Electrodynamics 3rd ed., eq. 9.18 (SI, medium eps = n^2 eps0):
    E = 1/(4 pi eps) {k^2 (n x p) x n / r + [3 n (n.p) - p](1/r^3 - ik/r^2)} e^{ikr},
    H = (c k^2 / (4 pi n)) (n x p) e^{ikr}/r (1 - 1/(ikr)) (SI: H = w k/(4 pi) ...)."""
    w = 2 * np.pi * freq
    k = w * medium.n_thz / c
    eps = medium.n_thz**2 * epsilon_0
    rv = x - centre
    r = np.linalg.norm(rv, axis=-1)[..., None]
    n = rv / r
    ndp = np.sum(n * p, axis=-1)[..., None]
    e = (k**2 * np.cross(np.cross(n, p), n) / r
         + (3 * n * ndp - p) * (1 / r**3 - 1j * k / r**2)) * np.exp(1j * k * r) / (4 * np.pi * eps)
    h = w * k / (4 * np.pi) * np.cross(n, p) * np.exp(1j * k * r) / r * (1 - 1 / (1j * k * r))
    return e, h


@pytest.mark.parametrize("kr", [0.07, 1.0, 300.0])
@pytest.mark.parametrize("medium", [Medium.vacuum(), HUMID])
def test_short_filament_is_jackson_dipole(kr, medium, rng):
    freq = 0.3e12
    lam = c / (medium.n_thz * freq)
    k = 2 * np.pi / lam
    length = 1e-5 * lam
    fil = Filament(length, start=(0.001, 0.002, -0.003), axis=(0.3, -0.2, 1.0), delay=2e-12)
    a = np.asarray(fil.axis)
    centre = np.asarray(fil.start) + 0.5 * length * a
    dirs = rng.normal(size=(7, 3))
    dirs /= np.linalg.norm(dirs, axis=1)[:, None]
    pts = centre + (kr / k) * dirs
    w = 2 * np.pi * freq
    # the element's current I = exp(i w (delay + s n_g / c)) at its centre; p = i I L / w
    current = np.exp(1j * w * (fil.delay + 0.5 * length * medium.n_group / c))
    p = 1j * current * length / w * a
    e_ref, h_ref = jackson_dipole(p, centre, pts, freq, medium)
    near = fields_at(fil, freq, pts, medium)
    # neglected: (L/r)^2 and (k L)^2 corrections, both below 1e-6 here
    scale_e = np.linalg.norm(e_ref, axis=-1)[:, None]
    scale_h = np.linalg.norm(h_ref, axis=-1)[:, None]
    assert_allclose(near.e / scale_e, e_ref / scale_e, rtol=0, atol=2e-6)
    assert_allclose(near.h / scale_h, h_ref / scale_h, rtol=0, atol=2e-6)


def quad_field(fil, freq, x, medium):
    """The line integral of Jackson's eq. 9.18 along the column, done by scipy.integrate.quad
    on sub-intervals of about one phase turn (so quad never sees many oscillations)."""
    w = 2 * np.pi * freq
    k, kg = w * medium.n_thz / c, w * medium.n_group / c
    a, r0 = np.asarray(fil.axis), np.asarray(fil.start)

    def vec(s):
        rv = x - r0 - s * a
        r = np.linalg.norm(rv)
        n = rv / r
        v = (a - (n @ a) * n) / r + (3 * n * (n @ a) - a) * (1 / (k**2 * r**3) - 1j / (k * r**2))
        return fil.profile_values(s) * np.exp(1j * (kg * s + k * r)) * v

    d = x - r0
    z0 = min(max(d @ a, 0.0), fil.length)
    cuts = np.linspace(0.0, fil.length, int((kg + k) * fil.length / np.pi) + 2)
    if not fil.is_uniform:
        cuts = np.concatenate([cuts, fil._breaks])
    cuts = np.unique(np.concatenate([cuts, [z0]]))
    out = np.zeros(3, dtype=complex)
    for lo, hi in zip(cuts[:-1], cuts[1:]):
        # absolute tolerance 1e-12 of the sub-interval's integrand scale (quad cannot reach a
        # relative tolerance on a component that cancels)
        size = max(np.abs(vec(s)).max() for s in np.linspace(lo, hi, 5)) * (hi - lo)
        opts = dict(epsabs=1e-12 * size, epsrel=1e-11, limit=200)
        for comp in range(3):
            re = quad(lambda s: vec(s)[comp].real, lo, hi, **opts)[0]
            im = quad(lambda s: vec(s)[comp].imag, lo, hi, **opts)[0]
            out[comp] += re + 1j * im
    return 1j * w * mu_0 / (4 * np.pi) * fil.amplitude * np.exp(1j * w * fil.delay) * out


QUAD_CASES = [
    (Filament(0.1, start=(0.0, 0.01, 0.0), axis=(0.1, 0.0, 1.0), delay=1e-12), 0.3e12, HUMID),
    (Filament(0.05, profile=(np.array([0.0, 0.01, 0.03, 0.05]), np.array([0.2, 1.0, 0.8, 0.1]))),
     0.5e12, Medium.vacuum()),
]


@pytest.mark.slow
@pytest.mark.parametrize("fil, freq, medium", QUAD_CASES)
def test_near_field_matches_quad(fil, freq, medium, rng):
    lam = c / freq
    a = np.asarray(fil.axis)
    pts = []
    for _ in range(5):
        s = rng.uniform(-0.5, 1.5) * fil.length
        v = rng.normal(size=3)
        v -= (v @ a) * a
        v /= np.linalg.norm(v)
        rho = 10 ** rng.uniform(np.log10(lam / 20), np.log10(5 * fil.length))
        pts.append(np.asarray(fil.start) + s * a + rho * v)
    pts = np.array(pts)
    got = field_at(fil, freq, pts, medium)
    for x, e in zip(pts, got):
        ref = quad_field(fil, freq, x, medium)
        # accuracy target of the quadrature: 1e-6 relative to the field's magnitude
        assert_allclose(e, ref, rtol=1e-6, atol=1e-6 * np.abs(ref).max())


def test_dipole_sum_equals_potentials_with_line_charge(rng):
    """Independent construction: E = i w A - grad(phi) with the vector potential of the line
    current and the scalar potential of its charge lambda = (1/(i w)) dI/ds plus the end
    charges +I(0)/(i w) and -I(L)/(i w) (continuity with exp(-i w t); Jackson secs. 6.3, 9.1)."""
    medium = HUMID
    freq = 0.2e12
    w = 2 * np.pi * freq
    k, kg = w * medium.n_thz / c, w * medium.n_group / c
    eps = medium.n_thz**2 * epsilon_0
    length = 0.03
    fil = Filament(length, start=(0.0, 0.0, 0.01))
    r0, a = np.asarray(fil.start), np.asarray(fil.axis)

    def current(s):
        return np.exp(1j * kg * s)

    def green_grad(x, s):
        rv = x - r0 - s * a
        r = np.linalg.norm(rv)
        return np.exp(1j * k * r) / r, (1j * k - 1 / r) * np.exp(1j * k * r) / r * rv / r

    def cquad(fun, lo, hi):
        size = max(np.abs(fun(s)) for s in np.linspace(lo, hi, 5)) * (hi - lo)
        opts = dict(epsabs=1e-13 * size, epsrel=1e-12, limit=400)
        re = quad(lambda s: fun(s).real, lo, hi, **opts)[0]
        im = quad(lambda s: fun(s).imag, lo, hi, **opts)[0]
        return re + 1j * im

    pts = r0 + np.array([[0.004, 0.0, 0.01], [0.02, 0.01, -0.005], [0.0, 0.003, 0.035]])
    got = field_at(fil, freq, pts, medium)
    for x, e in zip(pts, got):
        cuts = np.linspace(0, length, 40)
        vec_a = sum(cquad(lambda s: current(s) * green_grad(x, s)[0], lo, hi)
                    for lo, hi in zip(cuts[:-1], cuts[1:])) * mu_0 / (4 * np.pi) * a
        lam = lambda s: 1j * kg * current(s) / (1j * w)  # noqa: E731  (1/(i w)) dI/ds
        grad_phi = np.zeros(3, dtype=complex)
        for comp in range(3):
            grad_phi[comp] = sum(cquad(lambda s: lam(s) * green_grad(x, s)[1][comp], lo, hi)
                                 for lo, hi in zip(cuts[:-1], cuts[1:]))
        grad_phi += (current(0.0) / (1j * w)) * green_grad(x, 0.0)[1]
        grad_phi -= (current(length) / (1j * w)) * green_grad(x, length)[1]
        grad_phi /= 4 * np.pi * eps
        ref = 1j * w * vec_a - grad_phi
        ref *= 1.0  # I(w) = 1 A s
        assert_allclose(e, ref, rtol=1e-7, atol=1e-7 * np.abs(ref).max())


def test_far_field_limit():
    """R exp(-ikR) E(R rhat) -> far_field(rhat) (Jackson sec. 9.1); the neglected Fresnel
    phase is below k D^2 / R and the induction term below 1/(kR), D the source extent."""
    medium = HUMID
    freq = 0.3e12
    fils = [Filament(0.01, start=(0.001, 0.0, 0.0), delay=0.0),
            Filament(0.008, start=(-0.002, 0.001, 0.002), axis=(0.1, 0.0, 1.0), delay=1e-12,
                     amplitude=0.6)]
    theta = np.linspace(0.05, 3.0, 9)
    phi = 0.3
    radius = 1e5
    k = 2 * np.pi * freq * medium.n_thz / c
    ff = far_field(fils, freq, theta, phi, medium).cartesian
    rhat = np.stack([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi),
                     np.cos(theta)], axis=-1)
    near = field_at(fils, freq, radius * rhat, medium) * radius * np.exp(-1j * k * radius)
    extent = 0.012
    bound = k * extent**2 / radius + 1 / (k * radius) + 1e-9
    assert_allclose(near, ff, rtol=0, atol=bound * np.abs(ff).max())
    assert k * extent**2 / radius < 1e-5


@pytest.mark.parametrize("radius", [0.05, 3.0])
def test_poynting_flux_through_sphere_equals_spectral_energy(radius):
    """Energy conservation (Poynting's theorem): 2 Re(E x H*) through any sphere enclosing
    the sources equals the far-field total dW/df of thzarray.field.farfield.spectral_energy."""
    medium = Medium.air(relative_humidity=0.3)
    freq = 0.2e12
    fils = [Filament(0.012, start=(0.001, 0.0, -0.006), axis=(0.2, 0.0, 1.0)),
            Filament(0.01, start=(-0.002, 0.002, -0.005), delay=2e-12, amplitude=0.5)]
    nodes, wts = roots_legendre(16)
    edges = np.linspace(-1, 1, 25)
    half = 0.5 * np.diff(edges)
    mu = (0.5 * (edges[1:] + edges[:-1])[:, None] + half[:, None] * nodes).ravel()
    wmu = (half[:, None] * wts).ravel()
    nphi = 48
    phi = 2 * np.pi * np.arange(nphi) / nphi
    th = np.arccos(mu)
    surf = sphere_scan(radius, th[::-1], phi)
    near = fields_at(fils, freq, surf.points, medium)
    flux = np.sum(spectral_fluence(near.e, near.h) * surf.normal, axis=-1)
    total = radius**2 * np.sum(flux * wmu[::-1, None]) * 2 * np.pi / nphi
    assert_allclose(total, spectral_energy(fils, freq, medium), rtol=1e-6)


def test_compiled_matches_numpy_twin(rng):
    fils = [Filament(0.2, start=(0.0, 0.01, 0.0), axis=(0.1, 0.0, 1.0), delay=1e-12),
            Filament(0.15, start=(0.01, 0.0, 0.02), profile=lambda s: np.sin(np.pi * s / 0.15)),
            Filament(0.1, start=(-0.01, 0.0, 0.0), amplitude=-0.4,
                     profile=(np.array([0.0, 0.04, 0.1]), np.array([0.5, 1.0, 0.2])))]
    pts = rng.normal(size=(6, 3)) * 0.2 + np.array([0.0, 0.0, 0.1])
    freq = np.array([0.05e12, 0.4e12])[:, None]
    a = fields_at(fils, freq, pts, HUMID)
    b = fields_at(fils, freq, pts, HUMID, compiled=False)
    # Same panel rule in both; only the order of floating-point operations differs. Phases
    # here reach ~2e3 rad (k r at 0.4 THz, r ~ 0.2 m), and one ulp of a phase of P rad is
    # ~1e-16 P, so 1e-11 is the honest bound (common practice, no source).
    assert_allclose(a.e, b.e, rtol=1e-11, atol=1e-12 * np.abs(a.e).max())
    assert_allclose(a.h, b.h, rtol=1e-11, atol=1e-12 * np.abs(a.h).max())


@pytest.mark.parametrize("theta", [0.0, 0.3, 0.9, 1.5, 3.1, 7.0, 11.5, 30.0, -4.2])
def test_kernel_bessel_matches_scipy(theta):
    out = np.empty(_near_kernels.NODES)
    _near_kernels._bessel(theta, _near_kernels.NODES, out)
    ref = spherical_jn(np.arange(_near_kernels.NODES), theta)
    assert_allclose(out, ref, rtol=1e-12, atol=1e-15)


def test_plasma_scales_field_by_current_spectrum():
    plasma = Plasma(electron_density=1e22, collision_rate=2e12)
    fil = Filament(0.1)
    pts = np.array([[0.05, 0.0, 0.2], [0.0, 0.02, -0.1]])
    freq = 0.5e12
    ref = field_at(fil, freq, pts, HUMID) * plasma.current_spectrum(freq, HUMID.n_group)
    assert_allclose(field_at(fil, freq, pts, HUMID, plasma), ref, rtol=1e-12)


def test_shapes_broadcast():
    fil = Filament(0.1)
    surf = plane_scan(0.3, np.linspace(-0.01, 0.01, 4), np.linspace(-0.02, 0.02, 3))
    freq = np.array([0.1e12, 0.2e12])[:, None, None]
    e = field_at(fil, freq, surf.points)
    assert e.shape == (2, 3, 4, 3)
    assert_allclose(e[1], field_at(fil, 0.2e12, surf.points), rtol=1e-13)
    assert magnetic_field_at(fil, 0.1e12, surf.points[0, 0]).shape == (3,)


def test_too_close_raises():
    fil = Filament(0.1)
    freq = 0.3e12
    lam = c / freq
    with pytest.raises(ValueError, match="wavelength"):
        field_at(fil, freq, [0.5 * MIN_DISTANCE_WAVELENGTHS * lam, 0.0, 0.05])
    with pytest.raises(ValueError, match="wavelength"):
        field_at(fil, freq, [0.0, 0.0, 0.1 + 0.5 * MIN_DISTANCE_WAVELENGTHS * lam])
    field_at(fil, freq, [2 * MIN_DISTANCE_WAVELENGTHS * lam, 0.0, 0.05])


@pytest.mark.parametrize("kwargs, match", [
    (dict(freq=0.0, points=[0.1, 0.0, 0.0]), "freq"),
    (dict(freq=1e12, points=[0.1, 0.0]), "points"),
    (dict(freq=[1e11, 2e11], points=np.ones((3, 3))), "broadcast"),
    (dict(freq=1e12, points=[np.nan, 0.0, 0.0]), "points"),
])
def test_bad_inputs(kwargs, match):
    with pytest.raises(ValueError, match=match):
        field_at(Filament(0.1), **kwargs)
    with pytest.raises(ValueError, match="filaments"):
        field_at([], 1e12, [0.1, 0.0, 0.0])


def test_surfaces_geometry():
    surf = plane_scan(2.0, [-1.0, 0.0, 1.0], [0.0, 0.5], normal=(0.0, 0.0, 2.0))
    assert surf.points.shape == (2, 3, 3)
    assert_allclose(surf.points[1, 2], [1.0, 0.5, 2.0])
    assert_allclose(surf.weights.sum(), 2.0 * 0.5)  # area of the sampled rectangle
    tilted = plane_scan(1.0, [0.0], [0.0, 1.0], normal=(1.0, 0.0, 0.0))
    u, v, n = tilted.axes
    assert_allclose(np.cross(u, v), n, atol=1e-15)
    sph = sphere_scan(2.0, np.linspace(0, np.pi, 201), np.linspace(0, 2 * np.pi, 101))
    # sphere area 4 pi R^2 (trapezoid, error O(h^2))
    assert_allclose(sph.weights.sum(), 4 * np.pi * 4.0, rtol=1e-4)
    assert_allclose(np.linalg.norm(sph.points, axis=-1), 2.0)
    ln = line_scan((0.0, 0.0, 1.0), (0.0, 3.0, 0.0), np.linspace(0.0, 2.0, 5))
    assert_allclose(ln.points[-1], [0.0, 2.0, 1.0])
    assert_allclose(trapezoid_weights([0.0, 1.0, 3.0]), [0.5, 1.5, 1.0])
    with pytest.raises(ValueError, match="x_axis"):
        plane_scan(1.0, [0.0], [0.0], normal=(0, 0, 1), x_axis=(0, 0, 5))
    with pytest.raises(ValueError, match="increasing"):
        line_scan((0, 0, 0), (1, 0, 0), [1.0, 0.0])


def test_far_field_departure_of_a_short_column():
    """For a point dipole (Jackson eq. 9.18) R^2|E|^2/|F|max^2 - sin^2(theta) is
    sin^2(theta)(1/x^4 - 1/x^2) + 4 cos^2(theta)(1/x^2 + 1/x^4), x = kR; on a grid that
    contains theta = 0 its maximum is 4 (1/x^2 + 1/x^4)."""
    freq = 0.3e12
    k = 2 * np.pi * freq / c
    fil = Filament(1e-8)
    theta = np.linspace(0.0, np.pi / 2, 31)
    dist = np.geomspace(2.0, 200.0, 13) / k
    dep = far_field_departure(fil, freq, dist, theta, tolerance=0.01)
    x = k * dist
    expected = 4 * (1 / x**2 + 1 / x**4)
    assert_allclose(dep.relative_difference, expected, rtol=1e-4)
    first = dist[np.flatnonzero(expected <= 0.01)[0]]
    assert dep.converged_distance == first


@pytest.mark.slow
def test_long_column_reaches_far_field_well_inside_fraunhofer_distance():
    """Finite-distance regions (docs/references.rst, derived): near the cone the quadratic phase is
    k z^2 sin^2(theta)/(2R), so the pattern settles at a few L, far inside 2 L^2/lambda."""
    freq = 0.3e12
    lam = c / freq
    fil = Filament(0.1)
    theta = np.linspace(0.02, 0.5, 60)
    dist = np.array([0.3, 1.0, 3.0, 10.0])
    dep = far_field_departure(fil, freq, dist, theta, tolerance=0.05)
    assert np.all(np.diff(dep.relative_difference) < 0)
    assert dep.converged_distance < 0.2 * (2 * fil.length**2 / lam)
