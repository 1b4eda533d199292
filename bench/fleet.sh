#!/usr/bin/env bash
# Fleet benchmark: sensor -> Kafka -> node -> Kafka frames, on this machine, with one broker.
#   1. builds the node and its test classpath (the broker is Apache Kafka's own KRaft server, run by
#      the tests' KafkaTestBroker in its own JVM on loopback);
#   2. creates the event and frame topics (FLEET_PARTITIONS partitions each);
#   3. runs one node in the processing group and `afterglow surge --transport kafka` (sensors
#      produce straight to the event topic; frames are timed as read back from the frame topic),
#      then the same with two nodes in the group;
#   4. writes OUT_DIR/fleet.md: throughput, frame latency percentiles and CPU seconds per million
#      events of every process (broker, nodes, load generator), from /proc, for both runs.
#
# Usage: bench/fleet.sh [OUT_DIR]   (default bench-results/fleet-YYYYmmdd-HHMMSS)
# Environment: FLEET_RATES ["2.5M"] events/s per sensor; FLEET_SENSORS [4]; FLEET_STEP_SECONDS [10];
#   FLEET_PARTITIONS [4]; FLEET_WIDTH/FLEET_HEIGHT [640/480]; FLEET_FRAME_RATE [25] frames/s per sensor
#   on the frame topic (the nodes read out at 100 Hz); FLEET_PIPELINE_THREADS [1] per node;
#   FLEET_PACKET_US [1000] sensor time per packet (one record each); FLEET_BUDGET_MS [50] the nodes' latency budget; BENCH_MVN_FLAGS (e.g. -o). The first step also warms the JVMs up: give it a low rate.
set -euo pipefail
repo="$(cd "$(dirname "$0")/.." && pwd)"
out="${1:-$repo/bench-results/fleet-$(date +%Y%m%d-%H%M%S)}"
mkdir -p "$out"
out="$(cd "$out" && pwd)"
rates="${FLEET_RATES:-2.5M}"
sensors="${FLEET_SENSORS:-4}"
step="${FLEET_STEP_SECONDS:-10}"
partitions="${FLEET_PARTITIONS:-4}"
width="${FLEET_WIDTH:-640}"
frame_rate="${FLEET_FRAME_RATE:-25}"
pipeline_threads="${FLEET_PIPELINE_THREADS:-1}"
packet_us="${FLEET_PACKET_US:-1000}"
budget_ms="${FLEET_BUDGET_MS:-50}"
height="${FLEET_HEIGHT:-480}"
cd "$repo"

mvn -B -q ${BENCH_MVN_FLAGS:-} install -DskipTests -pl proto,filters,metrics
mvn -B -q ${BENCH_MVN_FLAGS:-} package test-compile -DskipTests -pl node
mvn -B -q ${BENCH_MVN_FLAGS:-} -pl node dependency:build-classpath -Dmdep.includeScope=test -Dmdep.outputFile="$out/cp.txt"
cp="$repo/node/target/test-classes:$repo/node/target/classes:$(cat "$out/cp.txt")"
jar="$repo/node/target/afterglow.jar"

