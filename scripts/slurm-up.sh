#!/usr/bin/env bash
# slurm-up.sh [STATE_DIR] — bring up a one-node Slurm cluster on this machine, for tests.
#
# Run as root on Debian 12 (or a derivative with the same packages). It is idempotent: a
# second run reuses the packages, the munge key and any daemon that is still alive.
#
#   1. installs munge, slurmctld, slurmd and slurm-client (apt-get update only if apt does not
#      know the packages yet, or if an install from stale lists fails);
#   2. writes STATE_DIR/slurm.conf (SlurmUser=root, one node with all CPUs of this machine,
#      one partition "debug") and the folders it names (state, spool, run, log);
#   3. starts munged (as user munge), slurmctld and slurmd, without systemd;
#   4. waits until `sinfo` reports the node idle (SLURM_UP_TIMEOUT seconds, default 90); on
#      failure it prints the daemons' logs and exits 1;
#   5. writes STATE_DIR/env and prints on stdout the line to use the cluster:
#        export SLURM_CONF=STATE_DIR/slurm.conf
#      (progress goes to stderr, so `eval "$(scripts/slurm-up.sh DIR)"` works too).
#
# STATE_DIR defaults to /tmp/keyceiling-slurm. Stop everything with scripts/slurm-down.sh
# STATE_DIR. It follows the project's shared notes on a one-node Slurm cluster (Debian 12, Slurm 22.05).
set -euo pipefail

say() { printf 'slurm-up: %s\n' "$*" >&2; }
die() { printf 'slurm-up: error: %s\n' "$*" >&2; exit 1; }

D=${1:-/tmp/keyceiling-slurm}
TIMEOUT=${SLURM_UP_TIMEOUT:-90}
PACKAGES=(munge slurmctld slurmd slurm-client)
MUNGE_PID=/run/munge/munged.pid

