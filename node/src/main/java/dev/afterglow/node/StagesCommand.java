package dev.afterglow.node;

import dev.afterglow.filters.EventStage;
import dev.afterglow.filters.chain.Chain;
import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.ChainSpecException;
import dev.afterglow.filters.chain.StageKind;
import dev.afterglow.filters.recon.InferringReconstruction;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Parameters;

/** Prints the chain description syntax and every stage's parameters, or validates a description. */
@Command(name = "stages", mixinStandardHelpOptions = true,
        description = "List the chain stages and their parameters, or check a chain description.")
public final class StagesCommand implements Callable<Integer> {

    @Parameters(arity = "0..1", paramLabel = "CHAIN", description = "A chain description to validate and print in canonical form.")
    String chain;

    @Option(names = "--size", paramLabel = "WxH", description = "Also build the chain for a sensor of this size: loads and "
            + "checks a learned-recon model (contract, one inference on zeros) and prints its identity.")
    String size;

    @Override
    public Integer call() {
        if (chain != null) {
            ChainSpec spec = ChainSpec.parse(chain);
            System.out.println(spec);
            if (size != null) {
                String[] wh = size.split("x");
                int w;
                int h;
                try {
                    w = Integer.parseInt(wh[0]);
                    h = Integer.parseInt(wh.length == 2 ? wh[1] : "");
                } catch (NumberFormatException e) {
                    throw new ChainSpecException("--size=" + size + ": expected WIDTHxHEIGHT, e.g. 346x260");
                }
                try (Chain built = Chain.build(spec, w, h)) {
                    for (EventStage stage : built.stages()) {
                        System.out.println("  " + stage.describe());
                    }
                    if (built.reconstruction() instanceof InferringReconstruction model) {
                        System.out.println("  model " + model.modelIdentity() + ": follows the contract at " + w + "x" + h);
                    }
                }
            }
            return 0;
        }
        System.out.println("Chain syntax: stage | stage | ... | reconstruction, e.g.");
        System.out.println("  " + ChainSpec.defaults());
        System.out.println("Times take us, ms or s; cut-off frequencies rad/s or Hz (a = 2*pi*f); rates (events or\n"
                + "inferences per second) Hz.\n");
        for (StageKind k : StageKind.values()) {
            System.out.print(k.help());
        }
        return 0;
    }
}
