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
# 4. Times both on the same points: ROUNDS alternating runs of at least MIN_SECONDS each,
#    reporting every run and the best of each (the least disturbed by other load), and the
#    ratio of the bests.
# 5. Times one tms-split point search and one auto-family point search
#    (`keyceiling bound`), and the built-in demo sweep if `keyceiling sweep` exists
#    (SKIP_SWEEP=1 skips it; SKIP_AUTO=1 skips the auto-family search).
#
# Environment: POINTS (200), SEED (1), ROUNDS (3), MIN_SECONDS (2), ETA (0.9), NB (1), NS (1).
set -euo pipefail
cd "$(dirname "$0")/.."

POINTS=${POINTS:-200}
SEED=${SEED:-1}
ROUNDS=${ROUNDS:-3}
MIN_SECONDS=${MIN_SECONDS:-2}
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

# --- 4. evaluations per second -----------------------------------------------------------
echo "== evaluations per second (thermal loss eta=$ETA N_B=$NB, N_S=$NS, tms-split; $ROUNDS alternating runs of >= ${MIN_SECONDS}s)"
best_go=0
best_np=0
rate() { awk '/^# evals_per_sec/{print $3}' "$1"; }
max() { awk -v a="$1" -v b="$2" 'BEGIN{print (a + 0 > b + 0) ? a : b}'; }
for r in $(seq 1 "$ROUNDS"); do
  "$tmp/gobench" "${args[@]}" --min-seconds "$MIN_SECONDS" "$tmp/points.txt" > "$tmp/go.txt"
  "$PY" bench/objective.py "${args[@]}" --min-seconds "$MIN_SECONDS" "$tmp/points.txt" > "$tmp/np.txt"
  g=$(rate "$tmp/go.txt")
  n=$(rate "$tmp/np.txt")
  printf '   run %d: Go %12.0f /s   NumPy %10.0f /s\n' "$r" "$g" "$n"
  best_go=$(max "$best_go" "$g")
  best_np=$(max "$best_np" "$n")
done
awk -v g="$best_go" -v n="$best_np" 'BEGIN{
  printf "   best:  Go %12.0f /s (%.2f us/eval)   NumPy %10.0f /s (%.1f us/eval)   ratio Go/NumPy %.0fx\n",
    g, 1e6 / g, n, 1e6 / n, g / n }'

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
