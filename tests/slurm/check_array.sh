#!/usr/bin/env bash
# Checks docs/scaling.md's SLURM job array on a real scheduler: a one-node Slurm cluster on
# this machine (Debian's slurm-wlm and munge, installed with apt-get when missing) runs the
# doc's job-array block as written, the doc's merge block joins the parts, and the joined
# bands.csv, cdf.csv, summary.json (and bands.json, diagnostics.json, checks.json, draw
# tables, chain states and figures) must equal, byte for byte, those of the same config
# sampled as one job (`mixband sample`), and both reports must give the same verdict.
# Exit 0 when they do, non-zero otherwise.
#
#   bash tests/slurm/check_array.sh          # builds target/release/mixband if needed
#   MIXBAND_BIN=/path/to/mixband bash tests/slurm/check_array.sh
#
# Needs root (it starts munged, slurmctld and slurmd as root, all state in a temporary
# directory, and stops them on exit). No cgroups and no systemd are needed:
# ProctrackType=proctrack/linuxproc, TaskPlugin=task/none, no JobAcctGather, no accounting.
# KEEP=1 keeps the temporary directory (logs, runs) for inspection.
set -euo pipefail
repo=$(cd "$(dirname "$0")/../.." && pwd)
doc="$repo/docs/scaling.md"
say() { echo "check_array: $*"; }
die() {
  echo "check_array: FAIL: $*" >&2
  exit 1
}

[ "$(id -u)" -eq 0 ] || die "run as root (it starts munged, slurmctld and slurmd)"

# 1. Slurm and munge from Debian, when missing. A failed install is a failure, never a skip.
need=()
for c in sbatch sinfo squeue scontrol slurmctld slurmd; do
  command -v "$c" >/dev/null 2>&1 || need=(slurm-wlm)
done
for c in munged munge unmunge; do
  command -v "$c" >/dev/null 2>&1 || need+=(munge)
