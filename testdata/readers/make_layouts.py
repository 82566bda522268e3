#!/usr/bin/python3
"""Fixtures for the text layouts of issue 19 and the pandas files of issue 11.

Every value here is invented: an invented double-exponential impulse sampled on an
invented time base. Each layout is written as issue 19 describes it (in its own
words, no product's), and the pandas files with pandas' own to_csv (Debian's
python3-pandas), not by hvshot. Run from this folder:
    /usr/bin/python3 make_layouts.py
It also writes layouts_expected.json: for each file the samples the reader must
return, in SI, computed here from the very text written (float(cell) of each cell,
times the unit's factor), with json's repr() precision, or the error it must give.
"""
import json

import numpy as np
import pandas as pd

NOTE = "# invented values in a layout issue 19 describes"
expected = {}


def impulse(t, peak):
    tp = np.maximum(t, 0.0)
    return np.where(t >= 0, peak * 1.037 * (np.exp(-tp / 68.2e-6) - np.exp(-tp / 0.405e-6)), 0.0)


def write(name, lines):
    with open(name, "w", newline="") as f:
        f.write("\n".join(lines) + "\n")


def expect(name, interval, start, channels, notes=(), layout=None):
    expected[name] = {
        "interval_s": interval,
        "start_s": start,
        "channels": [{"name": n, "unit": u, "values": [float(v) for v in vals]} for n, u, vals in channels],
        "notes": list(notes),
        "layout": layout,
    }


def refuse(name, error, words):
    expected[name] = {"error": error, "words": words}


# 1. Settings beside the data, two channel blocks. The times are printed with five
# decimals while the interval is 2 us, so the printed times repeat: only the stated
# interval gives the time base.
n, dt, t0 = 1000, 2e-6, -1e-3
t = t0 + np.arange(n) * dt
u1 = impulse(t, 0.8)
u2 = 0.25 * impulse(t - 4e-6, 0.8)
settings = [("Record Length", str(n)), ("Sample Interval", "2e-06"), ("Trigger Point", "500"),
            ("Source", "CH1"), ("Vertical Units", "V"), ("Vertical Scale", "0.2"), ("Vertical Offset", "0"),
            ("Horizontal Units", "S"), ("Horizontal Scale", "0.0002"), ("Probe Atten", "10"),
            ("Model Number", "invented"), ("Note", "invented values")]
lines, c1, c2, ts = [], [], [], []
for i in range(n):
    k, v = settings[i] if i < len(settings) else ("", "")
    k2, v2 = (k, "CH2") if k == "Source" else (k, v)
    tc, a, b = "%.5f" % t[i], "%.4f" % u1[i], "%.4f" % u2[i]
    lines.append(f"{k},{v},,{tc},{a},,{k2},{v2},,{tc},{b},")
    c1.append(float(a)); c2.append(float(b)); ts.append(float(tc))
write("layout_settings_beside.csv", lines)
expect("layout_settings_beside.csv", dt, ts[0], [("CH1", "V", c1), ("CH2", "V", c2)],
       ["settings beside the data", "interval 2e-06 s from line 2"])

# 2. Two header lines, names then units: three forms.
n, dt = 400, 1e-8
t = -1e-6 + np.arange(n) * dt
u1, u2 = impulse(t, 1.5), impulse(t, -0.4)
rows = ["%.6E,%.5E,%.5E" % r for r in zip(t, u1, u2)]
write("layout_names_units_axis.csv", ["x-axis,1,2", "second,Volt,Volt"] + rows)
expect("layout_names_units_axis.csv", dt, float("%.6E" % t[0]),
       [("1", "V", [float("%.5E" % v) for v in u1]), ("2", "V", [float("%.5E" % v) for v in u2])],
       ["line 1 gave the names, line 2 the units"])

rows = ["%.6E,%.5E" % r for r in zip(t, u1)]
write("layout_names_units_source.csv", ["Source,CH1", "Second,Volt"] + rows)
expect("layout_names_units_source.csv", dt, float("%.6E" % t[0]), [("CH1", "V", [float("%.5E" % v) for v in u1])],
       ["line 1 gave the names, line 2 the units"])

rows = ["%.6E,%.5E," % r for r in zip(t, u2)]
write("layout_names_units_trailing.csv", ["Time,X(CH1),", "Second,Volt,"] + rows)
expect("layout_names_units_trailing.csv", dt, float("%.6E" % t[0]), [("X(CH1)", "V", [float("%.5E" % v) for v in u2])],
       ["line 1 gave the names, line 2 the units"])

