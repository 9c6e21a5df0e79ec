#!/usr/bin/env bash
# bench/compare.sh: the Go objective measured side by side with a NumPy implementation of
# the same function (bench/objective.py), plus the wall time of whole searches.
#
#   bash bench/compare.sh
#
# 1. Installs Debian's python3-numpy if /usr/bin/python3 cannot import numpy (the default
#    python3 may be a pyenv build without it, so /usr/bin/python3 is used throughout).
# 2. Builds bench/gobench and cmd/keyceiling.
# 3. Writes POINTS random TMSSplit parameter vectors (uniform in [-2, 2]^5, the range of the
#    search's random starts; fixed SEED) to a temporary file, evaluates the objective at
#    every point with both programs (thermal loss ETA, NB; thermal input NS), and aborts
#    unless every pair of values agrees to TOL = 1e-9 bits.
# 4. Times both on the same points: ROUNDS alternating runs of at least MIN_SECONDS each.
#    Each program reports its rate over the whole run and its best rate over windows of
#    WINDOW seconds; the script prints every run, the best window of each program (the
#    least disturbed by other load on a shared machine), the median whole run of each, and
#    the ratios of both.
# 5. Times one tms-split point search and one auto-family point search
#    (`keyceiling bound`), and the built-in demo sweep if `keyceiling sweep` exists
#    (SKIP_SWEEP=1 skips it; SKIP_AUTO=1 skips the auto-family search).
# CHECK_ONLY=1 stops after step 3: the agreement check alone, no timing (scripts/test.sh
# runs it that way at three channel settings).
#
# Environment: POINTS (200), SEED (1), ROUNDS (12), MIN_SECONDS (0.5), WINDOW (0.05), ETA (0.9),
# NB (1), NS (1).
set -euo pipefail
cd "$(dirname "$0")/.."

POINTS=${POINTS:-200}
SEED=${SEED:-1}
ROUNDS=${ROUNDS:-12}
MIN_SECONDS=${MIN_SECONDS:-0.5}
WINDOW=${WINDOW:-0.05}
ETA=${ETA:-0.9}
NB=${NB:-1}
NS=${NS:-1}
TOL=1e-9
PY=/usr/bin/python3

# --- 1. NumPy (Debian's package) ---------------------------------------------------------
if ! "$PY" -c 'import numpy' 2>/dev/null; then
  if [ "$(id -u)" != 0 ] || ! command -v apt-get >/dev/null; then
    echo "compare.sh: $PY cannot import numpy; install Debian's python3-numpy (as root: apt-get install python3-numpy)" >&2
    exit 1
  fi
  echo "== installing python3-numpy"
  if ! apt-cache show python3-numpy >/dev/null 2>&1; then
    apt-get update -q
  fi
  apt-get install -y -q --no-install-recommends -o DPkg::Lock::Timeout=300 python3-numpy
fi

tmp=$(mktemp -d /tmp/keyceiling-compare.XXXXXX)
trap 'rm -rf "$tmp"' EXIT

# --- 2. builds ---------------------------------------------------------------------------
echo "== building bench/gobench and cmd/keyceiling"
go build -o "$tmp/gobench" ./bench/gobench
go build -o "$tmp/keyceiling" ./cmd/keyceiling

# --- 3. the same points, the same values -------------------------------------------------
"$PY" - "$tmp/points.txt" "$POINTS" "$SEED" <<'EOF'
import sys
import numpy as np
path, n, seed = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
pts = np.random.default_rng(seed).uniform(-2.0, 2.0, size=(n, 5))
np.savetxt(path, pts, fmt="%.17g")
EOF
args=(--eta "$ETA" --nb "$NB" --ns "$NS")
"$tmp/gobench" "${args[@]}" --min-seconds 0 "$tmp/points.txt" > "$tmp/go0.txt"
"$PY" bench/objective.py "${args[@]}" --min-seconds 0 "$tmp/points.txt" > "$tmp/np0.txt"
"$PY" - "$tmp/points.txt" "$tmp/go0.txt" "$tmp/np0.txt" "$TOL" <<'EOF'
import math
import sys
pts_path, go_path, np_path, tol = sys.argv[1], sys.argv[2], sys.argv[3], float(sys.argv[4])
pts = [l.split() for l in open(pts_path) if l.strip()]
val = lambda p: [float(l) for l in open(p) if not l.startswith("#")]
g, n = val(go_path), val(np_path)
if not (len(g) == len(n) == len(pts)):
    sys.exit(f"compare.sh: ABORT: {len(pts)} points but {len(g)} Go values and {len(n)} NumPy values")
worst, wi = -1.0, -1
for i, (a, b) in enumerate(zip(g, n)):
    d = abs(a - b) if math.isfinite(a) and math.isfinite(b) else math.inf
    if not d <= worst:
        worst, wi = d, i
if not worst <= tol:
    sys.exit(f"compare.sh: ABORT: Go and NumPy disagree by {worst:.3g} bits (> {tol:g}) at point {wi + 1} "
             f"{' '.join(pts[wi])}: Go {g[wi]!r}, NumPy {n[wi]!r}")
