#!/usr/bin/python3
"""Writes the open datasets under testdata/open and the reference values in
testdata/reference/fits.json, from general-purpose libraries:

  statsmodels (Logit)     coefficients, standard errors, z, p, confidence
                          intervals, log-likelihoods, AIC, BIC
  scipy (stats.chi2)      chi-square tails of the likelihood-ratio and
                          Hosmer-Lemeshow tests
  numpy                   the design matrices, built here independently of
                          riskaudit from the formulas of the cited papers
  scipy (integrate,       the sample-size criteria over the exact normal
         optimize)        density, and the normal linear predictor of a
                          given event proportion and C-statistic
                          (samplesize.json)
  openpyxl                the Excel workbooks of xlsx/ (make_workbooks.py)
  numpy                   the monitoring charts (monitor.json): VLAD, the
                          risk-adjusted CUSUM and EWMA paths transcribed
                          from the papers, and the CUSUM's in-control ARL
                          by the Markov chain of Brook & Evans (1972)

Run it with Debian's python3 (python3-statsmodels, python3-sklearn,
python3-openpyxl); .ci/run
regenerates every file and fails on any difference from the committed copy.
Numbers are rounded to 12 significant digits so that the last bits of a
BLAS build cannot make the files differ.
"""
import json
import os
import sys

import numpy as np
import scipy.stats
import statsmodels.api as sm
from sklearn.datasets import load_breast_cancer
from statsmodels.datasets import spector

HERE = os.path.dirname(os.path.abspath(__file__))
OPEN = os.path.join(HERE, "..", "open")


def r12(x):
    """Round to 12 significant digits (plain floats for JSON); values below
    1e-12 in magnitude, which are rounding noise here, become 0."""
    if isinstance(x, (list, tuple, np.ndarray)):
        return [r12(v) for v in x]
    x = float(x)
    if abs(x) < 1e-12:  # rounding noise around zero
        return 0.0
    if not np.isfinite(x):
        return x
    return float(f"{x:.12g}")


def write_open_data():
    """Copies the datasets that Debian's packages carry into CSV files."""
    d = spector.load_pandas().data
    with open(os.path.join(OPEN, "spector.csv"), "w") as f:
        f.write("gpa,tuce,psi,grade\n")
        for _, r in d.iterrows():
            f.write(f"{r.GPA:g},{int(r.TUCE)},{int(r.PSI)},{int(r.GRADE)}\n")
    bc = load_breast_cancer()
    cols = ["mean radius", "mean texture", "mean smoothness", "mean concave points", "mean area"]
    idx = [list(bc.feature_names).index(c) for c in cols]
    with open(os.path.join(OPEN, "wdbc.csv"), "w") as f:
        f.write(",".join(c.replace(" ", "_") for c in cols) + ",diagnosis\n")
        for row, t in zip(bc.data, bc.target):
            vals = ",".join(repr(float(row[i])) for i in idx)
            f.write(f"{vals},{'M' if t == 0 else 'B'}\n")


def load_csv(name):
    import csv
    with open(os.path.join(OPEN, name)) as f:
        rows = list(csv.DictReader(f))
    return rows


def load_rows(path):
    import csv
    with open(path) as f:
        return list(csv.DictReader(f))


def rcs(x, knots, norm=True):
    """Restricted cubic spline basis (Durrleman & Simon 1989), written out
    from the paper's truncated-power formula; columns x, x', x'', ..."""
    t = np.asarray(knots, float)
    k = len(t)
    pos3 = lambda u: np.where(u > 0, u, 0.0) ** 3
    cols = [x]
    div = (t[-1] - t[0]) ** 2 if norm else 1.0
    for j in range(k - 2):
        v = (pos3(x - t[j])
             - pos3(x - t[k - 2]) * (t[k - 1] - t[j]) / (t[k - 1] - t[k - 2])
             + pos3(x - t[k - 1]) * (t[k - 2] - t[j]) / (t[k - 1] - t[k - 2]))
        cols.append(v / div)
    return cols


def hosmer_lemeshow(y, p, g, development):
    """The grouping rule of riskaudit's issue 2, transcribed directly: sort
    stably by risk, group k starts at floor(k*n/g), a start inside a run of
    ties moves forward past it, empty groups are dropped."""
    n = len(p)
    order = np.argsort(p, kind="stable")
    ps = p[order]
    starts = []
    for k in range(g):
        s = k * n // g
        while 0 < s < n and ps[s] == ps[s - 1]:
            s += 1
        if starts and s <= starts[-1]:
            continue
        starts.append(s)
    starts.append(n)
    stat, groups = 0.0, 0
    for a, b in zip(starts[:-1], starts[1:]):
        if a >= b:
            continue
        rows = order[a:b]
        o, e, m = y[rows].sum(), p[rows].sum(), b - a
        stat += (o - e) ** 2 / (e * (1 - e / m))
        groups += 1
    df = groups - 2 if development else groups
    return {"statistic": r12(stat), "df": df, "groups": groups,
            "p": r12(scipy.stats.chi2.sf(stat, df))}


def fit(name, X, y, terms):
    res = sm.Logit(y, X).fit(method="newton", tol=1e-12, maxiter=100, disp=False)
    ci = np.asarray(res.conf_int(alpha=0.05))
    n, k = X.shape
    llf, llnull = res.llf, res.llnull
    cs = 1 - np.exp(2 * (llnull - llf) / n)
    nagelkerke = cs / (1 - np.exp(2 * llnull / n))
    p = res.predict(X)
    out = {
        "n": int(n), "events": int(y.sum()),
        "terms": [{"term": t, "coef": r12(b), "se": r12(s), "z": r12(z), "p": r12(pv),
                   "odds_ratio": r12(np.exp(b)), "or_ci": r12(np.exp(c))}
                  for t, b, s, z, pv, c in zip(terms, res.params, res.bse, res.tvalues, res.pvalues, ci)],
        "neg2ll": r12(-2 * llf), "null_neg2ll": r12(-2 * llnull),
        "lr_chi2": r12(res.llr), "lr_df": int(res.df_model), "lr_p": r12(res.llr_pvalue),
        "aic": r12(res.aic), "bic": r12(-2 * llf + np.log(n) * k),
        "nagelkerke_r2": r12(nagelkerke),
        "hosmer_lemeshow": hosmer_lemeshow(y, p, 10, True),
        "hosmer_lemeshow_external": hosmer_lemeshow(y, p, 10, False),
    }
    return out, res


def firth_fit(X, y, fixed=None, starts=None):
    """Maximises Firth's penalised log-likelihood ll + 1/2 log det X'WX
    over the coefficients not in fixed, a map from index to the value it is
    held at (the penalty still uses every column). Returns the estimate and
    the penalised log-likelihood. The penalised likelihood need not be
    concave, and with a coefficient held far from its estimate it can have
    two local maxima in the others, so the maximisation runs from each of
    starts (full coefficient vectors; default: zero) and keeps the
    highest (a start from which the information matrix becomes singular
    is passed over)."""
    p = X.shape[1]
    best = None
    for start in (starts if starts is not None else [np.zeros(p)]):
        try:
            b, pl = firth_fit_from(X, y, fixed or {}, np.asarray(start, float))
        except np.linalg.LinAlgError:
            continue  # a start from which the information became singular
        if np.isfinite(pl) and (best is None or pl > best[1]):
            best = (b, pl)
    return best


def firth_fit_from(X, y, fixed, start, climb_only=False):
    """firth_fit from one start: the better of two local searches, BFGS
    then modified-score steps, and modified-score steps alone, which with
    their step halving climb monotonically to the maximum whose basin
    holds the start (BFGS's line search can leave it); with climb_only,
    the climb alone."""
    import scipy.optimize
    p = X.shape[1]
    free = [j for j in range(p) if j not in fixed]

    def negpen(b):
        eta = X @ b
        ll = np.sum(y * eta - np.logaddexp(0, eta))
        mu = 1 / (1 + np.exp(-eta))
        info = X.T @ (X * (mu * (1 - mu))[:, None])
        return -(ll + 0.5 * np.linalg.slogdet(info)[1])

    def full(bf):
        b = np.zeros(p)
        for j, v in fixed.items():
            b[j] = v
        b[free] = bf
        return b

    def polish(b):
        # Modified-score steps I^-1 X'(y - mu + h(1/2 - mu)) (Firth 1993,
        # eq. 8 for logistic models; Heinze & Schemper 2002), restricted to
        # the free coefficients and halved while the penalised
        # log-likelihood falls. After BFGS, which stops within about 1e-6
        # of the optimum at a point that depends on the numpy build, they
        # take it to machine precision so that the reference is the same
        # on every machine. Under separation they converge only linearly,
        # so they may take many more than the few a well-posed fit needs;
        # they stop when the step is below 1e-15 of the coefficients'
        # size, or does not shrink any more (rounding).
        last = np.inf
        f = negpen(b)
        for _ in range(5000):
            eta = X @ b
            mu = 1 / (1 + np.exp(-eta))
            w = mu * (1 - mu)
            info = X.T @ (X * w[:, None])
            h = np.einsum("ij,jk,ik->i", X * w[:, None], np.linalg.inv(info), X)
            score = X.T @ (y - mu + h * (0.5 - mu))
            step = np.zeros(p)
            step[free] = np.linalg.solve(info[np.ix_(free, free)], score[free])
            for _ in range(30):
                fn = negpen(b + step)
                if np.isfinite(fn) and fn <= f + 1e-13 * (1 + abs(f)):
                    break
                step = step / 2
            b, f = b + step, fn
            size = np.max(np.abs(step)) / max(1.0, np.max(np.abs(b)))
            if size < 1e-15 or (size < 1e-13 and size >= last):
                break
            last = size
        return b

    if climb_only:
        b = polish(full(start[free]))
        return b, -negpen(b)
    bf = start[free].copy()
    for _ in range(3):  # restart from the optimum to polish it
        bf = scipy.optimize.minimize(lambda v: negpen(full(v)), bf, method="BFGS",
                                     options={"gtol": 1e-11, "maxiter": 10000}).x
    best = None
    for b in (polish(full(bf)), polish(full(start[free]))):
        pl = -negpen(b)
        if np.isfinite(pl) and (best is None or pl > best[1]):
            best = (b, pl)
    return best