# 4. Units inside the column names.
rows = ["%.6E,%.5E,%.5E" % r for r in zip(t, u1, u2)]
write("layout_units_in_names.csv", [NOTE, "in s,C1 in V,C2 in V"] + rows)
expect("layout_units_in_names.csv", dt, float("%.6E" % t[0]),
       [("C1", "V", [float("%.5E" % v) for v in u1]), ("C2", "V", [float("%.5E" % v) for v in u2])],
       ["line 2 gave the names"])

# 5. Units in parentheses with SI prefixes on their own line, then a blank line.
n = 500
t_ns = -101.0 + 0.5 * np.arange(n)
u = impulse(t_ns * 1e-9, 900.0)  # in mV
rows = ["%.1f,%.2f" % r for r in zip(t_ns, u)]
write("layout_units_row_prefixed.csv", [NOTE, "Time,Channel B", "(ns),(mV)", ""] + rows)
expect("layout_units_row_prefixed.csv", 0.5e-9, -101.0e-9,
       [("Channel B", "V", [float("%.2f" % v) * 1e-3 for v in u])], ["line 2 gave the names, line 3 the units"])

# 6. A sample-index column with start and increment on the header rows.
n, dt, start = 600, 1.0e-08, -6.0e-06
t = start + np.arange(n) * dt
u1, u2 = impulse(t + 5e-6, 0.9), impulse(t + 4e-6, 0.25)
rows = ["%d,%.2f,%.2f," % (i, a, b) for i, (a, b) in enumerate(zip(u1, u2))]
write("layout_index_start_increment.csv", ["X,CH1,CH2,Start,Increment,", "Sequence,Volt,Volt,-6.0e-06,1.0e-08"] + rows)
expect("layout_index_start_increment.csv", dt, start,
       [("CH1", "V", [float("%.2f" % v) for v in u1]), ("CH2", "V", [float("%.2f" % v) for v in u2])],
       ["line 2 gave Start and Increment", "counts samples from 0"])

# 7. Start and increment on the header rows, no time or index column.
n, dt, start = 800, 1.0e-04, -6.0e-02
t = start + np.arange(n) * dt
u1, u2 = impulse(t * 1e-3, 0.4), impulse(t * 1e-3, 14.0)
rows = ["%.2f,%.1f," % r for r in zip(u1, u2)]
write("layout_start_increment.csv", ["CH1,CH2,Start,Increment,", "Volt,Volt,-6.0e-02,1.0e-04"] + rows)
expect("layout_start_increment.csv", dt, start,
       [("CH1", "V", [float("%.2f" % v) for v in u1]), ("CH2", "V", [float("%.1f" % v) for v in u2])],
       ["line 2 gave Start and Increment"])

# 8. Empty value cells at the edges: the scope wrote the time but no value.
n, dt = 500, 1.0e-9
t = -60e-9 + np.arange(n) * dt
u1, u2 = impulse(t, 2.0), impulse(t, -1.0)
cells = ["%+.2fE-09" % (v * 1e9) for v in t]
rows = []
for i in range(n):
    if i < 3 or i >= n - 4:
        rows.append(cells[i] + ",,,")
    else:
        rows.append("%s,%+.4E,%+.4E," % (cells[i], u1[i], u2[i]))
write("layout_edge_empty_two.csv", [NOTE, "TIME,CH1,CH2,"] + rows)
expect("layout_edge_empty_two.csv", dt, float(cells[3]) * 1.0,
       [("CH1", "", [float("%+.4E" % v) for v in u1[3:n - 4]]), ("CH2", "", [float("%+.4E" % v) for v in u2[3:n - 4]])],
       ["dropped 3 row(s) with empty value cells at the start (lines 3-5)",
        "dropped 4 row(s) with empty value cells at the end (lines 499-502)"])

t = -760e-9 + np.arange(n) * 20e-9
u = impulse(t, 3.0)
rows = []
for i in range(n):
    c = "%.1fE-09" % (t[i] * 1e9)
    rows.append(c + "," if i < 2 else "%s,%.5f" % (c, u[i]))
write("layout_edge_empty_one.csv", [NOTE] + rows)
expect("layout_edge_empty_one.csv", 20e-9, float("%.1fE-09" % (t[2] * 1e9)),
       [("CH1", "", [float("%.5f" % v) for v in u[2:]])], ["dropped 2 row(s) with empty value cells at the start (lines 2-3)"])

