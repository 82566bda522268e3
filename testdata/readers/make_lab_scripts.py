#!/usr/bin/python3
"""Whole impulse captures written the way lab scripts write them, for the end-to-end
test in cmd/hvshot (TestLabScriptCaptures).

The values are invented: the handbook 1.2/50 double exponential (tau1 = 68.2 us,
tau2 = 0.405 us, high-voltage engineering textbooks), peak 300 kV, sampled every
20 ns from -5 us to 100 us. Its reference parameters (T1 = 1.2023 us, T2 = 49.99 us)
are those of testdata/reference/impulse_refs.json ("handbook-lightning"), computed by
SciPy outside hvshot. The files are written by pandas' to_csv (Debian's
python3-pandas), not by hvshot. Run from this folder:
    /usr/bin/python3 make_lab_scripts.py
"""
import numpy as np
import pandas as pd

tau1, tau2, peak = 68.2e-6, 0.405e-6, 300e3
t = np.arange(-250, 5001) * 20e-9
u = np.where(t > 0, np.exp(-np.maximum(t, 0) / tau1) - np.exp(-np.maximum(t, 0) / tau2), 0.0)
# the double exponential's maximum in closed form: ln(tau1/tau2) tau1 tau2 / (tau1 - tau2)
tp = np.log(tau1 / tau2) * tau1 * tau2 / (tau1 - tau2)
u *= peak / (np.exp(-tp / tau1) - np.exp(-tp / tau2))

# engineering units in snake_case names, pandas' default index kept
pd.DataFrame({"t_us": t * 1e6, "u_kv": u / 1e3}).to_csv("lab_pandas_index_t_us_u_kv.csv")
# SI names, no index, the low side of a 1000:1 divider
pd.DataFrame({"time_s": t, "voltage_v": u / 1000}).to_csv("lab_pandas_time_s_voltage_v_lowside.csv", index=False)
