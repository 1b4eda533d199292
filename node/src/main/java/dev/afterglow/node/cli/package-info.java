/** The subcommands of the {@code afterglow} command line. */
package dev.afterglow.node.cli;
