#!/usr/bin/env bash
# Runs Afterglow's whole benchmark suite and writes one Markdown report:
#   1. the JMH benchmarks of the core (filters: decode, stages, chain, decode + chain, readout) and of
#      the node (frame rendering + encoding), with JSON results;
#   2. a node in its own process (bench/node.yaml: 640x480 sensors, refractory + background-activity
#      + high-pass, 100 frames/s), and the load generator (`afterglow surge`) in another process,
#      sweeping offered rates with 4 subscribers per sensor;
#   3. OUT_DIR/report.md: machine, JMH table, sweep table, consistency lines and the latency plot.
#
# Usage: bench/run-all.sh [--jfr] [OUT_DIR]
#   --jfr     also record the node with Java Flight Recorder (OUT_DIR/node.jfr, 'profile' settings)
#   OUT_DIR   default bench-results/run-YYYYmmdd-HHMMSS at the repository root (git-ignored)
#
# Environment (defaults in brackets):
#   BENCH_SETTINGS        JMH iteration settings ["-f 1 -wi 3 -w 2s -i 5 -r 2s -prof gc"]
#   JMH_FILTERS, JMH_NODE extra JMH arguments per module, e.g. a regex ChainBenchmark [none: all]
#   SKIP_JMH=1            skip both JMH suites
#   SURGE_RATES           events/s per sensor, one step each ["1M,2M,5M,10M,max"]
#   SURGE_STEP_SECONDS    measured seconds per step [10]
#   SURGE_WARMUP_SECONDS  seconds at each step's rate before it is measured [3]
#   SURGE_SENSORS         sensors (1..4 with bench/node.yaml) [1]
#   SURGE_SUBSCRIBERS     subscribers per sensor [4]
#   SURGE_TRANSPORT       tcp or udp [tcp]
#   NODE_JAVA_OPTS        the node's JVM options ["-Xmx256m"]
#   BENCH_MVN_FLAGS       extra Maven flags, e.g. -o to stay offline
#
# The node's resident memory (VmRSS) is sampled every 5 s into OUT_DIR/node-rss.csv; machine.txt
# gets its range from 10 to 70 s and over the last minute. A 10-minute soak at one rate:
#   SKIP_JMH=1 SURGE_RATES=5M SURGE_STEP_SECONDS=600 bench/run-all.sh
#
# Run it on an otherwise idle machine: every number here is wall-clock time, and the node, the load
# generator and JMH compete for the same cores. The whole default run takes about 20 minutes.
set -euo pipefail

jfr=0
if [ "${1:-}" = "--jfr" ]; then
  jfr=1
  shift
fi
repo="$(cd "$(dirname "$0")/.." && pwd)"
out="${1:-$repo/bench-results/run-$(date +%Y%m%d-%H%M%S)}"
mkdir -p "$out"
out="$(cd "$out" && pwd)"
settings="${BENCH_SETTINGS:--f 1 -wi 3 -w 2s -i 5 -r 2s -prof gc}"
jar="$repo/node/target/afterglow.jar"
cd "$repo"

strip() { sed -u 's/\x1b\[[0-9;]*m//g'; }

{
  echo "date: $(date -u +%Y-%m-%dT%H:%M:%SZ)"
  echo "commit: $(git rev-parse --short HEAD 2>/dev/null || echo unknown)$(git diff --quiet 2>/dev/null || echo ' (uncommitted changes)')"
  echo "cores (nproc): $(nproc)"
  echo "CPU: $(grep -m1 'model name' /proc/cpuinfo 2>/dev/null | cut -d: -f2- | sed 's/^ *//' || echo unknown)"
  echo "memory: $(grep -m1 MemTotal /proc/meminfo 2>/dev/null | awk '{printf "%.1f GiB", $2/1048576}' || echo unknown)"
  echo "OS: $(uname -sr)"
  echo "java: $(java -version 2>&1 | tr '\n' ' ' | sed 's/  */ /g')"
  echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"
  echo "JMH settings: $settings"
  echo "sweep: rates ${SURGE_RATES:-1M,2M,5M,10M,max} per sensor, ${SURGE_STEP_SECONDS:-10} s steps after ${SURGE_WARMUP_SECONDS:-3} s warm-up, ${SURGE_SENSORS:-1} sensor(s), ${SURGE_SUBSCRIBERS:-4} subscriber(s) each, ${SURGE_TRANSPORT:-tcp}; node: bench/node.yaml$([ $jfr = 1 ] && echo ', recorded with JFR (node.jfr)')"
} > "$out/machine.txt"

