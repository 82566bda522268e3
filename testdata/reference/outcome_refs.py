"""Reference values for waveform/outcome: probit maximum-likelihood fits by statsmodels
(Debian python3-statsmodels) and Dixon and Mood's up-and-down estimates computed here
from their paper's formulas, on simulated series whose true U50 and sigma are known.

The series are simulated (numpy's default_rng, fixed seeds): no laboratory's data.
Run with Debian's /usr/bin/python3; writes outcome_refs.json beside this file.
"""
import json
import warnings
import os

import numpy as np
import statsmodels
import statsmodels.api as sm
from scipy.stats import norm

# a separated series (seed 1000) makes statsmodels warn; its "converged" says so
warnings.simplefilter("ignore")
U50, SIGMA = 100e3, 3e3  # V: a lightning-impulse gap, z = 3 %


def probit_ml(levels, discharged):
    """statsmodels Probit on the individual applications; U50 = -b0/b1, sigma = 1/b1,
    se(U50) by the delta method from the coefficients' covariance."""
    x = sm.add_constant(np.asarray(levels) / 1e3)
    res = sm.Probit(np.asarray(discharged, dtype=float), x).fit(disp=0, tol=1e-12, maxiter=200)
    b0, b1 = res.params
    cov = res.cov_params()
    g = np.array([-1 / b1, b0 / b1**2])
    return {"u50_v": float(-b0 / b1 * 1e3), "sigma_v": float(1 / b1 * 1e3),
            "u50_std_err_v": float(np.sqrt(g @ cov @ g) * 1e3), "converged": bool(res.mle_retvals["converged"])}


def dixon_mood(levels, discharged, step):
    """Dixon and Mood (1948): from the first change of response (the application
    before it included), on the less frequent event."""
    start = next(i - 1 for i in range(1, len(levels)) if discharged[i] != discharged[i - 1])
    lv, dc = np.asarray(levels[start:]), np.asarray(discharged[start:], dtype=bool)
    on_d = dc.sum() <= (~dc).sum()
    ev = lv[dc] if on_d else lv[~dc]
    y0 = ev.min()
    i = np.round((ev - y0) / step)
    n, a, b = len(i), i.sum(), (i**2).sum()
    u50 = y0 + step * (a / n + (-0.5 if on_d else 0.5))
    ratio = (n * b - a * a) / n**2
    sigma = 1.620 * step * (ratio + 0.029) if ratio > 0.3 else None
    return {"u50_v": float(u50), "sigma_v": sigma, "ratio": float(ratio), "useful": int(len(lv))}


def up_and_down(rng, start, step, n):
    levels, dis, u = [], [], start
    for _ in range(n):
        d = bool(rng.random() < norm.cdf((u - U50) / SIGMA))
        levels.append(float(u))
        dis.append(d)
        u = u - step if d else u + step
    return levels, dis


out = {"source": "simulated; statsmodels %s Probit, Dixon and Mood (1948) formulas" % statsmodels.__version__,
       "true_u50_v": U50, "true_sigma_v": SIGMA, "multiple_level": [], "up_and_down": []}
for seed in range(5):
    rng = np.random.default_rng(1000 + seed)
    levels, dis = [], []
    for lv in (94e3, 97e3, 100e3, 103e3, 106e3):
        for _ in range(10):
            levels.append(lv)
            dis.append(bool(rng.random() < norm.cdf((lv - U50) / SIGMA)))
    out["multiple_level"].append({"seed": 1000 + seed, "levels_v": levels, "discharged": dis, "probit": probit_ml(levels, dis)})
for seed in range(8):
    rng = np.random.default_rng(2000 + seed)
    levels, dis = up_and_down(rng, 94e3, 3e3, 40)
    out["up_and_down"].append({"seed": 2000 + seed, "step_v": 3e3, "levels_v": levels, "discharged": dis,
                               "probit": probit_ml(levels, dis), "dixon_mood": dixon_mood(levels, dis, 3e3)})
with open(os.path.join(os.path.dirname(os.path.abspath(__file__)), "outcome_refs.json"), "w") as f:
    json.dump(out, f, indent=1)
for s in out["up_and_down"]:
    print(s["seed"], round(s["probit"]["u50_v"]), round(s["dixon_mood"]["u50_v"]), round(s["probit"]["sigma_v"]), s["dixon_mood"]["sigma_v"], round(s["dixon_mood"]["ratio"], 2))
for s in out["multiple_level"]:
    print(s["seed"], s["probit"])
