package org.oddswatch.ingest.replay;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectReader;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.dataformat.csv.CsvMapper;
import com.fasterxml.jackson.dataformat.csv.CsvParser;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayDeque;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Deque;
import java.util.List;
import java.util.function.LongConsumer;
import org.oddswatch.ingest.decode.RejectReason;
import org.oddswatch.ingest.decode.Unicode;

/**
 * Reads an event file record by record, never stopping at a bad record (ingest/README.md, "Replay").
 * Lines end at LF (one trailing CR dropped), numbered from 1; blank lines are skipped. JSON Lines:
 * each line is one record. CSV: the first row is the header; each later row becomes a JSON object of
 * its non-empty cells as text, a header {@code a/b} nesting {@code b} in {@code a}. A quoted value may
 * span {@link #MAX_ROW_LINES} lines and {@link #MAX_ROW_BYTES} bytes; a row that does not fit the
 * header, has broken quoting or invalid UTF-8 is {@code malformed-csv} under its first line's number,
 * and the further lines it took are read again as rows of their own.
 */
public final class EventFileReader {

    static final int MAX_ROW_LINES = 32;
    static final int MAX_ROW_BYTES = 1 << 20;

    private static final ObjectReader CSV_ROW = new CsvMapper()
            .enable(CsvParser.Feature.WRAP_AS_ARRAY)
            .readerFor(String[].class);

    private final InputStream in;
    private final LongConsumer bytesRead;
    private final byte[] chunk = new byte[1 << 16];
    private final ByteArrayOutputStream buffer = new ByteArrayOutputStream(256);
    /** Lines to be read again, in order. */
    private final Deque<byte[]> again = new ArrayDeque<>();
    private int position;
    private int limit;
    /** The number of the line last read. */
    private long number;

    private EventFileReader(InputStream in, LongConsumer bytesRead) {
        this.in = in;
        this.bytesRead = bytesRead;
    }

    public static void read(Path file, InputFormat format, RecordSink sink) throws IOException {
        read(file, format, sink, bytes -> { });
    }

    /**
     * As {@link #read(Path, InputFormat, RecordSink)}, telling {@code bytesRead} each chunk read (progress);
     * a null {@code format} is told by the file name ({@link InputFormat#of}).
     */
    public static void read(Path file, InputFormat format, RecordSink sink, LongConsumer bytesRead) throws IOException {
        try (InputStream in = Files.newInputStream(file)) {
            EventFileReader lines = new EventFileReader(in, bytesRead);
            if ((format == null ? InputFormat.of(file) : format) == InputFormat.CSV) {
                lines.readCsv(sink);
                return;
            }
            for (byte[] line; (line = lines.next()) != null; ) {
                if (!blank(line)) {
                    sink.json(line, lines.number);
                }
            }
        }
    }

    private void readCsv(RecordSink sink) throws IOException {
        String[] header = null;
        for (byte[] line; (line = next()) != null; ) {
            if (blank(line)) {
                continue;
            }
            long first = number;
            List<byte[]> frame = frame(line);
            byte[] bytes = join(frame);
            if (header == null && bytes.length >= 3 && (bytes[0] & 0xFF) == 0xEF && (bytes[1] & 0xFF) == 0xBB
                    && (bytes[2] & 0xFF) == 0xBF) {
                bytes = Arrays.copyOfRange(bytes, 3, bytes.length); // a byte order mark
            }
            String[] cells = null;
            String problem;
            if (quotes(bytes) % 2 == 1) {
                problem = "a quoted value opened on line " + first + " is not closed within " + MAX_ROW_LINES
                        + " lines or " + MAX_ROW_BYTES + " bytes";
            } else {
                try {
                    cells = cells(bytes);
                    problem = header == null || cells.length == header.length ? null
                            : cells.length + " cells where the header has " + header.length;
                } catch (IOException e) {
                    problem = e.getMessage();
                }
            }
            if (problem == null && header == null) {
                header = cells;
            } else if (problem == null) {
                sink.tree(row(header, cells), bytes, first);
            } else if (header == null) {
                throw new IOException("line " + first + ": the CSV header cannot be read: " + problem);
            } else {
                for (int i = frame.size() - 1; i > 0; i--) { // read the lines it took again
                    again.addFirst(frame.get(i));
                }
                number -= frame.size() - 1;
                sink.unreadable(frame.size() > 1 ? line : bytes, first, RejectReason.MALFORMED_CSV, problem);
            }
        }
    }

    /** A row's lines: the first, and while a quote is open the following ones, within the bounds. */
    private List<byte[]> frame(byte[] line) throws IOException {
        List<byte[]> frame = new ArrayList<>(List.of(line));
        int quotes = quotes(line);
        int bytes = line.length;
        byte[] more;
        while (quotes % 2 == 1 && frame.size() < MAX_ROW_LINES && bytes <= MAX_ROW_BYTES
                && (more = next()) != null) {
            frame.add(more);
            quotes += quotes(more);
            bytes += more.length + 1;
        }
        return frame;
    }

    private static byte[] join(List<byte[]> lines) {
        ByteArrayOutputStream joined = new ByteArrayOutputStream();
        joined.writeBytes(lines.get(0));
        for (byte[] line : lines.subList(1, lines.size())) {
            joined.write('\n');
            joined.writeBytes(line);
        }
        return joined.toByteArray();
    }

    private static String[] cells(byte[] bytes) throws IOException {
        if (Unicode.firstInvalidUtf8(bytes, 0, bytes.length) >= 0) {
            throw new IOException("not valid UTF-8");
        }
        List<String[]> rows;
        try {
            rows = CSV_ROW.<String[]>readValues(new String(bytes, StandardCharsets.UTF_8)).readAll();
        } catch (RuntimeException e) {
            throw new IOException(e.getMessage(), e);
        }
        if (rows.size() != 1) {
            throw new IOException("expected one CSV row, found " + rows.size());
        }
        return rows.get(0);
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
                JsonNode child = parent.get(path[p]);
                parent = child instanceof ObjectNode o ? o : parent.putObject(path[p]);
            }
            parent.put(path[path.length - 1], cells[i]);
        }
        return row;
    }

    private static int quotes(byte[] bytes) {
        int count = 0;
        for (byte b : bytes) {
            count += b == '"' ? 1 : 0;
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

    /** The next line without its LF and one trailing CR, or null at the end of the file. */
    private byte[] next() throws IOException {
        byte[] line = again.isEmpty() ? read() : again.removeFirst();
        number += line == null ? 0 : 1;
        return line;
    }

    private byte[] read() throws IOException {
        buffer.reset();
        while (true) {
            if (position == limit) {
                limit = Math.max(in.read(chunk), 0);
                position = 0;
                if (limit == 0) {
                    return buffer.size() == 0 ? null : line();
                }
                bytesRead.accept(limit);
            }
            int start = position;
            while (position < limit && chunk[position] != '\n') {
                position++;
            }
            buffer.write(chunk, start, position - start);
            if (position < limit) {
                position++;
                return line();
            }
        }
    }

    private byte[] line() {
        byte[] line = buffer.toByteArray();
        return line.length > 0 && line[line.length - 1] == '\r' ? Arrays.copyOf(line, line.length - 1) : line;
    }
}
