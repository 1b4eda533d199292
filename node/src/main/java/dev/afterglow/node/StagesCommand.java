package dev.afterglow.node;

import dev.afterglow.filters.chain.ChainSpec;
import dev.afterglow.filters.chain.StageKind;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Parameters;

/** Prints the chain description syntax and every stage's parameters, or validates a description. */
@Command(name = "stages", mixinStandardHelpOptions = true,
        description = "List the chain stages and their parameters, or check a chain description.")
public final class StagesCommand implements Callable<Integer> {

    @Parameters(arity = "0..1", paramLabel = "CHAIN", description = "A chain description to validate and print in canonical form.")
    String chain;

    @Override
    public Integer call() {
        if (chain != null) {
            System.out.println(ChainSpec.parse(chain));
            return 0;
        }
        System.out.println("Chain syntax: stage | stage | ... | reconstruction, e.g.");
        System.out.println("  " + ChainSpec.defaults());
        System.out.println("Times take us, ms or s; frequencies rad/s or Hz (a = 2*pi*f).\n");
        for (StageKind k : StageKind.values()) {
            System.out.print(k.help());
        }
        return 0;
    }
}
