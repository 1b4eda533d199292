package dev.afterglow.node.cli;

/** A {@code host:port} option value. */
record HostPort(String host, int port) {
    static HostPort parse(String option, String text) {
        int colon = text.lastIndexOf(':');
        if (colon <= 0 || colon == text.length() - 1) {
            throw new IllegalArgumentException(option + "=" + text + ": expected HOST:PORT");
        }
        int port;
        try {
            port = Integer.parseInt(text.substring(colon + 1));
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(option + "=" + text + ": port is not a number");
        }
        if (port < 1 || port > 65535) {
            throw new IllegalArgumentException(option + "=" + text + ": port outside [1, 65535]");
        }
        return new HostPort(text.substring(0, colon), port);
    }
}
