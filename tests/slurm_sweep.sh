#!/usr/bin/env bash
# End-to-end test of `lamella sweep slurm --submit` against a real single-node Slurm
# (tests/slurm/single_node.sh): submits the 4-member sweep tests/slurm/tiny-sweep.ron (a coarse
# start-up Poiseuille channel, 216 particles, 0.05 s, at four viscosities), waits for the job
# array and its collect job to leave the queue, runs `lamella sweep report` and checks that
#   - Slurm ran an array of exactly 4 tasks and the collect job after them, all COMPLETED, and
#     each task's log (DIR/logs/member-N.out) says its member finished;
#   - DIR/sweep.csv has 4 rows, each with status `finished`, the sweep file's four viscosities
#     and a profile error (against the start-up series solution) between 0 and 10 %.
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

out=""
print_job_logs() {
    [[ -n $out && -d $out ]] || return 0
    local f
    # The batch scripts and every log that the jobs or the members wrote.
    while IFS= read -r -d '' f; do
        if [[ -s $f ]]; then
            printf -- '----- %s (last 40 lines) -----\n' "$f" >&2
            tail -n 40 "$f" >&2
        else
            printf -- '----- %s (empty) -----\n' "$f" >&2
        fi
    done < <(find "$out" -maxdepth 4 -type f \( -name '*.sbatch' -o -name '*.out' -o -name '*.err' \
        -o -name '*.log' -o -name 'sweep.csv' \) -print0 | sort -z)
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
out=$work/sweep
cd "$work"

"$lamella" sweep check "$sweep_file" || fail "'lamella sweep check' refused $sweep_file"

submit_log=$work/submit.txt
if ! "$lamella" sweep slurm "$sweep_file" --out "$out" --partition test --time 00:05:00 \
    --cpus-per-task 1 --submit >"$submit_log" 2>&1; then
    cat "$submit_log" >&2
    fail "'lamella sweep slurm --submit' failed"
fi
cat "$submit_log"
[[ -s $out/sweep.sbatch ]] || fail "no $out/sweep.sbatch"
[[ -s $out/collect.sbatch ]] || fail "no $out/collect.sbatch"

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
