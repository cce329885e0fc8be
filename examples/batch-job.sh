#!/usr/bin/env bash
# Batch-job template: the solver runs in the background and `rhoscope guard`
# runs beside it as a sidecar. On a critical alarm guard first creates the stop
# file the solver polls for (it writes a restart and ends cleanly); if the run
# still writes after the grace time, guard cancels the job through the
# scheduler. Add your scheduler's directives above `set -u`, and set the
# variables below (or export them before submitting).
#
# Cautions: an alarm is advice, not proof. Stopping a run discards the work
# done since its last checkpoint. The site's own rules for job control and
# licensed engineering practice decide whether and how a job may be stopped.
set -u

RHOSCOPE=${RHOSCOPE:-rhoscope}
# The command that starts the solver (it must write the history below).
SOLVER_CMD=${SOLVER_CMD:?set SOLVER_CMD to the command that starts the solver}
HISTORY=${HISTORY:-history.csv}
STOP_FILE=${STOP_FILE:-STOP}
EVENTS=${EVENTS:-rhoscope-events.jsonl}
GRACE=${GRACE:-10m}
# Run by guard through `sh -c` when the stop file was not enough; the job id
# is expanded there, from the job's environment.
CANCEL_CMD=${CANCEL_CMD:-'scancel "$SLURM_JOB_ID"'}

# Started with & and waited for, so this shell can pass on a termination
# signal from the scheduler to both children.
bash -c "exec $SOLVER_CMD" &
SOLVER_PID=$!
trap 'kill -TERM "$SOLVER_PID" "${GUARD_PID:-}" 2>/dev/null' TERM INT HUP

"$RHOSCOPE" guard "$HISTORY" \
    --touch "$STOP_FILE" \
    --run "$CANCEL_CMD" \
    --grace "$GRACE" \
    --pid "$SOLVER_PID" \
    --events "$EVENTS" &
GUARD_PID=$!

# `wait` returns early (status above 128) when a trapped signal arrives: wait
# again until the solver has really ended.
wait "$SOLVER_PID"
SOLVER_STATUS=$?
while [ "$SOLVER_STATUS" -gt 128 ] && kill -0 "$SOLVER_PID" 2>/dev/null; do
    wait "$SOLVER_PID"
    SOLVER_STATUS=$?
done
# guard ends by itself once the solver's process has ended (--pid).
wait "$GUARD_PID"
GUARD_STATUS=$?
echo "solver exit status $SOLVER_STATUS; guard exit status $GUARD_STATUS (0 no critical alarm, 2 acted, 4 an action failed)"
exit "$SOLVER_STATUS"
