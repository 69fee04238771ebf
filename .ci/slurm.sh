#!/usr/bin/env bash
# .ci/slurm.sh - throwaway single-node Slurm cluster for rhofield's CI on Debian 12 (bookworm), used by
# the job-array test of `rhofield batch` (tests/batch/slurm.test.ts). Adapted from the team's verified
# shared/tools/slurm-ci.sh. Needs root and Debian's apt; works without systemd and without cgroups.
#   .ci/slurm.sh up        install (if missing), configure, start munged/slurmctld/slurmd,
#                          wait until the node is idle; exits non-zero with a message if not.
#                          Does nothing if a cluster already answers (so tests may call it too).
#   .ci/slurm.sh status    exit 0 if slurmctld answers and the local node is idle or mixed
#   .ci/slurm.sh selftest  submit a 4-task job array, wait for it, check its outputs
#   .ci/slurm.sh down      stop only the daemons that "up" started (by PID)
set -euo pipefail

PIDS=/run/slurm-ci.pids          # "name pid" for each daemon this script started
CONF=/etc/slurm/slurm.conf
LOGDIR=/var/log/slurm
TIMEOUT=${SLURM_CI_TIMEOUT:-60}  # seconds to wait for each daemon / the node

log() { echo "slurm-ci: $*"; }
running() {  # a cluster answers and this host's node can take jobs
  command -v scontrol >/dev/null && scontrol ping 2>/dev/null | grep -q UP &&
    sinfo -h -N -n "$(hostname -s)" -o %T 2>/dev/null | grep -Eqx 'idle|mixed|allocated'
}
die() {
  echo "slurm-ci: ERROR: $*" >&2
  for f in /var/log/munge/munged.log "$LOGDIR/slurmctld.log" "$LOGDIR/slurmd.log"; do
    [ -s "$f" ] && { echo "----- last lines of $f" >&2; grep -vi pmix "$f" | tail -n 12 >&2; }
  done
  exit 1
}
alive() { local s; s=$(ps -o stat= -p "$1" 2>/dev/null) && [[ $s != Z* ]]; }  # zombies count as dead
dead() { ! alive "$1"; }
pid_of() { local p; [ -s "$1" ] && read -r p <"$1" && alive "$p" && echo "$p"; }  # live pid from pidfile
wait_for() {  # wait_for SECONDS CMD...: poll until CMD succeeds
  local end=$((SECONDS + $1)); shift
  until "$@" >/dev/null 2>&1; do [ $SECONDS -lt $end ] || return 1; sleep 0.5; done
}

