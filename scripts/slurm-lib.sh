# Shared by slurm-up.sh and slurm-down.sh (sourced, not run).

# pid_of PIDFILE NAME: prints the pid if the pid file names a live process called NAME. A
# killed daemon stays a zombie (state Z) for a while on this kind of machine: that counts as
# stopped.
pid_of() {
	local pid state comm
	[ -s "$1" ] || return 1
	pid=$(tr -dc 0-9 2>/dev/null <"$1") || return 1
	[ -n "$pid" ] && [ -r "/proc/$pid/stat" ] || return 1
	comm=$(cat "/proc/$pid/comm" 2>/dev/null) || return 1
	[ "$comm" = "$2" ] || return 1
	state=$(sed 's/^.*) //' "/proc/$pid/stat" 2>/dev/null | cut -d' ' -f1) || return 1
	[ "$state" != Z ] && [ "$state" != X ] || return 1
	echo "$pid"
}

# alive PIDFILE NAME: the pid file names a running (not zombie) process called NAME.
alive() { pid_of "$1" "$2" >/dev/null; }
