#!/usr/bin/python3
"""Reference values for hvshot's generator circuit package (waveform/circuit), computed
outside hvshot with Debian's python3-scipy and python3-numpy, written apart from the Go
code.

The two-capacitor circuit: C1 (the generator, charged to V0 = 1 V) feeds the load C2
through the front resistor Rf; the tail resistor Rt sits across C1 (generator side) or
across C2 (load side). State (v1, v2):
    generator side: C1 v1' = -v1/Rt - (v1 - v2)/Rf,   C2 v2' = (v1 - v2)/Rf
    load side:      C1 v1' = -(v1 - v2)/Rf,           C2 v2' = (v1 - v2)/Rf - v2/Rt
v2 is the output. scipy.integrate.solve_ivp (Radau, rtol 1e-11) integrates it from
v1 = 1, v2 = 0; the instants are found on its dense output with scipy.optimize.brentq.

Shapes: lightning T1 = k (t90 - t30), k = 1.67 as IEC 60060-1 writes it (1/0.6 where a
case says so), O1 = t30 - 0.3 T1, T2 = t50 - O1; switching Tp = the time of the peak and
T2 = t50, both from the true origin (t = 0).

Designs: the double exponential with the nominal T1/T2 (Tp/T2) by scipy.optimize.fsolve
on the logarithms of its time constants (times by brentq on the closed form), then the
circuit's resistors from the quadratic of docs/method.md by numpy.roots (the root with
the smaller Rf), then the circuit simulated as above: its T1, T2 and efficiency (peak
over V0) are the check. Circuits: given Rf, Rt, C1, C2, the time constants from
numpy.linalg.eigvals of the state matrix and the simulated shape and efficiency.

Run:  cd testdata/reference && /usr/bin/python3 circuit_refs.py   (writes circuit_refs.json)"""
import json
import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import brentq, fsolve


def dexp_times(tau1, tau2, switching, k):
    """Front and tail times of exp(-t/tau1) - exp(-t/tau2) by brentq on the closed form."""
    u = lambda t: np.exp(-t / tau1) - np.exp(-t / tau2)
    tp = np.log(tau1 / tau2) * tau1 * tau2 / (tau1 - tau2)
    up = u(tp)
    cross = lambda f, a, b: brentq(lambda t: u(t) - f * up, a, b, xtol=1e-22, rtol=1e-15, maxiter=500)
    hi = tp + 50 * tau1
    t50 = cross(0.5, tp, hi)
    if switching:
        return tp, t50
    t30, t90 = cross(0.3, 0, tp), cross(0.9, 0, tp)
    t1 = k * (t90 - t30)
    return t1, t50 - (t30 - 0.3 * t1)


def shape_taus(front, tail, switching, k):
    guess = [np.log(tail / 0.733), np.log(front / 2.96)] if not switching else [np.log(tail / 0.8), np.log(front / 4)]
    def f(x):
        a, b = dexp_times(np.exp(x[0]), np.exp(x[1]), switching, k)
        return [np.log(a / front), np.log(b / tail)]
    x, info, ok, msg = fsolve(f, guess, xtol=1e-13, full_output=True)
    # judged by the residual: fsolve may stop at "no further improvement" on it
    assert max(abs(v) for v in f(x)) < 1e-11, msg
    return float(np.exp(x[0])), float(np.exp(x[1]))


def invert(tau1, tau2, c1, c2, side):
    """Rf, Rt from tau1 + tau2 = Rt (C1 + C2) + Rf c and tau1 tau2 = Rf Rt C1 C2, with
    c = C2 (generator side) or C1 (load side): x = Rf c and y = Rt (C1 + C2) are the roots
    of z^2 - S z + P (C1 + C2)/other. None when they are complex."""
    c, other = (c2, c1) if side == "generator_side" else (c1, c2)
    s, q = tau1 + tau2, tau1 * tau2 * (c1 + c2) / other
    r = np.roots([1.0, -s, q])
    if np.iscomplexobj(r) and np.any(np.abs(r.imag) > 0):
        return None
    x, y = sorted(r.real)
    return x / c, y / (c1 + c2)


def matrix(rf, rt, c1, c2, side):
    if side == "generator_side":
        return np.array([[-(1 / rt + 1 / rf) / c1, 1 / (rf * c1)], [1 / (rf * c2), -1 / (rf * c2)]])
    return np.array([[-1 / (rf * c1), 1 / (rf * c1)], [1 / (rf * c2), -(1 / rf + 1 / rt) / c2]])


def simulate(rf, rt, c1, c2, side, switching, k):
    a = matrix(rf, rt, c1, c2, side)
    lam = np.sort(-np.linalg.eigvals(a).real)
    tau1, tau2 = 1 / lam[0], 1 / lam[1]
    end = 12 * tau1
    sol = solve_ivp(lambda t, y: a @ y, (0, end), [1.0, 0.0], method="Radau", dense_output=True,
                    rtol=1e-11, atol=1e-15, first_step=tau2 / 1e4, max_step=tau2 * 20)
    assert sol.success, sol.message
    v2 = lambda t: sol.sol(t)[1]
    dv2 = lambda t: (a @ sol.sol(t))[1]
    # the peak where v2' changes sign, bracketed on a grid of the solver's own points
    ts = sol.t
    d = np.array([dv2(t) for t in ts])
    i = int(np.argmax(d < 0))
    tp = brentq(dv2, ts[i - 1], ts[i], xtol=1e-22, rtol=1e-15)
    up = v2(tp)
    cross = lambda f, lo, hi: brentq(lambda t: v2(t) - f * up, lo, hi, xtol=1e-22, rtol=1e-15)
    t50 = cross(0.5, tp, end)
    if switching:
        front, tail = tp, t50
    else:
        t30, t90 = cross(0.3, 0, tp), cross(0.9, 0, tp)
        front = k * (t90 - t30)
        tail = t50 - (t30 - 0.3 * front)
    return dict(tau1_s=float(tau1), tau2_s=float(tau2), front_s=float(front), tail_s=float(tail), efficiency=float(up))


