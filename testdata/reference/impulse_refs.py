#!/usr/bin/python3
"""Reference values for hvshot's impulse evaluation, computed independently of hvshot
with SciPy and NumPy (Debian's python3-scipy and python3-numpy).

1. Double exponentials u(t) = exp(-t/tau1) - exp(-t/tau2): the 30/90/50 % instants are
   solved on the closed form with scipy.optimize.brentq to xtol 1e-12 relative, then the
   IEC 60060-1 definitions are applied (T1 = 1.67 (t90 - t30), O1 = t30 - 0.3 T1,
   T2 = t50 - O1; switching: T_AB = t90 - t30, T2 from the true origin, Tp = K T_AB with
   K = 2.42 - 3.08e-3 T_AB + 1.51e-4 T2 in us (from memory), Td above 90 %).
2. The residual procedure on double exponentials with a damped oscillation: the base
   curve fitted with scipy.optimize.curve_fit over 20 % front .. 40 % tail, the residual
   filtered by k(f) = 1/(1 + 2.2 f^2) (f in MHz) with numpy.fft.rfft on a zero-padded
   copy after removing the line through its ends, the test voltage curve read for
   Ut, T1, T2 and beta' = (Ue - Ub)/Ue.

Run:  /usr/bin/python3 impulse_refs.py > impulse_refs.json"""
import json
import numpy as np
from scipy.optimize import brentq, curve_fit

def de(t, tau1, tau2):
    t = np.maximum(t, 0.0)
    return np.exp(-t / tau1) - np.exp(-t / tau2)

def shape_params(tau1, tau2):
    tp = np.log(tau1 / tau2) * tau1 * tau2 / (tau1 - tau2)
    pk = de(tp, tau1, tau2)
    f = lambda t, lv: de(t, tau1, tau2) - lv * pk
    kw = dict(xtol=1e-12 * tp, rtol=1e-15, maxiter=500)
    t30 = brentq(f, 0, tp, args=(0.3,), **kw)
    t90 = brentq(f, 0, tp, args=(0.9,), **kw)
    hi = tp + tau1
    while f(hi, 0.5) > 0:
        hi += tau1
    t50 = brentq(f, tp, hi, args=(0.5,), **kw)
    d90 = brentq(f, tp, hi, args=(0.9,), **kw)
    T1 = 1.67 * (t90 - t30)
    O1 = t30 - 0.3 * T1
    tab = t90 - t30
    K = 2.42 - 3.08e-3 * tab * 1e6 + 1.51e-4 * t50 * 1e6
    return dict(tau1_s=tau1, tau2_s=tau2, peak_factor=pk, peak_delay_s=tp,
                t30_s=t30, t90_s=t90, t50_s=t50, front_time_s=T1, virtual_origin_s=O1,
                time_to_half_s=t50 - O1, t_ab_s=tab, switching_time_to_half_s=t50,
                switching_k=K, switching_time_to_peak_s=K * tab, time_above_90_s=d90 - t90)

shapes = {
    "handbook-lightning": (68.2e-6, 0.405e-6),   # textbook 1.2/50 coefficients
    "handbook-switching": (3155e-6, 62.5e-6),    # textbook 250/2500 coefficients
    "lightning-long-tail": (90e-6, 0.35e-6),
    "lightning-short-tail": (45e-6, 0.5e-6),
    "lightning-slow-front": (70e-6, 0.75e-6),
    "switching-short": (2200e-6, 45e-6),
}

def tvf_residual_case(f_mhz, amp, damp_s):
    dt, n, td = 5e-9, 24000, 2e-6
    tau1, tau2 = 68.2e-6, 0.405e-6
    t = np.arange(n) * dt
    base_true = de(t - td, tau1, tau2)
    u = t - td
    osc = np.where(u >= 0, amp * np.exp(-np.maximum(u, 0) / damp_s) * np.sin(2 * np.pi * f_mhz * 1e6 * np.maximum(u, 0)), 0.0)
    y = base_true + osc
    ip = int(np.argmax(y)); ue = y[ip]
    i_from = int(np.ceil(np.argmax(y >= 0.2 * ue)))
    after = np.nonzero(y[ip:] <= 0.4 * ue)[0]
    i_to = ip + int(after[0]) + 1
    model = lambda tt, U, t0, a, b: np.where(tt >= t0, U * (np.exp(-(tt - t0) / a) - np.exp(-np.maximum(tt - t0, 0) / b)), 0.0)
    p, _ = curve_fit(model, t[i_from:i_to], y[i_from:i_to], p0=[1.0, td, tau1, tau2], xtol=1e-14, ftol=1e-14, maxfev=20000)
    base = model(t, *p)
    ub = base.max()
    r = y - base
    line = r[0] + (r[-1] - r[0]) * np.arange(n) / (n - 1)
    rr = r - line
    m = 1
    while m < 2 * n:
        m *= 2
    spec = np.fft.rfft(rr, m)
    f = np.fft.rfftfreq(m, dt) / 1e6
    rf = np.fft.irfft(spec / (1 + 2.2 * f ** 2), m)[:n] + line
    tv = base + rf
    it = int(np.argmax(tv)); ut = tv[it]
    def cross_up(x, lv, hi):
        idx = np.nonzero((x[:hi][:-1] < lv) & (x[1:hi] >= lv))[0]
        k = idx[-1] if lv < 0.5 else idx[0]
        return k + (lv - x[k]) / (x[k + 1] - x[k])
    a30 = cross_up(tv, 0.3 * ut, it + 1)
    idx = np.nonzero((tv[int(a30):it] < 0.9 * ut) & (tv[int(a30) + 1:it + 1] >= 0.9 * ut))[0]
    k = int(a30) + idx[0]
    a90 = k + (0.9 * ut - tv[k]) / (tv[k + 1] - tv[k])
    d = np.nonzero((tv[it:-1] > 0.5 * ut) & (tv[it + 1:] <= 0.5 * ut))[0]
    k = it + d[0]
    a50 = k + (tv[k] - 0.5 * ut) / (tv[k] - tv[k + 1])
    T1 = 1.67 * (a90 - a30) * dt
    O1 = a30 * dt - 0.3 * T1
    return dict(f_mhz=f_mhz, amp=amp, damp_s=damp_s, dt_s=dt, n=n, td_s=td, tau1_s=tau1, tau2_s=tau2,
                extreme=ue, base_peak=ub, test_voltage=ut, overshoot_pct=100 * (ue - ub) / ue,
                front_time_s=T1, time_to_half_s=a50 * dt - O1, virtual_origin_s=O1)

out = {
    "source": "impulse_refs.py: scipy.optimize.brentq / curve_fit and numpy.fft (Debian python3-scipy, python3-numpy)",
    "shapes": {k: shape_params(*v) for k, v in shapes.items()},
    "oscillating": [tvf_residual_case(f, a, d) for f, a, d in [(0.3, 0.05, 3e-6), (0.5, 0.10, 2e-6), (1.0, 0.10, 1e-6), (3.0, 0.15, 0.5e-6)]],
}
print(json.dumps(out, indent=1))
