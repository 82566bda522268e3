#!/usr/bin/python3
"""Reference values for hvshot's frequency domain (waveform/spectrum, waveform/compare),
computed outside hvshot with Debian's python3-numpy and python3-scipy.

1. numpy.fft.rfft on a committed record (spectrum_record.npy: an invented impulse with
   ringing and noise, 12,345 samples, a length with a large prime factor): X(f) = dt
   rfft(x, n) with the zero padding hvshot states (n the smallest length >= 2 N with no
   prime factor above 5), the one-sided ESD, the energy, the 90 % and 99 % bandwidths
   (cumulative energy over the bins, linear between bin frequencies), a Hann-windowed
   spectrum, and scipy.signal.welch's density of the pre-trigger part.
2. The double exponential A (exp(-a t) - exp(-b t)): its energy in closed form,
   A^2 (1/(2a) + 1/(2b) - 2/(a+b)), and the frequencies that hold 90 % and 99 % of it,
   from the closed-form cumulative energy
   E(F) = A^2 (b-a)/(pi (a+b)) (atan(2 pi F/a)/a - atan(2 pi F/b)/b), solved with
   scipy.optimize.brentq.
3. A series R-L-C network driven by a voltage, the current its output:
   H(s) = s C/(L C s^2 + R C s + 1). scipy.signal.lsim (linear interpolation of the
   input) simulates it for a double-exponential input; rlc_lsim.npy holds (t, u, i) and
   the analytic H(f) is evaluated in the Go test from R, L, C.
4. An invented winding model (a ladder of 4 sections: series L and R, shunt C to earth
   at each node, the last node to earth through a 10 ohm shunt whose current is the
   record), simulated by scipy.signal.lsim for a 1.2/50 input, as built and with the
   second node's capacitance 2 % larger: ladder_lsim.npy holds (t, u, i, i_altered).

Run:  cd testdata/reference && /usr/bin/python3 spectrum_refs.py"""
import json
import numpy as np
from scipy import signal
from scipy.optimize import brentq


def smooth_len(n):
    m = max(n, 1)
    while True:
        k = m
        for p in (2, 3, 5):
            while k % p == 0:
                k //= p
        if k == 1:
            return m
        m += 1


def one_sided_esd(X, n):
    w = np.full(len(X), 2.0)
    w[0] = 1.0
    if n % 2 == 0:
        w[-1] = 1.0
    return w * np.abs(X) ** 2


def bandwidth(esd, df, p):
    """bin k holds the band k df +- df/2 (bin 0: 0 to df/2), its energy spread evenly"""
    cum = np.cumsum(esd)
    want = p * cum[-1]
    k = int(np.searchsorted(cum, want))  # the first bin whose band reaches the share
    if k == 0:
        return want / esd[0] * df / 2
    return k * df - df / 2 + (want - cum[k - 1]) / esd[k] * df


