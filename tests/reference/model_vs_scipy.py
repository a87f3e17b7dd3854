"""Matern model values of sillstone against scipy, computed at test time.

Outside references (Debian's python3-scipy and python3-numpy):
  - scipy.special.kv (modified Bessel function of the second kind K_nu) and
    scipy.special.gamma give the Matern correlation
        rho_nu(t) = 2^(1-nu) / Gamma(nu) * t^nu * K_nu(t)
    (Matern 1986; Stein 1999);
  - scipy.optimize.brentq solves rho_nu(t95) = 0.05, the contract's definition
    of the Matern practical range (PRODUCT.md, Conventions), so that
    t = t95 * h / range;
  - the anisotropic case rebuilds the reduced distance with numpy from the
    rotation convention written in docs/models.md, independently of the C++.
The C++ side is tests/reference/model_values.cpp (a test-only program).
Tolerance: 1e-10 relative (both sides compute in double precision; the
Bessel routines differ: libstdc++ vs the AMOS library in scipy).
Usage: model_vs_scipy.py PATH/TO/sillstone PATH/TO/sillstone_model_values
"""
import subprocess
import sys

import numpy as np
from scipy import optimize, special

RTOL = 1e-10
failures = []


def rho(nu, t):
    t = np.asarray(t, dtype=float)
    out = np.ones_like(t)
    pos = t > 0
    out[pos] = 2 ** (1 - nu) / special.gamma(nu) * t[pos] ** nu * special.kv(nu, t[pos])
    return out


def scale(nu):
    return optimize.brentq(lambda t: rho(nu, [t])[0] - 0.05, 1e-9, 500.0,
                           xtol=1e-300, rtol=8.9e-16, maxiter=500)


def ours(values_exe, spec, lags):
    text = "".join(f"{dx!r} {dy!r} {dz!r}\n" for dx, dy, dz in lags)
    out = subprocess.run([values_exe, spec], input=text, capture_output=True, text=True, check=True)
    return np.array([[float(v) for v in line.split()] for line in out.stdout.splitlines()])


def compare(name, got, ref):
    for i, (g, r) in enumerate(zip(got, ref)):
        if not np.isclose(g, r, rtol=RTOL, atol=0.0):
            failures.append(f"{name} [{i}]: sillstone {g!r} != scipy {r!r} "
                            f"(relative {abs(g - r) / abs(r):.2e})")


def main():
    values_exe = sys.argv[2]
    sill, a = 2.0, 250.0
    distances = np.array([0.5, 5.0, 37.5, 100.0, 249.0, 250.0, 400.0, 750.0, 1500.0])
    directions = np.array([[0.6, 0.8, 0.0], [0.0, 0.0, -1.0], [0.48, -0.6, 0.64]])
    lags = [tuple(h * directions[i % 3]) for i, h in enumerate(distances)]
    checked = 0
    for nu in (0.05, 0.3, 0.5, 1.0, 1.5, 2.5, 4.2, 10.0, 20.0):
        got = ours(values_exe, f"{sill} matern(range={a}, nu={nu})", lags)
        r = rho(nu, scale(nu) * distances / a)
        compare(f"nu={nu} correlation", got[:, 2], r)
        compare(f"nu={nu} covariance", got[:, 1], sill * r)
        compare(f"nu={nu} variogram", got[:, 0], sill * (1 - r))
        checked += 3 * len(lags)

    # Anisotropic: axes per docs/models.md (x east, y north, z up).
    az, dip, plunge, ratio, ratio2 = np.radians(30.0), np.radians(20.0), np.radians(10.0), 0.5, 0.3
    u1 = np.array([np.sin(az) * np.cos(dip), np.cos(az) * np.cos(dip), -np.sin(dip)])
    u2 = np.array([np.cos(az), -np.sin(az), 0.0])
    u3 = np.array([np.sin(az) * np.sin(dip), np.cos(az) * np.sin(dip), np.cos(dip)])
    v2 = np.cos(plunge) * u2 - np.sin(plunge) * u3
    v3 = np.sin(plunge) * u2 + np.cos(plunge) * u3
    rng = np.random.default_rng(20260301)
    lags = rng.uniform(-300, 300, size=(25, 3))
    reduced = np.sqrt((lags @ u1 / a) ** 2 + (lags @ v2 / (a * ratio)) ** 2
                      + (lags @ v3 / (a * ratio2)) ** 2)
    nu = 1.5
    got = ours(values_exe, f"{sill} matern(range={a}, nu={nu}, azimuth=30, ratio={ratio}, "
                           f"dip=20, plunge=10, ratio2={ratio2})", [tuple(l) for l in lags])
    compare("anisotropic covariance", got[:, 1], sill * rho(nu, scale(nu) * reduced))
    checked += len(lags)

    if failures:
        print("\n".join(failures))
        return 1
    print(f"matern values agree with scipy: {checked} values, relative tolerance {RTOL}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
