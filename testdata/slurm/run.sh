#!/usr/bin/env bash
# A real test on a real scheduler: installs Debian's slurm-wlm and munge,
# starts a one-node Slurm cluster on this machine (munged, slurmctld and
# slurmd, talking over loopback), submits the demo recipes as job arrays of
# shards with recipes/slurm/submit.sh (the merge a dependent job), waits,
# and compares the merged tables and ledger run hashes with those of a
# single run. Needs root and apt-get (a Debian or Ubuntu machine or
# container); .ci/run runs it when CONCORDAT_SLURM_TEST=1.
#
#   sudo testdata/slurm/run.sh            # SHARDS=3 by default
#   KEEP=1 testdata/slurm/run.sh          # keep the work folder and logs
#
# The cluster's configuration, state and logs live in a temporary folder
# (SLURM_CONF points there); /etc/slurm is not touched. The daemons are
# stopped on exit.
set -euo pipefail

repo=$(cd "$(dirname "$0")/../.." && pwd)
shards=${SHARDS:-3}
recipes=(orchard school_survey)

say() { printf '== %s\n' "$*"; }
fail() { printf 'FAIL: %s\n' "$*" >&2; exit 1; }

[ "$(id -u)" = 0 ] || fail "run as root: the test installs packages and starts the Slurm daemons"

if ! command -v slurmctld >/dev/null || ! command -v munged >/dev/null; then
  say "installing slurm-wlm and munge"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq --no-install-recommends slurm-wlm munge >/dev/null
fi
say "slurm $(slurmctld -V | awk '{print $2}'), $(munged --version 2>&1 | head -1)"

work=$(mktemp -d /tmp/concordat-slurm.XXXXXX)
chmod 755 "$work" # munged runs as the munge user
pids=()
cleanup() {
  set +e
  if [ -n "${SLURM_CONF:-}" ] && [ -f "$SLURM_CONF" ]; then
    scontrol shutdown >/dev/null 2>&1
    sleep 1
  fi
  for p in "${pids[@]}"; do kill "$p" 2>/dev/null; done
  [ -f "$work/slurmctld.pid" ] && kill "$(cat "$work/slurmctld.pid")" 2>/dev/null
  [ -f "$work/slurmd.pid" ] && kill "$(cat "$work/slurmd.pid")" 2>/dev/null
  [ -f "$work/munged.pid" ] && kill "$(cat "$work/munged.pid")" 2>/dev/null
  if [ "${KEEP:-}" = 1 ]; then echo "work folder kept: $work"; else rm -rf "$work"; fi
}
trap cleanup EXIT

say "munge: a key and a daemon of our own"
mkdir -p "$work/munge"
chown munge:munge "$work/munge"
chmod 755 "$work/munge" # the socket folder must be reachable by every user
if [ ! -s /etc/munge/munge.key ]; then
  mungekey --create --keyfile=/etc/munge/munge.key
  chown munge:munge /etc/munge/munge.key
  chmod 400 /etc/munge/munge.key
fi
sock="$work/munge/munge.socket.2"
runuser -u munge -- munged --socket="$sock" --pid-file="$work/munge/munged.pid" \
  --log-file="$work/munge/munged.log" --seed-file="$work/munge/munged.seed"
cp "$work/munge/munged.pid" "$work/munged.pid"
munge --socket="$sock" -n | unmunge --socket="$sock" >/dev/null || fail "munge cannot encode and decode a credential"

say "slurm: one node, $(hostname -s), on loopback"
host=$(hostname -s)
cpus=$(nproc)
mkdir -p "$work/state" "$work/spool"
cat >"$work/slurm.conf" <<EOF
ClusterName=concordat-test
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=26817
SlurmdPort=26818
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket=$sock
CredType=cred/munge
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/slurmctld.log
SlurmdLogFile=$work/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
MpiDefault=none
ReturnToService=2
SlurmdTimeout=60
NodeName=$host NodeAddr=127.0.0.1 CPUs=$cpus State=UNKNOWN
PartitionName=test Nodes=ALL Default=YES MaxTime=INFINITE State=UP
EOF
export SLURM_CONF="$work/slurm.conf"
slurmctld -f "$SLURM_CONF" || fail "slurmctld did not start: $(tail -5 "$work/slurmctld.log" 2>/dev/null)"
slurmd -f "$SLURM_CONF" || fail "slurmd did not start: $(tail -5 "$work/slurmd.log" 2>/dev/null)"
state=""
for _ in $(seq 60); do
  state=$(sinfo -h -n "$host" -o %T 2>/dev/null || true)
  [ "$state" = idle ] && break
  sleep 1
done
[ "$state" = idle ] || fail "the node is '$state', not idle, after 60 s; slurmd.log: $(tail -5 "$work/slurmd.log")"
sinfo

say "concordat: build, and a single run of each demo recipe for comparison"
(cd "$repo" && go build -o "$work/bin/concordat" ./cmd/concordat)
export CONCORDAT="$work/bin/concordat"
for copy in single sharded; do
  mkdir -p "$work/$copy/testdata"
  cp -r "$repo/recipes" "$work/$copy/"
  cp -r "$repo/testdata/demo" "$work/$copy/testdata/"
  rm -rf "$work/$copy/recipes/out" "$work/$copy"/recipes/*.ledger.jsonl*
done
(cd "$work/single" && for r in "${recipes[@]}"; do CONCORDAT_CACHE_DIR= "$CONCORDAT" run "recipes/$r.hcl"; done)

say "slurm: an array of $shards shards and a dependent merge per recipe"
cd "$work/sharded"
merges=()
for r in "${recipes[@]}"; do
  out=$(SBATCH_OPTIONS="--cpus-per-task=1" recipes/slurm/submit.sh "recipes/$r.hcl" "$shards")
  echo "recipes/$r.hcl: $out"
  merges+=("$(sed -n 's/.*merge: job \([0-9]*\).*/\1/p' <<<"$out")")
done
for _ in $(seq 600); do
  left=$(squeue -h -o %i | wc -l)
  [ "$left" = 0 ] && break
  sleep 1
done
[ "$left" = 0 ] || { squeue; fail "jobs still queued after 10 minutes"; }
for m in "${merges[@]}"; do
  st=$(scontrol show job "$m" 2>/dev/null | sed -n 's/.*JobState=\([A-Z_]*\).*/\1/p')
  [ "$st" = COMPLETED ] || { cat concordat-*.out; fail "merge job $m ended $st"; }
done
say "job logs"
for f in concordat-shard-*.out concordat-merge-*.out; do printf -- '-- %s\n' "$f"; cat "$f"; done

say "compare: the merged tables and ledgers against the single run"
n=0
for f in "$work/single/recipes/out"/*; do
  name=$(basename "$f")
  cmp "$f" "recipes/out/$name" || fail "recipes/out/$name differs from the single run's"
  n=$((n + 1))
done
[ "$n" -gt 0 ] || fail "the single run wrote no tables"
for r in "${recipes[@]}"; do
  a=$(grep -o '"run_sha256":"[0-9a-f]*"' "$work/single/recipes/$r.ledger.jsonl")
  b=$(grep -o '"run_sha256":"[0-9a-f]*"' "recipes/$r.ledger.jsonl")
  [ "$a" = "$b" ] || fail "recipes/$r: run hash $b, the single run's is $a"
  echo "recipes/$r.hcl: merged run ${b:14:12} = single run ${a:14:12}"
done
"$CONCORDAT" verify recipes/orchard.hcl recipes/school_survey.hcl
echo "ok: $n tables byte-identical to a single run, run hashes equal, after $shards-task job arrays and dependent merges on Slurm"
