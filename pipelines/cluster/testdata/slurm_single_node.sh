#!/usr/bin/env bash
# Starts a private single-node Slurm (munged, slurmctld, slurmd from Debian's
# munge and slurm-wlm packages) configured for this host only, submits a
# sharded swellgrid run with `swellgrid cluster slurm --submit` (an array job of
# SHARDS tasks and a merge job depending on it), waits for the merge job within
# a bounded time, prints what happened as KEY=VALUE lines on stdout and stops
# every daemon it started, by pid. Run as root (SlurmUser=root).
#
#   slurm_single_node.sh SWELLGRID_BINARY INPUT_DIR WORK_DIR [SHARDS]
#
# Exit codes: 0 the jobs completed; 77 Slurm or munge cannot be started here
# (the caller skips); anything else: a failure (logs are printed on stderr).
set -uo pipefail

BIN=$1 INPUT=$2 WORK=$3 SHARDS=${4:-4}
WAIT_S=${SWELLGRID_SLURM_WAIT_S:-100}

say() { echo "slurm_single_node: $*" >&2; }
skip() { say "SKIP: $*"; exit 77; }

[ "$(id -u)" = 0 ] || skip "needs root (SlurmUser=root, munged started as the munge user)"
for p in munged munge slurmctld slurmd sbatch scontrol sinfo; do
  command -v "$p" >/dev/null 2>&1 || skip "$p not found (Debian packages munge and slurm-wlm)"
done
id munge >/dev/null 2>&1 || skip "no munge user (Debian package munge)"

mkdir -p "$WORK" || exit 1
WORK=$(cd "$WORK" && pwd)
HOST=$(hostname -s)
CPUS=$(nproc)
MEM_MB=$(awk '/^MemTotal:/ {printf "%d", $2/1024*0.8}' /proc/meminfo)

# munged needs a socket directory that the munge user owns and that no other
# user can write to, reachable by the munge user: its own folder under /tmp.
MR=$(mktemp -d /tmp/swellgrid-munge.XXXXXX) || exit 1
chmod 755 "$MR" && chown munge:munge "$MR"
SOCK=$MR/munge.socket

MUNGED_PID="" CTLD_PID="" SLURMD_PID="" ARRAY_ID="" MERGE_ID=""
cleanup() {
  if [ -n "$CTLD_PID" ]; then
    for j in $MERGE_ID $ARRAY_ID; do scancel "$j" >/dev/null 2>&1; done
  fi
  for pid in $SLURMD_PID $CTLD_PID $MUNGED_PID; do
    [ -n "$pid" ] && kill "$pid" 2>/dev/null
  done
  for pid in $SLURMD_PID $CTLD_PID $MUNGED_PID; do
    [ -n "$pid" ] || continue
    for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    kill -0 "$pid" 2>/dev/null && { say "pid $pid still running; sending KILL"; kill -9 "$pid" 2>/dev/null; }
  done
  rm -rf "$MR"
}
trap cleanup EXIT

# --- munge -------------------------------------------------------------------
if [ ! -s /etc/munge/munge.key ]; then
  say "creating /etc/munge/munge.key"
  mkdir -p /etc/munge && chown munge:munge /etc/munge && chmod 700 /etc/munge
  runuser -u munge -- mungekey --create --keyfile=/etc/munge/munge.key || skip "cannot create a munge key"
fi
runuser -u munge -- munged --socket="$SOCK" --pid-file="$MR/munged.pid" \
  --log-file="$MR/munged.log" --seed-file="$MR/munged.seed" || { cat "$MR/munged.log" >&2; skip "munged does not start"; }
for _ in $(seq 50); do [ -s "$MR/munged.pid" ] && break; sleep 0.1; done
MUNGED_PID=$(cat "$MR/munged.pid" 2>/dev/null)
[ -n "$MUNGED_PID" ] || skip "munged wrote no pid file"
munge -n -S "$SOCK" | unmunge -S "$SOCK" >/dev/null || skip "munge credentials do not round-trip"

# --- slurm -------------------------------------------------------------------
port_free() { ! ss -ltnH 2>/dev/null | awk '{print $4}' | grep -q ":$1\$"; }
CPORT=""
for p in 16817 17817 18817 19817 20817; do
  if port_free "$p" && port_free $((p + 1)); then CPORT=$p; break; fi
