"""Randomness shared by the demo-site generators (demo-sites/*/generate.py).

Python standard library only, like the generators. Each generator puts this
folder on sys.path and imports from here, so it still runs from any working
directory.

Rng
    Uniform and normal deviates whose only source is
    random.Random(seed).random() (Mersenne Twister, stable across Python 3
    versions for an integer seed). Normal deviates come from an explicit
    Box-Muller transform instead of random.gauss()/normalvariate(), so the
    stream of draws, and with it every generated file, is fixed by the seed.

Spectral random fields
    Unit-variance stationary Gaussian fields made with the spectral (random
    cosine) method, with no linear algebra:
        f(p) = sqrt(2/N) * sum_i cos(k_i . (p - origin) / unit + phi_i)
    with phi_i uniform on [0, 2 pi) and the wavevectors k_i drawn from the
    spectral density of the covariance:

    matern1_field_2d   Matern covariance with smoothness 1 in 2D: k_i is a
                       bivariate Student-t with 2 degrees of freedom,
                       k = z / (scale * sqrt(w)), z ~ N(0, I2),
                       w ~ chi-square(2).
    exponential_field_3d
                       anisotropic exponential covariance exp(-r) in 3D: in
                       reduced units k is a trivariate Student-t with 1 degree
                       of freedom, k = z / |n|, z ~ N(0, I3), n ~ N(0, 1);
                       r is a lag rotated into the given axes and divided by
                       the scales (practical range / 3).

The generators differ in how they give the size of a field (soil-yard: the
Matern scale in metres; groundwater: a practical range turned into a scale
in km; ore-body: three practical ranges along three axes) and in the origin
and unit of length the cosines are evaluated in, so those are parameters
here. The order of the draws, and the arithmetic, are those the committed
demo data were made with: changing either changes the data.
"""

import math
import random


class Rng:
    """Uniform and normal deviates from random.Random(seed).random() only."""

    def __init__(self, seed):
        self._r = random.Random(seed)
        self._spare = None

    def uniform(self, a=0.0, b=1.0):
        return a + (b - a) * self._r.random()

    def index(self, n):
        """Integer in [0, n) from one uniform draw."""
        i = int(self._r.random() * n)
        return min(i, n - 1)

    def normal(self):
        """Standard normal deviate via the Box-Muller transform."""
        if self._spare is not None:
            z, self._spare = self._spare, None
            return z
        u1 = 1.0 - self._r.random()          # in (0, 1]: log() is safe
        u2 = self._r.random()
        r = math.sqrt(-2.0 * math.log(u1))
        theta = 2.0 * math.pi * u2
        self._spare = r * math.sin(theta)
        return r * math.cos(theta)


class SpectralField2D:
    """sqrt(2/N) * sum cos(kx * lx + ky * ly + phase) over the waves
    (kx, ky, phase), with (lx, ly) = ((x, y) - origin) / unit."""

    def __init__(self, waves, origin, unit=1.0):
        self.waves = waves
        self.x0, self.y0 = origin
        self.unit = unit
        self.norm = math.sqrt(2.0 / len(waves))

    def __call__(self, x, y):
        lx, ly = (x - self.x0) / self.unit, (y - self.y0) / self.unit
        total = 0.0
        for kx, ky, phase in self.waves:
            total += math.cos(kx * lx + ky * ly + phase)
        return self.norm * total


class SpectralField3D:
    """sqrt(2/N) * sum cos(kx * lx + ky * ly + kz * lz + phase) over the
    waves (kx, ky, kz, phase), with (lx, ly, lz) = ((x, y, z) - origin) / unit."""

    def __init__(self, waves, origin, unit=1.0):
        self.waves = waves
        self.x0, self.y0, self.z0 = origin
        self.unit = unit
        self.norm = math.sqrt(2.0 / len(waves))

    def __call__(self, x, y, z):
        lx = (x - self.x0) / self.unit
        ly = (y - self.y0) / self.unit
        lz = (z - self.z0) / self.unit
        total = 0.0
        for kx, ky, kz, phase in self.waves:
            total += math.cos(kx * lx + ky * ly + kz * lz + phase)
        return self.norm * total


def matern1_field_2d(rng, n_waves, scale, origin, unit=1.0):
    """Unit-variance 2D field, Matern covariance with smoothness 1.

    scale is the Matern scale in the field's unit of length (the correlation
    is about 0.05 at 3.99852 * scale); the field is evaluated at
    ((x, y) - origin) / unit. Draws, per wave: two normals, one uniform (the
    chi-square), one uniform (the phase).
    """
    waves = []
    for _ in range(n_waves):
        zx = rng.normal()
        zy = rng.normal()
        w = -2.0 * math.log(1.0 - rng.uniform())   # chi-square, 2 d.o.f.
        w = max(w, 1e-12)
        denom = scale * math.sqrt(w)
        phase = rng.uniform(0.0, 2.0 * math.pi)
        waves.append((zx / denom, zy / denom, phase))
    return SpectralField2D(waves, origin, unit)


def exponential_field_3d(rng, n_waves, axes, ranges, origin, unit=1.0):
    """Unit-variance 3D field with the anisotropic covariance exp(-r).

    axes are three orthonormal unit vectors (east, north, up) and ranges the
    practical ranges along them: r is a lag rotated into the axes and divided
    by the scales ranges / 3. The rotation and scaling are folded into each
    wavevector once, k . (R p) = (R^T k) . p. Draws, per wave: three normals,
    one normal (the Student-t divisor), one uniform (the phase).
    """
    scales = [r / 3.0 for r in ranges]
    rows = [tuple(c / s for c in axis) for axis, s in zip(axes, scales)]
    waves = []
    for _ in range(n_waves):
        z = (rng.normal(), rng.normal(), rng.normal())
        n = abs(rng.normal())
        n = max(n, 1e-9)
        phase = rng.uniform(0.0, 2.0 * math.pi)
        k = [c / n for c in z]
        kx = sum(k[i] * rows[i][0] for i in range(3))
        ky = sum(k[i] * rows[i][1] for i in range(3))
        kz = sum(k[i] * rows[i][2] for i in range(3))
        waves.append((kx, ky, kz, phase))
    return SpectralField3D(waves, origin, unit)
