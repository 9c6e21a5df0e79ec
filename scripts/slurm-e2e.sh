#!/usr/bin/env bash
# slurm-e2e.sh [STATE_DIR] — the Slurm end-to-end test on a one-node cluster of this machine:
# starts it (scripts/slurm-up.sh, as root), runs TestSlurmArrayEndToEnd against it, and stops
# the daemons again whatever the outcome (scripts/slurm-down.sh). Exit status: the test's.
set -euo pipefail
cd "$(dirname "$0")/.."
D=${1:-/tmp/keyceiling-slurm}
trap 'bash scripts/slurm-down.sh "$D" || true' EXIT
bash scripts/slurm-up.sh "$D" >/dev/null
. "$D/env"
KEYCEILING_SLURM=1 go test ./cmd/keyceiling -run '^TestSlurmArrayEndToEnd$' -count=1 -v -timeout 20m
