import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.constants import c, epsilon_0, mu_0
from scipy.integrate import quad
from scipy.interpolate import PchipInterpolator
from scipy.special import sici

from thzarray import Filament, Medium, Plasma, far_field
from thzarray.field.energy import source_spectral_energy, spectral_energy, total_energy

HUMID = Medium.air(relative_humidity=0.5)


def quad_radiation_vector(fil, freq, theta, phi, medium, profile=None):
    """Jackson secs. 9.1-9.2: F = i w mu0/(4 pi) [a - (r.a) r] exp(i(w t0 - k r.r0))
    * int_0^L w(s) exp(i u s) ds, the integral done by scipy.integrate.quad (QAWO)."""
    w = 2 * np.pi * freq
    kt = w * medium.n_thz / c
    r = np.array([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi), np.cos(theta)])
    a = np.asarray(fil.axis)
    u = w * medium.n_group / c - kt * (r @ a)
    prof = (lambda s: 1.0) if profile is None else profile
    opts = dict(limit=4000, epsabs=1e-13 * fil.length, epsrel=1e-11)
    if abs(u) > 1e-9:
        re = quad(prof, 0, fil.length, weight="cos", wvar=u, **opts)[0]
        im = quad(prof, 0, fil.length, weight="sin", wvar=u, **opts)[0]
    else:
        re, im = quad(prof, 0, fil.length, **opts)[0], 0.0
    integral = re + 1j * im
    vec = (a - (r @ a) * r) * fil.amplitude * np.exp(1j * (w * fil.delay - kt * (r @ fil.start)))
    return 1j * w * mu_0 / (4 * np.pi) * vec * integral


@pytest.mark.parametrize("medium", [Medium.vacuum(), Medium.air(), HUMID, Medium(1.0, 1.002)])
def test_closed_form_matches_quad(medium, rng):
    fil = Filament(0.37, start=(0.01, -0.02, 0.05), axis=(0.2, -0.1, 1.0), delay=3e-12,
                   amplitude=0.7)
    for _ in range(12):
        f, th, ph = rng.uniform(0.05e12, 2e12), rng.uniform(0, np.pi), rng.uniform(0, 2 * np.pi)
        got = far_field(fil, f, th, ph, medium).cartesian
        ref = quad_radiation_vector(fil, f, th, ph, medium)
        assert_allclose(got, ref, rtol=1e-9, atol=1e-9 * np.abs(ref).max())


def _peak_field(fil, freq, medium):
    theta = np.linspace(0, np.pi, 20001)
    return np.abs(far_field(fil, freq, theta, 0.0, medium).cartesian).max()


def test_callable_profile_matches_quad(rng):
    # Smooth profile: the cubic-spline interpolation error (5/384 h^4 max|w^(4)|) is far
    # below 1e-9 of the peak field with the default sampling; quad integrates the callable
    # itself. Deep in the side lobes both quad's accuracy and the spline's error are
    # relative to the peak, so the tolerance is too.
    length = 0.5
    prof = lambda s: np.exp(-((s - 0.22) / 0.09) ** 2) * (1 + 0.3 * np.sin(9 * s))  # noqa: E731
    fil = Filament(length, axis=(0, 0, 1), profile=prof)
    for _ in range(10):
        f, th = rng.uniform(0.05e12, 1.5e12), rng.uniform(0, np.pi)
        got = far_field(fil, f, th, 0.4, HUMID).cartesian
        ref = quad_radiation_vector(fil, f, th, 0.4, HUMID, profile=lambda s: float(prof(s)))
        assert_allclose(got, ref, rtol=1e-9, atol=1e-9 * _peak_field(fil, f, HUMID))


def test_sampled_profile_is_pchip_transform(rng):
    # Sampled data mean their monotone cubic (PCHIP) interpolant; compare with quad of that
    # interpolant, relative to the peak field.
    z = np.linspace(0, 0.2, 9)
    wv = np.array([0.0, 0.3, 0.9, 1.0, 1.0, 0.8, 0.5, 0.2, 0.0])
    fil = Filament(0.2, profile=(z, wv))
    interp = PchipInterpolator(z, wv)
    for _ in range(6):
        f, th = rng.uniform(0.1e12, 3e12), rng.uniform(0, np.pi)
        got = far_field(fil, f, th, 0.0).cartesian
        ref = quad_radiation_vector(fil, f, th, 0.0, Medium.vacuum(),
                                    profile=lambda s: float(interp(s)))
        assert_allclose(got, ref, rtol=1e-9, atol=1e-9 * _peak_field(fil, f, Medium.vacuum()))