def firth(X, y, terms):
    """The Firth fit, its Wald SEs, and for each coefficient the penalised
    likelihood-ratio test of Heinze & Schemper (2002) (the fit with that
    coefficient held at 0, 2(pl - pl0) on 1 df) and the 95% profile
    penalised-likelihood interval (where 2(pl - pl(b)) reaches the chi-square
    0.95 quantile on 1 df)."""
    b, pl = firth_fit(X, y)
    eta = X @ b
    mu = 1 / (1 + np.exp(-eta))
    info = X.T @ (X * (mu * (1 - mu))[:, None])
    se = np.sqrt(np.diag(np.linalg.inv(info)))
    import scipy.optimize
    target = pl - scipy.stats.chi2.ppf(0.95, 1) / 2
    out = []
    def moved(j, v):
        """The estimate with coefficient j moved to v."""
        m = b.copy()
        m[j] = v
        return m

    def zero(j, v):
        """Zero but coefficient j, at v."""
        z = np.zeros(len(b))
        z[j] = v
        return z

    def scaled(j, v):
        """The estimate scaled so that coefficient j is v (under
        separation the coefficients grow together)."""
        return b * (v / b[j]) if b[j] != 0 else moved(j, v)

    for j, (t, c, s) in enumerate(zip(terms, b, se)):
        _, pl0 = firth_fit(X, y, fixed={j: 0.0}, starts=[moved(j, 0.0), zero(j, 0.0)])
        chi2 = max(0.0, 2 * (pl - pl0))
        # The profile interval: where the constrained maximum falls to
        # target. With a coefficient held far out the penalised likelihood
        # can have several local maxima in the others, so the interval
        # follows one well-defined branch of constrained maxima, the one
        # through the estimate: outward in steps of a twentieth of an SE
        # growing by a tenth each time (small enough that no step jumps to
        # another branch on these data; quarter-SE steps did), each maximum
        # climbed to (modified-score
        # steps with halving) from the one found at the nearest value,
        # until it falls below target; brentq then finds the crossing in
        # the last step. At the crossing a search from zero, from the
        # estimate with the coefficient moved and from the estimate scaled
        # to it (BFGS and the climb) says whether another local maximum
        # lies above target there: profile_multimodal.
        ends, multi = [], []
        for side in (-1, 1):
            found = {c: b}

            def g(v):
                near = found[min(found, key=lambda u: abs(u - v))].copy()
                near[j] = v
                bv, plv = firth_fit_from(X, y, {j: v}, near, climb_only=True)
                found[v] = bv
                return plv - target

            inner, step = c, s / 20
            while g(inner + side * step) > 0:
                inner, step = inner + side * step, step * 1.1
            outer = inner + side * step
            end = scipy.optimize.brentq(g, min(inner, outer), max(inner, outer), xtol=1e-12)
            ends.append(end)
            _, other = firth_fit(X, y, fixed={j: end}, starts=[zero(j, end), moved(j, end), scaled(j, end)])
            multi.append(bool(other > target + 1e-6 * (1 + abs(target))))
        out.append({"term": t, "coef": r12(c), "se": r12(s), "plr_chi2": r12(chi2),
                    "plr_p": r12(scipy.stats.chi2.sf(chi2, 1)), "profile_ci": r12(ends),
                    "profile_multimodal": multi})
    return {"terms": out, "penalized_loglik": r12(pl)}


