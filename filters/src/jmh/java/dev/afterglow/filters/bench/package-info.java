/**
 * JMH benchmarks of the reconstruction core, built and run only with the Maven profile
 * {@code bench}; the default build neither compiles nor runs them.
 *
 * <p>Every event benchmark replays one synthetic scene ({@link dev.afterglow.filters.bench.SyntheticScene}:
 * a 640x480 sensor at about 20 million events per second, 90% events from moving blobs, 10%
 * uniform background noise, both polarities), generated once per fork from a fixed seed and held
 * pre-decoded ({@link dev.afterglow.filters.EventBatch}es of
 * {@value dev.afterglow.filters.bench.SceneEvents#BATCH_EVENTS} events) and pre-encoded (packet
 * bytes). Each replay shifts the time base by the scene's period, so sensor time keeps moving and
 * the stages run in steady state. Throughput benchmarks count one operation per event, so their
 * score is events per second; readout benchmarks report microseconds per frame.
 *
 * <p>Run from the repository root:
 *
 * <pre>
 * mvn -B -Pbench -pl filters test-compile exec:exec -Djmh.args="-f 1 -wi 3 -w 2s -i 5 -r 2s -prof gc"
 * filters/bench/run-core-bench.sh [results-folder]
 * </pre>
 */
package dev.afterglow.filters.bench;