def test_uniform_profile_equals_uniform_filament():
    # Consistency (common practice, no source): a profile w(s) = 1 is a uniform column.
    f = np.linspace(0.1e12, 2e12, 5)[:, None]
    th = np.linspace(0, np.pi, 41)
    a = far_field(Filament(0.3), f, th, 0.0, HUMID)
    b = far_field(Filament(0.3, profile=lambda s: np.ones_like(s)), f, th, 0.0, HUMID)
    assert_allclose(b.e_theta, a.e_theta, rtol=1e-10, atol=1e-12 * np.abs(a.e_theta).max())


def test_compiled_kernels_match_numpy_twins(rng):
    # The compiled kernels and their numpy twins evaluate the same formula (DEVELOPERS.md).
    fils = [Filament(rng.uniform(0.05, 1.0), start=rng.normal(0, 0.01, 3),
                     axis=rng.normal(0, 1, 3), delay=rng.normal(0, 1e-12),
                     amplitude=rng.uniform(0.5, 1.5)) for _ in range(5)]
    fils.append(Filament(0.2, profile=lambda s: 1 + s))
    f = rng.uniform(0.1e12, 2e12, 4)[:, None, None]
    th = rng.uniform(0, np.pi, 30)[:, None]
    ph = rng.uniform(0, 2 * np.pi, 20)
    a = far_field(fils, f, th, ph, HUMID)
    b = far_field(fils, f, th, ph, HUMID, compiled=False)
    scale = np.abs(a.e_theta).max()
    assert_allclose(a.e_theta, b.e_theta, rtol=1e-12, atol=1e-12 * scale)
    assert_allclose(a.e_phi, b.e_phi, rtol=1e-12, atol=1e-12 * scale)


def test_axis_and_back_directions_are_nulls_and_finite():
    # A z-directed line current has no field along its axis: E ~ r x (r x J) vanishes for
    # J parallel to r (Jackson sec. 9.2; the sin(theta) factor of docs/references.rst).
    freq = np.array([0.3e12, 1e12])[:, None]
    ff = far_field(Filament(1.0), freq, np.array([0.0, np.pi]), 0.0)
    peak = far_field(Filament(1.0), freq, np.linspace(0, np.pi, 2001), 0.0)
    assert np.all(np.isfinite(ff.e_theta))
    assert np.all(np.abs(ff.e_theta) < 1e-14 * np.abs(peak.e_theta).max())


def test_exact_phase_matching_gives_full_length():
    # At cos(theta) = n_g / n_T (humid air) the integral is exactly L (u = 0), so
    # |F| = w mu0 L sin(theta) / (4 pi) (docs/references.rst line-current formula, computed here).
    m = HUMID
    th = np.arccos(m.n_group / m.n_thz)
    f = 0.5e12
    ff = far_field(Filament(2.0), f, th, 0.0, m)
    expected = 2 * np.pi * f * mu_0 / (4 * np.pi) * np.sin(th) * 2.0
    assert_allclose(np.abs(ff.e_theta), expected, rtol=1e-12)


def test_pattern_is_radially_polarized_along_theta():
    # docs/references.rst: the field of an on-axis line current is along theta-hat (radial).
    ff = far_field(Filament(0.3), 0.3e12, np.linspace(0.01, 3.1, 50)[:, None],
                   np.linspace(0, 2 * np.pi, 13))
    assert np.all(np.abs(ff.e_phi) < 1e-14 * np.abs(ff.e_theta).max())


@given(st.floats(0.0, np.pi), st.floats(-10.0, 10.0), st.floats(0.0, 2 * np.pi))
def test_phi_symmetry_for_on_axis_filament(theta, phi1, phi2):
    # Common practice, no source: a column on the z axis radiates the same at every azimuth.
    fil = Filament(0.4, start=(0, 0, -0.1))
    a = far_field(fil, 0.4e12, theta, phi1, HUMID).magnitude_squared
    b = far_field(fil, 0.4e12, theta, phi2, HUMID).magnitude_squared
    assert_allclose(a, b, rtol=1e-10, atol=1e-30)


@given(st.floats(0.0, np.pi), st.floats(0.05e12, 2e12))
def test_minus_z_filament_mirrors_plus_z(theta, freq):
    # Mirror symmetry z -> -z: a column along -z radiates at theta what one along +z
    # radiates at pi - theta.
    up_fil, down_fil = Filament(0.3, axis=(0, 0, 1)), Filament(0.3, axis=(0, 0, -1))
    up = far_field(up_fil, freq, np.pi - theta, 0.0, HUMID).magnitude_squared
    down = far_field(down_fil, freq, theta, 0.0, HUMID).magnitude_squared
    peak = far_field(up_fil, freq, np.linspace(0, np.pi, 721), 0.0, HUMID).magnitude_squared.max()
    assert_allclose(down, up, rtol=1e-9, atol=1e-12 * peak)


