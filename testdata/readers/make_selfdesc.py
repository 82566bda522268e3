#!/usr/bin/python3
"""Files in the three self-describing binary layouts hvshot reads, written here with
Python's struct and NumPy, independently of the Go readers and of the Go tests'
builders (this script keeps its own offsets). Run from this folder:
    /usr/bin/python3 make_selfdesc.py
Every value is invented. The layouts are written as we remember them ("from memory",
see docs/formats.md); what each file should read as is computed here by NumPy from the
codes written and saved beside it as NAME.expected.csv (segment, t, one column per
channel; segment 0 for a file of one record), with repr() precision."""
import struct
import numpy as np

rng = np.random.default_rng(20)


def impulse(n, peak, pre):
    """An invented double-exponential impulse with a little noise, as codes."""
    t = np.arange(n) - pre
    v = np.where(t > 0, peak * 1.04 * (np.exp(-np.maximum(t, 0) / (n / 2.0)) - np.exp(-np.maximum(t, 0) / (n / 50.0))), 0.0)
    return np.round(v + rng.normal(0, 3, n))


def write_expected(name, columns, rows):
    with open(name, "w") as f:
        f.write("segment,t_s," + ",".join(columns) + "\n")
        for r in rows:
            f.write(",".join(repr(float(x)) if i else str(int(x)) for i, x in enumerate(r)) + "\n")


# 1. Text preamble and a definite-length block, two waveforms on one time base.
#    Waveform 1: long key spellings, int16 big-endian. Waveform 2: abbreviated keys,
#    unsigned int16 little-endian, the prefix restated mid-preamble, a point offset.
n, dt, x0 = 600, 4.0e-9, -4.0e-7
c1 = np.clip(impulse(n, 24000, 75), -32768, 32767).astype(">i2")
c2 = (np.clip(impulse(n, -9000, 75), -32768, 32767) + 32768).astype("<u2")
ymult1, yoff1, yzero1 = 1.6e-3, 5.0, 0.25
ymult2, yoff2, yzero2 = 2.0e-3, 32768.0, 0.0
ptoff2 = 10


def block(data):
    n = str(len(data))
    return b"#" + str(len(n)).encode() + n.encode() + data


pre1 = (':PRE:BYT_NR 2;BIT_NR 16;ENCDG BINARY;BN_FMT RI;BYT_OR MSB;'
        'WFID "Ch1, DC coupling, 5.000V/div, 400.0ns/div, 600 points, Sample mode";'
        'NR_PT %d;PT_FMT Y;XUNIT "s";XINCR %.4E;XZERO %.4E;PT_OFF 0;YUNIT "V";'
        'YMULT %.4E;YOFF %.4E;YZERO %.4E;:CURVE ' % (n, dt, x0, ymult1, yoff1, yzero1)).encode()
pre2 = (':PRE:BYT_N 2;BIT_N 16;ENC BIN;BN_F RP;BYT_O LSB;WFI "Ch2, DC coupling; 2.000A/div";'
        ':PRE:NR_P %d;PT_F Y;XUN "s";XIN %.4E;XZE %.4E;PT_O %d;YUN "A";YMU %.4E;YOF %.4E;YZE %.4E\n'
        ':CURV ' % (n, dt, x0 + ptoff2 * dt, ptoff2, ymult2, yoff2, yzero2)).encode()
with open("py_preamble_block.cap", "wb") as f:
    f.write(pre1 + block(c1.tobytes()) + b"\n" + pre2 + block(c2.tobytes()) + b"\n")
t = x0 + dt * np.arange(n)
v1 = (c1.astype(np.float64) - yoff1) * ymult1 + yzero1
v2 = (c2.astype(np.float64) - yoff2) * ymult2 + yzero2
write_expected("py_preamble_block.expected.csv", ["CH1_V", "CH2_A"], [(0, a, b, c) for a, b, c in zip(t, v1, v2)])

