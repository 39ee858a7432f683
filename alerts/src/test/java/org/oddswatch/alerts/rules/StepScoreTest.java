package org.oddswatch.alerts.rules;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;

import org.junit.jupiter.api.Test;

/** The step's score statistic against R's Rao score test of an added column with a fixed offset. */
class StepScoreTest {

    @Test
    void signedRootOfRaosScoreTestWithTheInterceptReEstimated() {
        StepScore s = new StepScore();
        for (int i = 0; i < 60; i++) {
            s.add(-2 + 0.1 * (i % 7), i % 3 == 0 ? 1 : 0, i % 5 == 0 || i % 11 == 0);
        }
        // Source: R 4.2.2, glm(y ~ 1, offset = o, binomial) against glm(y ~ 1 + x, offset = o, binomial),
        // anova(test = "Rao"), both fitted to glm.control(epsilon = 1e-14): statistic 0.048517360768, signed root -0.220266567521
        // (alerts/src/test/reference/step_score.R)
        assertEquals(-0.220266567521, s.score().z(), 1e-9);
        assertEquals(0.048517360768, s.score().z() * s.score().z(), 1e-9);
    }

    @Test
    void undefinedWithoutBothOutcomesOrWithoutSpreadInTheColumn() {
        StepScore none = new StepScore();
        StepScore flat = new StepScore();
        for (int i = 0; i < 50; i++) {
            none.add(-2, i % 2, false);
            flat.add(-2, 1, i % 4 == 0);
        }
        assertNull(none.score());
        assertNull(flat.score());
    }
}
