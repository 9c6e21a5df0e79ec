#!/usr/bin/env bash
# The project's test command (README): static checks, the whole test suite, the objective
# checked against the independent NumPy implementation in bench/ (Debian's python3-numpy,
# installed when run as root), brief fuzzing of the file readers, and — when run as root on
# a Debian machine — the end-to-end test on a real one-node Slurm cluster that this script
# starts and stops.
#   KEYCEILING_NO_SLURM=1  skip the cluster (the Slurm test then reports itself skipped)
#   FUZZTIME=10s           how long each fuzz target runs
set -euo pipefail
cd "$(dirname "$0")/.."

echo "== gofmt"
unformatted=$(gofmt -l $(git ls-files '*.go' 2>/dev/null || find . -name '*.go'))
if [ -n "$unformatted" ]; then echo "gofmt would change: $unformatted" >&2; exit 1; fi
echo "== go vet"
go vet ./...

if [ "$(id -u)" = 0 ] && [ "${KEYCEILING_NO_SLURM:-0}" != 1 ] && command -v apt-get >/dev/null && [ -x scripts/slurm-up.sh ]; then
  state=$(mktemp -d /tmp/keyceiling-slurm.XXXXXX)
  echo "== starting a one-node Slurm cluster in $state"
  bash scripts/slurm-up.sh "$state"
  trap 'bash scripts/slurm-down.sh "$state" || true' EXIT
  # shellcheck disable=SC1091
  . "$state/env"
  export KEYCEILING_SLURM=1
fi

echo "== go test"
go test -count=1 -timeout 80m ./...
if [ "${KEYCEILING_SLURM:-0}" = 1 ]; then
  echo "(the Slurm end-to-end test ran on the cluster started above: TestSlurmArrayEndToEnd)"
else
  echo "(the Slurm end-to-end test was skipped: no cluster; run as root on Debian to include it)"
fi

echo "== the objective against an independent NumPy implementation (bench/objective.py)"
# Covariance matrices and eigvalsh there, square-root factors and the phase-covariant route
# here: 200 random tms-split maps must agree to 1e-9 bits at each setting. No timing.
numpy_ok() { /usr/bin/python3 -c 'import numpy' 2>/dev/null; }
if ! numpy_ok && [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null; then
  echo "-- installing Debian's python3-numpy"
  { apt-cache show python3-numpy >/dev/null 2>&1 || apt-get update -q; } &&
    apt-get install -y -q --no-install-recommends -o DPkg::Lock::Timeout=300 python3-numpy ||
    echo "(could not install python3-numpy)"
fi
if numpy_ok; then
  while read -r eta nb ns; do
    echo "-- thermal loss eta=$eta N_B=$nb, N_S=$ns"
    CHECK_ONLY=1 ETA=$eta NB=$nb NS=$ns bash bench/compare.sh
  done <<'SETTINGS'
0.9 1 1
0.5 0 10
0.2 0.3 0.1
SETTINGS
else
  echo "(skipped: /usr/bin/python3 cannot import numpy, and it could not be installed here)"
fi

echo "== fuzzing the readers"
fuzztime=${FUZZTIME:-10s}
for target in $(grep -rhoE '^func (Fuzz[A-Za-z0-9_]+)' --include='*_test.go' . | awk '{print $2}' | sort -u); do
  pkg=$(grep -rlE "^func ${target}\(" --include='*_test.go' . | head -n1 | xargs dirname)
  echo "-- $target in $pkg"
  go test -run '^$' -fuzz "^${target}\$" -fuzztime "$fuzztime" -fuzzminimizetime 5s "$pkg"
done
echo "all checks passed"