[ "$(id -u)" -eq 0 ] || die "run me as root (the daemons are started by hand, without systemd)"
case $D in /*) ;; *) D=$(pwd)/$D ;; esac
case $D in *[[:space:]]*) die "state folder $D contains white space; slurm.conf cannot hold it" ;; esac

# shellcheck source=scripts/slurm-lib.sh
. "$(dirname "$0")/slurm-lib.sh"

# --- 1. packages -----------------------------------------------------------------------
installed() {
	local p
	for p in "${PACKAGES[@]}"; do
		dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || return 1
	done
}
APT=(apt-get -y -q -o DPkg::Lock::Timeout=300)
if installed; then
	say "packages already installed: ${PACKAGES[*]}"
else
	export DEBIAN_FRONTEND=noninteractive
	if ! apt-cache show "${PACKAGES[@]}" >/dev/null 2>&1; then
		say "apt does not know the packages yet: apt-get update"
		"${APT[@]}" update >&2
	fi
	say "installing ${PACKAGES[*]}"
	if ! "${APT[@]}" install --no-install-recommends "${PACKAGES[@]}" >&2; then
		say "install failed; refreshing the package lists and retrying once"
		"${APT[@]}" update >&2
		"${APT[@]}" install --no-install-recommends "${PACKAGES[@]}" >&2
	fi
	installed || die "packages ${PACKAGES[*]} are still not installed"
fi

# --- 2. configuration ------------------------------------------------------------------
HOST=$(hostname -s 2>/dev/null || hostname)
[ -n "$HOST" ] || die "this machine has no host name; slurmd needs one to find its node"
CPUS=$(nproc)
mkdir -p "$D"/state "$D"/spool "$D"/run "$D"/log
CONF=$D/slurm.conf
NEWCONF=$(mktemp "$D/slurm.conf.XXXXXX")
cat >"$NEWCONF" <<CONF
# Written by keyceiling scripts/slurm-up.sh: a one-node test cluster, daemons run as root.
ClusterName=ci
SlurmctldHost=$HOST(127.0.0.1)
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
StateSaveLocation=$D/state
SlurmdSpoolDir=$D/spool
SlurmctldPidFile=$D/run/slurmctld.pid
SlurmdPidFile=$D/run/slurmd.pid
SlurmctldLogFile=$D/log/slurmctld.log
SlurmdLogFile=$D/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
SchedulerParameters=batch_sched_delay=0,sched_min_interval=0
MpiDefault=none
MailProg=/bin/true
ReturnToService=2
KillWait=5
MinJobAge=600
NodeName=$HOST NodeAddr=127.0.0.1 CPUs=$CPUS RealMemory=1000 State=UNKNOWN
PartitionName=debug Nodes=$HOST Default=YES MaxTime=INFINITE State=UP
CONF
if [ -f "$CONF" ] && cmp -s "$NEWCONF" "$CONF"; then
	rm -f "$NEWCONF"
	CHANGED=0
else
	mv "$NEWCONF" "$CONF"
	chmod 0644 "$CONF"
	CHANGED=1
fi
export SLURM_CONF=$CONF

# --- 3. daemons ------------------------------------------------------------------------
if [ ! -s /etc/munge/munge.key ]; then
	say "creating the munge key"
	mungekey --create
fi
chown munge:munge /etc/munge/munge.key
chmod 0400 /etc/munge/munge.key
install -d -o munge -g munge -m 0755 /run/munge
if alive "$MUNGE_PID" munged; then
	say "munged already running (pid $(cat "$MUNGE_PID"))"
else
	say "starting munged"
	runuser -u munge -- /usr/sbin/munged
	: >"$D/run/munged.ours" # slurm-down.sh stops munged only if we started it
fi

restart_if_changed() { # NAME PIDFILE: a daemon running an older slurm.conf is restarted
	if [ "$CHANGED" = 1 ] && alive "$2" "$1"; then
		say "slurm.conf changed: stopping $1 (pid $(cat "$2")) to restart it"
		kill -TERM "$(cat "$2")"
		for _ in $(seq 50); do alive "$2" "$1" || break; sleep 0.2; done
		alive "$2" "$1" && die "$1 (pid $(cat "$2")) did not stop"
	fi
	return 0
}
restart_if_changed slurmd "$D/run/slurmd.pid"
restart_if_changed slurmctld "$D/run/slurmctld.pid"

if alive "$D/run/slurmctld.pid" slurmctld; then
	say "slurmctld already running (pid $(cat "$D/run/slurmctld.pid"))"
else
	say "starting slurmctld"
	/usr/sbin/slurmctld
fi
if alive "$D/run/slurmd.pid" slurmd; then
	say "slurmd already running (pid $(cat "$D/run/slurmd.pid"))"
else
	say "starting slurmd"
	/usr/sbin/slurmd
fi

# --- 4. wait for the node --------------------------------------------------------------
show_logs() {
	local f
	for f in "$D/log/slurmctld.log" "$D/log/slurmd.log" /var/log/munge/munged.log; do
		[ -f "$f" ] || continue
		printf '\n===== last lines of %s =====\n' "$f" >&2
		tail -n 40 "$f" >&2
	done
}
deadline=$((SECONDS + TIMEOUT))
state=
while :; do
	# Our daemons must be the ones answering (another cluster on the same ports would too).
	for d in slurmctld slurmd; do
		if [ $SECONDS -ge $((deadline - TIMEOUT + 5)) ] && ! alive "$D/run/$d.pid" "$d"; then
			say "$d is not running (is another Slurm using its ports? see its log below)"
			show_logs
			die "Slurm did not come up; see the logs above and $D/log"
		fi
	done
	state=$(sinfo -h -N -o %t 2>/dev/null | head -n 1 || true)
	case $state in idle | mix | alloc)
		alive "$D/run/slurmctld.pid" slurmctld && alive "$D/run/slurmd.pid" slurmd && break ;;
	esac
	if [ $SECONDS -ge $deadline ]; then
		say "the node did not become idle within ${TIMEOUT}s (sinfo says: '${state:-nothing}')"
		show_logs
		die "Slurm did not come up; see the logs above and $D/log"
	fi
	sleep 0.5
done
say "node $HOST is $state ($CPUS CPUs, partition debug)"

# --- 5. environment --------------------------------------------------------------------
printf 'export SLURM_CONF=%s\n' "$CONF" >"$D/env"
say "environment written to $D/env (source it: . $D/env)"
printf 'export SLURM_CONF=%s\n' "$CONF"
