"""oe.json: outside values for the O/E interval, the Wald intervals of
the calibration measures and risks exactly on a decision threshold, on the risks of audit_predictions.csv (written by
make_reference.py write_audit_reference). Called from make_reference.py.

  oe            O = the events, E = the sum of the risks, O/E, and the
                95% interval exp(ln(O/E) +- z SE), z = scipy.stats.norm
                .ppf(0.975) and SE = sqrt(Var(O))/O with Var(O) taken from
                scipy.stats.binom(n, O/n).var(): the delta method for
                ln O with O binomial (Riley et al. 2021, BMJ 373:n1190,
                var(ln O/E) = (1 - phi)/(n phi); Debray et al. 2017, BMJ
                356:i6460), not the closed form riskaudit uses
  oe_first60    the same on the first 60 rows (few events)
  oe_garwood    the exact Poisson interval of O over E (Garwood 1936,
                chi-square quantiles from scipy.stats.chi2): a Poisson
                count varies more than a binomial one (variance O against
                O(1 - O/n)), so the interval above must lie inside it
  wald          statsmodels GLM (binomial) conf_int(0.05) of the
                calibration-in-the-large (intercept with logit(risk) as
                offset) and of the calibration slope (coefficient of
                logit(risk) with a free intercept): the Wald intervals
                the audit reports, from the library rather than from
                estimate +- 1.96 SE written out
  auc_ci        the AUC's 95% interval A +- z SE clipped to [0, 1], A and
                SE the quadratic DeLong transcription of audit.json
                (make_reference.py delong_quadratic), z from scipy
  on_threshold  the risks rounded to one decimal (numpy.round), so that
                many lie exactly on the thresholds 0.1, 0.2, 0.3 and 0.5:
                sklearn.metrics.confusion_matrix of the outcome against
                risk >= t (treated at or above the threshold, Vickers &
                Elkin 2006), the net benefit TP/n - FP/n t/(1 - t) and
                statsmodels' Clopper-Pearson sensitivity interval
"""
import json
import os

import numpy as np
import scipy.stats
import statsmodels.api as sm
from sklearn.metrics import confusion_matrix
from statsmodels.stats.proportion import proportion_confint

HERE = os.path.dirname(os.path.abspath(__file__))


def r12(x):
    if isinstance(x, (list, tuple, np.ndarray)):
        return [r12(v) for v in x]
    return float(f"{float(x):.12g}")


def oe_interval(y, p):
    n = len(y)
    o, e = float(y.sum()), float(p.sum())
    se = np.sqrt(scipy.stats.binom(n, o / n).var()) / o
    z = scipy.stats.norm.ppf(0.975)
    return {"n": n, "observed": r12(o), "expected": r12(e), "oe": r12(o / e),
            "ci": r12([o / e * np.exp(-z * se), o / e * np.exp(z * se)])}


def write_oe_reference():
    y, p = [], []
    with open(os.path.join(HERE, "audit_predictions.csv")) as f:
        next(f)
        for line in f:
            d, risk, _ = line.strip().split(",")
            y.append(1.0 if d == "M" else 0.0)
            p.append(float(risk))
    y, p = np.array(y), np.array(p)
    ref = {"_source": "testdata/reference/oe_reference.py (scipy.stats binom, norm and chi2; statsmodels GLM conf_int and proportion_confint; scikit-learn confusion_matrix)"}
    ref["oe"] = oe_interval(y, p)
    ref["oe_first60"] = oe_interval(y[:60], p[:60])
    o, e = y.sum(), p.sum()
    ref["oe_garwood"] = r12([scipy.stats.chi2.ppf(0.025, 2 * o) / 2 / e, scipy.stats.chi2.ppf(0.975, 2 * (o + 1)) / 2 / e])
    lp = np.log(p) - np.log1p(-p)
    fam = sm.families.Binomial()
    citl = sm.GLM(y, np.ones((len(y), 1)), family=fam, offset=lp).fit(tol=1e-12, maxiter=100)
    slope = sm.GLM(y, sm.add_constant(lp), family=fam).fit(tol=1e-12, maxiter=100)
    ref["wald"] = {"citl": r12(citl.params[0]), "citl_ci": r12(citl.conf_int(0.05)[0]),
                   "slope": r12(slope.params[1]), "slope_ci": r12(slope.conf_int(0.05)[1])}
    with open(os.path.join(HERE, "audit.json")) as f:
        w = json.load(f)["wdbc"]
    a, se, z = w["auc_delong_quadratic"], w["auc_se_delong_quadratic"], scipy.stats.norm.ppf(0.975)
    ref["auc_ci"] = r12([max(a - z * se, 0.0), min(a + z * se, 1.0)])
    pr = np.round(p, 1)
    rows = []
    n = len(y)
    for t in [0.1, 0.2, 0.3, 0.5]:
        tn, fp, fn, tp = confusion_matrix(y, (pr >= t).astype(float), labels=[0.0, 1.0]).ravel()
        lo, hi = proportion_confint(tp, tp + fn, alpha=0.05, method="beta")
        rows.append({"threshold": t, "on_threshold": int(np.sum(pr == t)), "tp": int(tp), "fp": int(fp), "fn": int(fn), "tn": int(tn),
                     "net_benefit": r12(tp / n - fp / n * t / (1 - t)), "sensitivity_ci": r12([lo, hi])})
    ref["on_threshold"] = rows
    with open(os.path.join(HERE, "oe.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    write_oe_reference()
