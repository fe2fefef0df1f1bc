"""Reference for the pushdown test: the fitted value, its standard error and
the leverage x0ᵀ(XᵀX)⁻¹x0 of a new point for a fit with intercept of a NIST
StRD CSV (y first, then the predictors), computed in exact rational arithmetic with Python's
fractions module (independent of fitproof and of floating point), each
rounded once to a double. Usage: exact_prediction.py CSV X0_1 ... X0_k"""
import sys
from fractions import Fraction
from math import sqrt


def invert(a):
    p = len(a)
    m = [row[:] + [Fraction(int(i == j)) for j in range(p)] for i, row in enumerate(a)]
    for k in range(p):
        piv = next(i for i in range(k, p) if m[i][k] != 0)
        m[k], m[piv] = m[piv], m[k]
        t = m[k][k]
        m[k] = [v / t for v in m[k]]
        for i in range(p):
            if i != k and m[i][k] != 0:
                t = m[i][k]
                m[i] = [v - t * w for v, w in zip(m[i], m[k])]
    return [row[p:] for row in m]


def main():
    path = sys.argv[1]
    rows = [line.strip().split(",") for line in open(path)][1:]
    ys = [Fraction(r[0]) for r in rows]
    xs = [[Fraction(1)] + [Fraction(v) for v in r[1:]] for r in rows]
    p, n = len(xs[0]), len(rows)
    xtx = [[sum(x[i] * x[j] for x in xs) for j in range(p)] for i in range(p)]
    xty = [sum(x[i] * y for x, y in zip(xs, ys)) for i in range(p)]
    inv = invert(xtx)
    beta = [sum(inv[i][j] * xty[j] for j in range(p)) for i in range(p)]
    rss = sum(y * y for y in ys) - sum(b * v for b, v in zip(beta, xty))
    z = [Fraction(1)] + [Fraction(v) for v in sys.argv[2:]]
    h = sum(z[i] * inv[i][j] * z[j] for i in range(p) for j in range(p))
    fit = sum(b * v for b, v in zip(beta, z))
    print("fit %.17g" % float(fit))
    print("se_fit %.17g" % sqrt(float(rss / (n - p) * h)))
    print("leverage %.17g" % float(h))


main()
