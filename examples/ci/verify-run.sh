#!/bin/sh
# An example to adapt: run a rankplan plan as a CI job would and verify the run folder.
# It runs the plan into runs/$CI_PIPELINE_ID (creating runs/ when missing), prints the
# audit head to keep outside runs/ (a CI artifact, a lab notebook), verifies the folder
# against that head and, on GitHub Actions, adds the summary and the verdicts to the job's
# step summary. examples/ci/github-actions.yml runs the same commands.
#
# Run it from the repository's top folder: sh examples/ci/verify-run.sh
# Environment:
#   PLAN            the plan (default: the bundled example examples/pilot-bolts/plan.yaml)
#   CI_PIPELINE_ID  the run folder's name under runs/ (GitLab CI sets it; default: the time)
#   REASON          why the run is made, recorded in its audit log
# It ends with rankplan's exit code: 0 run and verified; 2 bad input, nothing written;
# 3 the rerun or the inputs differ; 4 integrity (see the README's exit codes).
set -eu
PLAN=${PLAN:-examples/pilot-bolts/plan.yaml}
CI_PIPELINE_ID=${CI_PIPELINE_ID:-local-$(date -u +%Y%m%dT%H%M%SZ)}
REASON=${REASON:-run and verify in CI}

rankplan run "$PLAN" --out "runs/$CI_PIPELINE_ID" --reason "$REASON"
head=$(cat "runs/$CI_PIPELINE_ID/audit.head")
echo "audit head: $head"
rankplan verify "runs/$CI_PIPELINE_ID" --head "$head"
if [ -n "${GITHUB_STEP_SUMMARY:-}" ]; then
	cat "runs/$CI_PIPELINE_ID/summary.md" >> "$GITHUB_STEP_SUMMARY"
	rankplan verify "runs/$CI_PIPELINE_ID" --head "$head" --markdown >> "$GITHUB_STEP_SUMMARY"
fi
