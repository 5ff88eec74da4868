#!/usr/bin/env bash
# Real Slurm test: starts a one-node Slurm cluster on this machine, runs a
# manifest as a 4-task array job plus the dependent merge job written by
# `gridstage slurm-script`, and checks that the merged output holds the same
# numbers (content hashes, recomputed from the files) as a single-machine
# run. Then re-runs the manifest against the cache the array tasks filled and
# checks that nothing is solved again. Always stops the daemons it started.
#
# Usage: tools/slurm-check.sh [MANIFEST]   (default testdata/slurm/sweep.yaml)
# Needs root (it installs Debian's Slurm and munge and starts their daemons).
set -euo pipefail
repo=$(cd "$(dirname "$0")/.." && pwd)
manifest=$(realpath "${1:-$repo/testdata/slurm/sweep.yaml}")
tasks=4

# shellcheck source=slurm-cluster.sh
. "$repo/tools/slurm-cluster.sh"

work=$(mktemp -d /tmp/gridstage-slurm.XXXXXX)
chmod 755 "$work"
ok=0
finish() {
  cluster_stop
  if [ "$ok" = 1 ]; then
    rm -rf "$work"
  else
    echo "slurm-check: FAILED; files kept in $work" >&2
  fi
}
trap finish EXIT
trap 'exit 130' INT TERM

say() { echo "slurm-check: $*" >&2; }
fail() {
  say "$*"
  for f in "$work"/run/slurm/logs/*.log "$work"/cluster/log/*.log; do
    [ -f "$f" ] && { echo "--- $f" >&2; tail -n 40 "$f" >&2; }
  done
  exit 1
}

cluster_install

say "building gridstage"
(cd "$repo" && go build -o "$work/bin/gridstage" ./cmd/gridstage && go build -o "$work/bin/contenthashes" ./tools/contenthashes)
gs=$work/bin/gridstage

say "single-machine run of $manifest"
"$gs" run "$manifest" --out "$work/single" --cache off --log-format json >"$work/single.log" 2>&1 ||
  { cat "$work/single.log" >&2; fail "single-machine run failed"; }

cluster_start "$work/cluster"

say "writing and submitting the Slurm scripts ($tasks array tasks + merge)"
"$gs" slurm-script "$manifest" --tasks "$tasks" --out "$work/run" --cache "$work/cache"
bash "$work/run/slurm/submit.sh"
# shellcheck disable=SC1091
. "$work/run/slurm/jobs.env"

# The merge job leaves the queue last: it starts after every array task
# succeeded, and is cancelled if any failed.
cluster_wait "$MERGE_JOB" 600 || fail "the jobs did not finish in 600 s"

solve_states=$(cluster_job_state "$SOLVE_JOB")
merge_state=$(cluster_job_state "$MERGE_JOB")
say "solve job $SOLVE_JOB: $(echo "$solve_states" | sort | uniq -c | tr -s ' \n' ' ')"
say "merge job $MERGE_JOB: $merge_state"
[ "$(echo "$solve_states" | grep -c '^JobState=COMPLETED$')" = "$tasks" ] || fail "not every array task completed"
[ "$merge_state" = "JobState=COMPLETED" ] || fail "the merge job did not complete"

for i in $(seq 1 "$tasks"); do
  grep -q "\"shard\": \"$i/$tasks\"" "$work/run/shards/task-$i/shard.json" ||
    fail "task $i did not run shard $i/$tasks (taken from Slurm's array variables)"
done

say "comparing content hashes (recomputed from the files) with the single-machine run"
"$work/bin/contenthashes" "$work/single" >"$work/single.hashes"
"$work/bin/contenthashes" "$work/run" >"$work/merged.hashes"
if ! diff -u "$work/single.hashes" "$work/merged.hashes" >&2; then
  fail "merged output differs from the single-machine run"
fi
say "$(wc -l <"$work/merged.hashes") files match"
# The merged run record lists the same jobs, chain hashes and files as the
# single-machine run's (file paths aside).
if ! diff -u <(sed "s|$work/single/||" "$work/single/run.json") <(sed "s|$work/run/||" "$work/run/run.json") >&2; then
  fail "merged run record differs from the single-machine run's"
fi

say "re-running against the cache the array tasks filled"
"$gs" run "$manifest" --out "$work/warm" --cache "$work/cache" >"$work/warm.out" 2>&1 ||
  { cat "$work/warm.out" >&2; fail "warm re-run failed"; }
grep -q '[( ]0 solved,' "$work/warm.out" || { cat "$work/warm.out" >&2; fail "the warm re-run solved jobs again"; }

ok=1
say "passed"
