#!/usr/bin/env bash
# Starts a real single-node Slurm cluster (Debian's slurm-wlm and munge packages) for
# test/slurm.test.ts: as root, without systemd. munged first (Slurm authenticates with
# it), then slurmctld and slurmd in the background, with this machine's real CPU count
# and memory (from `slurmd -C`) in slurm.conf, process tracking by /proc
# (proctrack/linuxproc) and no task plugin (task/none), so no cgroups are needed.
# Idempotent: a running cluster is left as it is. Prints the node state at the end.
set -euo pipefail

if ! command -v slurmctld >/dev/null || ! command -v slurmd >/dev/null || ! command -v munged >/dev/null || ! command -v sbatch >/dev/null; then
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq --no-install-recommends slurm-wlm munge >/dev/null
fi

# munge: a key, its folders owned by the munge user, the daemon running as that user.
mkdir -p /etc/munge /var/lib/munge /var/log/munge /run/munge
if [ ! -s /etc/munge/munge.key ]; then
  dd if=/dev/urandom of=/etc/munge/munge.key bs=1024 count=1 status=none
fi
chown -R munge:munge /etc/munge /var/lib/munge /var/log/munge /run/munge
chmod 0700 /etc/munge /var/lib/munge /var/log/munge
chmod 0755 /run/munge
chmod 0400 /etc/munge/munge.key
if ! munge -n >/dev/null 2>&1; then
  runuser -u munge -- /usr/sbin/munged
  for _ in $(seq 1 50); do munge -n >/dev/null 2>&1 && break; sleep 0.1; done
fi

# slurm.conf for this one node.
host=$(hostname -s)
node=$(slurmd -C | head -n 1 | sed "s/^NodeName=[^ ]*/NodeName=$host/")
mkdir -p /etc/slurm /var/spool/slurmctld /var/spool/slurmd /var/log/slurm /run/slurm
config=/etc/slurm/slurm.conf
wanted=$(cat <<CONF
# Written by fleetwright/.ci/start-slurm.sh: a single-node cluster for the tests.
ClusterName=fleetwright
SlurmctldHost=$host
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
MpiDefault=none
ReturnToService=2
StateSaveLocation=/var/spool/slurmctld
SlurmdSpoolDir=/var/spool/slurmd
SlurmctldPidFile=/run/slurm/slurmctld.pid
SlurmdPidFile=/run/slurm/slurmd.pid
SlurmctldLogFile=/var/log/slurm/slurmctld.log
SlurmdLogFile=/var/log/slurm/slurmd.log
$node State=UNKNOWN
PartitionName=debug Nodes=$host Default=YES MaxTime=INFINITE State=UP
CONF
)
if [ ! -f "$config" ] || [ "$(cat "$config")" != "$wanted" ]; then
  printf '%s\n' "$wanted" >"$config"
fi

if ! scontrol ping 2>/dev/null | grep -q 'UP'; then
  /usr/sbin/slurmctld
fi
if ! pgrep -x slurmd >/dev/null; then
  /usr/sbin/slurmd
fi

# Wait until the node takes jobs.
for _ in $(seq 1 100); do
  state=$(sinfo -h -n "$host" -o '%t' 2>/dev/null || true)
  case "$state" in
    idle* | mix* | alloc*) echo "slurm: node $host $state ($(echo "$node" | grep -o 'CPUs=[0-9]*') $(echo "$node" | grep -o 'RealMemory=[0-9]*'))"; exit 0 ;;
    down* | drain*) scontrol update nodename="$host" state=resume >/dev/null 2>&1 || true ;;
  esac
  sleep 0.2
done
echo "slurm: the node did not become idle; see /var/log/slurm/slurmctld.log and slurmd.log" >&2
sinfo >&2 || true
exit 1
