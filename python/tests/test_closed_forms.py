"""Closed forms, each with its source: a zonal degree-2 term, a geocentric axial dipole and the
C20 term of a gravity potential."""

import numpy as np

import kugel


def _single(lmax, l, m, value, **metadata):
    C = np.zeros((lmax + 1, lmax + 1))
    C[l, m] = value
    return kugel.Model(C, np.zeros_like(C), **metadata)


def test_zonal_degree_two_is_sqrt5_p2():
    # 4π-normalised P̄_20(cos θ) = sqrt(5) (3 cos²θ − 1)/2 (common practice; Heiskanen &
    # Moritz 1967, §1-14, fully normalised functions)
    grid = kugel.synthesize(_single(8, 2, 0, 1.0, reference_radius_m=1.0), grid=5)
    t = np.cos(np.radians(90.0 - grid.lat.values))[:, None]
    expected = np.sqrt(5.0) * (3 * t ** 2 - 1) / 2 * np.ones(grid.shape[1])
    np.testing.assert_allclose(grid.values, expected, atol=1e-14)
    # Schmidt and unnormalised P_2 are the plain Legendre polynomial (common practice)
    for norm in ("schmidt", "unnormalized"):
        model = _single(8, 2, 0, 1.0, normalization=norm, reference_radius_m=1.0)
        grid = kugel.synthesize(model, grid=5)
        np.testing.assert_allclose(grid.values, (3 * t ** 2 - 1) / 2 * np.ones(grid.shape[1]),
                                   atol=1e-14)


def test_axial_dipole_field():
    # Geocentric axial dipole g10 (Schmidt, nT, a = R): X = −g10 sin θ, Z = −2 g10 cos θ at
    # r = a, falling off as (a/r)^3 (Merrill, McElhinny & McFadden 1996, "The Magnetic Field of
    # the Earth", §2.3; common practice)
    g10 = -29_404.8
    a = 6_371_200.0
    model = _single(3, 1, 0, g10, normalization="schmidt", reference_radius_m=a, units="nT")
    lat = np.array([-60.0, -10.0, 0.0, 35.0, 80.0])
    lon = np.array([0.0, 45.0, 190.0, 300.0, 10.0])
    theta = np.radians(90.0 - lat)
    out = kugel.evaluate(model, lat, lon, 0.0, quantity="x,z")
    np.testing.assert_allclose(out["x"], -g10 * np.sin(theta), rtol=1e-13, atol=1e-9)
    np.testing.assert_allclose(out["z"], -2 * g10 * np.cos(theta), rtol=1e-13, atol=1e-9)
    h_km = 450.0
    up = kugel.evaluate(model, lat, lon, h_km, quantity="z")
    np.testing.assert_allclose(up, -2 * g10 * np.cos(theta) * (a / (a + h_km * 1e3)) ** 3,
                               rtol=1e-13, atol=1e-9)


def test_c20_gravity():
    # T = (GM/r)(R/r)^2 C̄20 P̄20(cos θ); gravity disturbance δg = −∂T/∂r = 3 T/r and anomaly
    # Δg = −∂T/∂r − 2T/r = T/r in the spherical approximation (Heiskanen & Moritz 1967,
    # eqs. 2-151 and 2-148); 1 mGal = 1e-5 m s⁻²
    gm = 3.986004418e14
    R = 6_378_137.0
    c20 = -4.84165371736e-4
    model = _single(2, 2, 0, c20, reference_radius_m=R, gm_m3_s2=gm)
    lat = np.array([-90.0, -45.0, 0.0, 30.0, 90.0])
    lon = np.zeros(5)
    h_km = 300.0
    r = R + h_km * 1e3
    t = np.cos(np.radians(90.0 - lat))
    T = gm / r * (R / r) ** 2 * c20 * np.sqrt(5.0) * (3 * t ** 2 - 1) / 2
    out = kugel.evaluate(model, lat, lon, h_km,
                         quantity="potential,gravity-disturbance,gravity-anomaly")
    np.testing.assert_allclose(out["potential"], T, rtol=1e-13)
    np.testing.assert_allclose(out["gravity-disturbance"], 3 * T / r / 1e-5, rtol=1e-12)
    np.testing.assert_allclose(out["gravity-anomaly"], T / r / 1e-5, rtol=1e-12)
