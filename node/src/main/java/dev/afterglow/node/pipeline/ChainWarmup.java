package dev.afterglow.node.pipeline;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.filters.synth.SceneKind;
import dev.afterglow.filters.synth.SensorConfig;
import dev.afterglow.filters.synth.SyntheticSensor;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.ToneMapText;
import java.nio.ByteBuffer;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;

/**
 * Runs every configured chain (sensor defaults and listed sensors) over a short synthetic scene
 * before the node accepts sensors, so the JIT has compiled decoding, the stages, readout and the
 * tone map by the time a real sensor's first packets arrive; otherwise its first few hundred
 * milliseconds are processed by the interpreter and shed against the latency budget. Takes a
 * bounded time ({@value #BUDGET_MS} ms at most) on the calling thread.
 */
public final class ChainWarmup {
    static final long BUDGET_MS = 2_000;
    private static final int WIDTH = 160;
    private static final int HEIGHT = 120;
    private static final long SCENE_US = 1_000_000;
    private static final int PACKET_US = 1_000;
    private static final int ROUNDS = 12;

    private ChainWarmup() {
    }

    /** Warms every distinct chain and tone map of {@code config}. */
    public static void run(NodeConfig config) {
        Set<String> chains = new LinkedHashSet<>();
        Set<String> toneMaps = new LinkedHashSet<>();
        chains.add(config.sensorDefaults.chain);
        toneMaps.add(config.sensorDefaults.toneMap);
        for (dev.afterglow.node.config.SensorConfig s : config.sensors) {
            chains.add(s.chain);
            toneMaps.add(s.toneMap);
        }
        List<byte[]> packets = new ArrayList<>();
        List<Long> bases = new ArrayList<>();
        SyntheticSensor sensor = new SyntheticSensor(SceneKind.byLabel("parcel-line").create(WIDTH, HEIGHT, 1),
                SensorConfig.builder(WIDTH, HEIGHT).seed(1).build());
        EventBatch step = new EventBatch(1 << 16);
        for (long t = PACKET_US; t <= SCENE_US; t += PACKET_US) {
            step.reset(t - PACKET_US);
            sensor.step(t, step);
            if (step.size > 0) {
                packets.add(EventPacketCodec.encode(step));
                bases.add(step.timeBaseUs);
            }
        }
        long deadline = System.nanoTime() + BUDGET_MS * 1_000_000;
        EventPacketCodec codec = new EventPacketCodec(WIDTH, HEIGHT);
        DecodeResult result = new DecodeResult();
        EventBatch batch = new EventBatch(1 << 16);
        float[] log = new float[WIDTH * HEIGHT];
        byte[] gray = new byte[WIDTH * HEIGHT];
        List<ToneMapper> mappers = new ArrayList<>();
        for (String t : toneMaps) {
            mappers.add(new ToneMapper(ToneMapText.parse("tone-map", t)));
        }
        for (int round = 0; round < ROUNDS && System.nanoTime() < deadline; round++) {
            for (String description : chains) {
                Chain chain = Chain.build(description, WIDTH, HEIGHT);
                long shift = round * SCENE_US; // keep time moving forward across rounds
                for (int i = 0; i < packets.size() && System.nanoTime() < deadline; i++) {
                    byte[] p = packets.get(i);
                    codec.decode(ByteBuffer.wrap(p), p.length / EventPacketCodec.BYTES_PER_EVENT, bases.get(i) + shift, batch, result);
                    chain.process(batch);
                    if (i % 10 == 9) {
                        chain.reconstruction().readLog(bases.get(i) + shift + PACKET_US, log);
                        for (ToneMapper m : mappers) {
                            m.apply(log, log.length, gray);
                        }
                    }
                }
            }
        }
    }
}