# 2. A descriptor block holding a sequence of 4 segments, int16 big-endian, with a
#    clipped code in segment 3 and a user text. Offsets from memory.
segs, per = 4, 250
codes = np.concatenate([impulse(per, 8000 * (k + 1), 30) for k in range(segs)])
codes[2 * per + 40] = 32767  # beyond the stated largest code: over-range
codes = np.clip(codes, -32768, 32767).astype(">i2")
gain, voff = np.float32(2.5e-3), np.float32(-0.5)
interval = np.float32(2e-9)
user = b"invented divider 1:4000"
trig = [(0.0, -6.0e-8), (2.0e-3, -6.1e-8), (4.5e-3, -5.9e-8), (7.25e-3, -6.05e-8)]
trig_bytes = b"".join(struct.pack(">dd", a, b) for a, b in trig)
data = codes.tobytes()
d = bytearray(346)
d[0:16] = b"PYDESC".ljust(16, b"\0")
d[16:32] = b"PYTEMPLATE_2_3".ljust(16, b"\0")
struct.pack_into(">hh", d, 32, 1, 0)  # two-byte samples, big-endian
struct.pack_into(">10i", d, 36, 346, len(user), 0, len(trig_bytes), 0, 0, len(data), 0, 0, 0)
d[76:92] = b"PY-SCOPE".ljust(16, b"\0")
struct.pack_into(">i", d, 92, 77)
struct.pack_into(">i", d, 116, segs * per)
struct.pack_into(">i", d, 144, segs)
struct.pack_into(">ffff", d, 156, gain, voff, 32000.0, -32000.0)
struct.pack_into(">h", d, 172, 8)
struct.pack_into(">f", d, 176, interval)
struct.pack_into(">d", d, 180, trig[0][1])
d[196:244] = b"V".ljust(48, b"\0")
d[244:292] = b"S".ljust(48, b"\0")
struct.pack_into(">dBBBBh", d, 296, 12.5, 34, 9, 21, 11, 2023)
struct.pack_into(">h", d, 316, 7)  # sequence
struct.pack_into(">h", d, 344, 1)  # the second input
body = bytes(d) + user + trig_bytes + data
with open("py_descriptor_sequence.cap", "wb") as f:
    f.write(b"#9%09d" % len(body) + body + b"\n")
# The reader takes the float32 header values as the decimals they stand for.
g, o, step = 2.5e-3, -0.5, 2e-9
rows = []
for k in range(segs):
    seg = codes[k * per:(k + 1) * per].astype(np.float64)
    tt = trig[k][1] + step * np.arange(per)
    rows += [(k + 1, a, b) for a, b in zip(tt, g * seg - o)]
write_expected("py_descriptor_sequence.expected.csv", ["CH2_V"], rows)

# 3. A fixed binary header file, version "10" (4-byte file size), two float32
#    waveforms labelled 1 and 3, in volts and amperes.
n, dt, x0 = 400, 5e-9, -2e-7
w1 = (impulse(n, 5000, 50) * 0.2).astype("<f4")
w2 = (impulse(n, 3000, 50) * -0.01).astype("<f4")


def wave(label, yunit, samples):
    h = bytearray(140)
    struct.pack_into("<5if3d2i", h, 0, 140, 1, 1, n, 1, dt * n, x0, dt, x0, 2, yunit)
    h[56:72] = b"21 NOV 2023".ljust(16, b"\0")
    h[72:88] = b"09:34:12".ljust(16, b"\0")
    h[88:112] = b"PY-SCOPE:0001".ljust(24, b"\0")
    h[112:128] = label.ljust(16, b"\0")
    struct.pack_into("<dI", h, 128, 0.0, 0)
    return bytes(h) + struct.pack("<ihhi", 12, 1, 4, 4 * n) + samples.tobytes()


body = wave(b"1", 1, w1) + wave(b"3", 4, w2)
with open("py_fixed_header.cap", "wb") as f:
    f.write(b"PY10" + struct.pack("<ii", 12 + len(body), 2) + body)
t = x0 + dt * np.arange(n)
write_expected("py_fixed_header.expected.csv", ["CH1_V", "CH3_A"], [(0, a, b, c) for a, b, c in zip(t, w1.astype(np.float64), w2.astype(np.float64))])
print("wrote the self-describing fixtures with numpy", np.__version__)
