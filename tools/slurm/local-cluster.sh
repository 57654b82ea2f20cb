#!/usr/bin/env bash
# A real single-node Slurm cluster on this machine, for CI and for trying the
# cluster workflow without a cluster.
#
#   local-cluster.sh start  [--dir DIR] [--timeout SECONDS]
#   local-cluster.sh stop   [--dir DIR]
#   local-cluster.sh status [--dir DIR]
#   local-cluster.sh env    [--dir DIR]     # prints: export SLURM_CONF=...
#
# start  installs Debian's slurmctld, slurmd, slurm-client and munge when they
#        are missing, writes DIR/etc/slurm.conf for one node ("node1", sized by
#        `slurmd -C` to this machine's CPUs and memory, partition "local"),
#        starts munged (as the munge user, on a socket of its own under DIR),
#        slurmctld and slurmd, and waits until sinfo shows the node idle.
#        Daemons already running from DIR are kept. On a timeout it prints the
#        daemons' log tails and exits 1.
# stop   cancels every job, stops slurmd, slurmctld and munged (TERM, then KILL
#        after a grace period) and waits until they are gone; a zombie left
#        for the sandbox to reap counts as gone. Stopping a stopped cluster is
#        fine.
# status prints each daemon, the node and the queue; exit 0 when all three
#        daemons run and the node answers, 3 otherwise.
#
# DIR defaults to target/slurm in this repository (any folder works; it holds
# the configuration, state, spool and logs). Clients (sbatch, squeue, sinfo,
# scontrol, scancel) find the cluster through SLURM_CONF=DIR/etc/slurm.conf:
#   eval "$(tools/slurm/local-cluster.sh env)"
#
# Needs root (to install packages, to run munged as munge and slurmd as root).
# Runs from any folder. Ports: slurmctld 6817, slurmd 6818 (Slurm's defaults),
# override with LOCAL_SLURM_PORT (slurmctld; slurmd takes the next one).
set -euo pipefail

SCRIPT_DIR=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
REPO_ROOT=$(cd "$SCRIPT_DIR/../.." && pwd)
NODE=node1
PARTITION=local
CLUSTER=stratanet-local
CTLD_PORT=${LOCAL_SLURM_PORT:-6817}
SLURMD_PORT=$((CTLD_PORT + 1))
PACKAGES=(slurmctld slurmd slurm-client munge)

usage() {
  sed -n '2,/^set -euo/p' "${BASH_SOURCE[0]}" | sed '$d; s/^# \{0,1\}//' >&2
  exit 2
}
die() { printf 'local-cluster: %s\n' "$*" >&2; exit 1; }
say() { printf 'local-cluster: %s\n' "$*"; }

# Seconds since the epoch with microseconds (bash 5's EPOCHREALTIME).
now() { printf '%s' "${EPOCHREALTIME/,/.}"; }
since() { awk -v a="$1" -v b="$(now)" 'BEGIN { printf "%.1f s", b - a }'; }

action=''
DIR=$REPO_ROOT/target/slurm
TIMEOUT=60
while [ $# -gt 0 ]; do
  case $1 in
    start|stop|status|env) [ -z "$action" ] || die "two commands given: '$action' and '$1'"; action=$1; shift ;;
    --dir) [ $# -ge 2 ] || die "--dir needs a folder"; DIR=$2; shift 2 ;;
    --dir=*) DIR=${1#--dir=}; shift ;;
    --timeout) [ $# -ge 2 ] || die "--timeout needs seconds"; TIMEOUT=$2; shift 2 ;;
    --timeout=*) TIMEOUT=${1#--timeout=}; shift ;;
    -h|--help) usage ;;
    *) die "unknown argument '$1'; the commands are start, stop, status and env (see --help)" ;;
  esac
done
[ -n "$action" ] || usage
case $TIMEOUT in ''|*[!0-9]*) die "--timeout wants whole seconds, got '$TIMEOUT'" ;; esac
case $CTLD_PORT in ''|*[!0-9]*) die "LOCAL_SLURM_PORT wants a port number, got '$CTLD_PORT'" ;; esac

