package org.oddswatch.ingest.http;

import static org.junit.jupiter.api.Assertions.assertEquals;

import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.net.InetSocketAddress;
import java.net.URI;
import java.net.http.HttpClient;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.alerts.lifecycle.AlertState;
import org.oddswatch.alerts.lifecycle.AlertSubject;
import org.oddswatch.alerts.live.LiveHistory;
import org.oddswatch.alerts.live.LiveSite;
import org.oddswatch.alerts.output.Published;
import org.oddswatch.estimator.result.WindowEstimate;
import org.oddswatch.estimator.result.WindowStatus;

/**
 * How fast the live API answers over HTTP on the loopback address with 50 streams, each with the
 * full {@value LiveHistory#WINDOWS} final windows kept (estimate lines of the size the house
 * definition publishes: five strata, four coefficients, calibration, drift and CUSUM values), 50
 * open alerts and a {@code /status}-shaped snapshot of 50 streams. Per path: 50 warm-up requests,
 * then 300 timed ones, one at a time; median, 95th percentile and largest wall time per answer, and
 * the body size. Writes {@code target/benchmark-live-api.md}. The target (an answer within 100 ms)
 * is judged there, never asserted.
 */
@Tag("benchmark")
class LiveApiBenchmarkTest {

    private static final int STREAMS = 50;
    private static final Instant START = Instant.parse("2024-01-01T00:00:00Z");

    /** A final estimate line shaped like the house definition's (values made up, sizes real). */
    private static String estimateJson(String stream, Instant start, Instant end) {
        StringBuilder strata = new StringBuilder();
        for (String clinic : List.of("harbourside", "millbrook", "fernhill", "eastgate", "stonebridge")) {
            strata.append(strata.length() == 0 ? "" : ",").append("{\"term\":\"clinic\",\"level\":\"").append(clinic)
                    .append("\",\"events\":2094,\"cases\":111,\"value\":0.05300859598853868,\"lower\":0.044204671889799374,\"upper\":0.0634495351862927}");
        }
        StringBuilder coefficients = new StringBuilder("{\"term\":\"intercept\",\"coef\":-3.5145319594764524,\"se\":0.14628175942866453,\"z\":-24.025770357173904,\"p\":1.496071782630241E-127}");
        for (String term : List.of("household_contact", "recent_travel", "age_band", "sex")) {
            coefficients.append(",{\"term\":\"").append(term).append("\",\"level\":\"yes\",\"reference\":\"no\",\"coef\":0.825385151624796,\"se\":0.10044768135033774,\"z\":8.217065247589417,\"p\":2.0854361786478696E-16,\"oddsRatio\":2.2827598046845123,\"lower\":1.8748174859308704,\"upper\":2.779466462729277,\"interval\":\"wald\",\"profileLower\":1.8742193903489641,\"profileUpper\":2.7792896162288683,\"lrChiSquare\":65.5078637318079,\"lrDf\":1,\"lrP\":5.78825431791325E-16}");
        }
        return "{\"stream\":\"" + stream + "\",\"windowStart\":\"" + start + "\",\"windowEnd\":\"" + end
                + "\",\"status\":\"final\",\"events\":7956,\"cases\":428,\"prevalence\":{\"value\":0.05379587732528909,\"lower\":0.0490501823946482,\"upper\":0.05897225288487125,\"method\":\"wilson\"},"
                + "\"strata\":[" + strata + "],\"fit\":{\"state\":\"converged\",\"method\":\"newton\",\"events\":7956,\"iterations\":3,\"warmStart\":true,\"logLikelihood\":-1611.6403404461444,\"nullLogLikelihood\":-1667.1305193585008,\"dropped\":[]},"
                + "\"coefficients\":[" + coefficients + "],"
                + "\"calibration\":{\"events\":7956,\"observed\":428,\"expected\":406.1,\"observedExpected\":1.054,\"oeLower\":0.956,\"oeUpper\":1.159,\"intercept\":0.05,\"interceptSe\":0.0474,\"slope\":1.02,\"slopeSe\":0.0863,\"hosmerLemeshow\":8.45,\"hosmerLemeshowGroups\":10,\"hosmerLemeshowP\":0.39,\"brier\":0.0503,\"cStatistic\":0.70},"
                + "\"notes\":[],\"drift\":[{\"rule\":\"odds-ratio-drift\",\"subject\":{\"term\":\"household_contact\",\"level\":\"yes\"},\"z\":0.81}],"
                + "\"cusum\":[{\"rule\":\"bernoulli-cusum-up\",\"subject\":{\"term\":\"calibration\"},\"value\":1.2,\"max\":2.3,\"limit\":8.0,\"zone\":\"inside\",\"events\":120000,\"excursion\":{\"start\":\"" + start + "\",\"events\":812,\"positives\":51,\"expected\":44.2}}]}";
    }