# 1. numpy.fft on a committed record (invented, not a measurement)
rng = np.random.default_rng(16)
N, dt, pre = 12345, 10e-9, 2000
t = np.arange(N) * dt
s = np.clip(t - pre * dt, 0, None)
x = 1e3 * (np.exp(-s / 20e-6) - np.exp(-s / 0.3e-6)) + 80 * np.exp(-s / 2e-6) * np.sin(2 * np.pi * 1.7e6 * s)
x = x + 2.0 * rng.standard_normal(N)
np.save("spectrum_record.npy", np.column_stack([t, x]))
m = smooth_len(2 * N)
X = np.fft.rfft(x, m) * dt
df = 1 / (m * dt)
esd = one_sided_esd(X, m)
bins = [0, 1, 2, 5, 17, 100, 333, 1000, 2500, 5000, m // 4, m // 2]
wh = 0.5 - 0.5 * np.cos(2 * np.pi * np.arange(N) / N)
XH = np.fft.rfft(x * wh, m) * dt
nper = min(pre, 1024)  # hvshot's segment: the largest 5-smooth length up to min(N_pre, 1024)
while smooth_len(nper) != nper:
    nper -= 1
fw, pw = signal.welch(x[:pre], fs=1 / dt, window="hann", nperseg=nper, noverlap=nper // 2,
                      detrend="constant", return_onesided=True, scaling="density")
record = {
    "file": "spectrum_record.npy", "dt_s": dt, "n": N, "nfft": m, "df_hz": df, "pre_trigger": pre,
    "bins": bins,
    "re": [float(X[k].real) for k in bins], "im": [float(X[k].imag) for k in bins],
    "esd": [float(esd[k]) for k in bins],
    "energy": float(esd.sum() * df), "energy_time": float(np.sum(x ** 2) * dt),
    "bw90_hz": bandwidth(esd, df, 0.9), "bw99_hz": bandwidth(esd, df, 0.99),
    "hann_abs": [float(abs(XH[k])) for k in bins], "hann_window_power": float(np.sum(wh ** 2)),
    "welch_nperseg": nper, "welch_df_hz": float(fw[1]),
    "welch_bins": [1, 3, 10, 50, 200, 511, 512],
    "welch_onesided": [float(pw[k]) for k in [1, 3, 10, 50, 200, 511, 512]],
}

# 2. the double exponential's energy and bandwidths in closed form
A, a, b = 1.0, 1 / 68.2e-6, 1 / 0.405e-6
E = A ** 2 * (1 / (2 * a) + 1 / (2 * b) - 2 / (a + b))
EF = lambda F: A ** 2 * (b - a) / (np.pi * (a + b)) * (np.arctan(2 * np.pi * F / a) / a - np.arctan(2 * np.pi * F / b) / b)
assert abs(EF(1e15) / E - 1) < 1e-9
dexp = {"A": A, "a": a, "b": b, "energy": E,
        "bw90_hz": brentq(lambda F: EF(F) - 0.9 * E, 1, 1e9, xtol=1e-6, rtol=1e-13),
        "bw99_hz": brentq(lambda F: EF(F) - 0.99 * E, 1, 1e9, xtol=1e-6, rtol=1e-13),
        "source": "closed form; bandwidths by scipy.optimize.brentq"}

# 3. series RLC, current out, simulated by scipy.signal.lsim
R, L, C = 50.0, 100e-6, 2e-9
sys = signal.lti([C, 0], [L * C, R * C, 1])
Nr, dtr, ton = 20000, 10e-9, 2e-6
tr = np.arange(Nr) * dtr
sr = np.clip(tr - ton, 0, None)
u = 1e3 * (np.exp(-sr / 5e-6) - np.exp(-sr / 0.2e-6))
_, i, _ = signal.lsim(sys, u, tr)
np.save("rlc_lsim.npy", np.column_stack([tr, u, i]))
rlc = {"file": "rlc_lsim.npy", "R_ohm": R, "L_h": L, "C_f": C, "dt_s": dtr,
       "band_hz": [10e3, 3e6], "source": "scipy.signal.lsim (interp=True), H(s) = sC/(LCs^2 + RCs + 1)"}


# 4. the invented winding: a ladder of sections (series L, R; shunt Cg at each node)
def ladder(Cg):
    n = len(Cg)
    Ls, Rs, Rsh = 10e-3, 550.0, 10.0
    # states: node voltages v1..vn, inductor currents i1..in (i_k from node k-1 to k)
    Am = np.zeros((2 * n, 2 * n))
    Bm = np.zeros((2 * n, 1))
    for k in range(n):
        Am[k, n + k] = 1 / Cg[k]                  # i_k into node k
        if k + 1 < n:
            Am[k, n + k + 1] = -1 / Cg[k]         # i_{k+1} out of node k
        else:
            Am[k, k] = -1 / (Rsh * Cg[k])         # the last node through the shunt
        Am[n + k, k] = -1 / Ls                    # L di_k/dt = v_{k-1} - v_k - R i_k
        if k > 0:
            Am[n + k, k - 1] = 1 / Ls
        Am[n + k, n + k] = -Rs / Ls
    Bm[n, 0] = 1 / Ls                             # v_0 is the applied voltage
    Cm = np.zeros((1, 2 * n))
    Cm[0, n - 1] = 1 / Rsh
    return signal.StateSpace(Am, Bm, Cm, np.zeros((1, 1)))


Nl, dtl, tonl = 12000, 20e-9, 10e-6
tl = np.arange(Nl) * dtl
sl = np.clip(tl - tonl, 0, None)
ul = np.exp(-sl / 68.2e-6) - np.exp(-sl / 0.405e-6)
ul = ul / ul.max()
cg = [0.5e-9] * 4
cg_alt = list(cg)
cg_alt[1] *= 1.02
_, il, _ = signal.lsim(ladder(cg), ul, tl)
_, il2, _ = signal.lsim(ladder(cg_alt), ul, tl)
np.save("ladder_lsim.npy", np.column_stack([tl, ul, il, il2]))
lad = {"file": "ladder_lsim.npy", "sections": 4, "L_h": 10e-3, "R_ohm": 550.0, "Cg_f": cg, "Cg_altered_f": cg_alt,
       "shunt_ohm": 10.0, "dt_s": dtl, "peak_current_a": float(np.abs(il).max()),
       "source": "scipy.signal.lsim of the invented ladder (state space written here)"}

out = {"source": "spectrum_refs.py: numpy.fft, scipy.signal.welch, scipy.signal.lsim, scipy.optimize.brentq (Debian python3-numpy/python3-scipy)",
       "numpy_version": np.__version__, "record": record, "dexp": dexp, "rlc": rlc, "ladder": lad}
with open("spectrum_refs.json", "w") as f:
    json.dump(out, f, indent=1)
print(json.dumps({k: out[k] for k in ("dexp", "rlc", "ladder")}, indent=1))
