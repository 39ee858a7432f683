package org.oddswatch.ingest.replay;

import com.fasterxml.jackson.databind.MappingIterator;
import com.fasterxml.jackson.databind.ObjectReader;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.csv.CsvMapper;
import com.fasterxml.jackson.dataformat.csv.CsvParser;
import java.io.ByteArrayOutputStream;
import java.io.FilterInputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.ByteBuffer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.function.LongConsumer;
import org.oddswatch.ingest.decode.RejectReason;

/**
 * Reads an event file record by record, never stopping at a bad record.
 *
 * <p>JSON Lines: every non-blank line is one record, passed on as its raw bytes (a trailing CR is
 * dropped). CSV (jackson-dataformat-csv): the first non-blank row is the header; each later row
 * becomes a JSON object of text values, so fields are read with JSON Pointers such as
 * {@code /result}. A header name containing {@code /} makes nested objects ({@code exposure/household}
 * is read by {@code /exposure/household}), so one definition can serve both formats. Empty cells are
 * left out (absent). A UTF-8 byte order mark before the header is ignored.
 *
 * <p>A quoted value may span lines, at most {@link #MAX_ROW_LINES} lines and {@link #MAX_ROW_BYTES}
 * bytes. A broken row costs only itself: a row with a different number of cells than the header,
 * broken quoting or invalid UTF-8 is reported as {@code malformed-csv} with its own line number in
 * the file; when it had gathered further lines (an unclosed quote), only its first line is rejected
 * and reading resumes at the line after it, so the lines it took are read again as rows of their
 * own.
 */
public final class EventFileReader {

    /** Most lines one CSV row (a quoted value with line breaks) may span. */
    static final int MAX_ROW_LINES = 32;
    /** Most bytes one CSV row may gather before its open quote counts as broken. */
    static final int MAX_ROW_BYTES = 1 << 20;

    private static final ObjectReader CSV_ROW = new CsvMapper()
            .enable(CsvParser.Feature.WRAP_AS_ARRAY)
            .readerFor(String[].class);

    private EventFileReader() {
    }

    public static void read(Path file, InputFormat format, RecordSink sink) throws IOException {
        read(file, format, sink, bytes -> { });
    }

    /** As {@link #read(Path, InputFormat, RecordSink)}, telling {@code bytesRead} each chunk read (progress). */
    public static void read(Path file, InputFormat format, RecordSink sink, LongConsumer bytesRead) throws IOException {
        try (InputStream in = counting(Files.newInputStream(file), bytesRead)) {
            if (format == InputFormat.CSV) {
                readCsv(in, sink);
            } else {
                readJsonLines(in, sink);
            }
        }
    }

    private static InputStream counting(InputStream in, LongConsumer bytesRead) {
        return new FilterInputStream(in) {
            @Override
            public int read(byte[] b, int off, int len) throws IOException {
                int n = super.read(b, off, len);
                if (n > 0) {
                    bytesRead.accept(n);
                }
                return n;
            }
        };
    }

    private static void readJsonLines(InputStream in, RecordSink sink) throws IOException {
        LineReader lines = new LineReader(in, false);
        byte[] line;
        while ((line = lines.next()) != null) {
            if (!blank(line)) {
                sink.json(line, lines.number());
            }
        }
    }

    private static void readCsv(InputStream in, RecordSink sink) throws IOException {
        LineReader lines = new LineReader(in, true);
        String[] header = null;
        byte[] line;
        while ((line = lines.next()) != null) {
            if (blank(line)) {
                continue;
            }
            long first = lines.number();
            RowFrame frame = frame(line, lines);
            byte[] bytes = frame.bytes();
            if (header == null && bytes.length >= 3 && (bytes[0] & 0xFF) == 0xEF && (bytes[1] & 0xFF) == 0xBB
                    && (bytes[2] & 0xFF) == 0xBF) {
                bytes = java.util.Arrays.copyOfRange(bytes, 3, bytes.length); // a UTF-8 byte order mark
            }
            String[] cells;
            String problem = frame.unclosed() ? "a quoted value opened on line " + first + " is not closed within "
                    + MAX_ROW_LINES + " lines or " + MAX_ROW_BYTES + " bytes" : null;
            try {
                cells = problem == null ? cells(bytes) : null;
            } catch (IOException e) {
                cells = null;
                problem = e.getMessage();
            }
            if (cells != null && header != null && cells.length != header.length) {
                problem = cells.length + " cells where the header has " + header.length;
                cells = null;
            }
            if (cells == null) {
                if (header == null) {
                    throw new IOException("line " + first + ": the CSV header cannot be read: " + problem);
                }
                if (frame.lines() > 1) {
                    // The row cost only itself: its first line is rejected and reading resumes at
                    // the line after it, so the lines it swallowed are read as rows of their own.
                    lines.pushBack(frame.lines() - 1);
                    bytes = line;
                }
                sink.unreadable(bytes, first, RejectReason.MALFORMED_CSV, problem);
                continue;
            }
            if (header == null) {
                header = cells;
                continue;
            }
            sink.tree(row(header, cells), bytes, first);
        }
    }

