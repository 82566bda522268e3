#!/usr/bin/python3
"""Reference signals for hvshot's coil and antenna reconstruction, simulated outside
hvshot with scipy.integrate.solve_ivp (Radau, rtol 1e-10) and mutual inductances from
scipy.integrate.dblquad (Debian's python3-scipy and python3-numpy).

Coil circuit: the coil (self-inductance L, resistance Rc) sees the EMF M dI/dt and
drives the load R || C; the state is the coil current Ic and the load voltage V:
    L dIc/dt = M dI/dt - Rc Ic - V,   C dV/dt = Ic - V/R   (C = 0: V = R Ic).
Antenna: a Norton source G dE/dt into the RC droop: dV/dt = G dE/dt - V/tau.

Writes one .npy per case, columns (t, V at the scope, true current or field), and
probe_refs.json with the circuit values and the mutual inductances.
Run:  /usr/bin/python3 probe_refs.py"""
import json
import numpy as np
from scipy.integrate import solve_ivp, dblquad

MU0 = 1.25663706212e-6
dt, n, t_on = 4e-9, 10000, 2e-6
t = np.arange(n) * dt

def dexp(tau1, tau2, peak):
    tp = np.log(tau1 / tau2) * tau1 * tau2 / (tau1 - tau2)
    k = peak / (np.exp(-tp / tau1) - np.exp(-tp / tau2))
    i = lambda s: np.where(s > t_on, k * (np.exp(-(s - t_on) / tau1) - np.exp(-(s - t_on) / tau2)), 0.0)
    di = lambda s: np.where(s > t_on, k * (-np.exp(-(s - t_on) / tau1) / tau1 + np.exp(-(s - t_on) / tau2) / tau2), 0.0)
    return i, di

def dsine(f, damp, amp):
    w = 2 * np.pi * f
    i = lambda s: np.where(s > t_on, amp * np.exp(-(s - t_on) / damp) * np.sin(w * (s - t_on)), 0.0)
    di = lambda s: np.where(s > t_on, amp * np.exp(-(s - t_on) / damp) * (w * np.cos(w * (s - t_on)) - np.sin(w * (s - t_on)) / damp), 0.0)
    return i, di

def piecewise(f, y0, breaks):
    """solve_ivp between the kinks of the drive, so no step straddles one."""
    edges = [0.0] + [b for b in breaks if 0 < b < t[-1]] + [t[-1]]
    y = np.zeros((len(y0), n))
    state = np.array(y0, dtype=float)
    for a, b in zip(edges[:-1], edges[1:]):
        m = (t >= a) & (t <= b) if b == edges[-1] else (t >= a) & (t < b)
        te = t[m]
        mid = (a + b) / 2
        sol = solve_ivp(lambda s, y: f(s, y, mid), (a, b), state, method="Radau", t_eval=np.concatenate([te, [b]]) if te.size == 0 or te[-1] < b else te,
                        rtol=1e-10, atol=1e-13, max_step=dt, first_step=dt / 1000)
        assert sol.success, sol.message
        k = te.size
        y[:, m] = sol.y[:, :k]
        state = sol.y[:, -1]
    return y

def coil_case(name, M, L, Rc, R, C, cur):
    i, di = cur
    if C == 0:
        f = lambda s, y, mid: [(M * di(s) - (Rc + R) * y[0]) / L]
        v = R * piecewise(f, [0.0], [t_on])[0]
    else:
        f = lambda s, y, mid: [(M * di(s) - Rc * y[0] - y[1]) / L, (y[0] - y[1] / R) / C]
        v = piecewise(f, [0.0, 0.0], [t_on])[1]
    np.save(f"coil_{name}.npy", np.column_stack([t, v, i(t)]))
    return dict(M_h=M, L_h=L, Rc_ohm=Rc, R_ohm=R, C_f=C, peak_a=float(np.max(np.abs(i(t)))))

