#!/usr/bin/env bash
# End-to-end test of `runcast slurm` on a real single-node Slurm cluster.
#
# Brings up munge and Slurm on this machine (Debian, as root; no init system
# needed), submits a sharded projection of a demo with `runcast slurm --submit`,
# waits for its merge job and checks that the merged files are byte-identical
# to an unsharded `runcast project` with the same seed, and that a scenario
# file name and output directory full of quotes, `$()`, backticks, `;`, `#`
# and `%` give jobs of that name writing where asked. Then stops the daemons
# it started, by their pids, and removes its working directory.
#
# Usage (from the repository root, as root):
#     cargo build --release && tests/slurm/end_to_end.sh
# Environment: RUNCAST (the binary, default target/release/runcast),
# SLURM_TEST_TIMEOUT (seconds for the whole test, default 600),
# SLURM_TEST_KEEP=1 (keep the working directory for inspection).
#
# Slurm's configuration, state and logs live in a temporary directory, on
# ports of their own (6917, 6918): an existing Slurm installation is neither
# read nor changed. munge is started only when no munged is answering.
set -euo pipefail
cd "$(dirname "$0")/../.."

RUNCAST=$(realpath "${RUNCAST:-target/release/runcast}")
TIMEOUT=${SLURM_TEST_TIMEOUT:-600}
SCENARIO=scenarios/narrow_peak.yaml
TOYS=1000
CALIBRATION_TOYS=20000
SEED=20261202
TASKS=4
START=$SECONDS

