package dev.afterglow.node.config;

import java.net.InetAddress;
import java.net.UnknownHostException;
import java.util.ArrayList;
import java.util.List;

/**
 * A list of networks in CIDR notation ({@code 10.1.0.0/16}, {@code ::1/128}, or a bare address
 * for one host) and the test whether an address lies in one of them. Immutable.
 */
public final class AddressFilter {
    private record Network(byte[] prefix, int bits) {
        boolean contains(byte[] address) {
            if (address.length != prefix.length) {
                return false;
            }
            int full = bits / 8;
            for (int i = 0; i < full; i++) {
                if (address[i] != prefix[i]) {
                    return false;
                }
            }
            int rest = bits % 8;
            if (rest == 0) {
                return true;
            }
            int mask = (0xFF << (8 - rest)) & 0xFF;
            return (address[full] & mask) == (prefix[full] & mask);
        }
    }

    private final List<Network> networks;
    private final List<String> text;

    private AddressFilter(List<Network> networks, List<String> text) {
        this.networks = networks;
        this.text = text;
    }

    /** Parses CIDR entries; {@code setting} names the list in errors. Host names are refused (no lookups). */
    public static AddressFilter parse(String setting, List<String> entries) {
        List<Network> nets = new ArrayList<>();
        for (int i = 0; i < entries.size(); i++) {
            String e = entries.get(i);
            String at = setting + "[" + i + "]";
            if (e == null || e.isBlank()) {
                throw new ConfigException(at + " is empty");
            }
            String[] parts = e.strip().split("/", -1);
            if (parts.length > 2 || !parts[0].matches("[0-9a-fA-F:.]+")) {
                throw new ConfigException(at + "=" + e + " is not an address or CIDR network");
            }
            byte[] address;
            try {
                address = InetAddress.getByName(parts[0]).getAddress(); // a literal: no lookup
            } catch (UnknownHostException ex) {
                throw new ConfigException(at + "=" + e + " is not an address", ex);
            }
            int max = address.length * 8;
            int bits = max;
            if (parts.length == 2) {
                try {
                    bits = Integer.parseInt(parts[1]);
                } catch (NumberFormatException ex) {
                    throw new ConfigException(at + "=" + e + ": prefix length is not a number", ex);
                }
                if (bits < 0 || bits > max) {
                    throw new ConfigException(at + "=" + e + ": prefix length " + bits + " outside 0.." + max);
                }
            }
            nets.add(new Network(address, bits));
        }
        return new AddressFilter(List.copyOf(nets), List.copyOf(entries));
    }

    /** True if {@code address} lies in one of the networks. */
    public boolean allows(InetAddress address) {
        byte[] a = address.getAddress();
        for (Network n : networks) {
            if (n.contains(a)) {
                return true;
            }
        }
        return false;
    }

    @Override
    public String toString() {
        return String.join(", ", text);
    }
}