    /**
     * A row's lines: its first line, and while a quoted value is open the following lines, up to
     * {@link #MAX_ROW_LINES} lines and {@link #MAX_ROW_BYTES} bytes in all.
     *
     * @param lines how many lines the row took
     * @param unclosed true when a quote was still open at the bound or at the end of the file
     */
    private record RowFrame(byte[] bytes, int lines, boolean unclosed) {
    }

    private static RowFrame frame(byte[] line, LineReader lines) throws IOException {
        int quotes = quotes(line);
        if (quotes % 2 == 0) {
            return new RowFrame(line, 1, false);
        }
        ByteArrayOutputStream record = new ByteArrayOutputStream(line.length * 2 + 16);
        record.write(line);
        int taken = 1;
        while (quotes % 2 == 1) {
            if (taken == MAX_ROW_LINES || record.size() > MAX_ROW_BYTES) {
                return new RowFrame(record.toByteArray(), taken, true);
            }
            byte[] more = lines.next();
            if (more == null) {
                return new RowFrame(record.toByteArray(), taken, true);
            }
            taken++;
            record.write('\n');
            record.write(more);
            quotes += quotes(more);
        }
        return new RowFrame(record.toByteArray(), taken, false);
    }

    private static String[] cells(byte[] bytes) throws IOException {
        String text;
        try {
            text = StandardCharsets.UTF_8.newDecoder()
                    .onMalformedInput(CodingErrorAction.REPORT)
                    .onUnmappableCharacter(CodingErrorAction.REPORT)
                    .decode(ByteBuffer.wrap(bytes)).toString();
        } catch (CharacterCodingException e) {
            throw new IOException("not valid UTF-8");
        }
        try (MappingIterator<String[]> rows = CSV_ROW.readValues(text)) {
            List<String[]> all = new ArrayList<>(1);
            while (rows.hasNextValue()) {
                all.add(rows.nextValue());
            }
            if (all.size() != 1) {
                throw new IOException("expected one CSV row, found " + all.size());
            }
            return all.get(0);
        } catch (RuntimeException e) {
            throw new IOException(e.getMessage(), e);
        }
    }

    private static ObjectNode row(String[] header, String[] cells) {
        ObjectNode row = JsonNodeFactory.instance.objectNode();
        for (int i = 0; i < header.length; i++) {
            if (cells[i] == null || cells[i].isEmpty()) {
                continue;
            }
            String[] path = header[i].split("/", -1);
            ObjectNode parent = row;
            for (int p = 0; p < path.length - 1; p++) {
                com.fasterxml.jackson.databind.JsonNode child = parent.get(path[p]);
                parent = child instanceof ObjectNode o ? o : parent.putObject(path[p]);
            }
            parent.put(path[path.length - 1], cells[i]);
        }
        return row;
    }

    private static int quotes(byte[] bytes) {
        int count = 0;
        for (byte b : bytes) {
            if (b == '"') {
                count++;
            }
        }
        return count;
    }

    private static boolean blank(byte[] line) {
        for (byte b : line) {
            if (b != ' ' && b != '\t' && b != '\r') {
                return false;
            }
        }
        return true;
    }

    /**
     * Splits a byte stream at LF, dropping one trailing CR; counts lines from 1. The last
     * {@link #MAX_ROW_LINES} lines are kept, so that they can be read again ({@link #pushBack}).
     */
    private static final class LineReader {
        private final java.util.ArrayDeque<byte[]> recent = new java.util.ArrayDeque<>();
        private final java.util.ArrayDeque<byte[]> again = new java.util.ArrayDeque<>();
        private final InputStream in;
        private final byte[] chunk = new byte[1 << 16];
        private int position;
        private int limit;
        private final ByteArrayOutputStream buffer = new ByteArrayOutputStream(256);
        private long number;

        private final boolean keepRecent;

        LineReader(InputStream in, boolean keepRecent) {
            this.in = in;
            this.keepRecent = keepRecent;
        }

        /** Makes the last {@code count} lines read come again, in order (at most MAX_ROW_LINES - 1). */
        void pushBack(int count) {
            for (int i = 0; i < count; i++) {
                again.addFirst(recent.removeLast());
            }
            number -= count;
        }

        byte[] next() throws IOException {
            byte[] line = again.isEmpty() ? read() : again.removeFirst();
            if (line != null) {
                number++;
            }
            if (line != null && keepRecent) {
                recent.addLast(line);
                if (recent.size() > MAX_ROW_LINES) {
                    recent.removeFirst();
                }
            }
            return line;
        }

        private byte[] read() throws IOException {
            buffer.reset();
            boolean any = false;
            while (true) {
                if (position == limit) {
                    limit = in.read(chunk, 0, chunk.length);
                    position = 0;
                    if (limit <= 0) {
                        limit = 0;
                        if (!any) {
                            return null;
                        }
                        break;
                    }
                }
                any = true;
                int start = position;
                while (position < limit && chunk[position] != '\n') {
                    position++;
                }
                buffer.write(chunk, start, position - start);
                if (position < limit) {
                    position++;
                    break;
                }
            }
            byte[] line = buffer.toByteArray();
            if (line.length > 0 && line[line.length - 1] == '\r') {
                return java.util.Arrays.copyOf(line, line.length - 1);
            }
            return line;
        }

        long number() {
            return number;
        }
    }
}
