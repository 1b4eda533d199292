package dev.afterglow.node.pipeline;

import dev.afterglow.filters.EventBatch;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.codec.DecodeResult;
import dev.afterglow.filters.codec.EventPacketCodec;
import dev.afterglow.filters.readout.ToneMapper;
import dev.afterglow.node.config.NodeConfig;
import dev.afterglow.node.config.ToneMapText;
import java.nio.ByteBuffer;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;

/**
 * Runs every configured chain (sensor defaults and listed sensors) over a short generated stream
 * before the node accepts sensors, so the JIT has compiled decoding, the stages, readout and the
 * tone map by the time a real sensor's first packets arrive; otherwise its first few hundred
 * milliseconds are processed by the interpreter and shed against the latency budget. Takes a
 * bounded time (about {@value #BUDGET_MS} ms) on the calling thread.
 */
public final class ChainWarmup {
    static final long BUDGET_MS = 800;
    private static final int WIDTH = 160;
    private static final int HEIGHT = 120;
    private static final long SCENE_US = 300_000;
    private static final int PACKET_US = 1_000;
    private static final int ROUNDS = 40;
    private static final int EVENTS_PER_PACKET = 1_000;

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
        long deadline = System.nanoTime() + BUDGET_MS * 1_000_000;
        List<byte[]> packets = new ArrayList<>();
        List<Long> bases = new ArrayList<>();
        SplittableRandom random = new SplittableRandom(1);
        EventBatch step = new EventBatch(EVENTS_PER_PACKET);
        for (long t = 0; t < SCENE_US; t += PACKET_US) {
            // An edge sweeping across the image (correlated events) plus uniform noise.
            step.reset(t);
            int edge = (int) (t * WIDTH / SCENE_US);
            for (int k = 0; k < EVENTS_PER_PACKET; k++) {
                boolean noise = k % 5 == 0;
                int x = noise ? random.nextInt(WIDTH) : Math.min(WIDTH - 1, edge + random.nextInt(3));
                step.add(x, random.nextInt(HEIGHT), t + (long) k * PACKET_US / EVENTS_PER_PACKET, k % 2 == 0 ? 1 : -1);
            }
            packets.add(EventPacketCodec.encode(step));
            bases.add(t);
        }
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
