#!/usr/bin/env bash
# A single-node Slurm cluster on loopback, for the tests of `loopsmith plan/shard/merge`.
#
#   scripts/slurm-local.sh start    install the Debian packages if missing, write the configuration
#                                   under the scratch folder, start munged -> slurmctld -> slurmd, wait
#                                   until the node is idle; prints `export SLURM_CONF=...`
#   scripts/slurm-local.sh stop     stops the daemons started by `start` (pid files), idempotent
#   scripts/slurm-local.sh status   sinfo of the local cluster
#
# Scratch folder: $LOOPSMITH_SLURM_DIR (default /tmp/loopsmith-slurm). The configuration path is also
# recorded in $LOOPSMITH_SLURM_DIR/slurm.conf, where the tests look for it when SLURM_CONF is not set.
# Meant for CI containers and throw-away machines run as root: never on a machine with a real Slurm.
set -euo pipefail

DIR="${LOOPSMITH_SLURM_DIR:-/tmp/loopsmith-slurm}"
CPUS="${LOOPSMITH_SLURM_CPUS:-2}"
CTLD_PORT="${LOOPSMITH_SLURM_CTLD_PORT:-6817}"
SLURMD_PORT="${LOOPSMITH_SLURM_SLURMD_PORT:-6818}"
CONF="$DIR/slurm.conf"

log() { echo "slurm-local: $*" >&2; }

install_packages() {
  local missing=()
  command -v munged >/dev/null || missing+=(munge)
  command -v slurmctld >/dev/null || missing+=(slurmctld)
  command -v slurmd >/dev/null || missing+=(slurmd)
  command -v sbatch >/dev/null || missing+=(slurm-client)
  if [ "${#missing[@]}" -gt 0 ]; then
    log "installing ${missing[*]}"
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}" >&2
  fi
}

write_config() {
  mkdir -p "$DIR"/{munge,munge-run,state,spool,log,run}
  chown munge:munge "$DIR/munge" "$DIR/munge-run"
  chmod 0700 "$DIR/munge"
  chmod 0755 "$DIR/munge-run" # munged refuses a socket folder that is not world-executable
  if [ ! -f "$DIR/munge/munge.key" ]; then
    mungekey --create --keyfile="$DIR/munge/munge.key" --force
    chown munge:munge "$DIR/munge/munge.key"
    chmod 0600 "$DIR/munge/munge.key"
  fi
  cat >"$CONF" <<EOF
# Single-node cluster on loopback, written by scripts/slurm-local.sh (tests only).
ClusterName=loopsmith-local
SlurmctldHost=localhost(127.0.0.1)
SlurmctldPort=$CTLD_PORT
SlurmdPort=$SLURMD_PORT
SlurmUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$DIR/munge-run/munge.socket,cred_expire=10
StateSaveLocation=$DIR/state
SlurmdSpoolDir=$DIR/spool
SlurmctldPidFile=$DIR/run/slurmctld.pid
SlurmdPidFile=$DIR/run/slurmd.pid
SlurmctldLogFile=$DIR/log/slurmctld.log
SlurmdLogFile=$DIR/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
AccountingStorageType=accounting_storage/none
JobAcctGatherType=jobacct_gather/none
ReturnToService=2
MpiDefault=none
SlurmctldTimeout=30
SlurmdTimeout=30
MinJobAge=300
NodeName=localhost NodeAddr=127.0.0.1 CPUs=$CPUS State=UNKNOWN
PartitionName=debug Nodes=localhost Default=YES MaxTime=INFINITE State=UP
EOF
}

pid_alive() { [ -f "$1" ] && kill -0 "$(cat "$1")" 2>/dev/null; }

start() {
  install_packages
  if pid_alive "$DIR/run/slurmctld.pid" && pid_alive "$DIR/run/slurmd.pid"; then
    log "already running ($CONF)"
  else
    stop_daemons quiet
    rm -rf "$DIR/state" "$DIR/spool" "$DIR/log"
    write_config
    runuser -u munge -- munged --force \
      --socket="$DIR/munge-run/munge.socket" --key-file="$DIR/munge/munge.key" \
      --pid-file="$DIR/munge-run/munged.pid" --log-file="$DIR/munge/munged.log" --seed-file="$DIR/munge/munged.seed"
    SLURM_CONF="$CONF" slurmctld -c
    SLURM_CONF="$CONF" slurmd -N localhost
  fi
  export SLURM_CONF="$CONF"
  local state=""
  for _ in $(seq 1 60); do
    state="$(sinfo -h -n localhost -o %T 2>/dev/null || true)"
    [ "$state" = "idle" ] && break
    sleep 0.5
  done
  if [ "$state" != "idle" ]; then
    log "the node did not become idle (state: ${state:-unreachable}); logs in $DIR/log"
    tail -n 20 "$DIR/log/slurmctld.log" "$DIR/log/slurmd.log" >&2 || true
    exit 1
  fi
  log "node localhost idle with $CPUS CPUs; SLURM_CONF=$CONF"
  echo "export SLURM_CONF=$CONF"
}

stop_one() {
  local pidfile="$1"
  [ -f "$pidfile" ] || return 0
  local pid
  pid="$(cat "$pidfile")"
  if kill -0 "$pid" 2>/dev/null; then
    kill -TERM "$pid" 2>/dev/null || true
    for _ in $(seq 1 100); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    kill -0 "$pid" 2>/dev/null && kill -KILL "$pid" 2>/dev/null || true
  fi
  rm -f "$pidfile"
}

stop_daemons() {
  # Reverse start order: slurmd, slurmctld, munged.
  stop_one "$DIR/run/slurmd.pid"
  stop_one "$DIR/run/slurmctld.pid"
  stop_one "$DIR/munge-run/munged.pid"
  [ "${1:-}" = quiet ] || log "stopped"
}

case "${1:-}" in
  start) start ;;
  stop) stop_daemons ;;
  status) SLURM_CONF="$CONF" sinfo ;;
  *) echo "usage: $0 start|stop|status" >&2; exit 2 ;;
esac
