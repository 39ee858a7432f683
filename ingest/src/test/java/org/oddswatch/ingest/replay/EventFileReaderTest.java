package org.oddswatch.ingest.replay;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.oddswatch.ingest.decode.RejectReason;

class EventFileReaderTest {

    @TempDir
    Path dir;

    /** Everything the reader reports, as text lines "kind line content". */
    private static final class Recorder implements RecordSink {
        final List<String> seen = new ArrayList<>();
        final List<byte[]> originals = new ArrayList<>();

        @Override
        public void json(byte[] value, long line) {
            seen.add("json " + line + " " + new String(value, StandardCharsets.UTF_8));
            originals.add(value);
        }

        @Override
        public void tree(ObjectNode row, byte[] original, long line) {
            seen.add("row " + line + " " + row);
            originals.add(original);
        }

        @Override
        public void unreadable(byte[] original, long line, String reason, String detail) {
            seen.add(reason + " " + line);
            originals.add(original);
        }
    }

    private Path file(String name, byte[] content) throws IOException {
        Path file = dir.resolve(name);
        Files.write(file, content);
        return file;
    }

    @Test
    void jsonLinesKeepBytesAndLineNumbers() throws Exception {
        Recorder recorder = new Recorder();
        EventFileReader.read(file("e.jsonl", "{\"a\":1}\r\n\n  \n{\"b\":2}\n{broken".getBytes(StandardCharsets.UTF_8)),
                InputFormat.JSONL, recorder);
        assertEquals(List.of("json 1 {\"a\":1}", "json 4 {\"b\":2}", "json 5 {broken"), recorder.seen);
    }

    @Test
    void csvRowsBecomeNestedTextObjects() throws Exception {
        String csv = "id,result,exposure/household,note\n"
                + "e1,positive,yes,\"one, with comma\"\n"
                + "\n"
                + "e2,negative,,\"two\nlines\"\n"
                + "e3,negative,no\n"
                + "e4,positive,no,\"unclosed\n";
        Recorder recorder = new Recorder();
        EventFileReader.read(file("e.csv", csv.getBytes(StandardCharsets.UTF_8)), InputFormat.of(dir.resolve("e.csv")),
                recorder);
        assertEquals(List.of(
                "row 2 {\"id\":\"e1\",\"result\":\"positive\",\"exposure\":{\"household\":\"yes\"},\"note\":\"one, with comma\"}",
                "row 4 {\"id\":\"e2\",\"result\":\"negative\",\"note\":\"two\\nlines\"}",
                RejectReason.MALFORMED_CSV + " 6",
                RejectReason.MALFORMED_CSV + " 7"), recorder.seen);
        assertArrayEquals("e3,negative,no".getBytes(StandardCharsets.UTF_8), recorder.originals.get(2));
    }

    /**
     * One unclosed quote on line 101 of 3,001 (header + 3,000 rows): that line is the only reject,
     * with its own line number, and the 2,999 other rows are read with theirs.
     */
    @Test
    void anUnclosedQuoteCostsItsOwnRowOnly() throws Exception {
        StringBuilder csv = new StringBuilder("id,result,note\n");
        for (int line = 2; line <= 3001; line++) {
            csv.append('e').append(line).append(",positive,")
                    .append(line == 101 ? "\"opened, never closed" : line % 7 == 0 ? "\"a, b\"" : "plain").append('\n');
        }
        Recorder recorder = new Recorder();
        EventFileReader.read(file("big.csv", csv.toString().getBytes(StandardCharsets.UTF_8)), InputFormat.CSV,
                recorder);
        assertEquals(3000, recorder.seen.size());
        assertEquals(RejectReason.MALFORMED_CSV + " 101", recorder.seen.get(99));
        assertArrayEquals("e101,positive,\"opened, never closed".getBytes(StandardCharsets.UTF_8),
                recorder.originals.get(99));
        for (int i = 0; i < 3000; i++) {
            int line = i + 2;
            if (line != 101) {
                assertEquals("row " + line + " {\"id\":\"e" + line + "\",\"result\":\"positive\",\"note\":\""
                        + (line % 7 == 0 ? "a, b" : "plain") + "\"}", recorder.seen.get(i));
            }
        }
    }

    /**
     * Two broken rows whose quotes pair up across a good row into a frame that does not fit the
     * header: each broken row costs itself only. (A frame that does fit the header is one row with
     * a line break in a value: CSV cannot tell the two apart.)
     */
    @Test
    void brokenQuotesThatPairUpAcrossRowsCostThemselvesOnly() throws Exception {
        String csv = "id,result\n"
                + "e2,\"positive\n"
                + "e3,negative\n"
                + "e4,negative\",x\n"
                + "e5,\"two\nlines\"\n";
        Recorder recorder = new Recorder();
        EventFileReader.read(file("pair.csv", csv.getBytes(StandardCharsets.UTF_8)), InputFormat.CSV, recorder);
        assertEquals(List.of(RejectReason.MALFORMED_CSV + " 2", "row 3 {\"id\":\"e3\",\"result\":\"negative\"}",
                RejectReason.MALFORMED_CSV + " 4", "row 5 {\"id\":\"e5\",\"result\":\"two\\nlines\"}"),
                recorder.seen);
    }

    @Test
    void invalidUtf8InACsvRowIsMalformed() throws Exception {
        ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        bytes.writeBytes("id,result\ne1,positive\ne2,".getBytes(StandardCharsets.UTF_8));
        bytes.write(0xC3);
        bytes.write(0x28);
        bytes.writeBytes("\ne3,negative\n".getBytes(StandardCharsets.UTF_8));
        Recorder recorder = new Recorder();
        EventFileReader.read(file("e.csv", bytes.toByteArray()), InputFormat.CSV, recorder);
        assertEquals(List.of("row 2 {\"id\":\"e1\",\"result\":\"positive\"}", RejectReason.MALFORMED_CSV + " 3",
                "row 4 {\"id\":\"e3\",\"result\":\"negative\"}"), recorder.seen);
    }

    @Test
    void aByteOrderMarkBeforeTheHeaderIsIgnored() throws Exception {
        ByteArrayOutputStream bytes = new ByteArrayOutputStream();
        bytes.write(0xEF);
        bytes.write(0xBB);
        bytes.write(0xBF);
        bytes.writeBytes("id,result\r\ne1,positive\r\n".getBytes(StandardCharsets.UTF_8));
        Recorder recorder = new Recorder();
        EventFileReader.read(file("bom.csv", bytes.toByteArray()), InputFormat.CSV, recorder);
        assertEquals(List.of("row 2 {\"id\":\"e1\",\"result\":\"positive\"}"), recorder.seen);
    }

    @Test
    void formats() {
        assertEquals(InputFormat.CSV, InputFormat.of(Path.of("tests.CSV")));
        assertEquals(InputFormat.JSONL, InputFormat.of(Path.of("tests.jsonl")));
        assertEquals(InputFormat.JSONL, InputFormat.parse("ndjson"));
        assertThrows(IllegalArgumentException.class, () -> InputFormat.parse("xml"));
    }
}
