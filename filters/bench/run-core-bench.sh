#!/usr/bin/env bash
# Runs the JMH benchmarks of the reconstruction core (filters/src/jmh/java, Maven profile 'bench')
# and keeps JMH's results as text and JSON.
#
# Usage: filters/bench/run-core-bench.sh [RESULTS_DIR] [JMH_ARG...]
#   RESULTS_DIR  folder for the results, created if needed; default bench-results/ at the
#                repository root (git-ignored)
#   JMH_ARG      more arguments for org.openjdk.jmh.Main, e.g. a benchmark regex (StageBenchmark)
#                or a parameter subset (-p stage=high-pass,complementary). No spaces inside one.
#
# Environment:
#   BENCH_SETTINGS   iteration settings, default "-f 1 -wi 3 -w 2s -i 5 -r 2s -prof gc": one fork,
#                    3 warm-up and 5 measured iterations of 2 s each, and JMH's GC profiler
#                    (gc.alloc.rate.norm = bytes allocated per event or per readout, expected ~0).
#                    JMH rejects an option given twice, so change them here, not in JMH_ARG.
#   BENCH_MVN_FLAGS  extra Maven flags, e.g. -o to stay offline once ~/.m2 holds the plugins.
#
# The whole suite (20 benchmarks) takes about 8 minutes. Run it on an otherwise idle machine: JMH
# measures wall-clock time, and other load on the 2 cores shows up directly in the scores.
#
# Writes RESULTS_DIR/core-YYYYmmdd-HHMMSS.txt (JMH's full output with the summary table at the end,
# after a header naming the commit and the machine's load) and core-YYYYmmdd-HHMMSS.json (the same
# results for tools).
set -euo pipefail

repo="$(cd "$(dirname "$0")/../.." && pwd)"
out="${1:-$repo/bench-results}"
shift || true
mkdir -p "$out"
out="$(cd "$out" && pwd)" # JMH runs in filters/, so hand it an absolute path
stamp="$(date +%Y%m%d-%H%M%S)"
text="$out/core-$stamp.txt"
json="$out/core-$stamp.json"

# Without a regex JMH runs every benchmark in the module's list: all of them are ours.
jmh_args="${BENCH_SETTINGS:--f 1 -wi 3 -w 2s -i 5 -r 2s -prof gc} -rf json -rff $json"
if [ "$#" -gt 0 ]; then
  jmh_args="$jmh_args $*"
fi

{
  echo "# afterglow core benchmarks, $(date -u +%Y-%m-%dT%H:%M:%SZ)"
  echo "# commit: $(git -C "$repo" rev-parse --short HEAD 2>/dev/null || echo unknown)$(git -C "$repo" diff --quiet 2>/dev/null || echo ' (uncommitted changes)')"
  echo "# cores: $(nproc), load average: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"
  echo "# jmh args: $jmh_args"
} > "$text"

cd "$repo"
# -pl filters without -am: exec:exec must run in this module only (the parent pom resolves from disk).
# Maven 3.8 prints colour resets even in batch mode; they are stripped from the kept text.
# shellcheck disable=SC2086
mvn -B -q ${BENCH_MVN_FLAGS:-} -Pbench -pl filters test-compile exec:exec -Djmh.args="$jmh_args" 2>&1 \
  | sed -u 's/\x1b\[[0-9;]*m//g' | tee -a "$text"

echo "results: $text"
echo "         $json"
