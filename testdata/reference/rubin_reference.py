"""Rubin's rules and the Barnard-Rubin degrees of freedom (rubin.json),
transcribed here from the papers with numpy and scipy.stats, independently
of riskaudit's meta/rubin.go:

  Rubin (1987), Multiple Imputation for Nonresponse in Surveys, ch. 3:
    Qbar = mean(q), Ubar = mean(u), B = var(q, ddof=1),
    T = Ubar + (1 + 1/m) B
  Barnard & Rubin (1999), Biometrika 86:948-955:
    lambda = (1 + 1/m) B / T, nu_old = (m - 1) / lambda^2,
    nu_obs = (nu_com + 1) / (nu_com + 3) * nu_com * (1 - lambda),
    nu = nu_old nu_obs / (nu_old + nu_obs)
  van Buuren (2018), Flexible Imputation of Missing Data, 2nd ed., 2.3.5:
    fmi = (nu + 1) / (nu + 3) * lambda + 2 / (nu + 3)
  interval Qbar -/+ t_{nu, 0.975} sqrt(T) by scipy.stats.t.ppf.

The total variance and lambda are also checked against statsmodels'
MICE.combine (statsmodels.imputation.mice), whose cov_params is T and
whose frac_miss_info is lambda, by handing it the m results as it reads
them; the script stops if the two disagree. Called from make_reference.py.
"""
import json
import math
import os
from types import SimpleNamespace

import numpy as np
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))

# Each dataset: name, estimates q_j, variances u_j, nu_com (None: infinite).
DATASETS = [
    ("five imputations, logit AUC", [1.52, 1.47, 1.58, 1.50, 1.55], [0.0041, 0.0039, 0.0044, 0.0040, 0.0042], None),
    ("five imputations, small cohort", [1.52, 1.47, 1.58, 1.50, 1.55], [0.0041, 0.0039, 0.0044, 0.0040, 0.0042], 60.0),
    ("twenty imputations, ln O/E", [0.081, 0.064, 0.102, 0.073, 0.090, 0.055, 0.088, 0.079, 0.070, 0.095,
                                    0.061, 0.084, 0.077, 0.099, 0.068, 0.086, 0.072, 0.093, 0.066, 0.080],
     [0.0009 + 0.00001 * j for j in range(20)], 2999.0),
    ("two imputations, much missing", [0.95, 1.20], [0.010, 0.012], 200.0),
    ("identical imputations: B = 0", [0.30, 0.30, 0.30], [0.02, 0.02, 0.02], 100.0),
    ("identical imputations, large sample", [0.30, 0.30, 0.30], [0.02, 0.02, 0.02], None),
    ("between dominates", [-0.4, 0.6, 0.1, 1.2, -0.9, 0.3, 0.8], [0.001, 0.002, 0.001, 0.0015, 0.002, 0.001, 0.0012], 500.0),
]


def rubin(q, u, nu_com):
    q, u = np.asarray(q, float), np.asarray(u, float)
    m = len(q)
    qbar, ubar = q.mean(), u.mean()
    b = q.var(ddof=1)
    t = ubar + (1 + 1 / m) * b
    lam = (1 + 1 / m) * b / t
    nu_old = math.inf if lam == 0 else (m - 1) / lam ** 2
    if nu_com is None:
        nu = nu_old
    else:
        nu_obs = (nu_com + 1) / (nu_com + 3) * nu_com * (1 - lam)
        nu = nu_obs if math.isinf(nu_old) else nu_old * nu_obs / (nu_old + nu_obs)
    fmi = lam if math.isinf(nu) else (nu + 1) / (nu + 3) * lam + 2 / (nu + 3)
    crit = stats.norm.ppf(0.975) if math.isinf(nu) else stats.t.ppf(0.975, nu)
    h = crit * math.sqrt(t)
    return {"estimate": qbar, "within": ubar, "between": b, "total": t, "lambda": lam,
            "riv": (1 + 1 / m) * b / ubar, "df": nu, "fmi": fmi, "ci": [qbar - h, qbar + h]}


def statsmodels_check(name, q, u, want):
    """MICE.combine pools the parameters of fitted models; two parameters
    are handed to it (the estimate and a copy shifted by 1, with the same
    variances) since it takes diagonals of covariance matrices."""
    from statsmodels.imputation.mice import MICE

    class Fitted:
        def __init__(self, qj, uj):
            self._results = SimpleNamespace(params=np.array([qj, qj + 1.0]),
                                            cov_params=lambda: np.diag([uj, uj]))
            self.scale = 1.0

    res = [Fitted(qj, uj) for qj, uj in zip(q, u)]
    fake = SimpleNamespace(results_list=res, exog_names=["a", "b"], endog_names="y", model_class=None)
    try:
        out = MICE.combine(fake)
        cov, fmi = np.asarray(out.cov_params()), np.asarray(out.frac_miss_info)
    except Exception as e:  # the results class wants more of a model
        raise SystemExit(f"rubin {name}: statsmodels MICE.combine could not be called: {e}")
    if abs(cov[0, 0] - want["total"]) > 1e-12 * want["total"] or abs(fmi[0] - want["lambda"]) > 1e-10:
        raise SystemExit(f"rubin {name}: statsmodels MICE.combine gives T {cov[0, 0]!r}, lambda {fmi[0]!r}; "
                         f"the transcription {want['total']!r}, {want['lambda']!r}")


def write_rubin_reference(r12):
    out = []
    for name, q, u, nu_com in DATASETS:
        want = rubin(q, u, nu_com)
        if want["between"] > 0:
            statsmodels_check(name, q, u, want)
        row = {"name": name, "q": q, "u": u, "df_complete": nu_com}
        for k, v in want.items():
            row[k] = None if (not isinstance(v, list) and math.isinf(v)) else r12(v)
        out.append(row)
    # The Brier score's variance as a mean of squared errors: the sample
    # variance (ddof=1) of (p - y)^2 over n, by numpy, on invented rows.
    rng = np.random.default_rng(20261203)
    p = rng.uniform(0.02, 0.6, 40)
    y = (rng.uniform(size=40) < p).astype(float)
    d = (p - y) ** 2
    brier = {"y": y.tolist(), "p": r12(p), "brier": r12(d.mean()), "variance": r12(np.var(d, ddof=1) / len(d))}
    ref = {"_source": "testdata/reference/rubin_reference.py (numpy and scipy.stats transcription of Rubin 1987 and "
                      "Barnard & Rubin 1999; T and lambda checked against statsmodels MICE.combine; numpy var for the Brier variance)",
           "datasets": out, "brier_variance": brier}
    with open(os.path.join(HERE, "rubin.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")
