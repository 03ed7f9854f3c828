#!/usr/bin/env bash
# End-to-end test of `lamella sweep slurm --submit` against a real single-node Slurm
# (tests/slurm/single_node.sh): submits the 4-member sweep tests/slurm/tiny-sweep.ron (a coarse
# start-up Poiseuille channel, 216 particles, 0.05 s, at four viscosities), waits for the job
# array and its collect job to leave the queue, runs `lamella sweep report` and checks that
#   - Slurm ran an array of exactly 4 tasks and the collect job after them, all COMPLETED, and
#     each task's log (DIR/logs/member-N.out) says its member finished;
#   - DIR/sweep.csv has 4 rows, each with status `finished`, the sweep file's four viscosities
#     and a profile error (against the start-up series solution) between 0 and 10 %.
# Then the resume path of the README: tests/slurm/resume-sweep.ron (one longer member) is
# submitted, its task cancelled by Slurm mid-run (SIGTERM, as at a time limit), the member must be
# reported interrupted with its state saved; submitted again, it must resume from its checkpoint
# and finish.
# On failure it says what was wrong and prints the job logs and the daemons' logs. The daemons are
# stopped and the cluster's folder removed in every case (EXIT trap). Every wait is bounded.
#
# Usage: tests/slurm_sweep.sh LAMELLA_BINARY
#   e.g. cargo build --profile checked && bash tests/slurm_sweep.sh target/checked/lamella
# Needs Debian's slurmctld, slurmd, slurm-client and munge packages and root (as .ci/run has).
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
# Seconds the sweep may take from submission until both jobs have left the queue.
SWEEP_TIMEOUT=${SWEEP_TIMEOUT:-300}
MEMBERS=4

fail() {
    printf 'slurm-sweep: FAILED: %s\n' "$*" >&2
    exit 1
}