# 9. Integer screen codes under a preamble with the vertical scale: 25 codes per
# division from the centre line (issue 19), volts = code / 25 * scale - offset; the
# probe factor is taken as already in the vertical scale.
n, dt = 1200, 4.0e-9
scale, offset = 0.2, 0.1
t = np.arange(n) * dt
codes = np.round((impulse(t - 1e-6, 0.6) + offset) / scale * 25).astype(int)
pre = ["Format,1.0", f"Memory Length,{n},", "Source,CH1,", "Vertical Units,V,", "Probe Ratio,1.0E+01,",
       "Vertical Scale,2.0E-01,", "Vertical Offset,1.0E-01,", "Horizontal Units,S,", "Sampling Period,4.0E-09,",
       "Waveform Data,"]
write("layout_screen_codes.csv", [NOTE] + pre + ["%d," % c for c in codes])
expect("layout_screen_codes.csv", dt, 0.0, [("CH1", "V", [c / 25 * scale - offset for c in codes])],
       ["25 per division", "probe factor 10"])

# 10. Each time written twice, a pair of values per time: refused.
n, dt = 300, 1e-8
t = np.arange(n) * dt
u = impulse(t, 1.0)
rows = []
for i in range(n):
    rows.append("%.6e,%.4f" % (t[i], u[i]))
    rows.append("%.6e,%.4f" % (t[i], 0.9 * u[i]))
write("layout_time_twice.csv", [NOTE, "Time,Ampl"] + rows)
refuse("layout_time_twice.csv", "unsupported", ["written twice", "interleaved"])

# 11. A time column with few significant digits: 703.125 us steps printed to 8 digits.
n, dt = 2000, 703.125e-6
t = 1.5 + np.arange(n) * dt
u = impulse(t - 1.6, 5.0)
cells = ["%+.7E" % v for v in t]
rows = ["%s,%+.5E" % (c, v) for c, v in zip(cells, u)]
write("layout_time_few_digits.csv", [NOTE, "Time,Ampl"] + rows)
expect("layout_time_few_digits.csv", (float(cells[-1]) - float(cells[0])) / (n - 1), float(cells[0]),
       [("Ampl", "", [float("%+.5E" % v) for v in u])], ["printed to about"])

# 12. The data start after a long preamble (3,000 lines).
n, dt = 300, 5e-9
t = np.arange(n) * dt
u = impulse(t, 2.5)
pre = [f"Setting {k},{k * 3}" for k in range(3000)] + ["Sample Interval,5e-09"]
write("layout_long_preamble.csv", [NOTE] + pre + ["%.6f" % v for v in u])
expect("layout_long_preamble.csv", dt, 0.0, [("CH1", "", [float("%.6f" % v) for v in u])])

# Issue 11: what pandas and lab scripts write, with pandas' own to_csv.
n, dt = 250, 2e-9
t = -50 * dt + np.arange(n) * dt
u = impulse(t, 1.2e5)
df = pd.DataFrame({"time_s": t, "voltage_v": u})
df.to_csv("pandas_time_s_voltage_v.csv", index=False)
df.to_csv("pandas_time_s_voltage_v_index.csv")
pd.DataFrame({"t_us": t * 1e6, "u_kv": u / 1e3}).to_csv("pandas_t_us_u_kv.csv", index=False)
pd.DataFrame({"t_us": t * 1e6, "u_kv": u / 1e3}).to_csv("pandas_t_us_u_kv_index.csv")
for name in ["pandas_time_s_voltage_v.csv", "pandas_time_s_voltage_v_index.csv"]:
    back = pd.read_csv(name)  # the values as written, read back by pandas
    expect(name, dt, float(back["time_s"][0]), [("voltage", "V", back["voltage_v"].tolist())],
           ["counts rows: dropped"] if "index" in name else [])
for name in ["pandas_t_us_u_kv.csv", "pandas_t_us_u_kv_index.csv"]:
    back = pd.read_csv(name)
    expect(name, dt, float(back["t_us"][0]) * 1e-6, [("u", "V", (back["u_kv"] * 1e3).tolist())],
           ["counts rows: dropped"] if "index" in name else [])

with open("layouts_expected.json", "w") as f:
    json.dump(expected, f, indent=0)
print("wrote", len(expected), "layout fixtures with numpy", np.__version__, "pandas", pd.__version__)
