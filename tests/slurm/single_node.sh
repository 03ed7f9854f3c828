#!/usr/bin/env bash
# A real, single-node Slurm cluster on this machine, for tests: munged, slurmctld and slurmd from
# Debian's packages (slurmctld, slurmd, slurm-client, munge), configured for localhost with every
# file they write (key, state, spool, logs, pid files, sockets) in one temporary folder. Nothing
# outside that folder is changed; the daemons are started by hand (no systemd) and stopped by pid.
#
# Two ways to use it:
#   source tests/slurm/single_node.sh; slurm_start; ...; slurm_stop
#       slurm_start makes the folder ($SLURM_TEST_DIR), writes the configuration, starts the three
#       daemons, exports SLURM_CONF so that sbatch, squeue, sinfo and scontrol talk to them, and
#       waits until the node is idle. slurm_stop stops the daemons and removes the folder; call
#       it from an EXIT trap so that it also runs on failure. slurm_wait_queue_empty waits, with
#       a time bound, until every job has left the queue; slurm_check_jobs checks what slurmctld
#       says of the jobs it ran; slurm_dump_logs prints the daemons' logs.
#   bash tests/slurm/single_node.sh
#       the self-test: starts the cluster, runs a 4-task job array and a job that depends on it,
#       checks what they wrote, and stops the cluster.
#
# Environment: SLURM_TEST_CTLD_PORT and SLURM_TEST_SLURMD_PORT choose the ports (default 6817 and
# 6818, Slurm's own, or the first free pair from 16817 on); SLURM_TEST_KEEP=1 keeps the folder.

# Seconds the daemons may take to bring the node up (other waits take their bound as argument).
SLURM_TEST_START_TIMEOUT=${SLURM_TEST_START_TIMEOUT:-60}

SLURM_TEST_DIR=""
SLURM_TEST_PIDS=()

slurm_log() { printf 'slurm-test: %s\n' "$*" >&2; }

# Runs a command with a time bound so that no client call can hang the test.
slurm_bounded() { timeout --kill-after=5 30 "$@"; }

