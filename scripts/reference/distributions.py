#!/usr/bin/env python3
"""
Reference values for the engine's distribution functions
(tests/unit/stats/distributions/reference-values.json).

Computed with mpmath 1.3.0 at 50 significant digits (general-purpose
arbitrary-precision library), from the definitions, not from the engine's
algorithms:
- normal: mpmath.ncdf and its complement via mpmath.erfc;
- Student t, F, beta: the regularized incomplete beta function mpmath.betainc
  (hypergeometric series), each tail computed directly;
- chi-square: the regularized incomplete gamma function mpmath.gammainc;
- noncentral t: numerical integration (mpmath.quad, tanh-sinh) of its
  definition P(T > t) = E[Φ̄(t·S − δ)], S = √(V/ν), V chi-square on ν df,
  with breakpoints near S = 1 and t·S = δ; where a tail is below about 1e-30
  the integrand's peak can lie between them and the value is not trusted
  (the test leaves those out);
- quantiles: mpmath.findroot on log(tail) − log(p) at 50 digits.
Inputs are IEEE doubles taken exactly; outputs are printed to 25 significant
digits (the test reads them as the nearest double).

Run: python3 scripts/reference/distributions.py > tests/unit/stats/distributions/reference-values.json
"""
import json
import sys

import mpmath as mp

mp.mp.dps = 50
assert mp.__version__ == "1.3.0", mp.__version__


def s(v):
    return mp.nstr(mp.mpf(v), 25, min_fixed=1, max_fixed=0)


def betainc(a, b, x1, x2):
    """Regularized incomplete beta; 0 where mpmath cannot bound a value below 2^-4577 (far below 1e-300)."""
    try:
        return mp.betainc(a, b, x1, x2, regularized=True)
    except (ValueError, mp.libmp.libhyper.NoConvergence):
        return None


def normal_tails(z):
    z = mp.mpf(z)
    return mp.erfc(-z / mp.sqrt(2)) / 2, mp.erfc(z / mp.sqrt(2)) / 2


def beta_tails(x, a, b):
    x, a, b = mp.mpf(x), mp.mpf(a), mp.mpf(b)
    lower = betainc(a, b, 0, x)
    # the upper tail by symmetry, I_{1-x}(b, a): mpmath's betainc(a, b, x, 1) is a
    # difference and loses everything below 1e-50
    upper = betainc(b, a, 0, 1 - x)
    if lower is None or upper is None:
        print(f"beta skipped: x={x} a={a} b={b}", file=sys.stderr)
        return mp.mpf(0), mp.mpf(0)
    return lower, upper


def t_tails(t, df):
    t, df = mp.mpf(t), mp.mpf(df)
    if t == 0:
        return mp.mpf(0.5), mp.mpf(0.5)
    x = df / (df + t * t)
    # P(|T| > |t|) = I_x(df/2, 1/2); P(|T| < |t|) = I_{1-x}(1/2, df/2)
    two = betainc(df / 2, mp.mpf(0.5), 0, x)
    inner = betainc(mp.mpf(0.5), df / 2, 0, t * t / (df + t * t))
    if two is None or inner is None:
        # the hypergeometric series does not converge for very large df:
        # integrate the density instead (tanh-sinh quadrature)
        logc = mp.loggamma((df + 1) / 2) - mp.loggamma(df / 2) - mp.log(df * mp.pi) / 2
        dens = lambda u: mp.exp(logc - (df + 1) / 2 * mp.log1p(u * u / df))
        a = abs(t)
        outer = [a] + [a + k for k in (0.5, 1, 2, 4, 8, 16, 64, 256)] + [mp.inf]
        two = 2 * mp.quad(dens, outer)
        inner = 2 * mp.quad(dens, [0, a / 4, a / 2, 3 * a / 4, a])
    small = two / 2
    big = mp.mpf(0.5) + inner / 2
    return (small, big) if t < 0 else (big, small)


def f_tails(x, d1, d2):
    x, d1, d2 = mp.mpf(x), mp.mpf(d1), mp.mpf(d2)
    u = d1 * x / (d1 * x + d2)
    w = d2 / (d1 * x + d2)
    lower = betainc(d1 / 2, d2 / 2, 0, u)
    upper = betainc(d2 / 2, d1 / 2, 0, w)
    if lower is None or upper is None:
        print(f"F skipped: x={x} d1={d1} d2={d2}", file=sys.stderr)
        return mp.mpf(0), mp.mpf(0)
    return lower, upper