print(f"== agreement: {len(g)} points, max |Go - NumPy| = {worst:.2e} bits (tolerance {tol:g})")
EOF
if [ "${CHECK_ONLY:-0}" = 1 ]; then
  exit 0
fi

# --- 4. evaluations per second -----------------------------------------------------------
# The machine may be shared: other load slows either program for seconds at a time. Both
# programs report their rate over a whole run and their best rate over windows of WINDOW
# seconds (the same window for both); many alternating runs give each program many chances
# at undisturbed time. The best windows estimate undisturbed speeds; the medians of the
# whole runs show what the load did.
echo "== evaluations per second (thermal loss eta=$ETA N_B=$NB, N_S=$NS, tms-split; $ROUNDS alternating runs of >= ${MIN_SECONDS}s each, windows of ${WINDOW}s)"
rate() { awk -v k="$2" '$1 == "#" && $2 == k {print $3}' "$1"; }
: > "$tmp/rates.txt"
for r in $(seq 1 "$ROUNDS"); do
  "$tmp/gobench" "${args[@]}" --min-seconds "$MIN_SECONDS" --window "$WINDOW" "$tmp/points.txt" > "$tmp/go.txt"
  "$PY" bench/objective.py "${args[@]}" --min-seconds "$MIN_SECONDS" --window "$WINDOW" "$tmp/points.txt" > "$tmp/np.txt"
  echo "$(rate "$tmp/go.txt" evals_per_sec) $(rate "$tmp/np.txt" evals_per_sec)" \
    "$(rate "$tmp/go.txt" best_window_evals_per_sec) $(rate "$tmp/np.txt" best_window_evals_per_sec)" >> "$tmp/rates.txt"
done
awk '
function median(a, n,   i, j, t) { # sorts a[1..n] ascending
  for (i = 2; i <= n; i++) { t = a[i]; for (j = i - 1; j >= 1 && a[j] > t; j--) a[j + 1] = a[j]; a[j + 1] = t }
  return (n % 2) ? a[(n + 1) / 2] : (a[n / 2] + a[n / 2 + 1]) / 2
}
{ n++; g[n] = $1; p[n] = $2; if ($3 > bg) bg = $3; if ($4 > bp) bp = $4
  gs = gs sprintf(" %.0fk", $1 / 1000); ps = ps sprintf(" %.2fk", $2 / 1000) }
END {
  printf "   whole runs, Go:   %s /s\n   whole runs, NumPy:%s /s\n", gs, ps
  mg = median(g, n); mp = median(p, n)
  printf "   best window:      Go %8.0f /s (%.2f us/eval)   NumPy %6.0f /s (%.1f us/eval)   ratio Go/NumPy %.0fx\n", bg, 1e6 / bg, bp, 1e6 / bp, bg / bp
  printf "   median whole run: Go %8.0f /s (%.2f us/eval)   NumPy %6.0f /s (%.1f us/eval)   ratio Go/NumPy %.0fx\n", mg, 1e6 / mg, mp, 1e6 / mp, mg / mp
}' "$tmp/rates.txt"

# --- 5. whole searches -------------------------------------------------------------------
wall() { # wall seconds of a command, its output to $tmp/out.txt
  local t0 t1
  t0=$(date +%s.%N)
  "$@" > "$tmp/out.txt" 2>&1 || { echo "compare.sh: failed: $*" >&2; cat "$tmp/out.txt" >&2; exit 1; }
  t1=$(date +%s.%N)
  awk -v a="$t0" -v b="$t1" 'BEGIN{printf "%.2f", b - a}'
}
point=(--channel thermal-loss --eta "$ETA" --noise "$NB" --energy "$NS")
echo "== one point search (keyceiling bound ${point[*]})"
s=$(wall "$tmp/keyceiling" bound "${point[@]}" --family tms-split)
printf '   tms-split: %8s s   %s\n' "$s" "$(grep -m1 '^bound' "$tmp/out.txt")"
if [ "${SKIP_AUTO:-0}" != 1 ]; then
  s=$(wall "$tmp/keyceiling" bound "${point[@]}" --family auto)
  printf '   auto:      %8s s   %s\n' "$s" "$(grep -m1 '^bound' "$tmp/out.txt")"
fi
if [ "${SKIP_SWEEP:-0}" = 1 ]; then
  echo "== demo sweep: skipped (SKIP_SWEEP=1)"
elif "$tmp/keyceiling" sweep --help > /dev/null 2>&1; then
  echo "== demo sweep (keyceiling sweep --out DIR --quiet, the built-in demo plan; GOMAXPROCS=$(nproc) cores)"
  s=$(wall "$tmp/keyceiling" sweep --out "$tmp/demo" --quiet)
  printf '   demo sweep: %8s s   (%s records)\n' "$s" "$(cat "$tmp"/demo/*.jsonl 2>/dev/null | wc -l)"
else
  echo "== demo sweep: skipped (this build has no 'keyceiling sweep')"
fi
