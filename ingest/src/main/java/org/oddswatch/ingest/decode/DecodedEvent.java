package org.oddswatch.ingest.decode;

/**
 * One event as a monitor sees it after decoding and term coding.
 *
 * @param id the event id in text form
 * @param timeMillis event time, epoch milliseconds
 * @param positive the outcome
 * @param splitValue the split value in text form, or null without a split
 * @param row the coded design row (intercept first), or null when a covariate is missing (the event
 *     counts toward prevalence but is left out of the fit)
 * @param stratum level index of the stratifying term, or -1
 * @param missingDetail why the row is null ({@code term: detail}), or null
 * @param absentTerms bit {@code t} set when term {@code t} (declaration order, the first 64) had no
 *     value (absent, null or empty); a stream tells from these a term missing from every event
 */
public record DecodedEvent(String id, long timeMillis, boolean positive, String splitValue, double[] row,
                           int stratum, String missingDetail, long absentTerms) {

    public boolean complete() {
        return row != null;
    }
}
