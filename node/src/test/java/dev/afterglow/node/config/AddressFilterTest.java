package dev.afterglow.node.config;

import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.net.InetAddress;
import java.util.List;
import org.junit.jupiter.api.Test;

class AddressFilterTest {

    private static InetAddress ip(String s) throws Exception {
        return InetAddress.getByName(s);
    }

    @Test
    void shouldMatchCidrNetworks() throws Exception {
        // CIDR prefix semantics as in RFC 4632, section 3.1
        AddressFilter f = AddressFilter.parse("udp-from", List.of("127.0.0.0/8", "10.1.128.0/17", "::1/128", "192.168.0.7"));
        assertTrue(f.allows(ip("127.200.3.4")));
        assertTrue(f.allows(ip("10.1.200.1")));
        assertFalse(f.allows(ip("10.1.127.255")));
        assertTrue(f.allows(ip("::1")));
        assertTrue(f.allows(ip("192.168.0.7")));
        assertFalse(f.allows(ip("192.168.0.8")));
        assertFalse(f.allows(ip("8.8.8.8")));
    }

    @Test
    void shouldRefuseNamesAndBadPrefixes() {
        assertThrows(ConfigException.class, () -> AddressFilter.parse("x", List.of("localhost")));
        assertThrows(ConfigException.class, () -> AddressFilter.parse("x", List.of("10.0.0.0/33")));
        assertThrows(ConfigException.class, () -> AddressFilter.parse("x", List.of("10.0.0.0/a")));
        assertThrows(ConfigException.class, () -> AddressFilter.parse("x", List.of("")));
    }
}