done
if [ ${#need[@]} -gt 0 ]; then
  say "installing ${need[*]} with apt-get"
  if ! { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${need[@]}" >/dev/null; }; then
    die "apt-get could not install ${need[*]}; the scheduler check cannot run"
  fi
fi

# The mixband binary: given, or built from this checkout.
if [ -z "${MIXBAND_BIN:-}" ]; then
  say "building mixband (cargo build --release)"
  (cd "$repo" && cargo build --release --quiet)
  MIXBAND_BIN="$repo/target/release/mixband"
fi
[ -x "$MIXBAND_BIN" ] || die "MIXBAND_BIN=$MIXBAND_BIN is not an executable"
MIXBAND_BIN=$(cd "$(dirname "$MIXBAND_BIN")" && pwd)/$(basename "$MIXBAND_BIN")

# Everything lives here; munged wants the socket's directory searchable by all and not
# writable by others, and the key readable by its owner only.
work=$(mktemp -d /tmp/mixband-slurm.XXXXXX)
chmod 755 "$work"
mkdir -p "$work"/{key,munge,state,spool,log,bin,job}
chmod 700 "$work/key"
pids=()
cleanup() {
  local rc=$?
  set +e
  if [ "$rc" -ne 0 ]; then
    for f in "$work"/log/*.log "$work"/job/slurm-*.out; do
      [ -s "$f" ] || continue
      echo "---- last lines of $f" >&2
      tail -n 15 "$f" >&2
    done
  fi
  # Stop only what this script started, newest first (slurmd, slurmctld, munged).
  for ((i = ${#pids[@]} - 1; i >= 0; i--)); do
    kill "${pids[i]}" 2>/dev/null
  done
  for p in "${pids[@]}"; do
    for _ in $(seq 50); do
      kill -0 "$p" 2>/dev/null || break
      sleep 0.1
    done
    kill -9 "$p" 2>/dev/null
    wait "$p" 2>/dev/null
  done
  if [ "${KEEP:-0}" = 1 ]; then
    echo "check_array: kept $work" >&2
  else
    rm -rf "$work"
  fi
  exit "$rc"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

# 2. A one-node cluster on this machine.
dd if=/dev/urandom of="$work/key/munge.key" bs=1024 count=1 status=none
chmod 400 "$work/key/munge.key"
sock="$work/munge/munge.socket"
munged --foreground --key-file="$work/key/munge.key" --socket="$sock" \
  --pid-file="$work/munge/munged.pid" --log-file="$work/log/munged.log" \
  --seed-file="$work/key/munged.seed" >"$work/log/munged.out" 2>&1 &
pids+=($!)
for _ in $(seq 50); do
  [ -S "$sock" ] && break
  sleep 0.1
done
munge -S "$sock" -n | unmunge -S "$sock" >/dev/null || die "munged does not answer on $sock"

node_line=$(slurmd -C | head -n 1) # NodeName=<host> CPUs=... RealMemory=...
node=$(sed -n 's/^NodeName=\([^ ]*\).*/\1/p' <<<"$node_line")
cpus=$(sed -n 's/.* CPUs=\([0-9]*\).*/\1/p' <<<"$node_line")
[ -n "$node" ] && [ -n "$cpus" ] || die "cannot read the node from 'slurmd -C': $node_line"
export SLURM_CONF="$work/slurm.conf"
cat >"$SLURM_CONF" <<EOF
# One-node cluster for tests/slurm/check_array.sh; no cgroups, no systemd, no accounting.
ClusterName=mixbandcheck
SlurmctldHost=${node}(127.0.0.1)
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$sock
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/state/slurmctld.pid
SlurmdPidFile=$work/spool/slurmd.pid
SlurmctldLogFile=$work/log/slurmctld.log
SlurmdLogFile=$work/log/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
MpiDefault=none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_Core_Memory
ReturnToService=2
$node_line NodeAddr=127.0.0.1 State=UNKNOWN
PartitionName=check Nodes=$node Default=YES MaxTime=INFINITE State=UP
EOF
slurmctld -D -c -f "$SLURM_CONF" >"$work/log/slurmctld.out" 2>&1 &
pids+=($!)
sleep 1
slurmd -D -f "$SLURM_CONF" >"$work/log/slurmd.out" 2>&1 &
pids+=($!)
state=""
for _ in $(seq 60); do
  state=$(sinfo -h -N -n "$node" -o '%t' 2>/dev/null || true)
  [ "$state" = idle ] && break
  sleep 1
done
[ "$state" = idle ] || die "node $node is not idle after 60 s (state '${state}')"
say "$(sinfo --version), node $node idle with $cpus CPUs"

# 3. An invented sample (two clusters, normal deviates from a fixed low-discrepancy
# sequence by Box-Muller; no random state) and a short fixed-seed run of 8 chains.
cd "$work/job"
awk 'BEGIN {
  print "x"
  pi = 3.141592653589793
  for (i = 1; i <= 400; i++) {
    u1 = (i * 0.6180339887498949) % 1; u2 = (i * 0.7548776662466927) % 1
    z = sqrt(-2 * log(u1)) * cos(2 * pi * u2)
    if (i % 3 == 0) printf "%.4f\n", 14 + 0.8 * z; else printf "%.4f\n", 10 + 1.2 * z
  }
}' >data.csv
cat >run.toml <<'EOF'
[data]
file = "data.csv"
column = "x"

[model]
kernel = "location-scale"
weights = "dirichlet"
components = 6

[sampler]
chains = 8
warmup = 200
draws = 300
seed = 20261203

[grid]
points = 120
EOF
ln -s "$MIXBAND_BIN" "$work/bin/mixband"
export PATH="$work/bin:$PATH"

# The doc's blocks, as written.
block() {
  awk -v b="<!-- $1:begin" -v e="<!-- $1:end" \
    'index($0, b) == 1 { on = 1; next } index($0, e) == 1 { on = 0 } on && !/^```/' "$doc"
}
block slurm-array >array.sh
block slurm-merge >merge.sh
head -n 1 array.sh | grep -qx '#!/bin/bash' || die "no job-array block between the markers in $doc"
grep -q 'mixband merge' merge.sh || die "no merge block between the markers in $doc"
want_cpus=$(sed -n 's/^#SBATCH --cpus-per-task=\([0-9]*\).*/\1/p' array.sh)
[ "${want_cpus:-1}" -le "$cpus" ] ||
  die "the doc's job asks --cpus-per-task=$want_cpus and this node has $cpus CPUs"

say "submitting the job array of docs/scaling.md"
start=$(date +%s)
rc=0
timeout 900 sbatch --wait --parsable array.sh >sbatch.out || rc=$?
[ "$rc" -eq 0 ] || die "sbatch --wait exited $rc (job $(cat sbatch.out 2>/dev/null))"
job=$(tr -d '\n' <sbatch.out)
tasks=$(ls slurm-"${job}"_*.out 2>/dev/null | wc -l)
say "array job $job: $tasks tasks finished in $(($(date +%s) - start)) s"
[ "$tasks" -eq 4 ] || die "expected 4 array tasks, found $tasks output files"
alone=$(grep -l 'NOT CONVERGED' slurm-"${job}"_*.out | wc -l || true)
say "$alone of 4 parts did not pass the convergence gate alone (exit 3, tolerated by the job script)"

# 4. Join the parts (the doc's merge block) and run the same config as one job.
merge_rc=0
bash -euo pipefail merge.sh >"$work/log/merge.log" 2>&1 || merge_rc=$?
single_rc=0
mixband sample run.toml --out single --threads "$cpus" --quiet >"$work/log/single.log" 2>&1 || single_rc=$?
for c in "$merge_rc" "$single_rc"; do
  [ "$c" -eq 0 ] || [ "$c" -eq 3 ] || die "merge exited $merge_rc, single run exited $single_rc"
done
[ "$merge_rc" -eq "$single_rc" ] || die "merge exited $merge_rc but the single run exited $single_rc"
say "merge exited $merge_rc, single run exited $single_rc; $(tail -n 1 "$work/log/merge.log")"

# config.toml differs by design (the joined one says so in its first line), manifest.json
# by the seconds each chain took, report.html by those, the run's name and the config text.
files=(bands.csv cdf.csv summary.json bands.json diagnostics.json checks.json)
for i in 1 2 3 4 5 6 7 8; do files+=("draws/chain-$i.csv" "state/chain-$i.json"); done
for f in single/plots/*.svg; do files+=("plots/${f##*/}"); done
for f in "${files[@]}"; do
  [ -s "single/$f" ] || die "single/$f is missing or empty"
  cmp "run/$f" "single/$f" || die "run/$f (array + merge) differs from single/$f"
done
verdict() { grep -o 'id="verdict"><strong>[A-Z ]*' "$1/report.html" || echo "no verdict in $1/report.html"; }
[ "$(verdict run)" = "$(verdict single)" ] ||
  die "run/report.html says '$(verdict run)', single/report.html '$(verdict single)'"
say "PASS: bands.csv, cdf.csv, summary.json (and bands.json, diagnostics.json, checks.json," \
  "draws/chain-1..8.csv, state/chain-1..8.json, plots/*.svg) of the merged array equal the" \
  "single run's byte for byte; both reports say $(verdict run | sed 's/.*<strong>//')"
