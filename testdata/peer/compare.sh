#!/usr/bin/env bash
# Side by side: hvshot against a scripted Python peer (testdata/peer/peer.py, written
# independently of hvshot's code) on the same folder of captures.
#
# Generates SHOTS (default 40) invented captures of 100,000 samples each with `hvshot synth`
# (synthetic data, not measurements: 1.1-1.35/45-55 us full lightning impulses, 100-400 kV,
# every fourth negative, 0.5-2 MHz ringing, 0.2 % noise), then runs, RUNS times each
# (default 3, interleaved) and reports the median:
#   hvshot's default run (SVG plots and the HTML report, --jobs 2), hvshot --plots none,
#   both again at --jobs 1, the peer without plots, the peer with matplotlib PNG plots.
# Prints wall time, CPU time (user + sys), peak RSS (the largest process, from
# getrusage(RUSAGE_CHILDREN) in a fresh Python per run), shots/s and the ratios peer/hvshot;
# then compares Ut, T1 and T2 shot by shot and exits 1 if any differs by more than 0.1 %.
# Without Python 3 and NumPy, SciPy, pandas and matplotlib it prints why and exits 0.
#
# Run from anywhere in the repository:  bash testdata/peer/compare.sh
# Settings: SHOTS=40 RUNS=3 PYTHON=/usr/bin/python3 KEEP=1 (keep the temporary folder).
set -euo pipefail
cd "$(dirname "$0")/../.."
shots=${SHOTS:-40}
runs=${RUNS:-3}
py=${PYTHON:-/usr/bin/python3}
[ -x "$py" ] || py=$(command -v python3 || true)
if [ -z "$py" ]; then
  echo "compare.sh: skipped: no python3 (the peer needs Python 3 with numpy, scipy, pandas, matplotlib)"
  exit 0
fi
if ! missing=$("$py" -c '
import importlib.util as u
m = [n for n in ("numpy", "scipy", "pandas", "matplotlib") if u.find_spec(n) is None]
print(" ".join(m)); raise SystemExit(1 if m else 0)'); then
  echo "compare.sh: skipped: $py lacks $missing (Debian: apt-get install python3-numpy python3-scipy python3-pandas python3-matplotlib)"
  exit 0
fi

tmp=$(mktemp -d "${TMPDIR:-/tmp}/hvshot-peer.XXXXXX")
if [ -z "${KEEP:-}" ]; then trap 'rm -rf "$tmp"' EXIT; else echo "keeping $tmp"; fi
go build -o "$tmp/hvshot" ./cmd/hvshot
peer=testdata/peer/peer.py

# Invented captures: 2 ns x 100,000 samples (5 us before the impulse, 195 us after).
mkdir "$tmp/captures"
fronts=(1.2 1.1 1.3 1.15 1.25 1.35 1.2 1.05)
tails=(50 47 53 45 55 50 49 52 51)
rings=(1MHz 0.5MHz 2MHz 1.5MHz 0.7MHz)
for ((i = 1; i <= shots; i++)); do
  neg=()
  [ $((i % 4)) -eq 0 ] && neg=(--negative)
  "$tmp/hvshot" synth --out "$(printf '%s/captures/shot%03d.csv' "$tmp" "$i")" --seed "$i" \
    --front "${fronts[i % 8]}" --tail "${tails[i % 9]}" --peak "$((100 + (i * 37) % 300))kV" \
    --ring-freq "${rings[i % 5]}" --noise 0.002 --interval 2ns --duration 200us "${neg[@]}" 2>>"$tmp/synth.log" ||
    { cat "$tmp/synth.log" >&2; exit 1; }
done
mb=$(du -sm "$tmp/captures" | cut -f1)

# One measured run: prints "exit wall_s cpu_s peak_rss_mb" (the command's stdout is discarded).
measure() {
  "$py" -c '
import resource, subprocess, sys, time
t = time.perf_counter()
r = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL)
w = time.perf_counter() - t
ru = resource.getrusage(resource.RUSAGE_CHILDREN)
print(r.returncode, "%.4f %.4f %.1f" % (w, ru.ru_utime + ru.ru_stime, ru.ru_maxrss / 1024))' "$@"
}

labels=("hvshot default (SVG plots + report, jobs 2)" "hvshot --plots none (jobs 2)"
  "hvshot --jobs 1 (SVG plots + report)" "hvshot --jobs 1 --plots none"
  "peer, no plots" "peer, matplotlib PNG plots")