K_IEC = 1.67
designs = [
    # C. L. Wadhwa, High Voltage Engineering, example 3.2 as the issue quotes it: 12
    # stages of 0.3 uF, load 0.4 nF, 1.2/50
    ("textbook 12 x 0.3 uF, 0.4 nF, 1.2/50", 0.3e-6 / 12, 0.4e-9, "generator_side", 1.2e-6, 50e-6, False, K_IEC),
    ("textbook, T1 = (t90 - t30)/0.6", 0.3e-6 / 12, 0.4e-9, "generator_side", 1.2e-6, 50e-6, False, 1 / 0.6),
    ("demo generator, 8 x 0.2 uF, 1.2 nF, 1.2/50", 0.2e-6 / 8, 1.2e-9, "generator_side", 1.2e-6, 50e-6, False, K_IEC),
    ("load side 25 nF, 2 nF, 1.2/50", 25e-9, 2e-9, "load_side", 1.2e-6, 50e-6, False, K_IEC),
    ("generator side 25 nF, 2 nF, 1.2/50", 25e-9, 2e-9, "generator_side", 1.2e-6, 50e-6, False, K_IEC),
    ("generator side 50 nF, 5 nF, 250/2500", 50e-9, 5e-9, "generator_side", 250e-6, 2500e-6, True, K_IEC),
    ("load side 50 nF, 5 nF, 250/2500", 50e-9, 5e-9, "load_side", 250e-6, 2500e-6, True, K_IEC),
    ("generator side 100 nF, 10 nF, 1.2/200", 100e-9, 10e-9, "generator_side", 1.2e-6, 200e-6, False, K_IEC),
]
out = {"source": "circuit_refs.py (SciPy " + __import__("scipy").__version__ + ", NumPy " + np.__version__ + ")",
       "designs": [], "infeasible": [], "circuits": []}
for name, c1, c2, side, front, tail, sw, k in designs:
    tau1, tau2 = shape_taus(front, tail, sw, k)
    rf, rt = invert(tau1, tau2, c1, c2, side)
    sim = simulate(rf, rt, c1, c2, side, sw, k)
    assert abs(sim["front_s"] / front - 1) < 0.005 and abs(sim["tail_s"] / tail - 1) < 0.005, (name, sim)
    out["designs"].append(dict(name=name, c1_f=c1, c2_f=c2, topology=side, front_s=front, tail_s=tail, switching=sw,
                               front_factor=k, tau1_s=tau1, tau2_s=tau2, rf_ohm=rf, rt_ohm=rt, sim=sim))

# no load-side circuit gives 1.2/50 with the textbook's C1/C2 = 62.5; the largest ratio
# is (tau1 - tau2)^2 / (4 tau1 tau2)
tau1, tau2 = shape_taus(1.2e-6, 50e-6, False, K_IEC)
for c1, c2, side in [(25e-9, 0.4e-9, "load_side"), (1e-9, 50e-9, "generator_side")]:
    assert invert(tau1, tau2, c1, c2, side) is None
    out["infeasible"].append(dict(c1_f=c1, c2_f=c2, topology=side, front_s=1.2e-6, tail_s=50e-6,
                                  max_ratio=(tau1 - tau2) ** 2 / (4 * tau1 * tau2)))

# circuits with given resistors: the rules of thumb's textbook values (T1 ~ 3 Rf Ce,
# T2 ~ 0.7 (Rf + Rt)(C1 + C2)) and a few others in both topologies
c1, c2 = 0.3e-6 / 12, 0.4e-9
ce = c1 * c2 / (c1 + c2)
rf_rough = 1.2e-6 / (3 * ce)
rt_rough = 50e-6 / (0.7 * (c1 + c2)) - rf_rough
circuits = [("textbook rules of thumb", rf_rough, rt_rough, c1, c2, "generator_side", False)]
for side in ("generator_side", "load_side"):
    circuits += [(side + " 400/2500 ohm, 25/2 nF", 400.0, 2500.0, 25e-9, 2e-9, side, False),
                 (side + " 80/4000 ohm, 100/1 nF", 80.0, 4000.0, 100e-9, 1e-9, side, False),
                 (side + " 30k/120k ohm, 50/5 nF", 30e3, 120e3, 50e-9, 5e-9, side, True)]
for name, rf, rt, c1, c2, side, sw in circuits:
    sim = simulate(rf, rt, c1, c2, side, sw, K_IEC)
    out["circuits"].append(dict(name=name, rf_ohm=rf, rt_ohm=rt, c1_f=c1, c2_f=c2, topology=side, switching=sw, sim=sim))

with open("circuit_refs.json", "w") as f:
    json.dump(out, f, indent=1)
for d in out["designs"]:
    print(f'{d["name"]:45s} Rf {d["rf_ohm"]:10.4f} Rt {d["rt_ohm"]:11.4f}  sim {d["sim"]["front_s"]*1e6:.5f}/{d["sim"]["tail_s"]*1e6:.4f} us  eff {d["sim"]["efficiency"]:.4f}')
for c in out["circuits"]:
    print(f'{c["name"]:45s} tau {c["sim"]["tau1_s"]*1e6:.4f}/{c["sim"]["tau2_s"]*1e6:.5f} us  {c["sim"]["front_s"]*1e6:.4f}/{c["sim"]["tail_s"]*1e6:.3f} us  eff {c["sim"]["efficiency"]:.4f}')
