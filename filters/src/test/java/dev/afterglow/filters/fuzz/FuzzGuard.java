package dev.afterglow.filters.fuzz;

import java.io.FileDescriptor;
import java.io.FileOutputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import net.jqwik.api.lifecycle.AroundPropertyHook;
import net.jqwik.api.lifecycle.AroundTryHook;
import net.jqwik.api.lifecycle.PropagationMode;
import net.jqwik.api.lifecycle.PropertyExecutionResult;
import net.jqwik.api.lifecycle.PropertyExecutor;
import net.jqwik.api.lifecycle.PropertyLifecycleContext;
import net.jqwik.api.lifecycle.TryExecutionResult;
import net.jqwik.api.lifecycle.TryExecutor;
import net.jqwik.api.lifecycle.TryLifecycleContext;

/**
 * Runs each fuzz target ({@link FuzzTarget}) with the number of inputs and the seed the build asks
 * for, and watches every input.
 *
 * <ul>
 *   <li>{@code -Dfuzz.tries=N}: inputs per target ({@value #DEFAULT_TRIES} in {@code mvn verify},
 *       a million in the {@code fuzz} profile).
 *   <li>{@code -Dfuzz.seed=S}: jqwik's random seed; {@value #DEFAULT_SEED} unless given, so the
 *       bounded run in {@code mvn verify} sees the same inputs every time; {@code random} lets jqwik
 *       pick one (the {@code fuzz} profile). The seed is printed with every result, and a failure
 *       prints the command that replays it.
 *   <li>An input that takes longer than {@code fuzz.slow-ms} (5000) fails the target with that
 *       input; one still running after {@code fuzz.hang-s} (60) is printed with the stack of the
 *       thread running it (on stderr and in {@value #HANG_REPORT}) and the JVM is halted, so a
 *       hang fails the build instead of stalling it.
 * </ul>
 *
 * One line per target reports inputs, time and inputs/s: the figures in DEVELOPERS.md come from it.
 * Targets run one at a time on one thread (jqwik's default), which the watchdog relies on.
 */
public final class FuzzGuard implements AroundPropertyHook, AroundTryHook {
    /** Inputs per target when the build does not say. */
    public static final int DEFAULT_TRIES = 2000;
    /** Seed when the build does not say. */
    public static final String DEFAULT_SEED = "20261202";

    private static final long SLOW_NANOS = Long.getLong("fuzz.slow-ms", 5000) * 1_000_000L;
    /** Where a hang is reported besides stderr, relative to the module directory Surefire runs in. */
    static final String HANG_REPORT = "target/fuzz-hang.txt";
    private static final long HANG_NANOS = Long.getLong("fuzz.hang-s", 60) * 1_000_000_000L;

    /** The input being run, read by the watchdog; null between inputs. */
    private static volatile Running running;

    private record Running(String target, List<Object> input, Thread thread, long startNanos) {
    }

    static {
        Thread watchdog = new Thread(FuzzGuard::watch, "fuzz-watchdog");
        watchdog.setDaemon(true);
        watchdog.start();
    }

    @Override
    public PropagationMode propagateTo() {
        return PropagationMode.ALL_DESCENDANTS;
    }

    @Override
    public PropertyExecutionResult aroundProperty(PropertyLifecycleContext context, PropertyExecutor property) {
        int tries = Integer.getInteger("fuzz.tries", DEFAULT_TRIES);
        String seed = System.getProperty("fuzz.seed", DEFAULT_SEED).strip();
        context.attributes().setTries(tries);
        if (!seed.isEmpty() && !seed.equals("random")) {
            context.attributes().setSeed(seed);
        }
        String target = context.containerClass().getSimpleName() + "#" + context.targetMethod().getName();
        long start = System.nanoTime();
        PropertyExecutionResult result = property.execute();
        double seconds = (System.nanoTime() - start) / 1e9;
        String usedSeed = result.seed().orElse(seed);
        System.out.printf(Locale.ROOT, "fuzz %s: %d inputs in %.1f s (%.0f/s), seed %s: %s%n",
                target, result.countTries(), seconds, result.countTries() / seconds, usedSeed, result.status());
        if (result.status() == PropertyExecutionResult.Status.FAILED) {
            System.out.printf(Locale.ROOT, "fuzz %s: replay with -Dtest='%s' -Dfuzz.seed=%s -Dfuzz.tries=%d%n",
                    target, target, usedSeed, result.countTries());
        }
        return result;
    }

    @Override
    public TryExecutionResult aroundTry(TryLifecycleContext context, TryExecutor aTry, List<Object> parameters) {
        long start = System.nanoTime();
        running = new Running(context.containerClass().getSimpleName() + "#" + context.label(), parameters,
                Thread.currentThread(), start);
        TryExecutionResult result;
        try {
            result = aTry.execute(parameters);
        } finally {
            running = null;
        }
        long took = System.nanoTime() - start;
        if (took > SLOW_NANOS && !result.isFalsified()) {
            return TryExecutionResult.falsified(new AssertionError(String.format(Locale.ROOT,
                    "input took %d ms > fuzz.slow-ms=%d ms", took / 1_000_000, SLOW_NANOS / 1_000_000)));
        }
        return result;
    }

    private static void watch() {
        while (true) {
            try {
                Thread.sleep(1000);
            } catch (InterruptedException e) {
                return;
            }
            Running r = running;
            if (r != null && System.nanoTime() - r.startNanos() > HANG_NANOS) {
                StringBuilder b = new StringBuilder("\nfuzz HANG in ").append(r.target())
                        .append(": one input running for more than fuzz.hang-s=").append(HANG_NANOS / 1_000_000_000L)
                        .append(" s; input: ").append(FuzzInputs.abbreviate(String.valueOf(r.input()))).append('\n');
                for (StackTraceElement e : r.thread().getStackTrace()) {
                    b.append("\tat ").append(e).append('\n');
                }
                report(b.toString());
                Runtime.getRuntime().halt(3);
            }
        }
    }

    /**
     * Writes a hang report where it survives the halt: straight to the process's stderr (Surefire's
     * capture of System.err is buffered and lost) and to {@value #HANG_REPORT}.
     */
    private static void report(String text) {
        byte[] bytes = text.getBytes(StandardCharsets.UTF_8);
        try (FileOutputStream err = new FileOutputStream(FileDescriptor.err)) {
            err.write(bytes);
        } catch (IOException ignored) {
            // the file below still has it
        }
        try {
            Path file = Path.of(HANG_REPORT);
            Files.createDirectories(file.getParent());
            Files.write(file, bytes);
        } catch (IOException ignored) {
            // stderr above still has it
        }
    }
}