def main():
    write_open_data()
    write_meta_reference()
    write_clusters_reference()
    ref = {"_source": "testdata/reference/make_reference.py (statsmodels Logit, scipy.stats)", "fits": {}}

    sp = load_csv("spector.csv")
    gpa = np.array([float(r["gpa"]) for r in sp])
    tuce = np.array([float(r["tuce"]) for r in sp])
    psi = np.array([float(r["psi"]) for r in sp])
    grade = np.array([float(r["grade"]) for r in sp])
    one = np.ones_like(gpa)

    X = np.column_stack([one, gpa, tuce, psi])
    ref["fits"]["spector"], full = fit("spector", X, grade, ["intercept", "gpa", "tuce", "psi"])
    ref["fits"]["spector_psi_categorical"], _ = fit("spector_psi_categorical", X, grade, ["intercept", "gpa", "tuce", "psi=1"])
    Xr = np.column_stack([one, gpa])
    ref["fits"]["spector_gpa"], red = fit("spector_gpa", Xr, grade, ["intercept", "gpa"])
    lr = 2 * (full.llf - red.llf)
    ref["nested_spector"] = {"lr_chi2": r12(lr), "df": 2, "p": r12(scipy.stats.chi2.sf(lr, 2)),
                             "aic_difference": r12(full.aic - red.aic)}

    bc = load_csv("wdbc.csv")
    col = lambda c: np.array([float(r[c]) for r in bc])
    radius, texture, smooth, concave, area = (col(c) for c in
        ["mean_radius", "mean_texture", "mean_smoothness", "mean_concave_points", "mean_area"])
    y = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in bc])
    one = np.ones_like(y)
    X = np.column_stack([one, radius, texture, smooth, concave])
    ref["fits"]["wdbc_linear"], _ = fit("wdbc_linear", X, y,
        ["intercept", "mean_radius", "mean_texture", "mean_smoothness", "mean_concave_points"])

    # Transforms: radius centred and scaled, a 4-knot spline of texture, a
    # fractional polynomial of smoothness with a repeated power, log area,
    # and the product of scaled radius with the texture spline.
    zr = (radius - 14.0) / 3.5
    sp_cols = rcs(texture, [15.0, 18.5, 22.0, 27.0])
    zs = smooth / 0.1
    fp = [zs ** -1.0, zs ** -1.0 * np.log(zs)]
    la = np.log(area / 500.0)
    prod = [zr * c for c in sp_cols]
    X = np.column_stack([one, zr] + sp_cols + fp + [la] + prod)
    terms = (["intercept", "mean_radius", "mean_texture", "mean_texture [spline 1]", "mean_texture [spline 2]",
              "mean_smoothness^-1", "mean_smoothness^-1*log(mean_smoothness)", "log(mean_area)"]
             + ["mean_radius*" + t for t in ["mean_texture", "mean_texture [spline 1]", "mean_texture [spline 2]"]])
    ref["fits"]["wdbc_transforms"], _ = fit("wdbc_transforms", X, y, terms)

    # Firth's penalised likelihood on invented data with quasi-complete
    # separation: maximise l(b) + 0.5 log det X'W(b)X directly with scipy's
    # BFGS, a different algorithm from riskaudit's modified-score Newton
    # iterations (Firth 1993).
    sep = []
    with open(os.path.join(HERE, "separated.csv")) as f:
        next(f)
        for line in f:
            score, _, ward, ev = line.strip().split(",")
            sep.append((float(score), ward, float(ev)))
    X = np.array([[1.0, s, 1.0 if w == "B" else 0.0, 1.0 if w == "C" else 0.0] for s, w, _ in sep])
    y = np.array([e for _, _, e in sep])
    ref["firth_separated"] = firth(X, y, ["intercept", "score", "ward=B", "ward=C"])

    # Complete separation, where maximum-likelihood estimates do not exist
    # and Firth's do (Heinze & Schemper 2002): invented data with six terms
    # (four numbers and a three-level category; the outcome is 1 exactly
    # when a + b/2 - 3c/10 > 0), and with one term (the outcome is 1
    # exactly when x > 0).
    rows = load_rows(os.path.join(HERE, "separated6.csv"))
    X = np.array([[1.0, float(r["a"]), float(r["b"]), float(r["c"]), float(r["d"]),
                   1.0 if r["ward"] == "B" else 0.0, 1.0 if r["ward"] == "C" else 0.0] for r in rows])
    y = np.array([float(r["event"]) for r in rows])
    ref["firth_separated6"] = firth(X, y, ["intercept", "a", "b", "c", "d", "ward=B", "ward=C"])
    rows = load_rows(os.path.join(HERE, "separated1.csv"))
    X = np.array([[1.0, float(r["x"])] for r in rows])
    y = np.array([float(r["event"]) for r in rows])
    ref["firth_separated1"] = firth(X, y, ["intercept", "x"])

    with open(os.path.join(HERE, "fits.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")

    write_audit_reference(bc)
    write_bootstrap_reference(bc)
    write_update_reference(bc)
    write_casemix_reference(bc)
    write_samplesize_reference()
    write_subgroups_reference(bc)
    write_extra_reference(bc)
    # The O/E interval and risks on a threshold (oe.json), from the
    # risks write_audit_reference wrote above.
    sys.path.insert(0, HERE)
    from oe_reference import write_oe_reference
    write_oe_reference()
    from rubin_reference import write_rubin_reference
    write_rubin_reference(r12)
    write_monitor_reference()
    # Excel workbooks written by openpyxl, and the values in them
    from make_workbooks import write_workbooks
    write_workbooks(bc)


def delong_quadratic(y, p):
    """DeLong, DeLong & Clarke-Pearson (1988): the structural components
    V10 and V01 by the direct double sum over all event/non-event pairs,
    psi = 1 if X > Y, 1/2 if X = Y, 0 otherwise."""
    x = p[y == 1]
    z = p[y == 0]
    psi = (x[:, None] > z[None, :]).astype(float) + 0.5 * (x[:, None] == z[None, :])
    v10 = psi.mean(axis=1)
    v01 = psi.mean(axis=0)
    auc = psi.mean()
    var = v10.var(ddof=1) / len(x) + v01.var(ddof=1) / len(z)
    return auc, np.sqrt(var)


def paired_delong_quadratic(y, pa, pb):
    """The paired test of DeLong, DeLong & Clarke-Pearson (1988) from its
    covariance formulas, with the components by the direct double sum."""
    def comps(p):
        x, z = p[y == 1], p[y == 0]
        psi = (x[:, None] > z[None, :]).astype(float) + 0.5 * (x[:, None] == z[None, :])
        return psi.mean(axis=1), psi.mean(axis=0)
    v10a, v01a = comps(pa)
    v10b, v01b = comps(pb)
    m, n = len(v10a), len(v01a)
    s10 = np.cov(np.vstack([v10a, v10b]), ddof=1)
    s01 = np.cov(np.vstack([v01a, v01b]), ddof=1)
    var = (s10[0, 0] + s10[1, 1] - 2 * s10[0, 1]) / m + (s01[0, 0] + s01[1, 1] - 2 * s01[0, 1]) / n
    d = v10a.mean() - v10b.mean()
    se = np.sqrt(var)
    z = d / se
    return {"auc_a": r12(v10a.mean()), "auc_b": r12(v10b.mean()), "difference": r12(d), "difference_se": r12(se),
            "difference_ci": r12([d - 1.959963984540054 * se, d + 1.959963984540054 * se]), "z": r12(z),
            "p": r12(2 * scipy.stats.norm.sf(abs(z)))}


def net_benefit(y, p, t):
    """Vickers & Elkin (2006), transcribed: treat when p >= t."""
    n = len(y)
    tp = np.sum((p >= t) & (y == 1))
    fp = np.sum((p >= t) & (y == 0))
    prev = y.mean()
    return tp / n - fp / n * t / (1 - t), prev - (1 - prev) * t / (1 - t)


def audit_measures(y, p, lowess_delta):
    from sklearn.metrics import brier_score_loss, roc_auc_score
    from statsmodels.nonparametric.smoothers_lowess import lowess
    from statsmodels.stats.proportion import proportion_confint

    lp = np.log(p) - np.log1p(-p)
    out = {}
    out["auc_sklearn"] = r12(roc_auc_score(y, p))
    auc, se = delong_quadratic(y, p)
    out["auc_delong_quadratic"] = r12(auc)
    out["auc_se_delong_quadratic"] = r12(se)
    fam = sm.families.Binomial()
    citl = sm.GLM(y, np.ones((len(y), 1)), family=fam, offset=lp).fit(tol=1e-12, maxiter=100)
    out["citl"] = r12(citl.params[0])
    out["citl_se"] = r12(citl.bse[0])
    slope = sm.GLM(y, sm.add_constant(lp), family=fam).fit(tol=1e-12, maxiter=100)
    out["slope"] = r12(slope.params[1])
    out["slope_se"] = r12(slope.bse[1])
    out["slope_intercept"] = r12(slope.params[0])
    out["brier_sklearn"] = r12(brier_score_loss(y, p))
    order = np.argsort(p, kind="stable")
    assert len(np.unique(p)) == len(p), "lowess reference needs untied risks"
    for name, delta in [("lowess_exact", 0.0), ("lowess_delta", lowess_delta)]:
        fit = lowess(y, p, frac=0.75, it=0, delta=delta, return_sorted=True)
        # The flexible calibration curve is the local linear fit clipped
        # to [0, 1] (a risk cannot be observed outside it); the distances
        # behind ICI, E50, E90 and Emax are taken from the clipped smooth.
        clipped = np.clip(fit[:, 1], 0, 1)
        out[name] = {"delta": r12(delta), "x": r12(fit[:, 0]), "fit": r12(fit[:, 1]),
                     "clipped_points": int(np.sum(clipped != fit[:, 1]))}
        diff = np.abs(fit[:, 0] - clipped)
        out[name]["ici"] = r12(diff.mean())
        out[name]["e50"] = r12(np.quantile(diff, 0.5))
        out[name]["e90"] = r12(np.quantile(diff, 0.9))
        out[name]["emax"] = r12(diff.max())
    out["net_benefit"] = []
    for t in [0.05, 0.1, 0.2, 0.3, 0.5]:
        nb, ta = net_benefit(y, p, t)
        out["net_benefit"].append({"threshold": t, "model": r12(nb), "treat_all": r12(ta)})
    cls = []
    for t in [0.1, 0.5]:
        tp = int(np.sum((p >= t) & (y == 1))); fn = int(np.sum((p < t) & (y == 1)))
        fp = int(np.sum((p >= t) & (y == 0))); tn = int(np.sum((p < t) & (y == 0)))
        row = {"threshold": t}
        for key, k, m in [("sensitivity", tp, tp + fn), ("specificity", tn, tn + fp),
                          ("ppv", tp, tp + fp), ("npv", tn, tn + fn)]:
            lo, hi = proportion_confint(k, m, alpha=0.05, method="beta")
            row[key] = {"value": r12(k / m), "ci": r12([lo, hi])}
        cls.append(row)
    out["classification"] = cls
    return out


def write_audit_reference(bc):
    """Risks from an invented frozen model applied to the Wisconsin data,
    written to audit_predictions.csv with the reference measures, so the Go
    tests audit exactly these numbers."""
    radius = np.array([float(r["mean_radius"]) for r in bc])
    texture = np.array([float(r["mean_texture"]) for r in bc])
    concave = np.array([float(r["mean_concave_points"]) for r in bc])
    y = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in bc])
    eta = -9.0 + 0.35 * radius + 0.12 * texture + 30.0 * concave
    p = 1 / (1 + np.exp(-eta))
    # A second invented model, without concave points, for the paired test.
    pb = 1 / (1 + np.exp(-(-12.0 + 0.7 * radius + 0.1 * texture)))
    with open(os.path.join(HERE, "audit_predictions.csv"), "w") as f:
        f.write("diagnosis,risk,risk_b\n")
        for yi, pi, qi in zip(y, p, pb):
            f.write(f"{'M' if yi else 'B'},{pi!r},{qi!r}\n")
    ref = {"_source": "testdata/reference/make_reference.py (scikit-learn, statsmodels, scipy)",
           "wdbc": audit_measures(y, p, 0.02)}
    # Ties: risks rounded to one decimal, for the DeLong components.
    pr = np.round(p, 1)
    auc, se = delong_quadratic(y, pr)
    ref["paired_delong"] = paired_delong_quadratic(y, p, pb)
    ref["paired_delong_rounded"] = paired_delong_quadratic(y, np.round(p, 1), np.round(pb, 1))
    ref["wdbc_rounded"] = {"auc_sklearn": r12(roc_auc_score_(y, pr)), "auc_delong_quadratic": r12(auc),
                           "auc_se_delong_quadratic": r12(se)}
    with open(os.path.join(HERE, "audit.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def boot_measures(X, y, beta, llf, delta_share):
    """The optimism measures of coefficients beta on rows (X, y); llf is
    the model's log-likelihood on those rows."""
    from sklearn.metrics import brier_score_loss, roc_auc_score
    from statsmodels.nonparametric.smoothers_lowess import lowess

    lp = X @ beta
    p = 1 / (1 + np.exp(-lp))
    fam = sm.families.Binomial()
    citl = sm.GLM(y, np.ones((len(y), 1)), family=fam, offset=lp).fit(tol=1e-13, maxiter=200).params[0]
    slope = sm.GLM(y, sm.add_constant(lp), family=fam).fit(tol=1e-13, maxiter=200).params[1]
    brier = brier_score_loss(y, p)
    ybar = y.mean()
    n = len(y)
    llnull = n * (ybar * np.log(ybar) + (1 - ybar) * np.log(1 - ybar))
    cs = 1 - np.exp(2 * (llnull - llf) / n)
    r2 = cs / (1 - np.exp(2 * llnull / n))
    fit = lowess(y, p, frac=0.75, it=0, delta=delta_share * (p.max() - p.min()), return_sorted=True)
    ici = np.mean(np.abs(fit[:, 0] - np.clip(fit[:, 1], 0, 1)))
    return {"auc": roc_auc_score(y, p), "slope": slope, "citl": citl, "brier": brier,
            "scaled_brier": 1 - brier / (ybar * (1 - ybar)), "nagelkerke_r2": r2, "ici": ici}


def loglik(X, y, beta):
    lp = X @ beta
    return float(np.sum(y * lp - np.logaddexp(0, lp)))


def write_bootstrap_reference(bc):
    """Reads the resample log of riskaudit's bootstrap test (Wisconsin data,
    four linear predictors, 20 replicates, seed 1), refits every replicate
    on the rows it drew with statsmodels' Logit, and measures each refit on
    its sample (apparent) and on the original rows (test), so that
    optimism = mean(apparent - test) can be compared with riskaudit's."""
    cols = ["mean_radius", "mean_texture", "mean_smoothness", "mean_concave_points"]
    X = np.column_stack([np.ones(len(bc))] + [np.array([float(r[c]) for r in bc]) for c in cols])
    y = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in bc])
    full = sm.Logit(y, X).fit(method="newton", tol=1e-12, maxiter=100, disp=False)
    delta = 0.05
    apparent = boot_measures(X, y, full.params, full.llf, delta)
    diffs, failed = [], 0
    with open(os.path.join(HERE, "bootstrap_wdbc.log")) as f:
        for line in f:
            idx = np.array([int(v) for v in line.strip().split(",")])
            Xs, ys = X[idx], y[idx]
            try:
                fit = sm.Logit(ys, Xs).fit(method="newton", tol=1e-12, maxiter=100, disp=False)
            except Exception:
                failed += 1
                continue
            app = boot_measures(Xs, ys, fit.params, fit.llf, delta)
            test = boot_measures(X, y, fit.params, loglik(X, y, fit.params), delta)
            diffs.append({k: app[k] - test[k] for k in app})
    optimism = {k: float(np.mean([d[k] for d in diffs])) for k in apparent}
    ref = {"_source": "testdata/reference/make_reference.py from bootstrap_wdbc.log (statsmodels Logit, GLM, lowess; scikit-learn)",
           "apparent": {k: r12(v) for k, v in apparent.items()},
           "optimism": {k: r12(v) for k, v in optimism.items()},
           "failed": failed, "replicates": len(diffs) + failed, "ici_delta_share": delta}
    with open(os.path.join(HERE, "bootstrap.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


# Invented frozen coefficients of the four-predictor Wisconsin model
# (intercept, radius, texture, smoothness, concave points), deliberately
# off so that the updating methods have something to do.
UPDATE_BETA = [-14.0, 0.55, 0.2, 25.0, 30.0]


def write_update_reference(bc):
    """The closed testing procedure of Vergouwe et al. (2017) with
    statsmodels' binomial GLM: deviances of the original model, of
    recalibration in the large (offset), logistic recalibration and model
    revision (offset), and the likelihood-ratio tests against the revision."""
    cols = ["mean_radius", "mean_texture", "mean_smoothness", "mean_concave_points"]
    X = np.column_stack([np.ones(len(bc))] + [np.array([float(r[c]) for r in bc]) for c in cols])
    y = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in bc])
    lp = X @ np.array(UPDATE_BETA)
    fam = sm.families.Binomial()
    d0 = -2 * loglik(X, y, np.array(UPDATE_BETA))
    m1 = sm.GLM(y, np.ones((len(y), 1)), family=fam, offset=lp).fit(tol=1e-13, maxiter=200)
    m2 = sm.GLM(y, sm.add_constant(lp), family=fam).fit(tol=1e-13, maxiter=200)
    m3 = sm.GLM(y, X, family=fam, offset=lp).fit(tol=1e-13, maxiter=200)
    devs = [d0, m1.deviance, m2.deviance, m3.deviance]
    p = X.shape[1]
    tests = []
    for name, d, df in [("original", d0, p), ("in_the_large", m1.deviance, p - 1), ("recalibration", m2.deviance, p - 2)]:
        lr = d - m3.deviance
        tests.append({"simpler": name, "lr_chi2": r12(lr), "df": df, "p": r12(scipy.stats.chi2.sf(lr, df))})
    ref = {"_source": "testdata/reference/make_reference.py (statsmodels GLM binomial with offset, scipy.stats.chi2)",
           "beta": UPDATE_BETA, "neg2ll": r12(devs), "tests": tests,
           "in_the_large": r12(m1.params[0]), "recalibration": r12(m2.params), "revision": r12(m3.params)}
    with open(os.path.join(HERE, "update.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def write_casemix_reference(bc):
    """The membership model of Debray et al. (2015) with statsmodels' Logit
    and scikit-learn's roc_auc_score, telling the second half of the
    Wisconsin rows (the "new cohort") from the first half by the
    four-predictor model's terms and the outcome; and the standardised
    differences of the predictors (Austin 2009)."""
    from sklearn.metrics import roc_auc_score
    cols = ["mean_radius", "mean_texture", "mean_smoothness", "mean_concave_points"]
    X = np.column_stack([np.ones(len(bc))] + [np.array([float(r[c]) for r in bc]) for c in cols])
    y = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in bc])
    half = len(y) // 2
    member = np.r_[np.zeros(half), np.ones(len(y) - half)]
    Z = np.column_stack([X, y])
    fit = sm.Logit(member, Z).fit(method="newton", tol=1e-12, maxiter=100, disp=False)
    c = roc_auc_score(member, Z @ fit.params)
    sd = {}
    for j, name in enumerate(cols, start=1):
        a, b = X[:half, j], X[half:, j]
        sd[name] = r12((b.mean() - a.mean()) / np.sqrt((a.var(ddof=1) + b.var(ddof=1)) / 2))
    ref = {"_source": "testdata/reference/make_reference.py (statsmodels Logit, scikit-learn roc_auc_score)",
           "half": half, "membership_c": r12(c), "std_diff": sd}
    with open(os.path.join(HERE, "casemix.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def write_samplesize_reference():
    """The criteria of the external-validation sample size (Riley et al.
    2021) for a normal linear predictor, by scipy quadrature over the exact
    normal density (scipy.integrate.quad, QUADPACK's adaptive Gauss-Kronrod
    rule, at 1e-13 relative), a different method from riskaudit's adaptive
    Gauss-Legendre rule, with the C-statistic implied by the distribution
    computed from its definition as a double integral, P(LP of an event >
    LP of a non-event). The variance formulas are the ones riskaudit's
    samplesize package states; this checks their evaluation, not their
    derivation.

    `solves` find the normal linear predictor of a calibrated model with a
    given event proportion and C-statistic by nested scipy.optimize.brentq
    (the mean for the event proportion inside, the SD for the C-statistic
    outside, the C-statistic there by the one-dimensional form of the
    double integral, P(X1 > X0) = (E[p Phi(T)] - phi^2/2) / (phi (1 - phi))),
    then check the double integral at the solution.

    Sizes are the needs rounded up as riskaudit documents it (samplesize's
    ceilTol): ceil(x (1 - 1e-12)), events ceil(n phi (1 - 1e-12))."""
    import math
    from scipy import integrate, optimize
    from scipy.special import expit, ndtr
    z = scipy.stats.norm.ppf(0.975)
    ceil_tol = 1e-12
    eps = 1e-13
    need = lambda x: int(math.ceil(x * (1 - ceil_tol)))
    # The standard normal density, written out (scipy.stats' per-call
    # overhead would make the double integrals take minutes).
    pdf = lambda t: math.exp(-t * t / 2) / math.sqrt(2 * math.pi)

    def expect(g, mu, sd, lo=-40.0, hi=40.0, cut=None):
        """E[g(X)] over X = mu + sd T restricted to T in [lo, hi], by quad
        in T with breakpoints over the bulk of the density."""
        pts = [p for p in (-12, -8, -4, -2, -1, 0, 1, 2, 4, 8, 12) if lo < p < hi]
        if cut is not None and lo < cut < hi:
            pts.append(cut)
        return integrate.quad(lambda t: g(mu + sd * t) * pdf(t), lo, hi, points=sorted(pts),
                              limit=2000, epsabs=0, epsrel=eps)[0]

    def c_double(mu, sd, risk, phi):
        """P(X1 > X0) = int p f(x) F0(x) dx / (phi (1 - phi)), with F0 the
        non-events' share below x, itself an integral."""
        f0 = lambda t: integrate.quad(lambda u: (1 - risk(mu + sd * u)) * pdf(u), -40, t,
                                      points=[p for p in (-8, -4, -2, 0, 2, 4) if p < t] or None,
                                      limit=2000, epsabs=0, epsrel=eps)[0]
        num = integrate.quad(lambda t: risk(mu + sd * t) * pdf(t) * f0(t), -40, 40,
                             points=[-8, -4, -2, -1, 0, 1, 2, 4, 8], limit=2000, epsabs=0, epsrel=1e-12)[0]
        return num / (phi * (1 - phi))

    def criteria(sc):
        mu, sd, a, b, t = sc["mu"], sc["sd"], sc["a"], sc["b"], sc["threshold"]
        risk = lambda x: expit(a + b * x)
        phi = expect(risk, mu, sd)
        pred = expect(expit, mu, sd)
        oe = sc["oe"] if sc["oe"] > 0 else phi / pred
        cstat = c_double(mu, sd, risk, phi)
        w = sc["widths"]
        se_oe = np.arcsinh(w["oe"] / (2 * oe)) / z
        n_oe = (1 - phi) / (phi * se_oe ** 2)
        v = lambda x: risk(x) * (1 - risk(x))
        # The Fisher information in T = (LP - mu)/sd; its determinant in
        # LP units is sd^2 times that in T (shifting LP changes nothing).
        e_w = expect(v, mu, sd)
        e_wt = expect(lambda x: v(x) * (x - mu) / sd, mu, sd)
        e_wt2 = expect(lambda x: v(x) * ((x - mu) / sd) ** 2, mu, sd)
        se_slope = w["slope"] / (2 * z)
        n_slope = e_w / (se_slope ** 2 * sd ** 2 * (e_w * e_wt2 - e_wt ** 2))
        se_c = w["c"] / (2 * z)

        def newcombe_se(n):
            h = n / 2 - 1
            return np.sqrt(cstat * (1 - cstat) * (1 + h * (1 - cstat) / (2 - cstat) + h * cstat / (1 + cstat)) / (n * n * phi * (1 - phi)))
        n_c = optimize.brentq(lambda n: newcombe_se(n) - se_c, 4, 1e9, xtol=1e-12, rtol=1e-15)
        n = {"oe": n_oe, "slope": n_slope, "c": n_c}
        integrals = {"e_p": phi, "e_expit": pred, "e_w": e_w, "e_wt": e_wt, "e_wt2": e_wt2}
        order = ["oe", "slope", "c"]
        if t > 0:
            tc = (np.log(t / (1 - t)) - mu) / sd
            p1 = expect(risk, mu, sd, tc, 40.0)
            p2 = expect(lambda x: 1 - risk(x), mu, sd, tc, 40.0)
            p3 = expect(risk, mu, sd, -40.0, tc)
            f, wt = p1 + p3, t / (1 - t)
            g = np.array([(p3 + wt * p2) / f ** 2, -wt / f, -(p1 - wt * p2) / f ** 2])
            pi = np.array([p1, p2, p3])
            var1 = np.sum(g * g * pi) - np.sum(g * pi) ** 2
            n["nb"] = var1 / (w["nb"] / (2 * z)) ** 2
            integrals.update(tp=p1, fp=p2, fn=p3)
            order.append("nb")
        sizes = {k: need(v) for k, v in n.items()}
        events = {k: need(s * phi) for k, s in sizes.items()}
        driver = max(order, key=lambda k: (sizes[k], -order.index(k)))
        return dict(sc, event_rate=r12(phi), c_statistic=r12(cstat), oe_anticipated=r12(oe),
                    integrals={k: r12(v) for k, v in integrals.items()},
                    n={k: r12(v) for k, v in n.items()}, sizes=sizes, events=events,
                    required=sizes[driver], required_events=events[driver], driven_by=driver)

    default = {"oe": 0.2, "slope": 0.2, "c": 0.1, "nb": 0.2}
    scenarios = [
        {"name": "calibrated", "mu": -2.2, "sd": 0.9, "a": 0.0, "b": 1.0, "oe": 1.0, "threshold": 0.1,
         "widths": default},
        {"name": "miscalibrated", "mu": -4.0, "sd": 1.5, "a": 0.3, "b": 0.8, "oe": 1.2, "threshold": 0.05,
         "widths": {"oe": 0.4, "slope": 0.3, "c": 0.08, "nb": 0.3}},
        {"name": "rare", "mu": -5.5, "sd": 1.2, "a": 0.0, "b": 1.0, "oe": 1.0, "threshold": 0.02,
         "widths": {"oe": 1.0, "slope": 0.2, "c": 0.1, "nb": 0.2}},
        {"name": "N(-2.5, 1.2)", "mu": -2.5, "sd": 1.2, "a": 0.0, "b": 1.0, "oe": 0.0, "threshold": 0.1,
         "widths": default},
        {"name": "implied O/E", "mu": -3.0, "sd": 1.0, "a": 0.3, "b": 0.8, "oe": 0.0, "threshold": 0.1,
         "widths": default},
        {"name": "wide", "mu": -1.0, "sd": 3.0, "a": -0.2, "b": 1.1, "oe": 0.0, "threshold": 0.3,
         "widths": {"oe": 0.1, "slope": 0.1, "c": 0.05, "nb": 0.1}},
        # A steep rise of the risks in T (b·sd = 8) and a rare event whose
        # mass lies in the normal's upper tail (exp(b·sd·T)·phi(T) peaks at
        # T = 2.5): the hard cases for quadrature.
        {"name": "steep", "mu": -6.0, "sd": 8.0, "a": 0.0, "b": 1.0, "oe": 0.0, "threshold": 0.2,
         "widths": default},
        {"name": "very rare", "mu": -12.0, "sd": 2.5, "a": 0.0, "b": 1.0, "oe": 0.0, "threshold": 0.01,
         "widths": {"oe": 1.0, "slope": 0.5, "c": 0.1, "nb": 0.5}},
    ]
    out = [criteria(sc) for sc in scenarios]

    # The (event proportion, C-statistic) -> (mean, SD) solve.

    def mean_for(phi, sd):
        return optimize.brentq(lambda m: expect(expit, m, sd) - phi, -800, 800, xtol=1e-15, rtol=1e-15)

    def c_single(mu, sd):
        phi = expect(expit, mu, sd)
        return (expect(lambda x: expit(x) * ndtr((x - mu) / sd), mu, sd) - phi ** 2 / 2) / (phi * (1 - phi))

    solves = []
    for phi, c, t in [(0.1, 0.75, 0.1), (0.05, 0.8, 0.05), (0.6, 0.85, 0.5)]:
        sd = optimize.brentq(lambda s: c_single(mean_for(phi, s), s) - c, 0.05, 10, xtol=1e-15, rtol=1e-15)
        mu = mean_for(phi, sd)
        sc = {"name": f"event proportion {phi}, C-statistic {c}", "a": 0.0, "b": 1.0, "oe": 0.0,
              "threshold": t, "widths": default}
        row = criteria(dict(sc, mu=mu, sd=sd))  # C there by the double integral
        if abs(row["event_rate"] / phi - 1) > 1e-11 or abs(row["c_statistic"] / c - 1) > 1e-11:
            raise SystemExit(f"samplesize solve ({phi}, {c}): event proportion {row['event_rate']!r}, C {row['c_statistic']!r}")
        row.update(mu=r12(mu), sd=r12(sd), target_event_rate=phi, target_c_statistic=c)
        solves.append(row)
    ref = {"_source": "testdata/reference/make_reference.py (scipy.integrate.quad, scipy.optimize.brentq)",
           "scenarios": out, "solves": solves}
    with open(os.path.join(HERE, "samplesize.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def write_subgroups_reference(bc):
    """Numeric subgroups and the net-benefit criterion on the invented audit
    of the Wisconsin data (audit_predictions.csv): the k/q quantiles of
    mean_radius, of mean_texture and of mean_radius rounded and capped at
    12 (many ties) by numpy.quantile's default method (type 7, 'linear');
    the bands of mean_radius at the cut points 12 and 15 and at its
    quartiles rounded to 6 significant digits, a value on a cut going to
    the band above (np.searchsorted, side='right'), and in each band n,
    events, AUC (scikit-learn roc_auc_score), O/E and calibration-in-the-
    large and slope (statsmodels GLM); and, at the thresholds 0.05, 0.1,
    0.15 and 0.2, the net benefit's gain over the better of treating all
    and treating none (Vickers & Elkin 2006, transcribed), with its
    smallest value."""
    from sklearn.metrics import roc_auc_score
    rows = load_rows(os.path.join(HERE, "audit_predictions.csv"))
    y = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in rows])
    p = np.array([float(r["risk"]) for r in rows])
    lp = np.log(p) - np.log1p(-p)
    radius = np.array([float(r["mean_radius"]) for r in bc])
    texture = np.array([float(r["mean_texture"]) for r in bc])
    capped = np.minimum(np.round(radius), 12.0)
    ref = {"_source": "testdata/reference/make_reference.py (numpy.quantile, scikit-learn, statsmodels)", "quantiles": {}}
    for name, x in [("mean_radius", radius), ("mean_texture", texture), ("radius_capped", capped)]:
        ref["quantiles"][name] = {str(q): r12(np.quantile(x, [k / q for k in range(1, q)])) for q in [2, 3, 4, 5, 10]}
    fam = sm.families.Binomial()

    def bands(cuts):
        code = np.searchsorted(np.array(cuts), radius, side="right")
        out = []
        for k in range(len(cuts) + 1):
            m = code == k
            yk, pk, lk = y[m], p[m], lp[m]
            citl = sm.GLM(yk, np.ones((len(yk), 1)), family=fam, offset=lk).fit(tol=1e-12, maxiter=100)
            slope = sm.GLM(yk, sm.add_constant(lk), family=fam).fit(tol=1e-12, maxiter=100)
            out.append({"n": int(m.sum()), "events": int(yk.sum()), "auc": r12(roc_auc_score(yk, pk)),
                        "oe": r12(yk.sum() / pk.sum()), "citl": r12(citl.params[0]), "slope": r12(slope.params[1])})
        return out

    quartiles = [float(f"{v:.6g}") for v in np.quantile(radius, [0.25, 0.5, 0.75])]
    ref["bands_cuts"] = {"cuts": [12.0, 15.0], "bands": bands([12.0, 15.0])}
    ref["bands_quartiles"] = {"cuts": quartiles, "bands": bands(quartiles)}
    gains = []
    for t in [0.05, 0.1, 0.15, 0.2]:
        nb, ta = net_benefit(y, p, t)
        gains.append(nb - max(ta, 0.0))
    ref["net_benefit_gain"] = {"thresholds": [0.05, 0.1, 0.15, 0.2], "gains": r12(gains), "least": r12(min(gains)),
                               "at": [0.05, 0.1, 0.15, 0.2][int(np.argmin(gains))]}
    with open(os.path.join(HERE, "subgroups.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def reml_tau2(y, v):
    """REML τ² transcribed in matrix form from Viechtbauer (2005, Journal
    of Educational and Behavioral Statistics 30:261-293): with
    W = diag(1/(v+τ²)) and P = W - W11'W/(1'W1), Fisher scoring
    τ² += (y'PPy - tr P)/tr(PP), truncated at 0; checked against a direct
    maximisation of the restricted log-likelihood
    -1/2 ln|V| - 1/2 ln(1'V^-1 1) - 1/2 r'V^-1 r by scipy's bounded
    minimize_scalar."""
    from scipy import optimize
    k = len(y)
    one = np.ones(k)

    def P(t):
        W = np.diag(1 / (v + t))
        Wo = W @ one
        return W - np.outer(Wo, Wo) / (one @ Wo)

    t = 0.0
    for _ in range(1000):
        Pt = P(t)
        step = (y @ Pt @ Pt @ y - np.trace(Pt)) / np.trace(Pt @ Pt)
        new = max(0.0, t + step)
        if abs(new - t) <= 1e-15 * max(1.0, t):
            t = new
            break
        t = new
    else:
        raise SystemExit("REML Fisher scoring did not converge")

    def nll(t):
        V = np.diag(v + t)
        Vi = np.linalg.inv(V)
        mu = (one @ Vi @ y) / (one @ Vi @ one)
        r = y - mu
        return 0.5 * (np.linalg.slogdet(V)[1] + np.log(one @ Vi @ one) + r @ Vi @ r)

    hi = 10 * (np.var(y) + v.max())
    opt = optimize.minimize_scalar(nll, bounds=(0.0, hi), method="bounded", options={"xatol": 1e-12})
    best = opt.x if nll(opt.x) < nll(0.0) else 0.0
    if abs(best - t) > 1e-6 * max(1.0, t) + 1e-9:
        raise SystemExit(f"REML: Fisher scoring {t!r} but direct maximisation {best!r}")
    return t


def paule_mandel_root(y, v):
    """τ² of Paule & Mandel (1982): the root in τ² ≥ 0 of
    Σ w_i (y_i − μ_w)² = k − 1 with w_i = 1/(v_i + τ²), 0 when the left
    side is below k − 1 at τ² = 0 (it falls as τ² grows); by brentq."""
    from scipy import optimize
    k = len(y)

    def ee(t):
        w = 1 / (v + t)
        mu = (w @ y) / w.sum()
        return w @ (y - mu) ** 2 - (k - 1)
    if ee(0.0) <= 0:
        return 0.0
    hi = 1.0
    while ee(hi) > 0:
        hi *= 2
    return optimize.brentq(ee, 0.0, hi, xtol=1e-14, rtol=1e-15, maxiter=500)


def write_meta_reference():
    """Random-effects meta-analysis (meta.json). τ² by DerSimonian-Laird
    and Paule-Mandel, Cochran's Q, I² and the Wald interval from
    statsmodels.stats.meta_analysis.combine_effects; τ² by REML from the
    matrix transcription in reml_tau2; for every method the HKSJ interval
    mu ± t_{k-1} sqrt(Σw(y-mu)²/((k-1)Σw)) (Hartung & Knapp 2001; Sidik &
    Jonkman 2002), the prediction interval mu ± t_{k-2} sqrt(τ²+1/Σw)
    (Higgins, Thompson & Spiegelhalter 2009) and the probability of
    [lo, hi] under that t, by scipy.stats.t; the HKSJ variance is checked
    against statsmodels' var_hksj_re for DL and PM."""
    from statsmodels.stats.meta_analysis import combine_effects
    from scipy import stats
    datasets = [
        ("six clusters, moderate heterogeneity", [1.10, 1.45, 0.82, 1.30, 0.95, 1.62], [0.020, 0.035, 0.015, 0.050, 0.025, 0.060], (1.0, np.inf)),
        ("homogeneous: tau2 truncated at 0", [0.10, 0.12, 0.09, 0.11, 0.105], [0.04, 0.05, 0.03, 0.06, 0.045], (0.0, 0.2)),
        ("k = 2", [-0.05, 0.30], [0.010, 0.020], (-0.2, 0.2)),
        ("k = 3", [0.95, 1.05, 0.70], [0.004, 0.009, 0.006], (0.9, 1.1)),
        ("large heterogeneity", [-0.9, 0.4, 1.8, -0.2, 0.9, 2.6, 0.1, -1.5], [0.05, 0.02, 0.08, 0.03, 0.04, 0.10, 0.02, 0.06], (-np.inf, 0.0)),
        ("unequal variances", [0.02, -0.15, 0.20, 0.05, -0.30, 0.12, 0.00, 0.25, -0.08, 0.10],
         [0.001, 0.02, 0.005, 0.2, 0.01, 0.003, 0.05, 0.015, 0.002, 0.008], (-0.1, 0.1)),
    ]
    out = []
    for name, y, v, (lo, hi) in datasets:
        y, v = np.array(y), np.array(v)
        k = len(y)
        row = {"name": name, "y": y.tolist(), "v": v.tolist(), "bounds": [lo if np.isfinite(lo) else None, hi if np.isfinite(hi) else None]}
        dl = combine_effects(y, v, method_re="dl")
        # statsmodels' Paule-Mandel iteration (DerSimonian & Kacker 2007)
        # stops at 0 when a step overshoots the root by rounding alone, so
        # a tight tolerance gives 0 or the root depending on the BLAS: its
        # default tolerance is used, and the root of the estimating equation
        # Q(τ²) = k − 1 is found again by scipy's brentq, to 1e-14, and
        # stored; the two must agree.
        pm = combine_effects(y, v, method_re="pm")
        pm_tau2 = paule_mandel_root(y, v)
        if abs(max(0.0, pm.tau2) - pm_tau2) > 1e-7 * max(1.0, pm_tau2):
            raise SystemExit(f"meta {name} pm: statsmodels {pm.tau2!r}, brentq {pm_tau2!r}")
        row["q"] = r12(dl.q)
        row["i2"] = r12(max(0.0, dl.i2))
        taus = {"dl": max(0.0, dl.tau2), "pm": pm_tau2, "reml": reml_tau2(y, v)}
        for method, t in taus.items():
            w = 1 / (v + t)
            mu = (w @ y) / w.sum()
            se = 1 / np.sqrt(w.sum())
            hk = np.sqrt((w @ (y - mu) ** 2) / ((k - 1) * w.sum()))
            if method != "reml":
                # statsmodels leaves a negative DL τ² untruncated: at τ² = 0
                # the random-effects figures are its fixed-effect ones.
                res = dl if method == "dl" else pm
                fe = res.tau2 <= 0
                mu_sm = res.mean_effect_fe if fe else res.mean_effect_re
                hk_sm = res.var_hksj_fe if fe else res.var_hksj_re
                tol = 0 if method == "dl" else 1e-7  # pm: statsmodels' tolerance, see above
                if abs(max(0.0, res.tau2) - t) > tol * max(1.0, t) or abs(mu_sm - mu) > 1e-12 + tol or abs(hk_sm - hk ** 2) > (1e-12 + tol) * hk ** 2 + 1e-15:
                    raise SystemExit(f"meta {name} {method}: statsmodels disagrees")
            tq = stats.t.ppf(0.975, k - 1)
            z = stats.norm.ppf(0.975)
            m = {"tau2": r12(t), "estimate": r12(mu), "wald_se": r12(se), "hksj_se": r12(hk),
                 "hksj_ci": r12([mu - tq * hk, mu + tq * hk]), "wald_ci": r12([mu - z * se, mu + z * se])}
            if k >= 3:
                s = np.sqrt(t + se ** 2)
                tp = stats.t.ppf(0.975, k - 2)
                m["pi"] = r12([mu - tp * s, mu + tp * s])
                m["prob"] = r12(stats.t.cdf(hi, k - 2, mu, s) - stats.t.cdf(lo, k - 2, mu, s))
            else:
                m["pi"] = None
                m["prob"] = None
            row[method] = m
        out.append(row)
    ref = {"_source": "testdata/reference/make_reference.py (statsmodels combine_effects, scipy.stats, numpy)", "datasets": out}
    with open(os.path.join(HERE, "meta.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def pool_transcribed(y, v, method):
    """Random-effects pooling as write_meta_reference transcribes it: τ²
    by DerSimonian-Laird (statsmodels combine_effects, truncated at 0) or
    REML (reml_tau2), the HKSJ interval and the prediction interval."""
    from statsmodels.stats.meta_analysis import combine_effects
    from scipy import stats
    y, v = np.array(y), np.array(v)
    k = len(y)
    t = max(0.0, combine_effects(y, v, method_re="dl").tau2) if method == "dl" else reml_tau2(y, v)
    w = 1 / (v + t)
    mu = (w @ y) / w.sum()
    se = 1 / np.sqrt(w.sum())
    hk = np.sqrt((w @ (y - mu) ** 2) / ((k - 1) * w.sum()))
    tq = stats.t.ppf(0.975, k - 1)
    s = np.sqrt(t + se ** 2)
    tp = stats.t.ppf(0.975, k - 2)
    q = combine_effects(y, v, method_re="dl").q
    return {"tau2": t, "estimate": mu, "ci": [mu - tq * hk, mu + tq * hk], "pi": [mu - tp * s, mu + tp * s],
            "i2": max(0.0, (q - (k - 1)) / q), "k": k, "scale": s, "df": k - 2}


def write_clusters_reference():
    """An invented multicentre validation (clusters.csv: cluster, risk,
    outcome), drawn with numpy's seeded PCG64 generator: eight clusters
    whose true calibration intercept and slope differ, and one cluster
    with too few events. Per cluster (clusters.json): n, events, AUC by
    scikit-learn's roc_auc_score with DeLong's standard error by the
    quadratic transcription delong_quadratic, O/E with the standard error
    of ln O/E sqrt((1 - O/n)/O) (Debray et al. 2017, transcribed),
    calibration-in-the-large (offset) and slope with standard errors from
    statsmodels GLM; then each of logit AUC, ln O/E, CITL and slope pooled
    by pool_transcribed (REML and DerSimonian-Laird), and the probability
    of C > 0.7, 0.8 <= O/E <= 1.2 and 0.9 <= slope <= 1.1 in a new
    cluster from scipy.stats.t."""
    from sklearn.metrics import roc_auc_score
    from scipy import stats
    rng = np.random.default_rng(20261202)
    names, risks, ys = [], [], []
    sizes = [400, 250, 600, 300, 500, 350, 450, 280, 60]
    for c, n in enumerate(sizes):
        a = rng.normal(0.0, 0.25)
        b = rng.normal(1.0, 0.15)
        lp = rng.normal(-1.3, 1.0, n) if c < 8 else rng.normal(-3.5, 0.5, n)
        p = 1 / (1 + np.exp(-lp))
        y = (rng.random(n) < 1 / (1 + np.exp(-(a + b * lp)))).astype(float)
        names += [f"site {chr(65 + c)}"] * n
        risks += [float(f"{v:.6f}") for v in p]
        ys += y.tolist()
    with open(os.path.join(HERE, "clusters.csv"), "w") as f:
        f.write("site,risk,outcome\n")
        for nm, r, y in zip(names, risks, ys):
            f.write(f"{nm},{r:.6f},{int(y)}\n")
    names, risks, ys = np.array(names), np.array(risks), np.array(ys)
    fam = sm.families.Binomial()
    per, sc = [], {"auc": ([], []), "oe": ([], []), "citl": ([], []), "slope": ([], [])}
    for nm in sorted(set(names)):
        m = names == nm
        y, p = ys[m], risks[m]
        lp = np.log(p) - np.log1p(-p)
        n, o = len(y), y.sum()
        row = {"cluster": nm, "n": int(n), "events": int(o)}
        auc, se = delong_quadratic(y, p)
        if abs(auc - roc_auc_score(y, p)) > 1e-12:
            raise SystemExit("clusters: DeLong transcription and scikit-learn disagree on the AUC")
        citl = sm.GLM(y, np.ones((n, 1)), family=fam, offset=lp).fit(tol=1e-12, maxiter=100)
        slope = sm.GLM(y, sm.add_constant(lp), family=fam).fit(tol=1e-12, maxiter=100)
        oe, lnse = o / p.sum(), np.sqrt((1 - o / n) / o)
        row.update(auc=r12(auc), auc_se=r12(se) if np.isfinite(se) else None, oe=r12(oe), ln_oe_se=r12(lnse), citl=r12(citl.params[0]),
                   citl_se=r12(citl.bse[0]), slope=r12(slope.params[1]), slope_se=r12(slope.bse[1]))
        row["pooled"] = bool(min(o, n - o) >= 10)
        per.append(row)
        if row["pooled"]:
            for key, est, s in [("auc", np.log(auc / (1 - auc)), se / (auc * (1 - auc))), ("oe", np.log(oe), lnse),
                                ("citl", citl.params[0], citl.bse[0]), ("slope", slope.params[1], slope.bse[1])]:
                sc[key][0].append(est)
                sc[key][1].append(s ** 2)
    bounds = {"auc": (np.log(0.7 / 0.3), np.inf), "oe": (np.log(0.8), np.log(1.2)), "slope": (0.9, 1.1)}
    back = {"auc": lambda x: 1 / (1 + np.exp(-x)), "oe": np.exp, "citl": lambda x: x, "slope": lambda x: x}
    pooled = {}
    for method in ["reml", "dl"]:
        pooled[method] = {}
        for key, (y, v) in sc.items():
            r = pool_transcribed(y, v, method)
            out = {"tau2": r12(r["tau2"]), "i2": r12(r["i2"]), "k": r["k"], "estimate": r12(back[key](r["estimate"])),
                   "ci": r12([back[key](x) for x in r["ci"]]), "prediction_interval": r12([back[key](x) for x in r["pi"]])}
            if key in bounds:
                lo, hi = bounds[key]
                out["prob_acceptable"] = r12(stats.t.cdf(hi, r["df"], r["estimate"], r["scale"]) - stats.t.cdf(lo, r["df"], r["estimate"], r["scale"]))
            pooled[method][key] = out
    ref = {"_source": "testdata/reference/make_reference.py (numpy, scikit-learn, statsmodels GLM and combine_effects, scipy.stats)",
           "per_cluster": per, "pooled": pooled}
    with open(os.path.join(HERE, "clusters.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def roc_auc_score_(y, p):
    from sklearn.metrics import roc_auc_score
    return roc_auc_score(y, p)




def lowess_band(x, y, span=0.75):
    """The local linear smoother and its pointwise standard error, written
    out with numpy from the definitions (Cleveland 1979; Cleveland & Devlin
    1988, section 3) rather than from riskaudit's closed form: at each x0
    the k = floor(span*n) nearest points with tricube weights, the fit
    e1'(X'WX)^-1 X'W y, the smoother weights l = e1'(X'WX)^-1 X'W, and
    SE = sqrt(s(1 - s) * sum(l^2)) with s(1 - s) clipped to [0, 1/4].
    x must be untied."""
    n = len(x)
    k = int(span * n + 1e-10)
    fit, se = np.empty(n), np.empty(n)
    for i, x0 in enumerate(x):
        d = np.abs(x - x0)
        idx = np.argsort(d, kind="stable")[:k]
        h = d[idx].max()
        w = (1 - (d[idx] / h) ** 3) ** 3
        X = np.column_stack([np.ones(k), x[idx] - x0])
        A = np.linalg.solve(X.T @ (w[:, None] * X), (X * w[:, None]).T)
        l = A[0]
        fit[i] = l @ y[idx]
        v = min(max(fit[i] * (1 - fit[i]), 0.0), 0.25)
        se[i] = np.sqrt(v * np.sum(l ** 2))
    return fit, se


def write_extra_reference(bc):
    """extra.json: values that had no outside reference before.

      auc_logit_ci   the logit-scale AUC interval, transcribed with numpy:
                     expit(logit(A) +- 1.96 SE/(A(1 - A))), A and SE from
                     the quadratic DeLong transcription above, on the
                     risks of audit_predictions.csv
      lowess_band    the LOWESS fit and its pointwise SE on those risks
                     (lowess_band above), and the band fit +- 1.96 SE
      lowess_20000   statsmodels lowess (frac 0.75, it 0) on 20,000
                     generated rows with delta = 1% of the range of x, the
                     rule DefaultDelta documents between 10,000 and
                     100,000 rows; every 500th fitted value and the ICI of
                     the smooth clipped to [0, 1]
      update_aic     statsmodels GLM .aic of the updating steps of
                     update.json (the original model: its -2 log-likelihood,
                     nothing estimated)
      knots          numpy.quantile (linear, type 7) of the Wisconsin mean
                     texture at the default knot quantiles for 3 to 7 knots
                     (the table of model.DefaultKnots, recalled from
                     Harrell 2015, section 2.4.6), rounded to 12 significant
                     digits
    """
    rows = load_rows(os.path.join(HERE, "audit_predictions.csv"))
    y = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in rows])
    p = np.array([float(r["risk"]) for r in rows])
    ref = {"_source": "testdata/reference/make_reference.py write_extra_reference (numpy transcriptions, statsmodels lowess and GLM)"}
    a, se = delong_quadratic(y, p)
    lg = np.log(a / (1 - a))
    half = 1.959963984540054 * se / (a * (1 - a))
    ref["auc_logit_ci"] = r12([1 / (1 + np.exp(-(lg - half))), 1 / (1 + np.exp(-(lg + half)))])
    order = np.argsort(p, kind="stable")
    xs, ys = p[order], y[order]
    fit, sd = lowess_band(xs, ys)
    ref["lowess_band"] = {"x": r12(xs), "fit": r12(fit), "se": r12(sd),
                          "lower": r12(fit - 1.959963984540054 * sd), "upper": r12(fit + 1.959963984540054 * sd)}

    from statsmodels.nonparametric.smoothers_lowess import lowess
    n = 20000
    i = np.arange(n)
    x = (i + 0.5) / n
    yy = ((i * 7919) % 1000 < 1000 * x * 0.8 + 100).astype(float)
    delta = 0.01 * (x.max() - x.min())
    sm_fit = lowess(yy, x, frac=0.75, it=0, delta=delta, return_sorted=True)
    clipped = np.clip(sm_fit[:, 1], 0, 1)
    ref["lowess_20000"] = {"n": n, "delta": r12(delta), "every": 500,
                           "fit": r12(sm_fit[::500, 1]), "ici": r12(np.mean(np.abs(sm_fit[:, 0] - clipped)))}

    cols = ["mean_radius", "mean_texture", "mean_smoothness", "mean_concave_points"]
    X = np.column_stack([np.ones(len(bc))] + [np.array([float(r[c]) for r in bc]) for c in cols])
    yb = np.array([1.0 if r["diagnosis"] == "M" else 0.0 for r in bc])
    lp = X @ np.array(UPDATE_BETA)
    fam = sm.families.Binomial()
    m1 = sm.GLM(yb, np.ones((len(yb), 1)), family=fam, offset=lp).fit(tol=1e-13, maxiter=200)
    m2 = sm.GLM(yb, sm.add_constant(lp), family=fam).fit(tol=1e-13, maxiter=200)
    m3 = sm.GLM(yb, X, family=fam, offset=lp).fit(tol=1e-13, maxiter=200)
    ref["update_aic"] = r12([-2 * loglik(X, yb, np.array(UPDATE_BETA)), m1.aic, m2.aic, m3.aic])

    texture = np.array([float(r["mean_texture"]) for r in bc])
    table = {3: [0.10, 0.50, 0.90], 4: [0.05, 0.35, 0.65, 0.95], 5: [0.05, 0.275, 0.50, 0.725, 0.95],
             6: [0.05, 0.23, 0.41, 0.59, 0.77, 0.95], 7: [0.025, 0.1833, 0.3417, 0.50, 0.6583, 0.8167, 0.975]}
    ref["knots"] = {str(k): [float(f"{v:.12g}") for v in np.quantile(texture, q, method="linear")] for k, q in table.items()}
    with open(os.path.join(HERE, "extra.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def markov_arl(p, r, h, m):
    """In-control ARL of the risk-adjusted CUSUM with odds ratio r and
    limit h, patients drawn uniformly from the risks p, by the Markov chain
    of Brook & Evans (1972, Biometrika 59:539-549) as Steiner et al. (2000)
    use it: S in [0, h) discretised into m cells of width h/m, state j
    standing for the cell's midpoint (state 0 for S = 0 exactly and the
    first half-cell), the chain absorbed once S >= h; ARL = first entry of
    (I - Q)^-1 1 from state 0."""
    p = np.asarray(p, float)
    d = h / m
    mids = np.arange(m) * d  # state j at j*d (0 is the reset state)
    w0 = -np.log(1 - p + r * p)
    w1 = np.log(r) + w0
    q = np.zeros((m, m))
    for w, prob in ((w0, 1 - p), (w1, p)):
        nxt = np.maximum(0.0, mids[:, None] + w[None, :])  # m x n
        j = np.minimum(np.floor(nxt / d + 0.5).astype(int), m - 1)
        ok = nxt < h
        for a in range(m):
            sel = ok[a]
            np.add.at(q[a], j[a, sel], prob[sel] / len(p))
    arl = np.linalg.solve(np.eye(m) - q, np.ones(m))
    return float(arl[0])


def write_monitor_reference():
    """A made-up series of 1,200 patients in date order (risks from a
    normal linear predictor, outcomes drawn from them, the odds of the
    event doubled, an intercept shift of log 2, from patient 801 on), and
    the monitoring charts transcribed from the papers:
      VLAD   Lovegrove et al. 1997: cumulative sum of p - y
      CUSUM  Steiner et al. 2000: W = y log R - log(1 - p + R p),
             S_t = max(0, S_{t-1} + W_t), R = 2 and 1/2
      EWMA   Grigg & Spiegelhalter 2007, O - E form, lambda = 0.01:
             Z_t = (1-l) Z_{t-1} + l (y_t - p_t),
             V_t = (1-l)^2 V_{t-1} + l^2 p_t (1 - p_t)
    with calibration by blocks of 200 (O/E, CITL by statsmodels GLM with
    offset, AUC by scikit-learn) and the CUSUM's in-control ARL at a fixed
    limit by the Markov chain (markov_arl, two discretisations)."""
    import statsmodels.api as sm
    from sklearn.metrics import roc_auc_score
    rng = np.random.default_rng(18)
    n, change = 1200, 800
    lp = rng.normal(-2.2, 0.9, n)
    p = 1 / (1 + np.exp(-lp))
    p = np.round(p, 10)
    true_lp = lp + np.where(np.arange(n) >= change, np.log(2), 0.0)
    y = (rng.random(n) < 1 / (1 + np.exp(-true_lp))).astype(float)
    with open(os.path.join(HERE, "monitor_series.csv"), "w") as f:
        f.write("y,p\n")
        for a, b in zip(y, p):
            f.write(f"{int(a)},{b!r}\n")
    vlad = np.cumsum(p - y)
    cusum = {}
    for name, r in (("deterioration", 2.0), ("improvement", 0.5)):
        s, out = 0.0, []
        for yi, pi in zip(y, p):
            s = max(0.0, s + yi * np.log(r) - np.log(1 - pi + r * pi))
            out.append(s)
        cusum[name] = out
    lam = 0.01
    z, v, zs, sds = 0.0, 0.0, [], []
    for yi, pi in zip(y, p):
        z = (1 - lam) * z + lam * (yi - pi)
        v = (1 - lam) ** 2 * v + lam ** 2 * pi * (1 - pi)
        zs.append(z)
        sds.append(np.sqrt(v))
    blocks = []
    fam = sm.families.Binomial()
    for s0 in range(0, n, 200):
        yy, pp = y[s0:s0 + 200], p[s0:s0 + 200]
        o, e = yy.sum(), pp.sum()
        half = 1.959963984540054 * np.sqrt((1 - o / len(yy)) / o)
        citl = sm.GLM(yy, np.ones((len(yy), 1)), family=fam, offset=np.log(pp / (1 - pp))).fit(tol=1e-13, maxiter=200)
        blocks.append({"n": len(yy), "events": int(o), "expected": r12(e), "oe": r12(o / e),
                       "oe_ci": r12([o / e * np.exp(-half), o / e * np.exp(half)]),
                       "citl": r12(citl.params[0]), "citl_se": r12(citl.bse[0]),
                       "auc": r12(roc_auc_score(yy, pp))})
    base = p[:change]
    arl = []
    for r, h in ((2.0, 2.5), (0.5, 2.0)):
        arl.append({"odds_ratio": r, "h": h,
                    "markov_arl_400": r12(markov_arl(base, r, h, 400)),
                    "markov_arl_1600": r12(markov_arl(base, r, h, 1600))})
    ref = {"_source": "testdata/reference/make_reference.py (numpy transcription of the published formulas; statsmodels GLM, scikit-learn roc_auc_score; Brook-Evans Markov chain)",
           "change": change, "lambda": lam, "vlad": r12(vlad), "cusum": {k: r12(v) for k, v in cusum.items()},
           "ewma_z": r12(zs), "ewma_sd": r12(sds), "blocks": blocks, "arl": arl}
    with open(os.path.join(HERE, "monitor.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    sys.exit(main())