(($# == 1)) || {
    echo "usage: $0 LAMELLA_BINARY" >&2
    exit 2
}
lamella=$(realpath -e -- "$1") || fail "no lamella binary at '$1'"
[[ -x $lamella ]] || fail "'$lamella' is not executable"
sweep_file=$here/slurm/tiny-sweep.ron
[[ -f $sweep_file ]] || fail "missing $sweep_file"
if ! "$lamella" sweep slurm --help >/dev/null 2>&1; then
    fail "'$lamella' has no 'sweep slurm' command"
fi

# shellcheck source=tests/slurm/single_node.sh
source "$here/slurm/single_node.sh"

folders=()
print_job_logs() {
    local f folder
    for folder in "${folders[@]}"; do
        [[ -d $folder ]] || continue
        # The batch scripts and every log that the jobs or the members wrote.
        while IFS= read -r -d '' f; do
            if [[ -s $f ]]; then
                printf -- '----- %s (last 40 lines) -----\n' "$f" >&2
                tail -n 40 "$f" >&2
            else
                printf -- '----- %s (empty) -----\n' "$f" >&2
            fi
        done < <(find "$folder" -maxdepth 4 -type f \( -name '*.sbatch' -o -name '*.out' \
            -o -name '*.err' -o -name '*.log' -o -name '*.txt' -o -name 'sweep.csv' \) -print0 |
            sort -z)
    done
}

# Runs `lamella sweep slurm SWEEP --out DIR --submit` and sets array_id and report_id from the
# job ids it prints.
submit() {
    local sweep=$1 dir=$2 log
    log=$work/submit.$RANDOM.txt
    folders+=("$dir")
    if ! "$lamella" sweep slurm "$sweep" --out "$dir" --partition test --time 00:05:00 \
        --cpus-per-task 1 --submit >"$log" 2>&1; then
        cat "$log" >&2
        fail "'lamella sweep slurm $sweep --submit' failed"
    fi
    cat "$log"
    [[ -s $dir/sweep.sbatch ]] || fail "no $dir/sweep.sbatch"
    [[ -s $dir/collect.sbatch ]] || fail "no $dir/collect.sbatch"
    array_id=$(sed -n 's/^sweep job \([0-9]*\):.*/\1/p' "$log")
    report_id=$(sed -n 's/^report job \([0-9]*\):.*/\1/p' "$log")
    [[ -n $array_id && -n $report_id ]] ||
        fail "'lamella sweep slurm --submit' printed no 'sweep job ID' and 'report job ID' lines"
}

on_exit() {
    local status=$?
    if ((status != 0)); then
        print_job_logs
        slurm_dump_logs
    fi
    slurm_stop
    exit "$status"
}
trap on_exit EXIT
trap 'exit 130' INT TERM

started=$SECONDS
slurm_start
work=$SLURM_TEST_DIR/jobs
cd "$work"

"$lamella" sweep check "$sweep_file" || fail "'lamella sweep check' refused $sweep_file"

out=$work/sweep
submit "$sweep_file" "$out"

# This cluster is ours alone: every job in it was submitted by lamella just now. Wait until the
# queue is empty, then check what Slurm ran: 4 array tasks and the collect job after them.
if ! slurm_wait_queue_empty "$SWEEP_TIMEOUT"; then
    fail "the sweep did not finish within ${SWEEP_TIMEOUT} s"
fi
slurm_check_jobs "$MEMBERS" 1 || fail "Slurm did not run the sweep as a $MEMBERS-task array and a collect job"

# Every task's log, written by Slurm (the scripts' --output), says its member finished.
for ((i = 0; i < MEMBERS; i++)); do
    log=$out/logs/member-$i.out
    [[ -s $log ]] || fail "no log $log: Slurm did not run task $i"
    grep -q 'finished at t = ' "$log" || fail "the log of task $i does not say its member finished"
done

"$lamella" sweep report "$out" || fail "'lamella sweep report' failed"
[[ -s $out/sweep.csv ]] || fail "no $out/sweep.csv"
python3 - "$out/sweep.csv" "$MEMBERS" <<'PY' || fail "sweep.csv does not list $MEMBERS finished members (above)"
import csv, math, sys
path, expected = sys.argv[1], int(sys.argv[2])
with open(path, newline="") as f:
    rows = list(csv.DictReader(f))
viscosity = "phases[0].viscosity_law.viscosity"
for column in ("status", viscosity, "profile_relative_l2"):
    if not rows or column not in rows[0]:
        sys.exit(f"{path}: no '{column}' column")
statuses = [row["status"] for row in rows]
print(f"slurm-sweep: sweep.csv: {len(rows)} members, statuses {statuses}")
if len(rows) != expected:
    sys.exit(f"{path}: {len(rows)} members, expected {expected}")
bad = [i for i, s in enumerate(statuses) if s != "finished"]
if bad:
    sys.exit(f"{path}: members {bad} are not 'finished'")
# The members are the sweep file's (the four viscosities, in order) and each has a result: the
# profile error against the start-up series solution, about 2 % at this coarse spacing.
got = [float(row[viscosity]) for row in rows]
want = [0.8e-3, 1.0e-3, 1.25e-3, 1.6e-3]
if any(not math.isclose(g, w, rel_tol=1e-9) for g, w in zip(got, want)):
    sys.exit(f"{path}: viscosities {got}, expected {want}")
errors = [float(row["profile_relative_l2"] or "nan") for row in rows]
if not all(0.0 < e < 0.1 for e in errors):
    sys.exit(f"{path}: profile errors {errors}, expected each between 0 and 10 %")
print(f"slurm-sweep: viscosities {got}, profile L2 errors {[round(e, 4) for e in errors]}")
PY

printf 'slurm-sweep: %d members ran as a Slurm job array, all finished (%d s)\n' \
    "$MEMBERS" "$((SECONDS - started))"

# Part 2: a member cut off by Slurm mid-run resumes when the sweep is submitted again. Slurm
# cancels a task as it ends one at its time limit: SIGTERM, then SIGKILL after KillWait.
started=$SECONDS
resume_file=$here/slurm/resume-sweep.ron
[[ -f $resume_file ]] || fail "missing $resume_file"
again=$work/resume
submit "$resume_file" "$again"
first_array=$array_id
# Cancel once the member has written its snapshot at t = 1 s (of 6): running, far from done.
progress=$again/member-000/snapshots/state_000002.vtp
deadline=$((SECONDS + SWEEP_TIMEOUT))
until [[ -e $progress ]]; do
    ((SECONDS < deadline)) || fail "the member did not reach t = 1 s within ${SWEEP_TIMEOUT} s"
    [[ -n $(slurm_bounded squeue --noheader --jobs="$first_array" --format=%i 2>/dev/null) ]] ||
        [[ -e $progress ]] || fail "the member's task ended before the member reached t = 1 s"
    sleep 0.2
done
slurm_bounded scancel "$first_array" || fail "scancel $first_array failed"
slurm_wait_queue_empty "$SWEEP_TIMEOUT" || fail "the cancelled sweep did not leave the queue"
state=$(slurm_bounded scontrol --oneliner show job "$first_array" | sed -n 's/.* JobState=\([A-Z_]*\) .*/\1/p')
[[ $state == CANCELLED ]] || fail "the cancelled task ended as '$state', not CANCELLED (did it finish first?)"
grep -q 'interrupted at t = ' "$again/logs/member-0.out" ||
    fail "the cancelled member did not report saving its state (logs/member-0.out)"
"$lamella" -q sweep report "$again" || fail "'lamella sweep report' of the cancelled sweep failed"
grep -q '^0,interrupted,' "$again/sweep.csv" || fail "sweep.csv does not list the cancelled member as interrupted"
printf 'slurm-sweep: member cancelled by Slurm mid-run, %s\n' \
    "$(grep -ho 'interrupted at t = [^)]*)' "$again/logs/member-0.out")"

submit "$resume_file" "$again"
slurm_wait_queue_empty "$SWEEP_TIMEOUT" || fail "the resubmitted sweep did not finish within ${SWEEP_TIMEOUT} s"
state=$(slurm_bounded scontrol --oneliner show job "$array_id" | sed -n 's/.* JobState=\([A-Z_]*\) .*/\1/p')
[[ $state == COMPLETED ]] || fail "the resubmitted task ended as '$state', not COMPLETED"
grep -q 'resuming from .*checkpoint' "$again/logs/member-0.out" ||
    fail "the resubmitted member did not resume from its checkpoint (logs/member-0.out)"
grep -q 'finished at t = 6 s' "$again/member-000/run.log" || fail "the resumed member did not finish at t = 6 s"
"$lamella" -q sweep report "$again" || fail "'lamella sweep report' of the resumed sweep failed"
grep -q '^0,finished,' "$again/sweep.csv" || fail "sweep.csv does not list the resumed member as finished"
printf 'slurm-sweep: submitted again, the member resumed from its checkpoint and finished (%d s)\n' \
    "$((SECONDS - started))"
# Both parts passed (a failure exits above with a message).
echo "slurm-sweep: 2 passed, 0 failed"
