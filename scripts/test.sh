#!/usr/bin/env bash
# The project's test command (README): static checks, the whole test suite, brief fuzzing of
# the file readers, and — when run as root on a Debian machine — the end-to-end test on a real
# one-node Slurm cluster that this script starts and stops.
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

echo "== fuzzing the readers"
fuzztime=${FUZZTIME:-10s}
for target in $(grep -rhoE '^func (Fuzz[A-Za-z0-9_]+)' --include='*_test.go' . | awk '{print $2}' | sort -u); do
  pkg=$(grep -rlE "^func ${target}\(" --include='*_test.go' . | head -n1 | xargs dirname)
  echo "-- $target in $pkg"
  go test -run '^$' -fuzz "^${target}\$" -fuzztime "$fuzztime" -fuzzminimizetime 5s "$pkg"
done
echo "all checks passed"
