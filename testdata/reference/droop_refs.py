#!/usr/bin/python3
"""A reference record for the antenna's droop estimate on a record that starts before
t = 0, simulated outside hvshot with scipy.integrate.solve_ivp (Debian's python3-scipy).

The field (invented) rises linearly by 15 kV/m over 2 us from t_on = 10 us after the
record's first sample and then holds; the antenna is a Norton source G dE/dt into the RC
droop (G = 0.06, tau = 26 us): dV/dt = G dE/dt - V/tau, solved piece by piece between the
ramp's kinks. 20,000 samples of 20 ns (400 us). Writes antenna_slow_ramp.npy, columns
(t, V at the scope, true field).
Run:  /usr/bin/python3 droop_refs.py"""
import numpy as np
from scipy.integrate import solve_ivp

dt, n, t_on, rise, G, tau, E = 20e-9, 20000, 10e-6, 2e-6, 0.06, 26e-6, 15e3
t = np.arange(n) * dt
slope = E / rise
v = np.zeros(n)
y0 = 0.0
for a, b, de in [(0, t_on, 0.0), (t_on, t_on + rise, slope), (t_on + rise, t[-1], 0.0)]:
    sel = (t >= a) & (t <= b)
    if not sel.any():
        continue
    sol = solve_ivp(lambda s, y: [G * de - y[0] / tau], (a, b), [y0], t_eval=t[sel], method="Radau", rtol=1e-11, atol=1e-14)
    v[sel] = sol.y[0]
    y0 = solve_ivp(lambda s, y: [G * de - y[0] / tau], (a, b), [y0], method="Radau", rtol=1e-11, atol=1e-14).y[0][-1]
e = np.clip((t - t_on) / rise, 0, 1) * E
np.save("antenna_slow_ramp.npy", np.column_stack([t, v, e]))
print("peak V", v.max(), "at", t[v.argmax()])