@given(st.floats(-5e-12, 5e-12), st.floats(0.1e12, 2e12), st.floats(0.0, np.pi))
def test_delay_is_a_phase_factor(delay, freq, theta):
    # Fourier shift theorem with the exp(-i w t) convention: a source delayed by tau
    # contributes exp(+i w tau) (common practice, no source).
    a = far_field(Filament(0.2), freq, theta, 1.0).e_theta
    b = far_field(Filament(0.2, delay=delay), freq, theta, 1.0).e_theta
    assert_allclose(b, a * np.exp(2j * np.pi * freq * delay), rtol=1e-9, atol=1e-25)


def test_rotation_invariance(rng):
    # Isotropy of free space (common practice, no source): rotating the source and the
    # direction together leaves the intensity unchanged.
    from scipy.spatial.transform import Rotation

    rot = Rotation.from_rotvec(rng.normal(size=3)).as_matrix()
    fil = Filament(0.3, start=(0.01, 0.0, 0.0), axis=(0, 0, 1))
    fil_r = Filament(0.3, start=tuple(rot @ fil.start), axis=tuple(rot @ fil.axis))
    th, ph = rng.uniform(0, np.pi, 20), rng.uniform(0, 2 * np.pi, 20)
    r = np.stack([np.sin(th) * np.cos(ph), np.sin(th) * np.sin(ph), np.cos(th)], -1) @ rot.T
    th_r, ph_r = np.arccos(np.clip(r[:, 2], -1, 1)), np.arctan2(r[:, 1], r[:, 0])
    a = far_field(fil, 0.5e12, th, ph, HUMID).magnitude_squared
    b = far_field(fil_r, 0.5e12, th_r, ph_r, HUMID).magnitude_squared
    assert_allclose(b, a, rtol=1e-9, atol=1e-12 * a.max())


def test_sum_is_coherent_and_linear():
    # Superposition: Maxwell's equations are linear (Jackson sec. 9.1).
    f1, f2 = Filament(0.2), Filament(0.3, start=(0.002, 0, 0), delay=1e-12, amplitude=-0.5)
    a = far_field([f1, f2], 0.7e12, 0.2, 0.3).cartesian
    b = far_field(f1, 0.7e12, 0.2, 0.3).cartesian + far_field(f2, 0.7e12, 0.2, 0.3).cartesian
    assert_allclose(a, b, rtol=1e-12)


def test_broadcast_shapes():
    ff = far_field(Filament(0.1), np.array([1e11, 2e11])[:, None, None],
                   np.linspace(0, 1, 3)[:, None], np.linspace(0, 1, 4))
    assert ff.shape == (2, 3, 4)
    assert ff.cartesian.shape == (2, 3, 4, 3)
    assert ff.energy_density.shape == (2, 3, 4)


def test_vacuum_energy_matches_balanis_long_wire():
    # Balanis, Antenna Theory, traveling-wave long wire (v = c): the angular integral is
    # (4/k^2) [gamma + ln(2kL) - Ci(2kL) - 1 + sin(2kL)/(2kL)]
    # (= 1.415 + ln(kL/pi) - Ci(2kL) + sin(2kL)/(2kL), his form).
    fil = Filament(0.25)
    freq = np.array([0.1e12, 0.45e12, 1.3e12])
    k = 2 * np.pi * freq / c
    kl = k * fil.length
    bracket = np.euler_gamma + np.log(2 * kl) - sici(2 * kl)[1] - 1 + np.sin(2 * kl) / (2 * kl)
    expected = (2 * epsilon_0 * c * (2 * np.pi * freq * mu_0 / (4 * np.pi)) ** 2
                * 2 * np.pi * (4 / k**2) * bracket)
    assert_allclose(source_spectral_energy(fil, freq), expected, rtol=1e-10)
    assert_allclose(spectral_energy(fil, freq), expected, rtol=1e-9)


@pytest.mark.parametrize("medium", [HUMID, Medium.air(), Medium(1.0, 1.003)])
def test_sphere_integral_equals_source_space_power(medium):
    # Two independent routes to dW/df: integrating the angular density over the sphere and
    # the source-space double integral with the 8 pi j1(x)/x kernel.
    fil = Filament(0.6, start=(0.01, 0.02, -0.3), axis=(0.3, 0.0, 1.0), amplitude=1.3)
    freq = np.array([0.2e12, 0.9e12])
    assert_allclose(spectral_energy(fil, freq, medium), source_spectral_energy(fil, freq, medium),
                    rtol=1e-8)


def test_total_energy_with_plasma_is_absolute():
    # Energy per pulse in joules: trapezoid of dW/df over the band (checked against the
    # same sum done here by hand from the source-space route).
    plasma = Plasma(electron_density=1e22, collision_rate=2e12)
    fil = Filament(0.1)
    freq = np.linspace(0.05e12, 4e12, 14)
    got = total_energy(fil, freq, HUMID, plasma)
    ref = np.trapezoid(source_spectral_energy(fil, freq, HUMID, plasma), freq)
    assert_allclose(got, ref, rtol=1e-7)
    assert 0 < got < 1e-3  # a 1e-3 J pulse cannot radiate more than its energy


