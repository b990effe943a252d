#!/usr/bin/env bash
# A study run on a real Slurm cluster, as the README's recipe says: a
# single-node Slurm (Debian's slurm-wlm and munge) brought up on localhost,
# the demo fixture submitted as a 4-task job array of `gazemill run --shard`,
# then a dependent `gazemill merge` job; its tables must equal a run on one
# machine. Exits 77 (ctest's skip) with the reason where Slurm cannot be set
# up here (not root, no packages, daemons that will not start), never passing
# silently.
#
#   check_slurm_shards.sh GAZEMILL_BINARY FIXTURES_DIR
set -uo pipefail
gazemill="$1"
fixtures="$2"
skip() { echo "SKIPPED: $*"; exit 77; }
fail() { echo "FAIL: $*"; exit 1; }

[ "$(id -u)" -eq 0 ] || skip "bringing up Slurm needs root (munge and slurmd run as system users)"
if ! command -v slurmctld > /dev/null || ! command -v munged > /dev/null; then
  export DEBIAN_FRONTEND=noninteractive
  apt-get -o DPkg::Lock::Timeout=600 install -y -qq --no-install-recommends munge slurmctld slurmd slurm-client > /dev/null 2>&1 \
    || { apt-get -o DPkg::Lock::Timeout=600 update -qq > /dev/null 2>&1 &&
         apt-get -o DPkg::Lock::Timeout=600 install -y -qq --no-install-recommends munge slurmctld slurmd slurm-client > /dev/null 2>&1; } \
    || skip "could not install Debian's munge and slurm-wlm packages"
fi

work=$(mktemp -d /tmp/gazemill-slurm-XXXXXX)
pids=()
cleanup() {
  # By the pid files, never by name: other Slurm daemons may be someone else's.
  for f in "$work"/slurmd.pid "$work"/slurmctld.pid; do [ -f "$f" ] && kill "$(cat "$f")" 2> /dev/null; done
  for p in "${pids[@]:-}"; do [ -n "$p" ] && kill "$p" 2> /dev/null; done
  sleep 1
  rm -rf "$work"
}
trap cleanup EXIT

# munge: its key and socket folder, then the daemon (one may already run).
mkdir -p /run/munge /var/log/munge /var/lib/munge
chown munge:munge /run/munge /var/log/munge /var/lib/munge 2> /dev/null || true
if [ ! -s /etc/munge/munge.key ]; then mungekey --create --force > /dev/null 2>&1 || skip "cannot create a munge key"; fi
chown munge:munge /etc/munge/munge.key && chmod 600 /etc/munge/munge.key
if ! munge -n > /dev/null 2>&1; then
  runuser -u munge -- /usr/sbin/munged || skip "munged would not start"
  sleep 1
  munge -n > /dev/null 2>&1 || skip "munge does not answer"
fi

host=$(hostname -s)
mkdir -p "$work/state" "$work/spool"
cat > "$work/slurm.conf" <<CONF
ClusterName=gazemill-test
SlurmctldHost=$host
SlurmUser=root
AuthType=auth/munge
MailProg=/bin/true
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
ReturnToService=2
StateSaveLocation=$work/state
SlurmdSpoolDir=$work/spool
SlurmctldPidFile=$work/slurmctld.pid
SlurmdPidFile=$work/slurmd.pid
SlurmctldLogFile=$work/slurmctld.log
SlurmdLogFile=$work/slurmd.log
SlurmctldPort=46817
SlurmdPort=46818
NodeName=$host CPUs=$(nproc) State=UNKNOWN
PartitionName=debug Nodes=ALL Default=YES MaxTime=INFINITE State=UP
CONF
export SLURM_CONF="$work/slurm.conf"
/usr/sbin/slurmctld -i -f "$SLURM_CONF" || skip "slurmctld would not start (see $work/slurmctld.log)"
/usr/sbin/slurmd -f "$SLURM_CONF" || skip "slurmd would not start"
for _ in $(seq 1 60); do
  state=$(sinfo -h -o %t 2> /dev/null | head -1)
  [ "$state" = "idle" ] && break
  sleep 1
done
[ "${state:-}" = "idle" ] || skip "the Slurm node did not become idle within 60 s (state '${state:-none}')"

# The study: the fixture, with one cleaning rule.
cp -r "$fixtures/demo-study" "$work/study"
printf '\n[[cleaning]]\nname = "short"\nkind = "delete_short_fixations"\nmin_duration_ms = 80\n' >> "$work/study/gazemill.toml"
"$gazemill" -q run "$work/study/gazemill.toml" -o "$work/one" || fail "the single-machine run failed"

# The README's recipe: an array of shards, then a merge that waits for them.
array=$(sbatch --parsable --array=0-3 --output="$work/shard-%a.log" \
  --wrap "'$gazemill' -q run '$work/study/gazemill.toml' -o '$work/shards' --shard \$SLURM_ARRAY_TASK_ID/4") \
  || fail "sbatch of the shard array failed"
sbatch --wait --dependency="afterok:$array" --output="$work/merge.log" \
  --wrap "'$gazemill' -q merge '$work/merged' $work/shards/*.shard-*-of-4.gzm.h5" > /dev/null \
  || { cat "$work"/shard-*.log "$work/merge.log" 2> /dev/null; fail "the merge job failed"; }

checked=0
for t in measures_wide.tsv measures_by_role.tsv audit.tsv fixations.tsv alignment_trials.tsv; do
  cmp -s "$work/one/tables/$t" "$work/merged/tables/$t" || fail "$t differs between the cluster and the single run"
  checked=$((checked + 1))
done
"$gazemill" verify "$work/merged/harbour-news.gzm.h5" > "$work/verify.log" || { cat "$work/verify.log"; fail "the merged store does not verify"; }
echo "Slurm: 4 shard tasks and a dependent merge on a one-node cluster; $checked tables equal the single run; the merged store verifies"