echo "== building the node jar"
# shellcheck disable=SC2086
mvn -B -q ${BENCH_MVN_FLAGS:-} package -DskipTests 2>&1 | strip

if [ "${SKIP_JMH:-0}" != 1 ]; then
  echo "== JMH: filters (core)"
  # shellcheck disable=SC2086
  mvn -B -q ${BENCH_MVN_FLAGS:-} -Pbench -pl filters test-compile exec:exec \
    -Djmh.args="$settings -rf json -rff $out/jmh-filters.json ${JMH_FILTERS:-}" 2>&1 | strip | tee "$out/jmh-filters.txt"
  echo "== JMH: node (frame encoding)"
  # -am builds the modules the node needs; exec runs in the node module only (see node/pom.xml).
  # shellcheck disable=SC2086
  mvn -B -q ${BENCH_MVN_FLAGS:-} -Pbench -pl node -am test-compile exec:exec -Dskip.bench=true \
    -Djmh.args="$settings -rf json -rff $out/jmh-node.json ${JMH_NODE:-}" 2>&1 | strip | tee "$out/jmh-node.txt"
fi

echo "== node (bench/node.yaml) and load generator"
read -r -a node_opts <<< "${NODE_JAVA_OPTS:--Xmx256m}"
if [ $jfr = 1 ]; then
  node_opts+=("-XX:StartFlightRecording=filename=$out/node.jfr,settings=profile,dumponexit=true")
fi
java ${node_opts[@]+"${node_opts[@]}"} -jar "$jar" serve --config "$repo/bench/node.yaml" > "$out/node.log" 2>&1 &
node_pid=$!
echo "node JVM options: ${node_opts[*]}" >> "$out/machine.txt"
# Resident memory of the node every 5 s (kB), until it exits.
(
  echo "seconds,rss_kb"
  start=$(date +%s)
  while kill -0 "$node_pid" 2>/dev/null; do
    rss=$(awk '/^VmRSS:/{print $2}' "/proc/$node_pid/status" 2>/dev/null || true)
    [ -n "$rss" ] && echo "$(( $(date +%s) - start )),$rss"
    sleep 5
  done
) > "$out/node-rss.csv" &
rss_pid=$!
stop_node() {
  if kill -0 "$node_pid" 2>/dev/null; then
    kill "$node_pid"
    wait "$node_pid" 2>/dev/null || true
  fi
}
trap stop_node EXIT
for _ in $(seq 1 100); do
  if grep -q "afterglow: http on" "$out/node.log" 2>/dev/null; then
    break
  fi
  if ! kill -0 "$node_pid" 2>/dev/null; then
    echo "the node did not start; see $out/node.log" >&2
    exit 1
  fi
  sleep 0.2
done

set +e
java -jar "$jar" surge --node 127.0.0.1:7401 --subscribe 127.0.0.1:7403 --http 127.0.0.1:7480 \
  --transport "${SURGE_TRANSPORT:-tcp}" --sensors "${SURGE_SENSORS:-1}" --subscribers "${SURGE_SUBSCRIBERS:-4}" \
  --rates "${SURGE_RATES:-1M,2M,5M,10M,max}" --step-seconds "${SURGE_STEP_SECONDS:-10}" \
  --warmup-seconds "${SURGE_WARMUP_SECONDS:-3}" --out "$out/surge" 2>&1 | tee "$out/surge.txt"
surge_status=${PIPESTATUS[0]}
set -e
stop_node
trap - EXIT
wait "$rss_pid" 2>/dev/null || true
awk -F, 'NR > 1 { t[NR] = $1; r[NR] = $2; n = NR }
  END {
    if (n < 2) { print "node RSS: no samples"; exit }
    last = t[n]; fmin = 1e12; fmax = 0; lmin = 1e12; lmax = 0
    for (i = 2; i <= n; i++) {
      if (t[i] >= 10 && t[i] <= 70) { if (r[i] < fmin) fmin = r[i]; if (r[i] > fmax) fmax = r[i] }
      if (t[i] >= last - 60) { if (r[i] < lmin) lmin = r[i]; if (r[i] > lmax) lmax = r[i] }
    }
    printf "node RSS (MiB): first minute after start-up (10 .. 70 s) %.0f .. %.0f, last minute %.0f .. %.0f, over %d s (node-rss.csv)\n", fmin/1024, fmax/1024, lmin/1024, lmax/1024, last
  }' "$out/node-rss.csv" >> "$out/machine.txt"
echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)" >> "$out/machine.txt"

java -cp "$jar" "$repo/bench/BenchReport.java" "$out"
echo "report: $out/report.md"
exit "$surge_status"
