package dev.afterglow.node.config;

/** Where the node listens. Port 0 picks a free port (tests); -1 disables that listener. */
public final class ListenConfig {
    /** Bind address for every listener; loopback unless told otherwise. */
    public String address = "127.0.0.1";
    /** Sensors connect here over TCP. */
    public int ingestTcpPort = 7301;
    /** Sensors send datagrams here. */
    public int ingestUdpPort = 7302;
    /** Subscribers connect here over TCP. */
    public int subscriberPort = 7303;
    /** HTTP endpoints (/metrics, /health, /ready, /status) on the same address. */
    public int httpPort = 7380;

    void validate() {
        Checks.present("listen.address", address);
        Checks.range("listen.ingest-tcp-port", ingestTcpPort, -1, 65535);
        Checks.range("listen.ingest-udp-port", ingestUdpPort, -1, 65535);
        Checks.range("listen.subscriber-port", subscriberPort, -1, 65535);
        Checks.range("listen.http-port", httpPort, -1, 65535);
    }
}
