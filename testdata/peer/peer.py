#!/usr/bin/python3
"""A scripted peer for hvshot: the lightning-impulse evaluation "a lab would write" in
Python (pandas' C CSV reader, NumPy, SciPy, and matplotlib for the plots), for the
side-by-side comparison that testdata/peer/compare.sh runs.

Written independently of hvshot's code: nothing here was taken from hvshot's Go
evaluation (waveform/, fit/). The method is the residual procedure of IEC 60060-1:2010
(clause 7 and its annex on curve evaluation) as recalled from memory, not copied from
the text of the standard:

 1. Read the capture with pandas.read_csv (C engine, '#' lines skipped): first column time
    in s, second the divider's voltage in V. Baseline: the mean of the samples before the
    record first leaves 5 % of its largest excursion (the last tenth of them left out as a
    guard). Polarity: the sign of the largest excursion; the curve is turned positive.
 2. Base curve (from memory): u_b(t) = A (exp(-(t-td)/tau1) - exp(-(t-td)/tau2)) for
    t >= td, 0 before, fitted by scipy.optimize.least_squares (Levenberg-Marquardt,
    analytic Jacobian) to the samples of the recorded curve from 20 % of its extreme Ue on
    the front to 40 % on the tail, both ends at or above those levels (from memory).
 3. Residual R = recorded - base over the whole record, filtered with the test voltage
    function k(f) = 1/(1 + 2.2 f^2), f in MHz (IEC 60060-1:2010, from memory), applied as
    a product in the frequency domain (scipy.fft.rfft/irfft, the residual zero-padded to
    at least twice its length so that the circular convolution does not wrap).
 4. Test voltage curve = base + filtered residual; Ut its maximum (signed back).
 5. T1 = 1.67 (t90 - t30) on the test voltage curve, t30 and t90 where it last rises
    through 30 % and 90 % of Ut before its maximum (linear interpolation between samples);
    virtual origin O1 = t30 - 0.3 T1; T2 = t50 - O1, t50 where it first falls through 50 %
    of Ut after its maximum (the definitions from memory; the crossing rules are ours).
 6. Overshoot beta' = (Ue - Ub)/Ue, Ue the recorded curve's extreme, Ub the base curve's
    maximum (closed form), in per cent (from memory).
Full lightning impulses on one divider channel only; no chop, clipping or fault handling.

Writes OUT/results.csv (one row per capture) and, with --plots png|svg, one matplotlib
(Agg) plot per capture in OUT/plots/.

Run:  /usr/bin/python3 testdata/peer/peer.py --out OUT [--plots none|png|svg] CAPTURE_OR_FOLDER...
Needs Debian's python3-numpy, python3-scipy, python3-pandas (python3-matplotlib for plots).
"""
import argparse
import os
import sys

import numpy as np
import pandas as pd
from scipy import fft as sfft
from scipy.optimize import least_squares


def read_capture(path):
    df = pd.read_csv(path, comment="#", engine="c", usecols=[0, 1], dtype=np.float64)
    return df.iloc[:, 0].to_numpy(), df.iloc[:, 1].to_numpy()