case $action in start|stop) mkdir -p "$DIR" || die "cannot create the state folder $DIR" ;; esac
DIR=$(realpath -m -- "$DIR")
CONF=$DIR/etc/slurm.conf
MUNGE_DIR=$DIR/munge
MUNGE_SOCKET=$MUNGE_DIR/munge.socket
LOG=$DIR/log
export SLURM_CONF=$CONF

# Unix socket paths are limited to 107 bytes; slurmd's step sockets are named
# SPOOL/node1_JOBID.STEPID and munged's lives in DIR/munge.
if [ ${#DIR} -gt 70 ]; then
  die "the state folder path is too long for Unix sockets (${#DIR} > 70 characters): $DIR; pass a shorter --dir"
fi

# ---------------------------------------------------------------- processes

# PIDs of processes whose command name is $1 and whose command line contains
# $2 (our own configuration or socket path), so that daemons of another
# cluster on this machine are never touched. Zombies are left out.
find_pids() {
  local comm=$1 marker=$2 p c stat
  for p in /proc/[0-9]*; do
    { read -r c <"$p/comm"; } 2>/dev/null || continue
    [ "$c" = "$comm" ] || continue
    { read -r stat <"$p/stat"; } 2>/dev/null || continue
    stat=${stat##*) }                      # state is the field after "(comm) "
    [ "${stat%% *}" != Z ] || continue
    tr '\0' ' ' <"$p/cmdline" 2>/dev/null | grep -qF -- "$marker" || continue
    printf '%s\n' "${p#/proc/}"
  done
}
munged_pids() { find_pids munged "$MUNGE_SOCKET"; }
slurmctld_pids() { find_pids slurmctld "$CONF"; }
slurmd_pids() { find_pids slurmd "$CONF"; }

# Sends TERM to the given PIDs, waits up to $grace seconds for them to exit
# (a zombie counts as exited), then sends KILL and waits again.
stop_pids() {
  local name=$1 grace=$2; shift 2
  [ $# -gt 0 ] || return 0
  local pid left deadline killed=''
  kill -TERM "$@" 2>/dev/null || true
  deadline=$(( $(date +%s) + grace ))
  while :; do
    left=()
    for pid in "$@"; do
      if [ -e "/proc/$pid" ] && [ "$(awk '{ print $3 }' "/proc/$pid/stat" 2>/dev/null)" != Z ]; then
        left+=("$pid")
      fi
    done
    [ ${#left[@]} -gt 0 ] || return 0
    if [ "$(date +%s)" -ge "$deadline" ]; then
      if [ -n "$killed" ]; then
        die "$name (pid ${left[*]}) is still there after KILL"
      fi
      say "$name (pid ${left[*]}) did not exit within ${grace} s of TERM; sending KILL"
      kill -KILL "${left[@]}" 2>/dev/null || true
      killed=yes
      deadline=$(( $(date +%s) + 5 ))
    fi
    sleep 0.1
  done
}

# The end of each daemon's log, for a start that went wrong. Left out: the
# lines about PMIx, which every daemon logs at start although MpiDefault=none
# never uses it.
log_tails() {
  local f
  for f in "$LOG"/*.start "$MUNGE_DIR"/munged.log "$LOG"/slurmctld.log "$LOG"/slurmd.log; do
    [ -s "$f" ] || continue
    printf '\n--- last lines of %s (PMIx lines left out)\n' "$f" >&2
    grep -v -e 'pmix' -e 'MPI: Cannot create context' "$f" | tail -n 15 >&2 || true
  done
  printf '\n--- sinfo -R (down or drained nodes and why)\n' >&2
  timeout 5 sinfo -R >&2 2>&1 || true
}

# ---------------------------------------------------------------- install

install_packages() {
  local missing=() p
  for p in "${PACKAGES[@]}"; do
    dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q 'install ok installed' || missing+=("$p")
  done
  if [ ${#missing[@]} -eq 0 ]; then
    return 0
  fi
  [ "$(id -u)" -eq 0 ] || die "packages ${missing[*]} are missing; install them as root: apt-get install --no-install-recommends ${missing[*]}"
  say "installing ${missing[*]} (apt-get; log in $LOG/apt.log)"
  mkdir -p "$LOG"
  if ! { DEBIAN_FRONTEND=noninteractive apt-get update -qq \
      && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}"; } \
      >"$LOG/apt.log" 2>&1 </dev/null; then
    tail -n 30 "$LOG/apt.log" >&2
    die "installing ${missing[*]} failed (full log: $LOG/apt.log)"
  fi
}

# ---------------------------------------------------------------- configuration

# The node's hardware as slurmd itself sees it, so that the node registers
# without being drained for having less than configured.
node_line() {
  local hw
  hw=$(slurmd -C 2>/dev/null | head -n 1) || true
  case $hw in
    NodeName=*CPUs=*RealMemory=*) ;;
    *) die "'slurmd -C' did not describe this machine (got: '$hw')" ;;
  esac
  # Drop slurmd's own NodeName (the host name) and UpTime; keep the sizes.
  hw=$(printf '%s\n' "$hw" | tr ' ' '\n' | grep -E '^(CPUs|Boards|SocketsPerBoard|CoresPerSocket|ThreadsPerCore|RealMemory)=' | tr '\n' ' ')
  printf 'NodeName=%s NodeAddr=127.0.0.1 Port=%s %sState=UNKNOWN' "$NODE" "$SLURMD_PORT" "$hw"
}

write_conf() {
  local node cpus mem host
  node=$(node_line)
  cpus=$(printf '%s\n' "$node" | sed -n 's/.*CPUs=\([0-9]*\).*/\1/p')
  mem=$(printf '%s\n' "$node" | sed -n 's/.*RealMemory=\([0-9]*\).*/\1/p')
  host=$(hostname -s 2>/dev/null || hostname)
  mkdir -p "$DIR/etc"
  cat >"$CONF.new" <<EOF
# Written by tools/slurm/local-cluster.sh: one node on this machine.
# Regenerated on every start; edit the script, not this file.
ClusterName=$CLUSTER
# slurmctld must run on the host whose short name is given here.
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=$CTLD_PORT
SlurmdPort=$SLURMD_PORT
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$MUNGE_SOCKET
StateSaveLocation=$DIR/state
SlurmdSpoolDir=$DIR/spool
SlurmctldPidFile=$DIR/run/slurmctld.pid
SlurmdPidFile=$DIR/run/slurmd.pid
SlurmctldLogFile=$LOG/slurmctld.log
SlurmdLogFile=$LOG/slurmd.log
SlurmctldDebug=info
SlurmdDebug=info
# No systemd and no cgroup delegation here: track processes by parentage.
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
MpiDefault=none
MailProg=/bin/true
ReturnToService=2
# Start array tasks as soon as cores are free (the default waits seconds).
SchedulerType=sched/backfill
SchedulerParameters=batch_sched_delay=0
SelectType=select/cons_tres
SelectTypeParameters=CR_Core_Memory
# A task that asks for no memory gets one CPU's share, so tasks run side by side.
DefMemPerCPU=$((mem / cpus))
# Finished jobs stay visible to 'scontrol show job' for 10 minutes.
MinJobAge=600
KillWait=5
InactiveLimit=0
$node
PartitionName=$PARTITION Nodes=$NODE Default=YES MaxTime=INFINITE State=UP
EOF
  if [ -f "$CONF" ] && cmp -s "$CONF" "$CONF.new"; then
    rm -f "$CONF.new"
    return 1
  fi
  mv "$CONF.new" "$CONF"
  return 0
}

# ---------------------------------------------------------------- start

start_munged() {
  if [ -n "$(munged_pids)" ]; then
    return 0
  fi
  getent passwd munge >/dev/null || die "no 'munge' user; is the munge package installed?"
  local key=/etc/munge/munge.key
  if [ ! -s "$key" ]; then
    say "no $key; creating one"
    runuser -u munge -- mungekey --create --keyfile="$key" || die "could not create $key"
  fi
  # munged insists on its folder being owned by it, writable by no one else
  # and searchable by everyone (clients reach the socket through it).
  mkdir -p "$MUNGE_DIR"
  chown munge: "$MUNGE_DIR"
  chmod 0755 "$MUNGE_DIR"
  rm -f "$MUNGE_SOCKET" "$MUNGE_SOCKET.lock"
  runuser -u munge -- munged \
    --socket="$MUNGE_SOCKET" \
    --pid-file="$MUNGE_DIR/munged.pid" \
    --log-file="$MUNGE_DIR/munged.log" \
    --seed-file="$MUNGE_DIR/munged.seed" \
    >"$LOG/munged.start" 2>&1 </dev/null 9>&- \
    || { cat "$LOG/munged.start" >&2; die "munged did not start"; }
  local _
  for _ in $(seq 50); do
    if munge --socket="$MUNGE_SOCKET" -n 2>/dev/null | unmunge --socket="$MUNGE_SOCKET" >/dev/null 2>&1; then
      return 0
    fi
    sleep 0.1
  done
  log_tails
  die "munged runs but a credential did not round-trip through $MUNGE_SOCKET within 5 s"
}

port_owner() {
  ss -ltnpH "sport = :$1" 2>/dev/null | sed -n 's/.*users:((\("[^"]*",pid=[0-9]*\).*/\1/p' | head -n 1
}

start_slurmctld() {
  [ -z "$(slurmctld_pids)" ] || return 0
  local owner
  owner=$(port_owner "$CTLD_PORT")
  [ -z "$owner" ] || die "port $CTLD_PORT is taken by $owner (another Slurm?); stop it or set LOCAL_SLURM_PORT"
  mkdir -p "$DIR/state" "$DIR/run"
  # -c: start from a clean state; this cluster keeps no jobs across restarts.
  slurmctld -c -f "$CONF" >"$LOG/slurmctld.start" 2>&1 </dev/null 9>&- \
    || { log_tails; die "slurmctld did not start"; }
}

start_slurmd() {
  [ -z "$(slurmd_pids)" ] || return 0
  local owner
  owner=$(port_owner "$SLURMD_PORT")
  [ -z "$owner" ] || die "port $SLURMD_PORT is taken by $owner (another Slurm?); stop it or set LOCAL_SLURM_PORT"
  mkdir -p "$DIR/spool" "$DIR/run"
  # The host name is not the node name, so name the node.
  SLURMD_LAUNCHED_AT=$(date +%s)
  slurmd -N "$NODE" -f "$CONF" >"$LOG/slurmd.start" 2>&1 </dev/null 9>&- \
    || { log_tails; die "slurmd did not start"; }
}

node_state() { timeout 5 sinfo -h -N -n "$NODE" -o '%T' 2>/dev/null | head -n 1; }

# True once the slurmd we launched has registered: the controller keeps a
# node "idle" for minutes after its slurmd died, so the state alone is not
# proof. SlurmdStartTime is in whole seconds, local time.
slurmd_registered() {
  [ -n "${SLURMD_LAUNCHED_AT:-}" ] || return 0
  local t
  t=$(timeout 5 scontrol show node -o "$NODE" 2>/dev/null | tr ' ' '\n' | sed -n 's/^SlurmdStartTime=//p')
  case $t in [0-9]*) ;; *) return 1 ;; esac
  [ "$(date -d "$t" +%s 2>/dev/null || echo 0)" -ge "$SLURMD_LAUNCHED_AT" ]
}

wait_node_ready() {
  local deadline state=''
  deadline=$(( $(date +%s) + TIMEOUT ))
  while [ "$(date +%s)" -lt "$deadline" ]; do
    state=$(node_state) || state=''
    case $state in
      idle|mixed|allocated|completing) slurmd_registered && return 0 ;;
    esac
    if [ -z "$(slurmctld_pids)" ] || [ -z "$(slurmd_pids)" ]; then
      log_tails
      die "a daemon exited while waiting for the node (slurmctld: $(slurmctld_pids | xargs), slurmd: $(slurmd_pids | xargs))"
    fi
    sleep 0.2
  done
  log_tails
  die "node $NODE was not ready within $TIMEOUT s (last state: '${state:-no answer}'); logs above, all in $LOG"
}

cmd_start() {
  local t0 t
  t0=$(now)
  [ "$(id -u)" -eq 0 ] || die "start needs root (munged runs as munge, slurmd as root)"
  t=$(now); install_packages; say "packages ready ($(since "$t"))"
  mkdir -p "$LOG" "$DIR/run"
  t=$(now)
  if write_conf && { [ -n "$(slurmctld_pids)" ] || [ -n "$(slurmd_pids)" ]; }; then
    say "the configuration changed; restarting the running daemons"
    stop_daemons
  fi
  say "configuration $CONF ($(since "$t")): $(grep '^NodeName=' "$CONF" | cut -d' ' -f1,4-)"
  if [ -n "$(munged_pids)" ] && [ -n "$(slurmctld_pids)" ] && [ -n "$(slurmd_pids)" ]; then
    say "already running from $DIR"
  fi
  t=$(now); start_munged;    say "munged up, pid $(munged_pids | xargs) ($(since "$t"))"
  t=$(now); start_slurmctld; start_slurmd; say "slurmctld and slurmd up ($(since "$t"))"
  t=$(now); wait_node_ready; say "node $NODE is $(node_state) ($(since "$t"))"
  say "cluster ready in $(since "$t0"); clients need: export SLURM_CONF=$CONF"
}

# ---------------------------------------------------------------- stop

cancel_all_jobs() {
  [ -n "$(slurmctld_pids)" ] || return 0
  local jobs _
  jobs=$(timeout 10 squeue -h -o '%A' 2>/dev/null | sort -u | xargs) || jobs=''
  [ -n "$jobs" ] || return 0
  say "cancelling jobs: $jobs"
  # shellcheck disable=SC2086  # one word per job ID
  timeout 10 scancel $jobs 2>/dev/null || true
  # KillWait=5: running steps get TERM, then KILL 5 s later.
  for _ in $(seq 150); do
    [ -n "$(timeout 5 squeue -h -o '%A' 2>/dev/null)" ] || return 0
    sleep 0.1
  done
  say "warning: jobs still listed after 15 s: $(timeout 5 squeue -h -o '%i %T' 2>/dev/null | xargs)"
}

stop_daemons() {
  # shellcheck disable=SC2046  # one word per PID
  stop_pids slurmd 10 $(slurmd_pids)
  # shellcheck disable=SC2046
  stop_pids slurmctld 10 $(slurmctld_pids)
}

cmd_stop() {
  local t0 t
  t0=$(now)
  [ "$(id -u)" -eq 0 ] || die "stop needs root (the daemons run as root and munge)"
  if [ -z "$(munged_pids)$(slurmctld_pids)$(slurmd_pids)" ]; then
    say "not running (state folder $DIR)"
    return 0
  fi
  t=$(now); cancel_all_jobs; say "jobs cancelled ($(since "$t"))"
  t=$(now); stop_daemons; say "slurmd and slurmctld stopped ($(since "$t"))"
  t=$(now)
  # shellcheck disable=SC2046
  stop_pids munged 10 $(munged_pids)
  say "munged stopped ($(since "$t"))"
  rm -f "$DIR/run/slurmctld.pid" "$DIR/run/slurmd.pid"
  say "cluster stopped in $(since "$t0") (logs kept in $LOG)"
}

# ---------------------------------------------------------------- status

cmd_status() {
  local m c d ok=0
  m=$(munged_pids | xargs); c=$(slurmctld_pids | xargs); d=$(slurmd_pids | xargs)
  say "state folder $DIR"
  say "munged:    ${m:-not running}"
  say "slurmctld: ${c:-not running}"
  say "slurmd:    ${d:-not running}"
  if [ -n "$c" ]; then
    say "node $NODE: $(node_state || true)"
    say "jobs in the queue: $(timeout 5 squeue -h -o '%i' 2>/dev/null | wc -l)"
  fi
  [ -n "$m" ] && [ -n "$c" ] && [ -n "$d" ] || ok=3
  if [ "$ok" -eq 0 ]; then
    say "running; clients need: export SLURM_CONF=$CONF"
  fi
  return "$ok"
}

# ---------------------------------------------------------------- main

case $action in
  start|stop)
    mkdir -p "$DIR"
    # One start or stop at a time per state folder. The daemons must not
    # inherit this descriptor (9>&- on each launch), or the lock would outlive us.
    exec 9>"$DIR/.lock"
    flock -w 120 9 || die "another local-cluster.sh holds $DIR/.lock"
    "cmd_$action"
    ;;
  status) cmd_status ;;
  env) printf 'export SLURM_CONF=%q\n' "$CONF" ;;
  *) usage ;;
esac