def chisq_tails(x, df):
    x, df = mp.mpf(x), mp.mpf(df)
    return (
        mp.gammainc(df / 2, 0, x / 2, regularized=True),
        mp.gammainc(df / 2, x / 2, mp.inf, regularized=True),
    )


def nct_tails(t, df, ncp):
    t, df, ncp = mp.mpf(t), mp.mpf(df), mp.mpf(ncp)
    h = df / 2
    logc = mp.log(2) + h * mp.log(h) - mp.loggamma(h)

    def dens(s):
        return mp.exp(logc + (df - 1) * mp.log(s) - h * s * s) if s > 0 else mp.mpf(0)

    width = 1 / mp.sqrt(2 * df)
    pts = [mp.mpf(0)]
    for k in (-12, -8, -6, -4, -3, -2, -1, 0, 1, 2, 3, 4, 6, 8, 12, 20, 40):
        p = 1 + k * width
        if p > pts[-1]:
            pts.append(p)
    if t != 0:
        c = ncp / t
        extra = [c + k / abs(t) for k in (-8, -4, -2, -1, 0, 1, 2, 4, 8)]
        pts = sorted(set(pts + [e for e in extra if e > 0]))
    pts.append(mp.inf)
    lower = mp.quad(lambda s: dens(s) * mp.ncdf(t * s - ncp), pts)
    upper = mp.quad(lambda s: dens(s) * mp.erfc((t * s - ncp) / mp.sqrt(2)) / 2, pts)
    return lower, upper


def quantile(tails, p, x0):
    """Solve tail(x) = p (lower tail when p <= 1/2, else upper) at 50 digits."""
    p = mp.mpf(p)
    if p <= 0.5:
        g = lambda x: mp.log(tails(x)[0]) - mp.log(p)
    else:
        g = lambda x: mp.log(tails(x)[1]) - mp.log(1 - p)
    # scipy's value (about 1e-10 relative) brackets the root within ±1e-7 relative.
    x0 = mp.mpf(x0)
    w = abs(x0) * mp.mpf("1e-7") if x0 != 0 else mp.mpf("1e-7")
    x = mp.findroot(g, (x0 - w, x0 + w), solver="illinois", verify=False)
    assert abs(g(x)) < mp.mpf(10) ** -35, (p, x, g(x))
    return x


