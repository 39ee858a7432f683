package org.oddswatch.alerts.engine;

import com.fasterxml.jackson.core.JsonGenerator;
import com.fasterxml.jackson.databind.JsonSerializer;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializerProvider;
import com.fasterxml.jackson.databind.module.SimpleModule;
import java.io.BufferedReader;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.io.Writer;
import java.util.HashMap;
import java.util.Map;
import java.util.function.Consumer;
import org.oddswatch.alerts.json.Json;
import org.oddswatch.alerts.lifecycle.Alert;
import org.oddswatch.estimator.calibration.BaselineModel;
import org.oddswatch.estimator.result.WindowEstimate;

/**
 * The calls a pipeline makes on its {@link AlertEngine}s, one JSON line each, in the order made, and
 * their re-run into fresh engines (with other rule settings). Re-running the calls gives exactly the
 * alerts the pipeline's engines would have given with those settings, since an engine's output is a
 * function of its calls alone. Numbers are written exactly (non-finite ones as {@code "NaN"} or
 * {@code "Infinity"} text), so the estimates the rules read come back unchanged.
 */
public final class RuleInputs {

    /** A new engine of {@code stream} with its baseline (null: none) and what must not change ({@code model}). */
    public static final String ENGINE = "engine";
    /** {@link AlertEngine#onEvent}. */
    public static final String EVENT = "event";
    /** {@link AlertEngine#onFinalEstimate}. */
    public static final String WINDOW = "window";
    /** {@link AlertEngine#onBaselinePeriodWindow}. */
    public static final String PERIOD_WINDOW = "periodWindow";

    /**
     * One engine call; {@code model} (of an {@link #ENGINE} call): what of the stream's definition
     * other rules settings must share, as the caller words it.
     */
    public record Call(String call, String stream, String model, BaselineModel baseline, Long time, String id,
                       double[] row, Boolean positive, WindowEstimate window) {
    }

    private static final ObjectMapper EXACT = Json.mapper().copy().registerModule(new SimpleModule("oddswatch-exact")
            .addSerializer(Double.class, new ExactDouble()).addSerializer(double.class, new ExactDouble()));

    private final Writer out;

    /** Writes the calls to {@code out} (not closed here). */
    public RuleInputs(Writer out) {
        this.out = out;
    }

    public void engine(String stream, String model, BaselineModel baseline) {
        write(new Call(ENGINE, stream, model, baseline, null, null, null, null, null));
    }

    public void event(String stream, long time, String id, double[] row, boolean positive) {
        write(new Call(EVENT, stream, null, null, time, id, row, positive, null));
    }

    public void window(WindowEstimate estimate, boolean baselinePeriod) {
        write(new Call(baselinePeriod ? PERIOD_WINDOW : WINDOW, estimate.stream(), null, null, null, null, null, null,
                estimate));
    }

    private void write(Call call) {
        try {
            out.write(EXACT.writeValueAsString(call));
            out.write('\n');
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /**
     * Re-runs recorded calls: each {@link #ENGINE} call makes the stream's engine by
     * {@code engines.make(stream, model, baseline)}, the other calls go to it, and every alert given goes to
     * {@code alerts} in the order given.
     *
     * @throws IOException when a line cannot be read or parsed
     */
    public static void rerun(BufferedReader calls, Engines engines,
                             Consumer<Alert> alerts) throws IOException {
        Map<String, AlertEngine> byStream = new HashMap<>();
        String line;
        while ((line = calls.readLine()) != null) {
            Call c = EXACT.readValue(line, Call.class);
            switch (c.call()) {
                case ENGINE -> byStream.put(c.stream(), engines.make(c.stream(), c.model(), c.baseline()));
                case EVENT -> byStream.get(c.stream()).onEvent(c.time(), c.id(), c.row(), c.positive());
                case WINDOW -> byStream.get(c.stream()).onFinalEstimate(c.window()).forEach(alerts);
                case PERIOD_WINDOW -> byStream.get(c.stream()).onBaselinePeriodWindow(c.window()).forEach(alerts);
                default -> throw new IOException("unknown rule-input call '" + c.call() + "'");
            }
        }
    }

    /** Makes the engine of a re-run stream. */
    @FunctionalInterface
    public interface Engines {
        /**
         * @param model the recorded {@link Call#model}
         * @throws IllegalArgumentException when the stream cannot be re-run (the message says why)
         */
        AlertEngine make(String stream, String model, BaselineModel baseline);
    }

    private static final class ExactDouble extends JsonSerializer<Double> {
        @Override
        public void serialize(Double value, JsonGenerator gen, SerializerProvider provider) throws IOException {
            gen.writeNumber(value);
        }
    }
}