slurm_require_tools() {
    local tool missing=()
    for tool in munged mungekey munge unmunge slurmctld slurmd sbatch squeue sinfo scontrol timeout; do
        command -v "$tool" >/dev/null 2>&1 || missing+=("$tool")
    done
    if ((${#missing[@]})); then
        slurm_log "missing: ${missing[*]}; install Debian's packages with"
        slurm_log "  apt-get install -y --no-install-recommends slurmctld slurmd slurm-client munge"
        return 1
    fi
}

slurm_port_free() {
    # Nothing may listen on the port yet (another cluster, another test run).
    ! (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null
}

# Waits until "$@" succeeds, at most $1 seconds (the rest is the command).
slurm_wait_for() {
    local limit=$1 what=$2
    shift 2
    local deadline=$((SECONDS + limit))
    until "$@" >/dev/null 2>&1; do
        if ((SECONDS >= deadline)); then
            slurm_log "gave up after ${limit} s waiting for ${what}"
            return 1
        fi
        sleep 0.5
    done
}

slurm_node_idle() {
    local state
    state=$(slurm_bounded sinfo --noheader --nodes="$SLURM_TEST_NODE" --format=%T) || return 1
    [[ $state == idle ]]
}

slurm_write_config() {
    local dir=$1 node cpus sockets cores threads memory
    node=$(hostname -s)
    # The node's real size, as slurmd itself measures it, so that slurmd does not refuse to
    # register (a node that claims more than it has is drained).
    local line
    line=$(slurmd -C | head -n 1)
    cpus=$(sed -n 's/.* CPUs=\([0-9]*\).*/\1/p' <<<"$line")
    sockets=$(sed -n 's/.* SocketsPerBoard=\([0-9]*\).*/\1/p' <<<"$line")
    cores=$(sed -n 's/.* CoresPerSocket=\([0-9]*\).*/\1/p' <<<"$line")
    threads=$(sed -n 's/.* ThreadsPerCore=\([0-9]*\).*/\1/p' <<<"$line")
    memory=$(sed -n 's/.* RealMemory=\([0-9]*\).*/\1/p' <<<"$line")
    if [[ -z $cpus || -z $sockets || -z $cores || -z $threads || -z $memory ]]; then
        slurm_log "could not read the node's size from 'slurmd -C': $line"
        return 1
    fi
    SLURM_TEST_NODE=$node
    cat >"$dir/slurm.conf" <<EOF
# Written by tests/slurm/single_node.sh: one node, this machine, everything under $dir.
ClusterName=lamella-test
# The controller and the only compute node are this machine, reached over the loopback.
SlurmctldHost=$node(127.0.0.1)
SlurmctldPort=$SLURM_TEST_CTLD_PORT
SlurmdPort=$SLURM_TEST_SLURMD_PORT
# Daemons and jobs run as root: fine for a throw-away test cluster, never on a real one.
SlurmUser=root
SlurmdUser=root
# Munge authenticates every message; its socket is ours, not the system's /run/munge.
AuthType=auth/munge
CredType=cred/munge
AuthInfo=socket=$dir/munge/munge.socket
# State, spool, pid and log files all inside the temporary folder.
StateSaveLocation=$dir/state
SlurmdSpoolDir=$dir/spool
SlurmctldPidFile=$dir/run/slurmctld.pid
SlurmdPidFile=$dir/run/slurmd.pid
SlurmctldLogFile=$dir/log/slurmctld.log
SlurmdLogFile=$dir/log/slurmd.log
SlurmctldDebug=info
SlurmdDebug=info
# No cgroups (the sandbox may have none usable): processes are tracked through /proc, tasks
# are not confined, and nothing gathers per-job accounting.
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
# No accounting database and no job-completion log.
AccountingStorageType=accounting_storage/none
JobCompType=jobcomp/none
# No MPI, no interconnect, no mail.
MpiDefault=none
SwitchType=switch/none
MailProg=/bin/true
# Cores are the consumable resource, so array tasks of one CPU each run side by side.
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
SchedulerType=sched/backfill
# A node that went down (for example slurmd restarted) comes back by itself once it registers.
ReturnToService=2
# Finished jobs stay visible to scontrol for 5 minutes, long enough for the test to read them.
MinJobAge=300
# Short grace between SIGTERM and SIGKILL when a job is cancelled or times out.
KillWait=5
NodeName=$node NodeAddr=127.0.0.1 CPUs=$cpus Boards=1 SocketsPerBoard=$sockets CoresPerSocket=$cores ThreadsPerCore=$threads RealMemory=$memory State=UNKNOWN
PartitionName=test Nodes=$node Default=YES MaxTime=INFINITE State=UP
EOF
}

slurm_start() {
    slurm_require_tools || return 1
    # Slurm's own ports unless they are taken (another Slurm, another run of this test): then the
    # first free pair from 16817 on. Set both variables to choose.
    if [[ -z ${SLURM_TEST_CTLD_PORT:-} || -z ${SLURM_TEST_SLURMD_PORT:-} ]]; then
        local port
        for port in 6817 $(seq 16817 2 16915); do
            if slurm_port_free "$port" && slurm_port_free $((port + 1)); then
                SLURM_TEST_CTLD_PORT=$port
                SLURM_TEST_SLURMD_PORT=$((port + 1))
                break
            fi
        done
    fi
    if [[ -z ${SLURM_TEST_CTLD_PORT:-} ]] || ! slurm_port_free "$SLURM_TEST_CTLD_PORT" ||
        ! slurm_port_free "$SLURM_TEST_SLURMD_PORT"; then
        slurm_log "no free ports for slurmctld and slurmd (SLURM_TEST_CTLD_PORT, SLURM_TEST_SLURMD_PORT)"
        return 1
    fi

    SLURM_TEST_DIR=$(mktemp -d "${TMPDIR:-/tmp}/lamella-slurm.XXXXXX")
    local dir=$SLURM_TEST_DIR
    mkdir -p "$dir"/{munge,state,spool,run,log,jobs}
    # Clients reach munged's socket through these folders; the key is readable by root only.
    chmod 755 "$dir" "$dir/munge"
    slurm_log "cluster folder $dir"

    # Munge: a fresh key of our own, a socket in the folder. --force lets munged run as root.
    mungekey --create --keyfile="$dir/munge/munge.key"
    chmod 400 "$dir/munge/munge.key"
    # Each daemon runs in a session of its own (setsid), so that a signal to the test's process
    # group (Ctrl-C, timeout) reaches the test, whose trap cancels the jobs and then stops the
    # daemons in order, and not the daemons first.
    setsid munged --force --key-file="$dir/munge/munge.key" --socket="$dir/munge/munge.socket" \
        --pid-file="$dir/run/munged.pid" --log-file="$dir/log/munged.log" \
        --seed-file="$dir/munge/munged.seed" --foreground \
        </dev/null >>"$dir/log/munged.out" 2>&1 &
    SLURM_TEST_PIDS+=($!)
    if ! slurm_wait_for 15 "munged" bash -c \
        "munge -n -S '$dir/munge/munge.socket' | unmunge -S '$dir/munge/munge.socket'"; then
        slurm_dump_logs
        return 1
    fi

    slurm_write_config "$dir" || return 1
    export SLURM_CONF=$dir/slurm.conf

    # -D: stay in the foreground of a background job, so that we know the pid to stop;
    # -i/-c: start from empty state.
    setsid slurmctld -D -i -c -f "$SLURM_CONF" </dev/null >>"$dir/log/slurmctld.out" 2>&1 &
    SLURM_TEST_PIDS+=($!)
    setsid slurmd -D -f "$SLURM_CONF" </dev/null >>"$dir/log/slurmd.out" 2>&1 &
    SLURM_TEST_PIDS+=($!)

    if ! slurm_wait_for "$SLURM_TEST_START_TIMEOUT" "node $SLURM_TEST_NODE to be idle" \
        slurm_node_idle; then
        slurm_bounded sinfo --long --Node || true
        slurm_dump_logs
        return 1
    fi
    slurm_log "node $SLURM_TEST_NODE idle in partition 'test' (ports $SLURM_TEST_CTLD_PORT, $SLURM_TEST_SLURMD_PORT; SLURM_CONF=$SLURM_CONF)"
}

# Waits until the queue is empty (this cluster is ours alone), at most $1 seconds.
slurm_wait_queue_empty() {
    local limit=$1 deadline=$((SECONDS + $1)) left
    while :; do
        left=$(slurm_bounded squeue --noheader --array --format='%i %T %R') || return 1
        [[ -z $left ]] && return 0
        if ((SECONDS >= deadline)); then
            slurm_log "jobs still queued or running after ${limit} s:"
            printf '%s\n' "$left" >&2
            return 1
        fi
        sleep 1
    done
}

# Checks, from what slurmctld remembers of finished jobs (MinJobAge), that it ran exactly $1 array
# tasks and $2 other jobs, all COMPLETED, and that the other jobs started no earlier than the last
# array task ended (an afterany dependency; the Dependency field is cleared once it is met).
slurm_check_jobs() {
    local want_tasks=$1 want_others=$2 table tasks others bad last_end first_start
    table=$(slurm_bounded scontrol --oneliner show job) || {
        slurm_log "scontrol show job failed"
        return 1
    }
    tasks=$(grep -c ' ArrayTaskId=' <<<"$table" || true)
    others=$(grep -vc ' ArrayTaskId=' <<<"$table" || true)
    bad=$(grep -v ' JobState=COMPLETED ' <<<"$table" || true)
    last_end=$(grep ' ArrayTaskId=' <<<"$table" | sed -n 's/.* EndTime=\([^ ]*\).*/\1/p' | sort | tail -n 1)
    first_start=$(grep -v ' ArrayTaskId=' <<<"$table" | sed -n 's/.* StartTime=\([^ ]*\).*/\1/p' | sort | head -n 1)
    local ok=1
    if ((tasks != want_tasks)); then
        slurm_log "Slurm ran $tasks array tasks, expected $want_tasks"
        ok=0
    fi
    if ((others != want_others)); then
        slurm_log "Slurm ran $others jobs besides the array, expected $want_others"
        ok=0
    fi
    if ((!ok)); then
        slurm_log "all jobs that slurmctld knows:"
        printf '%s\n' "$table" >&2
    fi
    if [[ -n $bad ]]; then
        slurm_log "jobs that did not complete:"
        printf '%s\n' "$bad" >&2
        ok=0
    fi
    if ((want_others > 0)) && [[ $first_start < $last_end ]]; then
        slurm_log "a dependent job started at $first_start, before the array's last task ended at $last_end"
        ok=0
    fi
    ((ok)) || return 1
    slurm_log "Slurm ran $tasks array tasks (last ended $last_end) and $others dependent job(s) (started $first_start), all COMPLETED"
}

slurm_dump_logs() {
    [[ -n $SLURM_TEST_DIR && -d $SLURM_TEST_DIR/log ]] || return 0
    local name log
    for name in munged slurmctld slurmd; do
        # The daemon's own log file, or what it printed when it died before opening it.
        log=$SLURM_TEST_DIR/log/$name.log
        [[ -s $log ]] || log=$SLURM_TEST_DIR/log/$name.out
        [[ -s $log ]] || continue
        printf -- '----- %s (last 40 lines) -----\n' "$log" >&2
        tail -n 40 "$log" >&2
    done
}

slurm_stop() {
    local pid i
    # Cancel whatever is still queued or running, so that no job outlives the cluster.
    if [[ -n ${SLURM_CONF:-} && -n $SLURM_TEST_DIR && $SLURM_CONF == "$SLURM_TEST_DIR"/* ]] &&
        ((${#SLURM_TEST_PIDS[@]})); then
        local ids
        mapfile -t ids < <(slurm_bounded squeue --noheader --format=%A 2>/dev/null || true)
        if ((${#ids[@]})); then
            slurm_log "cancelling jobs still in the queue: ${ids[*]}"
            slurm_bounded scancel "${ids[@]}" 2>/dev/null || true
            slurm_wait_queue_empty 20 >/dev/null 2>&1 || true
        fi
    fi
    # Stop in reverse order: slurmd, slurmctld, munged.
    for ((i = ${#SLURM_TEST_PIDS[@]} - 1; i >= 0; i--)); do
        pid=${SLURM_TEST_PIDS[i]}
        kill -TERM "$pid" 2>/dev/null || continue
        local deadline=$((SECONDS + 15))
        while kill -0 "$pid" 2>/dev/null && ((SECONDS < deadline)); do
            sleep 0.2
        done
        if kill -0 "$pid" 2>/dev/null; then
            slurm_log "pid $pid ignored SIGTERM for 15 s; killing it"
            kill -KILL "$pid" 2>/dev/null || true
        fi
        wait "$pid" 2>/dev/null || true
    done
    SLURM_TEST_PIDS=()
    # A slurmstepd or job process that survived: slurmd passed our SLURM_CONF to its steps and
    # sbatch to the jobs, so a process is ours exactly when its environment names our folder's
    # slurm.conf and it is not in this test's own session (no broad pattern).
    if [[ -n $SLURM_TEST_DIR ]]; then
        local own_session session entry
        own_session=$(ps -o sid= -p $$ | tr -d ' ')
        for entry in /proc/[0-9]*; do
            pid=${entry#/proc/}
            tr '\0' '\n' 2>/dev/null <"$entry/environ" |
                grep -qxF "SLURM_CONF=$SLURM_TEST_DIR/slurm.conf" || continue
            session=$(ps -o sid= -p "$pid" | tr -d ' ')
            [[ -n $session && $session != "$own_session" ]] || continue
            slurm_log "killing stray process $pid ($(ps -o args= -p "$pid" | cut -c1-80))"
            kill -KILL "$pid" 2>/dev/null || true
        done
    fi
    if [[ -n $SLURM_TEST_DIR ]]; then
        if [[ ${SLURM_TEST_KEEP:-0} == 1 ]]; then
            slurm_log "kept $SLURM_TEST_DIR"
        else
            rm -rf -- "$SLURM_TEST_DIR"
        fi
        SLURM_TEST_DIR=""
    fi
    slurm_log "daemons stopped"
}

# The self-test: a job array and a dependent job on the single-node cluster.
slurm_self_test() {
    set -euo pipefail
    trap 'slurm_stop' EXIT
    trap 'exit 130' INT TERM
    local started=$SECONDS
    slurm_start

    local work=$SLURM_TEST_DIR/jobs array_id after_id task
    cd "$work"
    # shellcheck disable=SC2016 # the variables are the job's, expanded when it runs
    array_id=$(slurm_bounded sbatch --parsable --array=0-3 --output=array.%a.log \
        --wrap 'echo $SLURM_ARRAY_TASK_ID > out.$SLURM_ARRAY_TASK_ID')
    after_id=$(slurm_bounded sbatch --parsable --dependency="afterany:$array_id" \
        --output=after.log --wrap 'cat out.* | sort -n | tr "\n" " " > after.out')
    slurm_log "submitted array $array_id and dependent job $after_id"
    if ! slurm_wait_queue_empty 120; then
        slurm_dump_logs
        return 1
    fi
    local failed=0
    slurm_check_jobs 4 1 || failed=1
    for task in 0 1 2 3; do
        if [[ $(cat "out.$task" 2>/dev/null) != "$task" ]]; then
            slurm_log "array task $task: out.$task holds '$(cat "out.$task" 2>/dev/null)'"
            failed=1
        fi
    done
    if [[ $(cat after.out 2>/dev/null) != "0 1 2 3 " ]]; then
        slurm_log "dependent job: after.out holds '$(cat after.out 2>/dev/null)'"
        failed=1
    fi
    if ((failed)); then
        cat ./*.log >&2 || true
        slurm_dump_logs
        slurm_log "FAILED"
        return 1
    fi
    slurm_log "array of 4 and the dependent job finished and wrote what they should ($((SECONDS - started)) s)"
}

if [[ ${BASH_SOURCE[0]} == "$0" ]]; then
    slurm_self_test
fi