free_port() { python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1",0)); print(s.getsockname()[1])'; }
cpu_ticks() { awk '{print $14+$15}' "/proc/$1/stat" 2>/dev/null || echo 0; }
pids=()
cleanup() { for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done; wait 2>/dev/null || true; }
trap cleanup EXIT

kport=$(free_port)
java -Xmx1g -cp "$cp" dev.afterglow.node.fleet.KafkaTestBroker "$out/broker" "$kport" > "$out/broker.log" 2>&1 &
broker=$!; pids+=("$broker")
for _ in $(seq 1 120); do grep -q '^ready' "$out/broker.log" && break; sleep 0.5; done
grep -q '^ready' "$out/broker.log" || { echo "broker did not start; see $out/broker.log"; exit 1; }
echo "fleet: broker on 127.0.0.1:$kport"

node_config() { # name http-port
  cat > "$out/$1.yaml" <<YAML
listen: {address: 127.0.0.1, ingest-tcp-port: -1, ingest-udp-port: -1, subscriber-port: -1, http-port: $2}
limits: {max-events-per-packet: 65536, pipeline-threads: $pipeline_threads}
sensor-defaults: {frame-rate-hz: 100, latency-budget-ms: $budget_ms,
  chain: "refractory(period=100us) | background-activity(window=5ms) | high-pass(cutoff=3rad/s, contrast=0.2)"}
kafka:
  bootstrap-servers: "127.0.0.1:$kport"
  consume: true
  group: fleet-bench
  member-name: $1
  event-topic: fleet.events
  frame-topic: fleet.frames
  frame-rate-hz: $frame_rate
  session-timeout-ms: 3000
YAML
}

run() { # label nodes
  local label="$1" n="$2"
  java -cp "$cp" dev.afterglow.node.fleet.FleetTopics "127.0.0.1:$kport" "$partitions" "fleet.events" "fleet.frames" >> "$out/topics.log" 2>&1
  local node_pids=() https=()
  for i in $(seq 1 "$n"); do
    local h; h=$(free_port)
    node_config "node$i" "$h"
    java -Xmx512m -jar "$jar" serve --config "$out/node$i.yaml" > "$out/$label-node$i.log" 2>&1 &
    node_pids+=($!); pids+=($!); https+=("$h")
  done
  for h in "${https[@]}"; do
    for _ in $(seq 1 120); do curl -sf "http://127.0.0.1:$h/health" > /dev/null && break; sleep 0.5; done
  done
  local hl; hl=$(printf '127.0.0.1:%s,' "${https[@]}"); hl="${hl%,}"
  local t0 b0; t0=$(date +%s.%N); b0=$(cpu_ticks "$broker")
  declare -A n0; for p in "${node_pids[@]}"; do n0[$p]=$(cpu_ticks "$p"); done
  java -Xmx1g -jar "$jar" surge --transport kafka --kafka "127.0.0.1:$kport" --event-topic fleet.events \
      --frame-topic fleet.frames --subscriber-rate "$frame_rate" --http "$hl" --sensors "$sensors" --rates "$rates" \
      --step-seconds "$step" --warmup-seconds 5 --width "$width" --height "$height" --packet-us "$packet_us" --out "$out/$label" \
      > "$out/$label-surge.log" 2>&1 &
  local surge=$!
  local sg=0
  while kill -0 "$surge" 2>/dev/null; do sg=$(cpu_ticks "$surge"); sleep 0.5; done
  wait "$surge" || { echo "surge failed; see $out/$label-surge.log"; tail -20 "$out/$label-surge.log"; }
  local t1 b1; t1=$(date +%s.%N); b1=$(cpu_ticks "$broker")
  local hz; hz=$(getconf CLK_TCK)
  {
    echo "### $label: $n node(s) in the group"
    echo
    echo '```'
    grep -E '^surge: (step|the node)' "$out/$label-surge.log" || true
    sed -n '/^step /,$p' "$out/$label-surge.log" | head -20 || true
    echo '```'
    echo
    printf 'CPU seconds over the run (%.0f s wall): broker %.1f' "$(echo "$t1 - $t0" | bc)" "$(echo "($b1 - $b0) / $hz" | bc -l)"
    for p in "${node_pids[@]}"; do printf ', node %.1f' "$(echo "($(cpu_ticks "$p") - ${n0[$p]}) / $hz" | bc -l)"; done
    printf ', load generator %.1f\n\n' "$(echo "$sg / $hz" | bc -l)"
  } >> "$out/fleet.md"
  for p in "${node_pids[@]}"; do kill "$p"; wait "$p" 2>/dev/null || true; done
}

echo "# Fleet benchmark ($(date -u +%FT%TZ), $(nproc) cores)" > "$out/fleet.md"
echo >> "$out/fleet.md"
run one 1
run two 2
cat "$out/fleet.md"
