#!/bin/bash
# Batch script for one job leg of a run. Campaign submits it for every leg with:
#   CAMPAIGN_RUN_ID, CAMPAIGN_RUN_DIR (the run's folder, with run.json), CAMPAIGN_LEG,
#   CAMPAIGN_RESTART (the checkpoint to restart from, "newest", or unset for a fresh start),
#   CAMPAIGN_EXE and CAMPAIGN_EXE_ARG (how to run the campaign command).
# This one runs the demo payload. For a real simulation code, replace the last lines: start your code in
# CAMPAIGN_RUN_DIR, restarting from CAMPAIGN_RESTART when set; checkpoint and exit on SIGUSR1 (sent before the
# wall-time limit); append "t norm" lines to progress.dat; write DONE when the run has finished.
cd "$CAMPAIGN_RUN_DIR" || exit 2
# The demo payload's pace (steps of 1 M per second), so that runs need several legs.
export DEMO_STEPS_PER_SECOND=${DEMO_STEPS_PER_SECOND:-800}
if [ -n "${CAMPAIGN_EXE_ARG:-}" ]; then
  exec "$CAMPAIGN_EXE" "$CAMPAIGN_EXE_ARG" __demo-payload "$CAMPAIGN_RUN_DIR"
fi
exec "$CAMPAIGN_EXE" __demo-payload "$CAMPAIGN_RUN_DIR"