up() {
  [ "$(id -u)" -eq 0 ] || die "must run as root"
  local t0=$SECONDS p
  if running; then log "a cluster is already up - reusing it"; return 0; fi

  # 1. packages (slurm-wlm without Recommends = slurmctld slurmd slurm-client + basic plugins + munge)
  if ! command -v slurmctld >/dev/null || ! command -v slurmd >/dev/null ||
     ! command -v sbatch >/dev/null || ! command -v munged >/dev/null; then
    log "installing slurm-wlm and munge from apt"
    local aptlog; aptlog=$(mktemp)
    if ! { DEBIAN_FRONTEND=noninteractive apt-get update &&
           DEBIAN_FRONTEND=noninteractive apt-get install -y --no-install-recommends slurm-wlm munge
         } >"$aptlog" 2>&1; then
      tail -n 20 "$aptlog" >&2; die "apt-get update/install of slurm-wlm munge failed"
    fi
    rm -f "$aptlog"
  fi

  # 2. munge: key, runtime dir, daemon (must run as user munge, not root)
  if [ ! -s /etc/munge/munge.key ]; then
    log "creating munge key"
    mungekey --create --keyfile=/etc/munge/munge.key || die "cannot create munge key"
  fi
  chown munge:munge /etc/munge /etc/munge/munge.key; chmod 0700 /etc/munge; chmod 0600 /etc/munge/munge.key
  install -d -o munge -g munge -m 0755 /run/munge
  install -d -o munge -g munge -m 0700 /var/log/munge /var/lib/munge
  if munge -n </dev/null 2>/dev/null | unmunge >/dev/null 2>&1; then
    log "munged already running - reusing it"
  else
    runuser -u munge -- /usr/sbin/munged || die "munged failed to start"
    p=$(pid_of /run/munge/munged.pid) || die "munged did not write a pid file"
    echo "munged $p" >>"$PIDS"
    wait_for "$TIMEOUT" sh -c 'munge -n </dev/null | unmunge' || die "munge credential round-trip fails"
  fi

  # 3. slurm.conf for one node = this host; hardware line from `slurmd -C`, memory 5% lower
  local host node mem
  host=$(hostname -s)
  node=$(slurmd -C 2>&1 | awk 'NR==1') || true          # NodeName=<host> CPUs=.. ... RealMemory=N
  [[ $node == NodeName=* ]] || die "slurmd -C gave no node line: $node"
  mem=${node##*RealMemory=}; mem=${mem%% *}
  node="${node% RealMemory=*} RealMemory=$((mem * 95 / 100))"
  install -d -m 0755 /etc/slurm
  cat >"$CONF" <<EOF
# written by slurm-ci.sh
ClusterName=ci
SlurmctldHost=$host(127.0.0.1)
SlurmUser=slurm
AuthType=auth/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
SchedulerParameters=batch_sched_delay=0
ReturnToService=2
MailProg=/bin/true
StateSaveLocation=/var/lib/slurm/slurmctld
SlurmdSpoolDir=/var/lib/slurm/slurmd
SlurmctldPidFile=/run/slurmctld.pid
SlurmdPidFile=/run/slurmd.pid
SlurmctldLogFile=$LOGDIR/slurmctld.log
SlurmdLogFile=$LOGDIR/slurmd.log
$node NodeAddr=127.0.0.1 State=UNKNOWN
PartitionName=debug Nodes=ALL Default=YES MaxTime=INFINITE State=UP
EOF
  install -d -o slurm -g slurm -m 0755 /var/lib/slurm /var/lib/slurm/slurmctld "$LOGDIR"
  for f in "$LOGDIR"/slurmctld.log "$LOGDIR"/slurmd.log; do [ -f "$f" ] && mv -f "$f" "$f.old"; done
  install -d -m 0755 /var/lib/slurm/slurmd

  # 4. slurmctld (-c: start from a clean state), then slurmd; both fork into the background
  p=$(pid_of /run/slurmctld.pid) && die "slurmctld already running (pid $p); run '$0 down' or stop it"
  p=$(pid_of /run/slurmd.pid) && die "slurmd already running (pid $p); run '$0 down' or stop it"
  rm -f /run/slurmctld.pid /run/slurmd.pid
  slurmctld -c || die "slurmctld failed to start"
  wait_for 10 pid_of /run/slurmctld.pid || die "slurmctld exited during start-up"
  echo "slurmctld $(pid_of /run/slurmctld.pid)" >>"$PIDS"
  wait_for "$TIMEOUT" sh -c 'scontrol ping | grep -q UP' || die "slurmctld does not answer scontrol ping"
  slurmd || die "slurmd failed to start"
  wait_for 10 pid_of /run/slurmd.pid || die "slurmd exited during start-up"
  echo "slurmd $(pid_of /run/slurmd.pid)" >>"$PIDS"

  # 5. node must become idle
  if ! wait_for "$TIMEOUT" sh -c "sinfo -h -N -n '$host' -o %T | grep -qx idle"; then
    scontrol show node "$host" >&2 || true
    die "node $host did not become idle within ${TIMEOUT}s (state: $(sinfo -h -N -n "$host" -o %T 2>&1))"
  fi
  log "cluster up in $((SECONDS - t0))s"; sinfo
}

selftest() {
  local dir jid i states
  dir=$(mktemp -d); cd "$dir"
  jid=$(sbatch --parsable --array=0-3 --wrap \
        'echo $SLURM_ARRAY_TASK_ID $SLURM_ARRAY_TASK_COUNT > out_$SLURM_ARRAY_TASK_ID.txt') ||
    die "sbatch failed"
  log "submitted array job $jid in $dir"
  # poll squeue (sbatch --wait sleeps 2s, 8s, 32s ... between checks, so it can add tens of seconds)
  wait_for "$TIMEOUT" sh -c "[ -z \"\$(squeue -h -j $jid 2>/dev/null)\" ]" ||
    die "job array $jid not finished after ${TIMEOUT}s: $(squeue -j "$jid" 2>&1)"
  states=$(scontrol -o show job "$jid" | grep -o 'JobState=[A-Z_]*' | sort | uniq -c)
  [ "$(scontrol -o show job "$jid" | grep -c 'JobState=COMPLETED')" -eq 4 ] ||
    die "not all array tasks COMPLETED: $states"
  for i in 0 1 2 3; do
    [ "$(cat "out_$i.txt" 2>/dev/null)" = "$i 4" ] || die "out_$i.txt missing or wrong"
  done
  log "job array $jid finished OK:"; head out_*.txt
}

down() {
  [ -s "$PIDS" ] || { log "nothing to stop ($PIDS empty)"; return 0; }
  local name pid
  for name in slurmd slurmctld munged; do        # reverse start order
    while read -r n pid; do
      [ "$n" = "$name" ] || continue
      if alive "$pid" && [ "$(ps -o comm= -p "$pid")" = "$name" ]; then
        kill -TERM "$pid"
        wait_for 30 dead "$pid" || kill -KILL "$pid" 2>/dev/null || true
        log "stopped $name (pid $pid)"
      fi
    done <"$PIDS"
  done
  # slurmctld runs as user slurm and cannot delete its pidfile in /run; a stale one makes
  # the slurmctld package's prerm run scancel and fail on "apt-get remove"
  for f in /run/slurmctld.pid /run/slurmd.pid; do pid_of "$f" >/dev/null || rm -f "$f"; done
  rm -f "$PIDS"
}

case "${1:-}" in
  up) up ;;
  status) running ;;
  selftest) selftest ;;
  down) down ;;
  *) echo "usage: $0 up|status|selftest|down" >&2; exit 2 ;;
esac
