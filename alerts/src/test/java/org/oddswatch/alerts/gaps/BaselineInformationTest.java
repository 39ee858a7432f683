package org.oddswatch.alerts.gaps;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import org.junit.jupiter.api.Test;

class BaselineInformationTest {

    /**
     * Ten events of the rarer outcome per coefficient besides the intercept.
     * Source: Peduzzi et al., J Clin Epidemiol 1996;49(12):1373-1379 (events per variable >= 10).
     */
    @Test
    void tenOfTheRarerOutcomePerCoefficient() {
        // 3 columns (intercept + 2): 20 of the rarer outcome are enough, 19 are not, either way round
        assertNull(BaselineInformation.weakness(1000, 20, 3));
        assertNull(BaselineInformation.weakness(1000, 980, 3));
        assertEquals("too little information: 1000 events, of which 19 positive, for 2 coefficient(s) besides the "
                + "intercept; at least 20 of the rarer outcome (10 per coefficient) are needed",
                BaselineInformation.weakness(1000, 19, 3));
        assertEquals("too little information: 1000 events, of which 19 negative, for 2 coefficient(s) besides the "
                + "intercept; at least 20 of the rarer outcome (10 per coefficient) are needed",
                BaselineInformation.weakness(1000, 981, 3));
        // an intercept-only model still needs ten of each
        assertNull(BaselineInformation.weakness(50, 10, 1));
        assertEquals(true, BaselineInformation.weakness(50, 9, 1) != null);
    }

    /** The example that prompted the rule: 68 events, 3 positive; the count below 5 is withheld. */
    @Test
    void smallCountsAreWithheldInTheReason() {
        assertEquals("too little information: 68 events, of which <5 positive, for 1 coefficient(s) besides the "
                + "intercept; at least 10 of the rarer outcome (10 per coefficient) are needed",
                BaselineInformation.weakness(68, 3, 2));
    }
}
