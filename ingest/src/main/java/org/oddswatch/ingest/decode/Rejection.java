package org.oddswatch.ingest.decode;

/** Why a record was not accepted: a reason code from {@link RejectReason} and a readable detail. */
public record Rejection(String reason, String detail) {
}