@pytest.mark.parametrize("args, name", [
    (dict(freq=0.0), "freq"),
    (dict(freq=-1e12), "freq"),
    (dict(theta=3.5), "theta"),
    (dict(theta=-0.1), "theta"),
    (dict(phi=np.nan), "phi"),
    (dict(freq=np.inf), "freq"),
])
def test_far_field_rejects_bad_input(args, name):
    kw = dict(freq=1e12, theta=0.1, phi=0.0)
    kw.update(args)
    with pytest.raises(ValueError, match=name) as exc:
        far_field(Filament(0.1), **kw)
    assert "allowed" in str(exc.value)


def test_far_field_rejects_bad_sources():
    with pytest.raises(ValueError, match="filaments"):
        far_field([], 1e12, 0.1, 0.0)
    with pytest.raises(ValueError, match="filaments"):
        far_field([Filament(0.1), "x"], 1e12, 0.1, 0.0)
    with pytest.raises(ValueError, match="broadcast"):
        far_field(Filament(0.1), np.ones(3) * 1e12, np.ones(4), 0.0)


@pytest.mark.parametrize("layout", ["ftp", "tpf", "pft", "tp", "f_only", "pointwise"])
def test_outer_grid_path_matches_pointwise(layout, rng):
    # The outer-grid kernel must give what the pointwise kernel gives on the broadcast grid,
    # whatever axis order the caller chose. Sizes keep every phase below ~100 rad: one ulp of
    # a phase of P rad is ~1e-16 P, so agreement to 1e-12 needs P << 1e4 (common practice,
    # no source: floating-point rounding of large phases).
    fils = [Filament(0.02, start=(0.001, 0, 0), axis=(0.1, 0.2, 1), delay=1e-12),
            Filament(0.035, start=(-0.002, 0.001, 0.003), amplitude=0.5)]
    f = np.array([0.1e12, 0.2e12, 0.3e12])
    t = np.linspace(0.01, 0.5, 5)
    p = np.linspace(0, 2 * np.pi, 4)
    shaped = {
        "ftp": (f[:, None, None], t[:, None], p),
        "tpf": (f, t[:, None, None], p[:, None]),
        "pft": (f[:, None], t, p[:, None, None]),
        "tp": (0.5e12, t[:, None], p),
        "f_only": (f, 0.2, 1.0),
        "pointwise": (rng.uniform(0.1e12, 0.3e12, 7), rng.uniform(0, 3, 7), rng.uniform(0, 6, 7)),
    }[layout]
    got = far_field(fils, *shaped, HUMID)
    bf, bt, bp = np.broadcast_arrays(*[np.asarray(x, float) for x in shaped])
    ref = far_field(fils, bf.ravel(), bt.ravel(), bp.ravel(), HUMID)  # 1-D: pointwise path
    assert got.shape == bf.shape
    assert_allclose(got.e_theta.ravel(), ref.e_theta, rtol=1e-12, atol=1e-14 * abs(ref.e_theta).max())
    assert_allclose(got.e_phi.ravel(), ref.e_phi, rtol=1e-12, atol=1e-14 * abs(ref.e_theta).max())
    twin = far_field(fils, *shaped, HUMID, compiled=False)
    assert_allclose(twin.e_theta, got.e_theta, rtol=1e-12, atol=1e-14 * abs(ref.e_theta).max())


def test_frequency_recurrence_matches_direct_evaluation(rng):
    # Equally spaced frequencies take the rotation-recurrence path of the grid kernel; it
    # must agree with the direct pointwise kernel over many steps (re-seeded every 32).
    fils = [Filament(0.02, start=(0.001, 0, 0), axis=(0.1, 0.2, 1), delay=0.3e-12),
            Filament(0.03, start=(-0.002, 0.001, 0.003), amplitude=0.5)]
    f = np.linspace(0.05e12, 0.3e12, 201)
    t = np.linspace(0.0, 1.5, 7)
    p = np.linspace(0, 2 * np.pi, 5)
    got = far_field(fils, f[:, None, None], t[:, None], p, HUMID)
    bf, bt, bp = np.broadcast_arrays(f[:, None, None], t[:, None], p)
    ref = far_field(fils, bf.ravel(), bt.ravel(), bp.ravel(), HUMID)
    scale = np.abs(ref.e_theta).max()
    assert_allclose(got.e_theta.ravel(), ref.e_theta, rtol=1e-12, atol=1e-13 * scale)
    assert_allclose(got.e_phi.ravel(), ref.e_phi, rtol=1e-12, atol=1e-13 * scale)