say() { echo "slurm test [$((SECONDS - START))s]: $*"; }
fail() {
    echo "slurm test: FAILED: $*" >&2
    for log in "$WORK"/slurmctld.log "$WORK"/slurmd.log "$WORK"/out/logs/*; do
        [[ -f $log ]] && { echo "--- last lines of $log" >&2; tail -n 15 "$log" >&2; }
    done
    exit 1
}
remaining() { echo $((TIMEOUT - (SECONDS - START))); }

[[ $(id -u) == 0 ]] || { echo "slurm test: must run as root (it installs and starts daemons)" >&2; exit 1; }
[[ -x $RUNCAST ]] || { echo "slurm test: no runcast binary at $RUNCAST (cargo build --release)" >&2; exit 1; }

WORK=$(mktemp -d /tmp/runcast-slurm.XXXXXX)
chmod 755 "$WORK"
STARTED=()
cleanup() {
    local status=$?
    for pid in "${STARTED[@]}"; do
        kill "$pid" 2>/dev/null || true
    done
    for pid in "${STARTED[@]}"; do
        for _ in $(seq 50); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
        kill -KILL "$pid" 2>/dev/null || true
    done
    if [[ ${SLURM_TEST_KEEP:-0} == 1 || $status != 0 ]]; then
        echo "slurm test: working directory kept: $WORK"
    else
        rm -rf "$WORK"
    fi
    exit "$status"
}
trap cleanup EXIT
trap 'fail "interrupted"' INT TERM

# Poll COMMAND until it succeeds, within the test's time.
wait_for() {
    local what=$1
    shift
    until "$@"; do
        (($(remaining) > 0)) || fail "timed out after ${TIMEOUT}s waiting for $what"
        sleep 1
    done
}

install_packages() {
    if command -v slurmctld >/dev/null && command -v slurmd >/dev/null && command -v munged >/dev/null; then
        say "slurm-wlm and munge already installed"
        return
    fi
    say "installing slurm-wlm and munge"
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq || fail "apt-get update"
    apt-get install -y -qq --no-install-recommends slurm-wlm munge >"$WORK/apt.log" 2>&1 ||
        { tail -n 20 "$WORK/apt.log" >&2; fail "apt-get install slurm-wlm munge"; }
}

munge_answers() { munge -n 2>/dev/null | unmunge >/dev/null 2>&1; }

start_munge() {
    if munge_answers; then
        say "munged already running"
        return
    fi
    [[ -s /etc/munge/munge.key ]] || fail "no /etc/munge/munge.key (the munge package creates it)"
    mkdir -p /run/munge
    chown munge:munge /run/munge
    chmod 755 /run/munge
    setpriv --reuid=munge --regid=munge --clear-groups munged --foreground >"$WORK/munged.log" 2>&1 &
    STARTED+=($!)
    wait_for "munged" munge_answers
    say "munged started (pid ${STARTED[-1]})"
}

write_configuration() {
    local host node
    host=$(hostname -s)
    node=$(slurmd -C | head -n 1)
    [[ $node == NodeName=* ]] || fail "slurmd -C printed no node line: $node"
    mkdir -p "$WORK/state" "$WORK/spool"
    cat >"$WORK/slurm.conf" <<EOF
ClusterName=runcast-test
SlurmctldHost=$host(127.0.0.1)
SlurmctldPort=6917
SlurmdPort=6918
SlurmUser=root
AuthType=auth/munge
StateSaveLocation=$WORK/state
SlurmdSpoolDir=$WORK/spool
SlurmctldPidFile=$WORK/slurmctld.pid
SlurmdPidFile=$WORK/slurmd.pid
SlurmctldLogFile=$WORK/slurmctld.log
SlurmdLogFile=$WORK/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
DependencyParameters=kill_invalid_depend
ReturnToService=2
SchedulerParameters=sched_interval=2
MinJobAge=600
$node NodeAddr=127.0.0.1 State=UNKNOWN
PartitionName=test Nodes=ALL Default=YES MaxTime=INFINITE State=UP
EOF
    echo "CgroupPlugin=cgroup/v1" >"$WORK/cgroup.conf"
    export SLURM_CONF=$WORK/slurm.conf
}

node_idle() { [[ $(sinfo -h -o %T 2>/dev/null) == idle ]]; }

start_slurm() {
    slurmctld -D -c -f "$SLURM_CONF" >"$WORK/slurmctld.out" 2>&1 &
    STARTED+=($!)
    local controller=$!
    slurmd -D -f "$SLURM_CONF" >"$WORK/slurmd.out" 2>&1 &
    STARTED+=($!)
    wait_for "the node to be idle" node_idle
    kill -0 "$controller" || fail "slurmctld stopped"
    say "slurmctld and slurmd started (pids ${STARTED[*]: -2}), node idle"
}

job_state() { scontrol show job "$1" 2>/dev/null | grep -o 'JobState=[A-Z_]*' | head -n 1 | cut -d= -f2; }
job_queued() { squeue -h -j "$1" 2>/dev/null | grep -q .; }

run_test() {
    local options=(--toys "$TOYS" --calibrate "$CALIBRATION_TOYS" --seed "$SEED")
    say "unsharded run: runcast project $SCENARIO ${options[*]}"
    "$RUNCAST" project "$SCENARIO" "${options[@]}" --out "$WORK/single" --quiet >"$WORK/single.txt" ||
        fail "unsharded runcast project"

    say "runcast slurm --tasks $TASKS --submit"
    "$RUNCAST" slurm "$SCENARIO" --tasks "$TASKS" --out "$WORK/out" "${options[@]}" --submit \
        >"$WORK/submit.txt" || fail "runcast slurm --submit"
    cat "$WORK/submit.txt"
    local array merge
    array=$(awk '/^array job /{print $3}' "$WORK/submit.txt")
    merge=$(awk '/^merge job /{print $3}' "$WORK/submit.txt")
    [[ $array =~ ^[0-9]+$ && $merge =~ ^[0-9]+$ ]] || fail "no job ids in the output of runcast slurm"

    local state
    while job_queued "$merge"; do
        (($(remaining) > 0)) || { squeue >&2; fail "timed out after ${TIMEOUT}s waiting for merge job $merge"; }
        sleep 2
    done
    state=$(job_state "$merge")
    [[ $state == COMPLETED ]] || fail "merge job $merge ended $state"
    say "array job $array and merge job $merge completed"

    local file
    for file in "$WORK"/single/*; do
        cmp "$file" "$WORK/out/$(basename "$file")" || fail "$(basename "$file") differs from the unsharded run"
    done
    say "$(ls "$WORK/single" | wc -l) files byte-identical to the unsharded run"
    say "shard sizes: $(stat -c '%s' "$WORK"/out/*.runcast-shard | tr '\n' ' ')bytes"
}

# A failed array task must cancel the merge instead of leaving it waiting.
check_failed_array() {
    local array merge
    array=$(sbatch --parsable --array=1-2 --output=/dev/null --wrap false) || fail "sbatch of a failing array"
    array=${array%%;*}
    merge=$(sbatch --parsable --dependency=afterok:"$array" --kill-on-invalid-dep=yes \
        --output=/dev/null --wrap true) || fail "sbatch of a dependent job"
    merge=${merge%%;*}
    wait_for "the dependent job of a failed array to leave the queue" bash -c "! squeue -h -j $merge 2>/dev/null | grep -q ."
    local state
    state=$(job_state "$merge")
    [[ $state == CANCELLED ]] || fail "the merge after a failed array ended $state, not CANCELLED"
    say "a merge after a failed array task is cancelled"
}

# A scenario file name and an output directory that the shell and sbatch
# would split or run if a script let them out of their words: the jobs must
# run under the names given and write their logs and files where asked.
check_hostile_names() {
    local hostile="it's \"a\" \$(touch INJECTED) \`touch INJECTED\`; #b 100%"
    local scenario="$WORK/$hostile.yaml" out="$WORK/out $hostile"
    cp "$SCENARIO" "$scenario"
    (cd "$WORK" && "$RUNCAST" slurm "$scenario" --tasks 2 --out "$out" --asimov-only \
        --sbatch-arg="--comment=$hostile" --submit >"$WORK/hostile.txt") ||
        fail "runcast slurm --submit with a hostile scenario name"
    local array merge
    array=$(awk '/^array job /{print $3}' "$WORK/hostile.txt")
    merge=$(awk '/^merge job /{print $3}' "$WORK/hostile.txt")
    [[ $array =~ ^[0-9]+$ && $merge =~ ^[0-9]+$ ]] || fail "no job ids for the hostile names"
    wait_for "the merge of the hostile names" bash -c "! squeue -h -j $merge 2>/dev/null | grep -q ."
    [[ $(job_state "$merge") == COMPLETED ]] || fail "the merge of the hostile names ended $(job_state "$merge")"
    scontrol -o show job "$merge" | grep -qF "JobName=runcast-$hostile-merge " ||
        fail "the merge job is not named runcast-$hostile-merge"
    local file
    for file in "slurm-${array}_1.out" "slurm-${array}_2.out" "slurm-merge-$merge.out" projection.json; do
        [[ -f "$out/$file" ]] || fail "no $file in $out"
    done
    [[ -z $(find "$WORK" . -maxdepth 1 -name INJECTED) ]] || fail "a hostile name ran a command"
    say "hostile names: jobs named and logs written as asked, nothing run"
}

install_packages
start_munge
write_configuration
start_slurm
run_test
check_failed_array
check_hostile_names
say "passed in $((SECONDS - START))s"
