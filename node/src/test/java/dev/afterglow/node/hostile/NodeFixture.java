package dev.afterglow.node.hostile;

import java.util.Optional;
import java.util.concurrent.atomic.AtomicInteger;
import org.junit.jupiter.api.extension.AfterAllCallback;
import org.junit.jupiter.api.extension.BeforeAllCallback;
import org.junit.jupiter.api.extension.BeforeEachCallback;
import org.junit.jupiter.api.extension.ExtensionContext;
import org.junit.jupiter.api.extension.TestWatcher;

/**
 * One node process per test class, shown by its YAML. A test that fails may have left the node
 * wedged or exhausted, so the next test gets a fresh node and fails (or passes) for its own attack
 * only; the failed test's view of the node's last output goes to stderr.
 */
final class NodeFixture implements BeforeAllCallback, BeforeEachCallback, AfterAllCallback, TestWatcher {
    /** Heap of the node's JVM; the repository's soak ran at this size with RSS flat at about 304 MB. */
    static final int HEAP_MB = 256;

    final String yaml;
    final int directMb;
    /** The latency budget the configuration gives the legitimate sensors. */
    final double budgetMs;
    private final AtomicInteger ids = new AtomicInteger();
    private HostileNode node;
    private boolean dirty;

    NodeFixture(String yaml, int directMb, double budgetMs) {
        this.yaml = yaml;
        this.directMb = directMb;
        this.budgetMs = budgetMs;
    }

    /** The running node. */
    HostileNode node() {
        return node;
    }

    /** A sensor id not used before on this node. */
    String freshId(String prefix) {
        return prefix + "-" + ids.incrementAndGet();
    }

    @Override
    public void beforeAll(ExtensionContext context) throws Exception {
        node = HostileNode.start(yaml, HEAP_MB, directMb);
    }

    @Override
    public void beforeEach(ExtensionContext context) throws Exception {
        if (node == null || dirty || !node.alive()) {
            if (node != null) {
                node.close();
            }
            node = null;
            node = HostileNode.start(yaml, HEAP_MB, directMb);
            dirty = false;
        }
    }

    @Override
    public void testFailed(ExtensionContext context, Throwable cause) {
        dirty = true;
        if (node != null) {
            System.err.println("--- " + context.getDisplayName() + " failed; the node's last output:\n" + node.outputTail(40));
        }
    }

    @Override
    public void testAborted(ExtensionContext context, Throwable cause) {
        dirty = true;
    }

    @Override
    public void testDisabled(ExtensionContext context, Optional<String> reason) {
    }

    @Override
    public void afterAll(ExtensionContext context) {
        if (node != null) {
            node.close();
            node = null;
        }
    }
}
