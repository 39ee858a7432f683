package org.oddswatch.broker;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import kafka.server.BrokerServer;
import org.apache.kafka.common.network.ListenerName;
import org.junit.jupiter.api.Test;

/**
 * The embedded broker listens on the loopback interface only: every listening TCP socket of this
 * process on the broker's client and controller ports is bound to 127.0.0.1.
 */
class EmbeddedBrokerLoopbackTest {

    @Test
    void clientAndControllerPortsAreBoundToLoopbackOnly() throws Exception {
        int requested;
        try (java.net.ServerSocket free = new java.net.ServerSocket(0)) {
            requested = free.getLocalPort();
        }
        try (EmbeddedBroker broker = EmbeddedBroker.start(requested)) {
            assertEquals("127.0.0.1:" + requested, broker.bootstrapServers());
            BrokerServer server = broker.cluster().brokers().values().iterator().next();
            int client = server.boundPort(ListenerName.normalised(EmbeddedBroker.CLIENT_LISTENER));
            assertEquals(requested, client, "the requested client port is kept");
            int controller = broker.cluster().controllers().values().iterator().next()
                    .socketServer().boundPort(ListenerName.normalised("CONTROLLER"));
            Map<Integer, List<String>> listening = listeningAddresses();
            // Source: Linux proc(5), /proc/net/tcp and /proc/net/tcp6: local_address is the bound
            // address in hex, in 32-bit words of host (little-endian) byte order, and st 0A is
            // TCP_LISTEN. 127.0.0.1 reads 0100007F; a Java socket on an IPv6 stack shows it as the
            // IPv4-mapped ::ffff:127.0.0.1, 0000000000000000FFFF00000100007F. The wildcard address
            // reads 00000000 or 32 zeros.
            Set<String> loopback = Set.of("0100007F", "0000000000000000FFFF00000100007F");
            for (int port : List.of(client, controller)) {
                List<String> addresses = listening.get(port);
                assertTrue(addresses != null && !addresses.isEmpty(), "port " + port + " listens: " + listening);
                assertTrue(loopback.containsAll(addresses), "port " + port + " bound to 127.0.0.1 only: " + addresses);
            }
            // and clients reach the broker there
            broker.createTopics(List.of("loopback-check"), 1, Map.of());
        }
    }

    /** Listening TCP sockets by port, with their bound address in /proc's hex form. */
    private static Map<Integer, List<String>> listeningAddresses() throws IOException {
        Map<Integer, List<String>> out = new TreeMap<>();
        for (String file : List.of("/proc/net/tcp", "/proc/net/tcp6")) {
            Path path = Path.of(file);
            if (!Files.exists(path)) {
                continue;
            }
            List<String> lines = Files.readAllLines(path);
            for (String line : lines.subList(1, lines.size())) {
                String[] f = line.trim().split("\\s+");
                if (!f[3].equals("0A")) {
                    continue;
                }
                String[] local = f[1].split(":");
                out.computeIfAbsent(Integer.parseInt(local[1], 16), p -> new ArrayList<>()).add(local[0]);
            }
        }
        return out;
    }
}