    @Test
    void theApiAnswersWith50StreamsOf120Windows() throws Exception {
        LiveHistory history = new LiveHistory();
        List<Map<String, Object>> streams = new ArrayList<>();
        int bytes = 0;
        for (int s = 0; s < STREAMS; s++) {
            String stream = "respiratory-by-region/region-" + s;
            for (int w = 0; w < LiveHistory.WINDOWS; w++) {
                Instant start = START.plus(Duration.ofDays(7L * w));
                Instant end = start.plus(Duration.ofDays(28));
                WindowEstimate e = new WindowEstimate(stream, start, end, WindowStatus.FINAL, 7956, 428, null, null,
                        null, null, null, null);
                String json = estimateJson(stream, start, end);
                bytes = json.length();
                history.estimate(e, new Published("respiratory-by-region", stream + "|" + end, json));
            }
            Alert a = new Alert("episode-" + s, stream, "odds-ratio-drift", new AlertSubject("household_contact", "yes"),
                    AlertState.RAISED, START, START.plus(Duration.ofDays(28)), "odds-ratio-z", 4.2, null, 3.1, 2.0, 3.5,
                    2.0, null, 7956, "The odds ratio of household_contact=yes ... (message text of about 400 characters) "
                    + "x".repeat(300), "oddswatch replay --config deploy/examples/respiratory.yaml --topic clinic-tests --out r");
            history.alert(a, new Published("respiratory-by-region", a.id(), Json.write(a)));
            Map<String, Object> row = new LinkedHashMap<>();
            row.put("stream", stream);
            row.put("monitor", "respiratory-by-region");
            row.put("watermark", START.plus(Duration.ofDays(7L * LiveHistory.WINDOWS)).toString());
            row.put("finalWindows", LiveHistory.WINDOWS);
            row.put("baseline", "frozen");
            row.put("counts", Map.of("consumed", 1_000_000, "outcomes", Map.of("accepted", 990_000, "rejected", 10_000),
                    "reasons", Map.of("bad-time", 5_000, "malformed-json", 5_000)));
            row.put("gaps", List.of());
            streams.add(row);
        }
        Map<String, Object> status = Map.of("state", "ready", "counts", Map.of("consumed", 50_000_000),
                "partitions", List.of(Map.of("topic", "clinic-tests", "partition", 0, "rebuilding", false)),
                "inputs", List.of(Map.of("input", "clinic-tests-0", "rebuilt", 0, "streams", streams)));
        LiveSite site = new LiveSite(history, () -> status);
        PrometheusMeterRegistry registry = new PrometheusMeterRegistry(PrometheusConfig.DEFAULT);
        HttpClient client = HttpClient.newHttpClient();
        StringBuilder report = new StringBuilder("# Live API answer time, 50 streams\n\n"
                + "Loopback HTTP, one request at a time; " + STREAMS + " streams x " + LiveHistory.WINDOWS
                + " final windows kept (estimate lines of " + bytes + " characters), " + STREAMS + " open alerts. "
                + "Machine: " + Runtime.getRuntime().availableProcessors() + " cores, load average "
                + String.format("%.1f", java.lang.management.ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage())
                + ".\n\n| path | median ms | 95th percentile ms | largest ms | body bytes |\n|---|---|---|---|---|\n");
        try (HttpEndpoints http = HttpEndpoints.start(new InetSocketAddress("127.0.0.1", 0), registry, () -> true,
                () -> status, site)) {
            for (String path : List.of("/api/streams", "/api/streams/respiratory-by-region%2Fregion-7/estimates?last=120",
                    "/api/streams/respiratory-by-region%2Fregion-7/estimates", "/api/alerts?recent=200", "/")) {
                HttpRequest request = HttpRequest.newBuilder(URI.create("http://127.0.0.1:" + http.port() + path)).build();
                int size = 0;
                for (int i = 0; i < 50; i++) {
                    size = client.send(request, HttpResponse.BodyHandlers.ofByteArray()).body().length;
                }
                double[] ms = new double[300];
                for (int i = 0; i < ms.length; i++) {
                    long t0 = System.nanoTime();
                    HttpResponse<byte[]> r = client.send(request, HttpResponse.BodyHandlers.ofByteArray());
                    ms[i] = (System.nanoTime() - t0) / 1e6;
                    assertEquals(200, r.statusCode());
                }
                Arrays.sort(ms);
                report.append(String.format("| `%s` | %.2f | %.2f | %.2f | %,d |%n", path, ms[ms.length / 2],
                        ms[(int) (ms.length * 0.95)], ms[ms.length - 1], size));
            }
        }
        Files.createDirectories(Path.of("target"));
        Files.writeString(Path.of("target", "benchmark-live-api.md"), report);
        System.out.println(report);
    }
}
