#!/usr/bin/env bash
# Installs and starts a real single-node Slurm cluster on this machine (controller and compute
# node on this host, 2 CPUs), for the job-array test of `coilfield sweep --shard` and `merge`.
# Idempotent: a running cluster is left as it is. Needs root. The pid files of the daemons it
# starts (munged, slurmctld, slurmd, in that order) are appended to $SLURM_UP_STARTED_FILE, so
# the caller can stop exactly those and leave a cluster it found running alone.
set -euo pipefail
started=${SLURM_UP_STARTED_FILE:-/dev/null}

if ! command -v slurmctld >/dev/null || ! command -v munged >/dev/null; then
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq slurmctld slurmd munge >/dev/null
fi

host=$(hostname -s)
cpus=$(nproc)
# Sockets and cores as slurmd sees them, so the node is not drained for a mismatch.
layout=$(slurmd -C | head -1 | grep -oE "(Boards|SocketsPerBoard|CoresPerSocket|ThreadsPerCore)=[0-9]+" | tr "\n" " ")
mem_mb=$(( $(awk '/MemTotal/ {print $2}' /proc/meminfo) / 1024 / 2 ))

# munge: a key and a running daemon (Slurm authenticates every message with it).
if [ ! -s /etc/munge/munge.key ]; then
    dd if=/dev/urandom of=/etc/munge/munge.key bs=1024 count=1 status=none
fi
chown munge:munge /etc/munge/munge.key 2>/dev/null || true
chmod 400 /etc/munge/munge.key
mkdir -p /run/munge /var/log/munge /var/lib/munge
chown -R munge:munge /run/munge /var/log/munge /var/lib/munge 2>/dev/null || true
if ! munge -n >/dev/null 2>&1; then
    su -s /bin/sh munge -c "/usr/sbin/munged" 2>/dev/null || /usr/sbin/munged --force
    echo /run/munge/munged.pid >>"$started"
    sleep 1
fi

mkdir -p /etc/slurm /var/spool/slurmctld /var/spool/slurmd /var/log/slurm
cat > /etc/slurm/slurm.conf <<CONF
# Single-node test cluster written by .ci/slurm-up.sh.
ClusterName=coilfield-ci
SlurmctldHost=${host}
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
StateSaveLocation=/var/spool/slurmctld
SlurmdSpoolDir=/var/spool/slurmd
SlurmctldPidFile=/run/slurmctld.pid
SlurmdPidFile=/run/slurmd.pid
SlurmctldLogFile=/var/log/slurm/slurmctld.log
SlurmdLogFile=/var/log/slurm/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
SchedulerType=sched/backfill
SelectType=select/cons_tres
SelectTypeParameters=CR_CPU
ReturnToService=2
MpiDefault=none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
# Finished jobs stay visible to scontrol for an hour: the test reads their final state there.
MinJobAge=3600
NodeName=${host} CPUs=${cpus} ${layout} RealMemory=${mem_mb} State=UNKNOWN
PartitionName=debug Nodes=${host} Default=YES MaxTime=INFINITE State=UP
CONF
# No cgroup.conf: proctrack/linuxproc and task/none need no cgroups (containers lack them).
rm -f /etc/slurm/cgroup.conf

if ! scontrol ping 2>/dev/null | grep -q UP; then
    /usr/sbin/slurmctld
    echo /run/slurmctld.pid >>"$started"
    sleep 1
fi
if ! pgrep -x slurmd >/dev/null; then
    /usr/sbin/slurmd
    echo /run/slurmd.pid >>"$started"
fi
for _ in $(seq 1 30); do
    if sinfo -h -o '%T' 2>/dev/null | grep -qE '^(idle|mixed|allocated)'; then
        sinfo
        exit 0
    fi
    scontrol update nodename="${host}" state=resume >/dev/null 2>&1 || true
    sleep 1
done
echo "slurm-up: the node did not become idle" >&2
sinfo >&2 || true
tail -20 /var/log/slurm/slurmctld.log /var/log/slurm/slurmd.log >&2 || true
exit 1
