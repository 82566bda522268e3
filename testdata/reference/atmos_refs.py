#!/usr/bin/python3
"""Reference values for hvshot's atmospheric correction (package waveform/atmos),
computed with NumPy (Debian's python3-numpy) independently of the Go code: written from
the formulas of IEC 60060-1:2010 clause 4.3 as issue 13 states them (from memory of the
standard), not from the Go source.

    delta = (p/p0) (273 + t0)/(273 + t)          p0 = 101.3 kPa, t0 = 20 C
    h     = 6.11 R exp(17.6 t/(243 + t)) / (0.4615 (273 + t))   g/m3, R in %
    k     = 1 + 0.010 (h/delta - 11)             impulses, h0 = 11 g/m3
    g     = U_B / (500 L delta k)                U_B in kV, L in m
    m, w  : 0 below g = 0.2; g(g - 0.2)/0.8 up to 1.0; 1 up to 1.2;
            m = 1, w = (2.2 - g)(2.0 - g)/0.8 up to 2.0; m = 1, w = 0 above
    Kt    = delta^m k^w

The grid: 5 pressures x 5 temperatures x 4 relative humidities x 6 values of U_B over
L = 1.5 m (g from below 0.2 to above 2.0), and the same pressures and temperatures with 4
absolute humidities (only those at or below saturation at the temperature) x 3 values
of U_B. Every case is vectorised over the whole grid at once.

Run:  /usr/bin/python3 atmos_refs.py > atmos_refs.json"""
import itertools
import json
import numpy as np

P0_KPA, T0_C, H0 = 101.3, 20.0, 11.0

def absolute_humidity(t_c, rh_pct):
    e_pa = 6.11 * rh_pct * np.exp(17.6 * t_c / (243.0 + t_c))  # 6.11 hPa x R % = Pa
    return e_pa / (0.4615 * (273.0 + t_c))

def exponents(g):
    rise = g * (g - 0.2) / 0.8
    fall = (2.2 - g) * (2.0 - g) / 0.8
    m = np.piecewise(g, [g < 0.2, (g >= 0.2) & (g <= 1.0), g > 1.0],
                     [0.0, lambda x: x * (x - 0.2) / 0.8, 1.0])
    w = np.select([g < 0.2, g <= 1.0, g <= 1.2, g <= 2.0], [0.0, rise, 1.0, fall], 0.0)
    return m, w

def correct(p_kpa, t_c, h, ub_kv, path_m):
    delta = (p_kpa / P0_KPA) * (273.0 + T0_C) / (273.0 + t_c)
    k = 1.0 + 0.010 * (h / delta - H0)
    g = ub_kv / (500.0 * path_m * delta * k)
    m, w = exponents(g)
    k1 = delta ** m
    k2 = k ** w
    return dict(delta=delta, k=k, g=g, m=m, w=w, k1=k1, k2=k2, kt=k1 * k2)

PRESSURES_KPA = [60.0, 80.0, 95.0, 101.3, 106.0]
TEMPERATURES_C = [-10.0, 5.0, 20.0, 30.0, 40.0]
RH_PCT = [20.0, 45.0, 70.0, 95.0]
ABS_G_PER_M3 = [2.0, 8.0, 11.0, 16.0]
PATH_M = 1.5
UB_RH_KV = [100.0, 300.0, 650.0, 850.0, 1200.0, 1700.0]  # g about 0.13, 0.4, 0.87, 1.1, 1.6, 2.3
UB_ABS_KV = [300.0, 850.0, 1200.0]

rows = []
grid = np.array(list(itertools.product(PRESSURES_KPA, TEMPERATURES_C, RH_PCT, UB_RH_KV)))
p, t, rh, ub = grid.T
h = absolute_humidity(t, rh)
r = correct(p, t, h, ub, PATH_M)
for i in range(len(grid)):
    rows.append(dict(pressure_pa=p[i] * 1e3, temperature_c=t[i], rel_humidity_pct=rh[i],
                     abs_humidity_g_per_m3=None, ub_v=ub[i] * 1e3, path_m=PATH_M, h_g_per_m3=h[i],
                     **{k: float(v[i]) for k, v in r.items()}))

grid = np.array(list(itertools.product(PRESSURES_KPA, TEMPERATURES_C, ABS_G_PER_M3, UB_ABS_KV)))
grid = grid[grid[:, 2] <= absolute_humidity(grid[:, 1], 100.0)]
p, t, ha, ub = grid.T
r = correct(p, t, ha, ub, PATH_M)
for i in range(len(grid)):
    rows.append(dict(pressure_pa=p[i] * 1e3, temperature_c=t[i], rel_humidity_pct=None,
                     abs_humidity_g_per_m3=ha[i], ub_v=ub[i] * 1e3, path_m=PATH_M, h_g_per_m3=ha[i],
                     **{k: float(v[i]) for k, v in r.items()}))

g = np.array([row["g"] for row in rows])
regimes = {"below 0.2": int(np.sum(g < 0.2)), "0.2 to 1.0": int(np.sum((g >= 0.2) & (g <= 1.0))),
           "1.0 to 1.2": int(np.sum((g > 1.0) & (g <= 1.2))), "1.2 to 2.0": int(np.sum((g > 1.2) & (g <= 2.0))),
           "above 2.0": int(np.sum(g > 2.0))}

COLUMNS = ["pressure_pa", "temperature_c", "rel_humidity_pct", "abs_humidity_g_per_m3", "ub_v",
           "path_m", "h_g_per_m3", "delta", "k", "g", "m", "w", "k1", "k2", "kt"]

def num(v):
    return "null" if v is None else "%.15g" % v

# One case a line, as a row of COLUMNS (null: the humidity not given), 15 significant
# digits: the Go test compares to 1e-12.
print("{")
print('  "source": %s,' % json.dumps("testdata/reference/atmos_refs.py, NumPy " + np.__version__))
print('  "regimes": %s,' % json.dumps(regimes))
print('  "columns": %s,' % json.dumps(COLUMNS))
print('  "cases": [')
print(",\n".join("    [" + ", ".join(num(row[c]) for c in COLUMNS) + "]" for row in rows))
print("  ]")
print("}")
