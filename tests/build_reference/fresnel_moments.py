"""Reference values for tests/build_fit.rs, computed with mpmath (50 digits).

X_k(a, b, c) = int_0^1 t^k cos(a t^2/2 + b t + c) dt,
Y_k(a, b, c) = int_0^1 t^k sin(a t^2/2 + b t + c) dt   (k = 0, 1, 2),
by mpmath.quad, and G1 clothoid fits (Bertolazzi & Frego 2015, the single
equation Y_0(2A, delta - A, phi0) = 0 solved with mpmath.findroot).

Run: python3 fresnel_moments.py  (mpmath version printed in the output).
"""
import mpmath as mp

mp.mp.dps = 50


def moment(k, a, b, c):
    f = lambda t: t**k * mp.expj(a * t * t / 2 + b * t + c)
    # Split [0, 1] so that oscillatory integrands are resolved.
    pts = mp.linspace(0, 1, 33)
    v = mp.quad(f, pts)
    return mp.re(v), mp.im(v)


def g1_fit(x0, y0, t0, x1, y1, t1):
    dx, dy = mp.mpf(x1) - x0, mp.mpf(y1) - y0
    r = mp.hypot(dx, dy)
    phi = mp.atan2(dy, dx)

    def norm(v):
        while v > mp.pi:
            v -= 2 * mp.pi
        while v <= -mp.pi:
            v += 2 * mp.pi
        return v

    p0, p1 = norm(t0 - phi), norm(t1 - phi)
    d = p1 - p0
    g = lambda A: moment(0, 2 * A, d - A, p0)[1]
    A = mp.findroot(g, 3 * (p0 + p1) if p0 + p1 != 0 else mp.mpf("1e-30"))
    L = r / moment(0, 2 * A, d - A, p0)[0]
    return (d - A) / L, 2 * A / L**2, L


print("// mpmath", mp.__version__)
cases = [
    (0.005, 0.3, 0.2), (-0.004, 7.0, -1.0), (0.5, -2.0, 0.7), (0.999, 5.0, 0.0),
    (1.5, 12.0, 2.0), (-3.0, -0.5, 0.1), (10.0, 3.0, -2.5), (-40.0, 25.0, 1.3),
    (0.0, 0.0, 0.0), (0.0, 9.0, 0.4), (2e-3, -30.0, 0.0),
]
print("const MOMENTS: [(f64, f64, f64, [f64; 6]); %d] = [" % len(cases))
for a, b, c in cases:
    vals = []
    for k in range(3):
        x, y = moment(k, mp.mpf(a), mp.mpf(b), mp.mpf(c))
        vals += [x, y]
    print("    (%r, %r, %r, [%s])," % (a, b, c, ", ".join(mp.nstr(v, 17) for v in vals)))
print("];")

fits = [
    (0.5, 0.0, 1.0, 0.5, 0.5, 1.0),
    (0.0, 0.0, 0.0, 10.0, 0.0, 1.2),
    (-3.0, 2.0, 2.5, 40.0, -7.0, -0.3),
    (0.0, 0.0, 1.5, 1.0, 0.0, -1.5),
    (5.0, 5.0, 0.0, -20.0, 5.0, 3.0),
]
print("const FITS: [([f64; 6], [f64; 3]); %d] = [" % len(fits))
for f in fits:
    k0, s, L = g1_fit(*[mp.mpf(v) for v in f])
    print("    (%r, [%s])," % (list(f), ", ".join(mp.nstr(v, 17) for v in (k0, s, L))))
print("];")
