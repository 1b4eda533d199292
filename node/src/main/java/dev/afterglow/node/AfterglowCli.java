package dev.afterglow.node;

import dev.afterglow.node.assess.AssessCommand;
import dev.afterglow.node.assess.DenoiseRocCommand;
import dev.afterglow.node.cli.DemoCommand;
import dev.afterglow.node.cli.ExportEventsCommand;
import dev.afterglow.node.cli.FeedCommand;
import dev.afterglow.node.cli.ImportEventsCommand;
import dev.afterglow.node.cli.PinCommand;
import dev.afterglow.node.cli.RenderCommand;
import dev.afterglow.node.cli.ReplayCommand;
import dev.afterglow.node.cli.ServeCommand;
import dev.afterglow.node.cli.SurgeCommand;
import dev.afterglow.node.cli.WatchCommand;
import dev.afterglow.node.learned.TrainingSetCommand;
import picocli.CommandLine;
import picocli.CommandLine.Command;

/**
 * Entry point of the {@code afterglow} command. Subcommands: {@code serve} (run the node), {@code demo}
 * (node + synthetic sensor + subscriber on loopback), {@code feed} (act as a sensor), {@code watch}
 * (act as a subscriber), {@code surge} (load generator), {@code assess} (reconstruction quality report), {@code denoise-roc} (denoiser ROC curves), {@code training-set} (synthetic training data for learned reconstruction), {@code stages} (the chain description reference), {@code import-events} and {@code export-events} (plain-text event lists to and from recordings) {@code replay} (a recording into a node, as a sensor) {@code render} (a chain over a recording, offline) and {@code pin} (keep a sensor's flight recording now). Exit codes: 0 success, 2 bad usage, 1 runtime failure.
 */
@Command(name = "afterglow",
        mixinStandardHelpOptions = true,
        version = "afterglow 0.1.0",
        description = "Live event-camera intensity reconstruction.",
        subcommands = {ServeCommand.class, DemoCommand.class, FeedCommand.class, WatchCommand.class,
                SurgeCommand.class, AssessCommand.class, DenoiseRocCommand.class, TrainingSetCommand.class, StagesCommand.class,
                ImportEventsCommand.class, ExportEventsCommand.class, ReplayCommand.class, RenderCommand.class, PinCommand.class, CommandLine.HelpCommand.class})
public final class AfterglowCli implements Runnable {

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public void run() {
        throw new CommandLine.ParameterException(spec.commandLine(), "a subcommand is required (serve, demo, feed, watch, surge, assess, denoise-roc, training-set, stages, import-events, export-events, replay, render, pin)");
    }

    /** Builds the command line with one-line errors for bad options. */
    public static CommandLine commandLine() {
        CommandLine cl = new CommandLine(new AfterglowCli());
        cl.setParameterExceptionHandler((ex, args) -> {
            ex.getCommandLine().getErr().println("afterglow: " + ex.getMessage() + " (see --help)");
            return 2;
        });
        cl.setExecutionExceptionHandler((ex, line, parsed) -> {
            if (ex instanceof IllegalArgumentException) {
                line.getErr().println("afterglow: " + ex.getMessage());
                return 2;
            }
            if (ex instanceof javax.net.ssl.SSLException) {
                line.getErr().println("afterglow: " + ex.getMessage()); // the handshake's reason, without a stack trace
                return 1;
            }
            throw ex;
        });
        return cl;
    }

    public static void main(String[] args) {
        System.exit(commandLine().execute(args));
    }
}
