package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

/**
 * The Markov-chain run lengths of {@link BrookEvans} against a published table, so the chain that
 * {@link BernoulliCusumArlTest} relies on is checked on a case with known answers.
 */
class BrookEvansTest {

    @Test
    void markovChainReproducesThePublishedTable() {
        // Source: Montgomery, Introduction to Statistical Quality Control, tabular CUSUM ARL table, k = 0.5
        // (from memory; see docs/references.md); method: Brook & Evans 1972. Table values are rounded.
        assertEquals(168, BrookEvans.normalTwoSided(4, 0.5, 0, 400), 168 * 0.01);
        assertEquals(8.38, BrookEvans.normalTwoSided(4, 0.5, 1, 400), 0.05);
        assertEquals(465, BrookEvans.normalTwoSided(5, 0.5, 0, 400), 465 * 0.01);
        assertEquals(10.4, BrookEvans.normalTwoSided(5, 0.5, 1, 400), 0.06);
    }
}
