package org.oddswatch.ingest.pipeline;

/**
 * Where a record came from: a Kafka topic, partition and offset, or a line of a file.
 *
 * @param topic the topic, or null for a file
 * @param partition the partition, or -1
 * @param offset the offset, or -1
 * @param lineNumber the 1-based line of a file (first line of a multi-line CSV record), or -1
 */
public record RecordOrigin(String topic, int partition, long offset, long lineNumber) {

    public static RecordOrigin kafka(String topic, int partition, long offset) {
        return new RecordOrigin(topic, partition, offset, -1);
    }

    public static RecordOrigin line(long lineNumber) {
        return new RecordOrigin(null, -1, -1, lineNumber);
    }
}