done
[ -n "$CPORT" ] || skip "no free pair of ports for slurmctld and slurmd"
S=$WORK/slurm
mkdir -p "$S/state" "$S/spool" || exit 1
export SLURM_CONF=$S/slurm.conf
cat >"$SLURM_CONF" <<EOF
# Private single-node test cluster written by slurm_single_node.sh.
ClusterName=swellgridtest
SlurmctldHost=$HOST(127.0.0.1)
SlurmUser=root
SlurmdUser=root
SlurmctldPort=$CPORT
SlurmdPort=$((CPORT + 1))
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$SOCK
StateSaveLocation=$S/state
SlurmdSpoolDir=$S/spool
SlurmctldPidFile=$S/slurmctld.pid
SlurmdPidFile=$S/slurmd.pid
SlurmctldLogFile=$S/slurmctld.log
SlurmdLogFile=$S/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
SchedulerType=sched/backfill
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
MpiDefault=none
MailProg=/bin/true
ReturnToService=2
SlurmdTimeout=60
InactiveLimit=0
MinJobAge=600
NodeName=$HOST NodeAddr=127.0.0.1 CPUs=$CPUS RealMemory=$MEM_MB State=UNKNOWN
PartitionName=swellgridtest Nodes=$HOST Default=YES MaxTime=INFINITE State=UP
EOF

slurmctld -D -i -f "$SLURM_CONF" >"$S/slurmctld.out" 2>&1 &
CTLD_PID=$!
slurmd -D -f "$SLURM_CONF" >"$S/slurmd.out" 2>&1 &
SLURMD_PID=$!
logs() {
  for f in "$S"/slurmctld.log "$S"/slurmctld.out "$S"/slurmd.log "$S"/slurmd.out "$WORK"/atlas/.swellgrid/slurm/*.log; do
    [ -f "$f" ] && { echo "----- $f" >&2; tail -n 40 "$f" >&2; }
  done
}
up=""
for _ in $(seq 60); do
  kill -0 "$CTLD_PID" 2>/dev/null || break
  kill -0 "$SLURMD_PID" 2>/dev/null || break
  st=$(sinfo -h -o %T 2>/dev/null | head -n1)
  case "$st" in idle*|mixed*|allocated*) up=1; break ;; esac
  sleep 0.5
done
[ -n "$up" ] || { logs; skip "the Slurm daemons do not come up (node state '${st:-none}')"; }
say "slurm up: node $HOST, $CPUS CPUs, ports $CPORT/$((CPORT + 1))"

# --- the sharded run ---------------------------------------------------------
cat >"$WORK/spec.toml" <<EOF
# Synthetic test scenario (invented data): the swellgrid bulk_monthly fixture.
[input]
paths = ["$INPUT"]
[output]
dir = "$WORK/atlas"
[run]
workers = 1
EOF
t0=$(date +%s)
sub=$("$BIN" cluster slurm --spec "$WORK/spec.toml" --shards "$SHARDS" --partition swellgridtest \
  --time 00:05:00 --mem 512M --cpus 1 --submit) || { echo "$sub" >&2; logs; exit 1; }
echo "$sub" >&2
ARRAY_ID=$(echo "$sub" | awk '$1 == "array" && $2 == "job" && $3 ~ /^[0-9]+$/ {print $3}')
MERGE_ID=$(echo "$sub" | awk '$1 == "merge" && $2 == "job" && $3 ~ /^[0-9]+$/ {print $3}')
[ -n "$ARRAY_ID" ] && [ -n "$MERGE_ID" ] || { say "no job ids in the output"; exit 1; }

state() { scontrol show job "$1" -o 2>/dev/null | sed -n 's/.*JobState=\([A-Z_]*\).*/\1/p' | sort | uniq -c | awk '{printf "%s%s:%s", sep, $2, $1; sep=","}'; }
mstate=""
for _ in $(seq $((WAIT_S * 2))); do
  mstate=$(state "$MERGE_ID")
  case "$mstate" in
    COMPLETED:*|FAILED:*|CANCELLED:*|TIMEOUT:*|NODE_FAIL:*|OUT_OF_MEMORY:*) break ;;
  esac
  sleep 0.5
done
elapsed=$(( $(date +%s) - t0 ))
astate=$(state "$ARRAY_ID")
echo "ARRAY_JOB=$ARRAY_ID"
echo "MERGE_JOB=$MERGE_ID"
echo "ARRAY_STATES=$astate"
echo "MERGE_STATE=$mstate"
echo "ELAPSED_S=$elapsed"
echo "OUT=$WORK/atlas"
case "$mstate" in
  COMPLETED:*) exit 0 ;;
  *) say "the merge job ended as '${mstate:-unknown}' (array: $astate) after ${elapsed}s"; logs; exit 1 ;;
esac
