#!/usr/bin/env bash
# slurm-down.sh [STATE_DIR] — stop the one-node Slurm cluster started by slurm-up.sh.
#
# Stops slurmd, slurmctld and (only if slurm-up.sh started it) munged, by the PIDs in their
# pid files — never by process name. A pid file is trusted only if its process still has the
# expected name. A stopped daemon may linger as a zombie for a few seconds: state Z counts as
# stopped. Jobs left on the cluster are cancelled first (scancel, with this cluster's config)
# so that no job process outlives slurmd. SIGTERM first; SIGKILL after SLURM_DOWN_WAIT seconds
# (default 15). Idempotent.
# The state folder (config, logs, job state) is kept; delete it yourself if you want.
set -uo pipefail

say() { printf 'slurm-down: %s\n' "$*" >&2; }

D=${1:-/tmp/keyceiling-slurm}
WAIT=${SLURM_DOWN_WAIT:-15}
case $D in /*) ;; *) D=$(pwd)/$D ;; esac

# shellcheck source=scripts/slurm-lib.sh
. "$(dirname "$0")/slurm-lib.sh"

status=0
stop() { # NAME PIDFILE
	local pid i
	if ! pid=$(pid_of "$2" "$1"); then
		say "$1 is not running"
		return 0
	fi
	say "stopping $1 (pid $pid)"
	kill -TERM "$pid" 2>/dev/null
	for ((i = 0; i < WAIT * 5; i++)); do
		pid_of "$2" "$1" >/dev/null || return 0
		sleep 0.2
	done
	say "$1 (pid $pid) ignored SIGTERM for ${WAIT}s: SIGKILL"
	kill -KILL "$pid" 2>/dev/null
	for ((i = 0; i < 25; i++)); do
		pid_of "$2" "$1" >/dev/null || return 0
		sleep 0.2
	done
	say "could not stop $1 (pid $pid)"
	status=1
}

# Jobs still on this private test cluster are cancelled first, so that slurmd ends their
# processes (slurmstepd and the job scripts) before it stops itself.
if pid_of "$D/run/slurmctld.pid" slurmctld >/dev/null && [ -f "$D/slurm.conf" ]; then
	export SLURM_CONF=$D/slurm.conf
	jobs=$(squeue -h -o %A 2>/dev/null | sort -u | tr '\n' ' ')
	if [ -n "${jobs// /}" ]; then
		say "cancelling the jobs still queued or running: $jobs"
		# shellcheck disable=SC2086
		scancel $jobs 2>/dev/null
		for ((i = 0; i < WAIT * 5; i++)); do
			[ -z "$(squeue -h -o %A -t PD,R,CG,CF,S 2>/dev/null)" ] && break
			sleep 0.2
		done
	fi
fi

stop slurmd "$D/run/slurmd.pid"
stop slurmctld "$D/run/slurmctld.pid"
if [ -e "$D/run/munged.ours" ]; then
	stop munged /run/munge/munged.pid
	[ $status -eq 0 ] && rm -f "$D/run/munged.ours"
else
	say "munged was not started by slurm-up.sh for $D: left alone"
fi
exit $status