def baseline_and_polarity(u):
    a = np.abs(u - np.median(u[: max(16, len(u) // 200)]))
    i = int(np.argmax(a > 0.05 * a.max()))
    pre = u[: int(0.9 * i)] if i >= 20 else u[:16]
    u = u - pre.mean()
    sign = 1.0 if u.max() >= -u.min() else -1.0
    return sign * u, sign


def rise_through(t, y, level, stop):
    """Time where y last rises through level before index stop (linear interpolation)."""
    below = np.flatnonzero(y[:stop] < level)
    i = below[-1]
    return t[i] + (level - y[i]) * (t[i + 1] - t[i]) / (y[i + 1] - y[i])


def fall_through(t, y, level, start):
    """Time where y first falls through level after index start."""
    j = start + int(np.argmax(y[start:] < level))
    if y[j] >= level:
        raise ValueError("the curve does not fall to %.0f V within the record" % level)
    return t[j - 1] + (y[j - 1] - level) * (t[j] - t[j - 1]) / (y[j - 1] - y[j])


def base_curve(p, t):
    a, td, tau1, tau2 = p
    s = np.maximum(t - td, 0.0)
    return a * (np.exp(-s / tau1) - np.exp(-s / tau2))


def fit_base(t, u, ue):
    """Fit the double exponential to u over 20 % front .. 40 % tail. Works in us and
    per unit of Ue so that the four parameters are of similar size."""
    ipk = int(np.argmax(u))
    i20 = int(np.flatnonzero(u[:ipk] < 0.2 * ue)[-1]) + 1  # first sample at or above 20 %
    i40 = ipk + int(np.argmax(u[ipk:] < 0.4 * ue))  # first sample below 40 % on the tail
    if u[i40] >= 0.4 * ue:
        i40 = len(u)
    tw = t[i20:i40] * 1e6
    uw = u[i20:i40] / ue
    # Starting point from the recorded curve's own 30/90/50 % instants; tau1 ~ T2/0.733
    # and tau2 ~ T1/2.96 are the 1.2/50 double exponential's ratios (from memory).
    t30 = rise_through(t, u, 0.3 * ue, ipk) * 1e6
    t90 = rise_through(t, u, 0.9 * ue, ipk) * 1e6
    t1 = 1.67 * (t90 - t30)
    o1 = t30 - 0.3 * t1
    t2 = fall_through(t, u, 0.5 * ue, ipk) * 1e6 - o1
    p0 = np.array([1.03, o1, t2 / 0.733, t1 / 2.96])

    def res(p):
        a, td, tau1, tau2 = p
        s = tw - td
        return a * (np.exp(-s / tau1) - np.exp(-s / tau2)) - uw

    def jac(p):
        a, td, tau1, tau2 = p
        s = tw - td
        e1 = np.exp(-s / tau1)
        e2 = np.exp(-s / tau2)
        return np.column_stack([e1 - e2, a * (e1 / tau1 - e2 / tau2), a * e1 * s / tau1**2, -a * e2 * s / tau2**2])

    sol = least_squares(res, p0, jac=jac, method="lm")  # SciPy's default tolerances
    a, td, tau1, tau2 = sol.x
    rms = np.sqrt(np.mean(sol.fun**2)) * ue
    return np.array([a * ue, td * 1e-6, tau1 * 1e-6, tau2 * 1e-6]), rms


def k_filter(r, dt):
    """The residual filtered by k(f) = 1/(1 + 2.2 f^2), f in MHz."""
    n = len(r)
    nfft = sfft.next_fast_len(2 * n, real=True)
    f_mhz = np.fft.rfftfreq(nfft, dt) * 1e-6
    return sfft.irfft(sfft.rfft(r, nfft) / (1.0 + 2.2 * f_mhz**2), nfft)[:n]


def evaluate(t, raw):
    u, sign = baseline_and_polarity(raw)
    ue = float(u.max())
    p, rms = fit_base(t, u, ue)
    ub_curve = base_curve(p, t)
    dt = (t[-1] - t[0]) / (len(t) - 1)
    tvc = ub_curve + k_filter(u - ub_curve, dt)
    ipk = int(np.argmax(tvc))
    ut = float(tvc[ipk])
    t30 = rise_through(t, tvc, 0.3 * ut, ipk)
    t90 = rise_through(t, tvc, 0.9 * ut, ipk)
    t1 = 1.67 * (t90 - t30)
    o1 = t30 - 0.3 * t1
    t2 = fall_through(t, tvc, 0.5 * ut, ipk) - o1
    a, td, tau1, tau2 = p
    tp = np.log(tau1 / tau2) * tau1 * tau2 / (tau1 - tau2)
    ubpk = a * (np.exp(-tp / tau1) - np.exp(-tp / tau2))
    row = dict(polarity="positive" if sign > 0 else "negative", ut_v=sign * ut, t1_s=t1, t2_s=t2, o1_s=o1,
               overshoot_pct=100 * (ue - ubpk) / ue, ue_v=sign * ue, ub_v=sign * ubpk,
               tau1_s=tau1, tau2_s=tau2, td_s=td, fit_rms_v=rms)
    curves = dict(u=sign * u, base=sign * ub_curve, tvc=sign * tvc, t30=t30, t90=t90, o1=o1)
    return row, curves


def plot(path, name, t, row, c, fmt):
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, (ax1, ax2) = plt.subplots(1, 2, figsize=(11, 4.2))
    us = t * 1e6
    for ax in (ax1, ax2):
        ax.plot(us, c["u"] / 1e3, color="0.6", lw=0.6, label="recorded")
        ax.plot(us, c["base"] / 1e3, "--", color="C1", lw=1, label="base curve")
        ax.plot(us, c["tvc"] / 1e3, color="C0", lw=1, label="test voltage curve")
        ax.set_xlabel("t (us)")
        ax.set_ylabel("U (kV)")
        ax.grid(True, lw=0.3)
    t1 = row["t1_s"] * 1e6
    ax1.set_xlim(row["o1_s"] * 1e6 - t1, row["o1_s"] * 1e6 + 3 * t1)
    ax1.set_title("front: T1 = %.3f us" % t1)
    ax2.set_title("Ut = %.1f kV, T2 = %.2f us" % (row["ut_v"] / 1e3, row["t2_s"] * 1e6))
    ax2.legend(loc="upper right" if row["ut_v"] > 0 else "lower right", fontsize=8)  # clear of the tail
    fig.suptitle(name)
    fig.tight_layout()
    fig.savefig(path, format=fmt, dpi=100)
    plt.close(fig)


def captures(args):
    for a in args:
        if os.path.isdir(a):
            for f in sorted(os.listdir(a)):
                if f.endswith(".csv"):
                    yield os.path.join(a, f)
        else:
            yield a


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--out", required=True)
    ap.add_argument("--plots", choices=["none", "png", "svg"], default="none")
    ap.add_argument("paths", nargs="+")
    a = ap.parse_args()
    os.makedirs(os.path.join(a.out, "plots") if a.plots != "none" else a.out, exist_ok=True)
    rows = []
    for path in captures(a.paths):
        name = os.path.basename(path)
        try:
            t, raw = read_capture(path)
            row, curves = evaluate(t, raw)
        except Exception as e:  # one bad file must not stop the batch
            rows.append(dict(file=name, error=str(e)))
            print("%s: %s" % (name, e), file=sys.stderr)
            continue
        rows.append(dict(file=name, **row, error=""))
        if a.plots != "none":
            plot(os.path.join(a.out, "plots", name + "." + a.plots), name, t, row, curves, a.plots)
    pd.DataFrame(rows).to_csv(os.path.join(a.out, "results.csv"), index=False, float_format="%.10g")
    return 2 if any(r.get("error") for r in rows) else 0


if __name__ == "__main__":
    sys.exit(main())