def main():
    import scipy.stats as st  # starting values only

    out = {
        "source": "mpmath 1.3.0, 50 significant digits (general-purpose arbitrary-precision library); scripts/reference/distributions.py",
        "normal": {"cdf": [], "quantile": []},
        "studentT": {"cdf": [], "quantile": []},
        "f": {"cdf": [], "quantile": []},
        "chiSquare": {"cdf": [], "quantile": []},
        "beta": {"cdf": [], "quantile": []},
        "noncentralT": {"cdf": [], "quantile": []},
    }
    for z in [-38.0, -37.5, -30.0, -20.0, -10.0, -6.0, -5.0, -3.0, -1.959963984540054, -1.0, -0.5,
              -1e-3, 1e-8, 0.3, 1.0, 1.7, 2.0, 2.5, 4.0, 9.0]:
        lo, up = normal_tails(z)
        out["normal"]["cdf"].append({"z": z, "lower": s(lo), "upper": s(up)})
    for p in [1e-300, 1e-200, 1e-100, 1e-50, 1e-20, 1e-10, 1e-5, 0.001, 0.025, 0.1, 0.3, 0.45,
              0.5000001, 0.6, 0.8, 0.975, 0.999, 1 - 1e-10]:
        x0 = st.norm.ppf(p)
        out["normal"]["quantile"].append({"p": p, "x": s(quantile(normal_tails, p, x0))})

    dfs = [1.0, 2.0, 3.7, 10.0, 29.5, 100.0, 1000.0, 1e4, 1e5, 1e6]
    for df in dfs:
        for t in [-1e10, -1000.0, -30.0, -5.0, -2.0, -0.1, 1e-4, 0.7, 1.0, 2.0, 3.0, 10.0, 100.0]:
            lo, up = t_tails(t, df)
            if up == 0 or lo == 0 or up < mp.mpf(10) ** -300 or lo < mp.mpf(10) ** -300:
                continue
            out["studentT"]["cdf"].append({"t": t, "df": df, "lower": s(lo), "upper": s(up)})
        for p in [1e-300, 1e-100, 1e-20, 1e-8, 0.001, 0.025, 0.3, 0.7, 0.975, 0.999999]:
            x0 = st.t.ppf(p, df)
            if not (abs(x0) < 1e300):
                continue
            q = quantile(lambda x: t_tails(x, df), p, x0)
            out["studentT"]["quantile"].append({"p": p, "df": df, "x": s(q)})

    for d1, d2 in [(1.0, 1.0), (1.0, 10.0), (2.0, 2.0), (3.0, 7.5), (5.0, 15.0), (10.0, 100.0),
                   (30.0, 3.0), (100.0, 1000.0), (400.0, 2000.0)]:
        for x in [1e-6, 0.05, 0.5, 1.0, 2.0, 4.5, 20.0, 1e4]:
            lo, up = f_tails(x, d1, d2)
            if up < mp.mpf(10) ** -300 or lo < mp.mpf(10) ** -300:
                continue
            out["f"]["cdf"].append({"x": x, "d1": d1, "d2": d2, "lower": s(lo), "upper": s(up)})
        for p in [1e-10, 0.025, 0.5, 0.95, 0.975, 1 - 1e-8]:
            x0 = st.f.ppf(p, d1, d2)
            q = quantile(lambda x: f_tails(x, d1, d2), p, x0)
            out["f"]["quantile"].append({"p": p, "d1": d1, "d2": d2, "x": s(q)})

    for df in [1.0, 2.0, 3.0, 10.0, 50.5, 1000.0, 1e5]:
        for x in [1e-8, 0.1, 1.0, 3.84, 10.0, 60.0, 1000.0, 101000.0]:
            lo, up = chisq_tails(x, df)
            if up < mp.mpf(10) ** -300 or lo < mp.mpf(10) ** -300:
                continue
            out["chiSquare"]["cdf"].append({"x": x, "df": df, "lower": s(lo), "upper": s(up)})
        for p in [1e-12, 0.025, 0.5, 0.95, 0.975, 1 - 1e-10]:
            x0 = st.chi2.ppf(p, df)
            q = quantile(lambda x: chisq_tails(x, df), p, x0)
            out["chiSquare"]["quantile"].append({"p": p, "df": df, "x": s(q)})

    for a, b in [(0.5, 0.5), (1.0, 3.0), (2.5, 7.0), (10.0, 10.0), (50.0, 0.5), (200.0, 300.0),
                 (0.5, 5e5)]:
        for x in [1e-12, 1e-6, 0.01, 0.2, 0.4, 0.5, 0.75, 0.99, 0.999999]:
            lo, up = beta_tails(x, a, b)
            if up < mp.mpf(10) ** -300 or lo < mp.mpf(10) ** -300:
                continue
            out["beta"]["cdf"].append({"x": x, "a": a, "b": b, "lower": s(lo), "upper": s(up)})
        for p in [1e-10, 0.025, 0.5, 0.975]:
            x0 = st.beta.ppf(p, a, b)
            q = quantile(lambda x: beta_tails(x, a, b), p, x0)
            out["beta"]["quantile"].append({"p": p, "a": a, "b": b, "x": s(q)})

    for df in [] if "--no-noncentral" in sys.argv else [1.0, 4.0, 10.0, 30.0, 200.0]:
        for ncp in [-3.0, -1.0, 0.0, 1.0, 2.8, 10.0, 40.0]:
            for t in [-3.0, 0.5, 1.96, 3.0, 10.0, 50.0]:
                lo, up = nct_tails(t, df, ncp)
                if up < mp.mpf(10) ** -300 or lo < mp.mpf(10) ** -300:
                    continue
                out["noncentralT"]["cdf"].append(
                    {"t": t, "df": df, "ncp": ncp, "lower": s(lo), "upper": s(up)})
        for ncp, p in [(2.8, 0.975)] if df in (4.0, 30.0) else []:
            x0 = st.nct.ppf(p, df, ncp)
            q = quantile(lambda x: nct_tails(x, df, ncp), p, x0)
            out["noncentralT"]["quantile"].append({"p": p, "df": df, "ncp": ncp, "x": s(q)})
        print(f"noncentral t df={df} done", file=sys.stderr)

    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
