#!/usr/bin/python3
"""Reference files for the reader tests, written by NumPy and pandas (Debian's
python3-numpy and python3-pandas), not by hvshot. Run from this folder:
    /usr/bin/python3 make_fixtures.py
The waveform is an invented double exponential; its values are listed in
expected.csv (written with repr() precision) so the Go tests compare every sample."""
import numpy as np
import pandas as pd

n = 200
dt = 2e-9
t = -50 * dt + np.arange(n) * dt
u = np.where(t >= 0, 1000.0 * (np.exp(-np.maximum(t, 0) / 68.2e-6) - np.exp(-np.maximum(t, 0) / 0.405e-6)), 0.0)
i = 0.5 * u / 1000.0

# NumPy .npy, format version 1.0 (np.save), 2-D with a time column.
np.save("numpy_v1_2d.npy", np.column_stack([t, u, i]))
# 1-D float32 big-endian: one channel, the interval must come from outside.
np.save("numpy_1d_f4be.npy", u.astype(">f4"))
# Version 2.0 header, int16 codes.
with open("numpy_v2_i2.npy", "wb") as f:
    np.lib.format.write_array(f, (u * 10).astype("<i2"), version=(2, 0))

# savetxt: comma, decimal point, '%.9e', header row with units, '# ' comments.
np.savetxt("numpy_savetxt.csv", np.column_stack([t, u, i]), delimiter=",", fmt="%.9e",
           header="t (s),U [V],I/A", comments="")
# pandas to_csv, dialect 1: semicolon with decimal comma (the European spreadsheet form).
df = pd.DataFrame({"Time [us]": t * 1e6, "Voltage (kV)": u / 1000.0})
df.to_csv("pandas_semicolon_decimal_comma.csv", sep=";", decimal=",", index=False)
# pandas to_csv, dialect 2: tab, CRLF line ends, no time column, mV.
pd.DataFrame({"CH1 [mV]": u * 1000.0}).to_csv("pandas_tab_crlf.txt", sep="\t", index=False, lineterminator="\r\n")

with open("expected.csv", "w") as f:
    f.write("t_s,u_v,i_a\n")
    for a, b, c in zip(t, u, i):
        f.write(f"{a!r},{b!r},{c!r}\n")
print("wrote fixtures with numpy", np.__version__, "pandas", pd.__version__)