run_one() { # run_one INDEX RUN OUTDIR
  local hv=("$tmp/hvshot" analyze --quiet --out "$3")
  case $1 in
  0) measure "${hv[@]}" "$tmp/captures" ;;
  1) measure "${hv[@]}" --plots none "$tmp/captures" ;;
  2) measure "${hv[@]}" --jobs 1 "$tmp/captures" ;;
  3) measure "${hv[@]}" --jobs 1 --plots none "$tmp/captures" ;;
  4) measure "$py" "$peer" --out "$3" "$tmp/captures" ;;
  5) measure "$py" "$peer" --out "$3" --plots png "$tmp/captures" ;;
  esac
}
: >"$tmp/times"
for ((r = 1; r <= runs; r++)); do
  for k in 0 1 2 3 4 5; do
    out="$tmp/out/$k-$r"
    read -r rc w c m < <(run_one "$k" "$r" "$out")
    # hvshot exits 1 when a shot is out of tolerance: still a completed run.
    if [ "$rc" -gt 1 ] || { [ "$k" -ge 4 ] && [ "$rc" -ne 0 ]; }; then
      echo "compare.sh: ${labels[k]} exited $rc" >&2
      exit 1
    fi
    echo "$k $w $c $m" >>"$tmp/times"
    [ "$r" -eq 1 ] || rm -rf "$out"
  done
done

echo "$shots invented captures, 100,000 samples each ($mb MB of text); median of $runs runs"
echo "$(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'); $(go version | cut -d' ' -f3); $("$py" -c '
import sys, numpy, scipy, pandas, matplotlib
print("Python %s, numpy %s, scipy %s, pandas %s, matplotlib %s" % (sys.version.split()[0],
      numpy.__version__, scipy.__version__, pandas.__version__, matplotlib.__version__))')"
echo
"$py" - "$tmp/times" "$shots" "${labels[@]}" <<'PY'
import statistics, sys
times, shots, labels = sys.argv[1], int(sys.argv[2]), sys.argv[3:]
runs = {}
for line in open(times):
    k, w, c, m = line.split()
    runs.setdefault(int(k), []).append((float(w), float(c), float(m)))
med = {k: [statistics.median(x[i] for x in v) for i in range(3)] for k, v in runs.items()}
print("%-44s %8s %8s %12s %9s %14s %14s" % ("run", "wall s", "CPU s", "peak RSS MB", "shots/s",
      "peer/this wall", "peer/this CPU"))
for k in sorted(med):
    w, c, m = med[k]
    ratio = lambda p, i: "%.1fx" % (med[p][i] / med[k][i])
    if k < 4:  # each hvshot run against the peer run with plots when it has plots, else without
        p = 5 if k in (0, 2) else 4
        rw, rc = ratio(p, 0), ratio(p, 1)
    else:
        rw = rc = ""
    print("%-44s %8.2f %8.2f %12.1f %9.1f %14s %14s" % (labels[k], w, c, m, shots / w, rw, rc))
print()
print("(peer/this: against the peer with matplotlib plots for hvshot's runs with plots, the peer without plots for those without)")
for p, goal, what in ((4, 5, "the peer without plots"), (5, 10, "the peer with matplotlib plots")):
    r = med[p][0] / med[0][0]
    print("goal: hvshot's default run >= %dx %s: %.1fx wall (%.1fx CPU): %s" % (goal, what, r,
          med[p][1] / med[0][1], "met" if r >= goal else "not met, %.2fx short" % (goal / r)))
PY

echo
"$py" - "$tmp/out/0-1/results.csv" "$tmp/out/4-1/results.csv" "$shots" <<'PY'
# hvshot's results.csv keys are documented in docs/output.md; the peer's in peer.py.
import sys
import pandas as pd
hv = pd.read_csv(sys.argv[1])
hv = hv[hv.channel == "divider"]
pe = pd.read_csv(sys.argv[2])
m = hv.merge(pe, on="file", how="outer", indicator=True)
m["ut_v"] = m.ut_v.abs()  # the peer's Ut is signed; hvshot's a magnitude beside its polarity
bad = 0
if (m.polarity_x != m.polarity_y).any():
    print("polarity differs:", list(m.file[m.polarity_x != m.polarity_y]))
    bad = 1
if len(m) != int(sys.argv[3]) or (m._merge != "both").any():
    print("shots missing on one side:", list(m.file[m._merge != "both"]))
    bad = 1
limit = 1e-3
print("agreement, %d shots: |peer - hvshot| / |hvshot|, limit 0.1 %%" % len(m))
for name, h, p in (("Ut", "test_voltage_v", "ut_v"), ("T1", "front_time_s", "t1_s"), ("T2", "time_to_half_s", "t2_s")):
    rel = ((m[p] - m[h]) / m[h]).abs()
    i = rel.fillna(1.0).idxmax()
    print("  %-2s  median %.4f %%  max %.4f %% (%s: hvshot %.6g, peer %.6g)" % (name, 100 * rel.median(),
          100 * rel.max(), m.file[i], m[h][i], m[p][i]))
    over = m[rel.isna() | (rel > limit)]
    for _, r in over.iterrows():
        print("    over the limit: %s: hvshot %.6g, peer %.6g" % (r.file, r[h], r[p]))
    bad |= len(over) > 0
print("agreement: %s" % ("FAIL" if bad else "ok"))
sys.exit(1 if bad else 0)
PY
