#!/usr/bin/python3
"""Reference values for hvshot's uncertainty per parameter (package waveform/uncert),
computed with SciPy, statsmodels and NumPy (Debian's python3-scipy, python3-statsmodels,
python3-numpy) independently of the Go code.

- coverage factors: k = t_p(nu) with p = 2 Phi(2) - 1 = 95.45 %, the coverage GUM
  (JCGM 100:2008) Table G.2 lists beside 95 % so that k(inf) = 2: scipy.stats.t.ppf;
- an AR(1) noise sequence (invented: phi 0.6, standard deviation 2.0, 2000 samples,
  numpy.random.default_rng(15)) and its model as hvshot's NoiseOf defines it: the
  least-squares line taken out (numpy.polyfit), phi by Yule-Walker with the biased
  autocovariance (statsmodels.regression.linear_model.yule_walker, method "mle", no
  further demeaning), the standard deviation with n - 2 in the denominator;
- the variance of the mean of n samples of a stationary AR(1) process, for the Monte
  Carlo's check: sigma^2/n^2 sum_{|k|<n} (n - |k|) phi^|k|, summed with NumPy;
- the linear interpolation's response of a first-order low-pass run forward and
  backward (the test voltage function's recursive form) against k(f) = 1/(1 + 2.2 f^2),
  f in MHz, IEC 60060-1:2010, at 10 ns: |H(e^jw)|^2 of y[i] = a y[i-1] + (1 - a) x[i],
  a = exp(-dt/tau_k), tau_k = sqrt(2.2)/(2 pi) us, by scipy.signal.freqz.

Run:  /usr/bin/python3 uncert_refs.py > uncert_refs.json"""
import json
import numpy as np
import scipy
import scipy.signal
import scipy.stats
import statsmodels
from statsmodels.regression.linear_model import yule_walker

out = {"versions": {"numpy": np.__version__, "scipy": scipy.__version__, "statsmodels": statsmodels.__version__}}

p = 2 * scipy.stats.norm.cdf(2) - 1
nus = [1, 2, 3, 5, 10, 20, 22.6, 30, 31, 50, 100, 1000]
out["coverage"] = {"p": p, "nu": nus, "k": [float(scipy.stats.t.ppf((1 + p) / 2, nu)) for nu in nus]}

rng = np.random.default_rng(15)
phi, sigma, n = 0.6, 2.0, 2000
e = np.empty(n)
e[0] = sigma * rng.standard_normal()
g = sigma * np.sqrt(1 - phi * phi)
for i in range(1, n):
    e[i] = phi * e[i - 1] + g * rng.standard_normal()
x = e + 0.001 * np.arange(n) + 5.0  # a level and a slow trend, which the model leaves out
i = np.arange(n)
d = x - np.polyval(np.polyfit(i, x, 1), i)
rho, _ = yule_walker(d, order=1, method="mle", demean=False)
out["ar1"] = {"x": [float(v) for v in x], "phi": float(rho[0]), "rms": float(np.sqrt(np.sum(d * d) / (n - 2)))}

def var_mean(phi, sigma, n):
    k = np.arange(-(n - 1), n)
    return sigma**2 / n**2 * np.sum((n - np.abs(k)) * phi ** np.abs(k))

out["mean_sd"] = [{"phi": ph, "sigma": 1.0, "n": 500, "sd": float(np.sqrt(var_mean(ph, 1.0, 500)))} for ph in (0.0, 0.5, 0.9)]

dt = 10e-9
tau = np.sqrt(2.2) / (2 * np.pi) * 1e-6
a = np.exp(-dt / tau)
f = np.array([0.1e6, 0.5e6, 1e6, 2e6, 5e6])
_, h = scipy.signal.freqz([1 - a], [1, -a], worN=f, fs=1 / dt)
out["recursive_tvf_10ns"] = {"f_hz": f.tolist(), "gain": (np.abs(h) ** 2).tolist(), "k": (1 / (1 + 2.2 * (f / 1e6) ** 2)).tolist()}

json.dump(out, __import__("sys").stdout, indent=1)
print()