def antenna_case(name, G, tau, e, de, kinks):
    # dE/dt is constant on each piece: take it at the piece's middle, so the solver
    # never sees the jump at a piece's ends
    f = lambda s, y, mid: [G * de(mid) - y[0] / tau]
    v = piecewise(f, [0.0], kinks)[0]
    np.save(f"antenna_{name}.npy", np.column_stack([t, v, e(t)]))
    return dict(gain=G, tau_s=tau, peak_v_per_m=float(np.max(np.abs(e(t)))))

cases = {
    # derivative regime: L/R = 1 ns, far shorter than the 1 us rise
    "derivative_dexp": coil_case("derivative_dexp", 1e-9, 50e-9, 0.1, 50.0, 0.0, dexp(10e-6, 1e-6, 2e3)),
    "derivative_sine": coil_case("derivative_sine", 1e-9, 50e-9, 0.1, 50.0, 0.0, dsine(300e3, 5e-6, 1.5e3)),
    # self-integrating regime: L/R = 100 us, far longer than the record's events
    "selfint_dexp": coil_case("selfint_dexp", 2e-8, 5e-6, 0.0, 0.05, 0.0, dexp(10e-6, 1e-6, 2e3)),
    # a 1 Mohm scope input with 100 pF: the L C term matters
    "loaded_sine": coil_case("loaded_sine", 1e-9, 1e-6, 1.0, 1e6, 100e-12, dsine(300e3, 5e-6, 1.5e3)),
}
step = lambda s: np.where(s < t_on, 0.0, np.where(s < t_on + 20e-9, (s - t_on) / 20e-9, 1.0)) * 15e3
ramp = lambda s: np.clip((s - t_on) / 10e-6, 0, 1) * 15e3
dstep = lambda s: np.where((s >= t_on) & (s < t_on + 20e-9), 15e3 / 20e-9, 0.0)
dramp = lambda s: np.where((s >= t_on) & (s < t_on + 10e-6), 15e3 / 10e-6, 0.0)
ant = {"step": antenna_case("step", 0.06, 26e-6, step, dstep, [t_on, t_on + 20e-9]),
       "ramp": antenna_case("ramp", 0.06, 26e-6, ramp, dramp, [t_on, t_on + 10e-6])}

# Mutual inductances: the flux of mu0 I / (2 pi r) through the coil area, per ampere.
N = 3
h, r1, r2 = 0.05, 0.5, 0.55
m_rect, _ = dblquad(lambda z, r: MU0 * N / (2 * np.pi * r), r1, r2, 0, h, epsabs=1e-20, epsrel=1e-12)
a, d = 0.04, 0.5
m_circ, _ = dblquad(lambda y, x: MU0 * N / (2 * np.pi * x), d - a, d + a,
                    lambda x: -np.sqrt(max(a * a - (x - d) ** 2, 0)), lambda x: np.sqrt(max(a * a - (x - d) ** 2, 0)),
                    epsabs=1e-20, epsrel=1e-12)
s = 0.02  # small square coil of side s centred at distance d
m_small, _ = dblquad(lambda y, x: MU0 * N / (2 * np.pi * x), d - s / 2, d + s / 2, -s / 2, s / 2, epsabs=1e-20, epsrel=1e-12)
out = {"source": "probe_refs.py: scipy.integrate.solve_ivp (Radau) and dblquad (Debian python3-scipy)",
       "dt_s": dt, "coil": cases, "antenna": ant,
       "mutual": {"turns": N, "rect": dict(height_m=h, r1_m=r1, r2_m=r2, m_h=m_rect),
                  "circular": dict(radius_m=a, dist_m=d, m_h=m_circ),
                  "small_square": dict(side_m=s, dist_m=d, m_h=m_small)}}
with open("probe_refs.json", "w") as f:
    json.dump(out, f, indent=1)
print(json.dumps(out["mutual"], indent=1))
