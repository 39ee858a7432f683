package org.oddswatch.ingest.decode;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import org.junit.jupiter.api.Test;
import org.oddswatch.ingest.definition.RecordLimits;

class ConfinedRecyclerTest {

    private static List<String> tokens(JsonFactory factory, byte[] json) throws IOException {
        List<String> out = new ArrayList<>();
        try (JsonParser parser = factory.createParser(json)) {
            JsonToken token;
            while ((token = parser.nextToken()) != null) {
                out.add(token + ":" + (token.isScalarValue() || token == JsonToken.FIELD_NAME ? parser.getText() : ""));
            }
        }
        return out;
    }

    @Test
    void parsersSharingTheOneRecyclerReadRecordAfterRecordExactlyAsTheDefaultPoolDoes() throws IOException {
        RecordLimits limits = RecordLimits.defaults();
        JsonFactory plain = RecordParser.factory(limits);
        JsonFactory confined = RecordParser.factory(limits, new ConfinedRecycler().pool);
        Random random = new Random(5);
        for (int i = 0; i < 300; i++) {
            // Short records, then now and then one with a long text (beyond the first buffer sizes)
            // and many names, so buffers grow and are handed back larger.
            int length = i % 25 == 0 ? 20_000 + random.nextInt(20_000) : random.nextInt(40);
            StringBuilder text = new StringBuilder();
            for (int c = 0; c < length; c++) {
                text.append((char) ('a' + random.nextInt(26)));
            }
            StringBuilder json = new StringBuilder("{\"id\":\"e-" + i + "\",\"note\":\"" + text + "\"");
            for (int m = 0; m < (i % 25 == 0 ? 400 : 3); m++) {
                json.append(",\"field").append(m).append("\":").append(random.nextInt(1000));
            }
            json.append(",\"list\":[1.5,true,null,\"x\u00e9\"]}");
            byte[] bytes = json.toString().getBytes(StandardCharsets.UTF_8);
            assertEquals(tokens(plain, bytes), tokens(confined, bytes), "record " + i);
        }
    }

    @Test
    void thePoolAlwaysGivesTheSameRecycler() {
        ConfinedRecycler recycler = new ConfinedRecycler();
        assertSame(recycler, recycler.pool.acquireAndLinkPooled());
        recycler.pool.releasePooled(recycler);
        assertSame(recycler, recycler.pool.acquirePooled());
    }
}
