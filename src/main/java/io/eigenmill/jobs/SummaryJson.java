package io.eigenmill.jobs;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import io.eigenmill.Version;
import io.eigenmill.math.Spectrum;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * {@code summary.json}: the machine-readable record of a run. Field names are part of the product's contract
 * (README, "Outputs"); numbers are written with full double precision.
 */
public final class SummaryJson {
  private static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);

  private SummaryJson() {}

  public static String render(RunResult run) {
    try {
      return JSON.writeValueAsString(toMap(run)) + "\n";
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("summary is not serialisable", e);
    }
  }

  public static Map<String, Object> toMap(RunResult run) {
    Map<String, Object> m = new LinkedHashMap<>();
    var s = run.plan().settings();
    m.put("product", "eigenmill");
    m.put("version", Version.current());
    m.put("job", s.name());
    m.put("kind", run.plan().kind());
    m.put("input", s.input().path());
    m.put("output", run.outputPath());
    if (run.fit() != null) {
      m.putAll(fitSection(run.fit()));
    }
    m.put("total_seconds", run.totalSeconds());
    return m;
  }

  static Map<String, Object> fitSection(FitResult fit) {
    Map<String, Object> m = new LinkedHashMap<>();
    PcaModel model = fit.model();
    Spectrum s = fit.spectrum();
    m.put("rows", model.rows());
    m.put("rows_read", fit.rowsRead());
    m.put("rows_dropped", fit.rowsDropped());
    m.put("missing_policy", fit.plan().settings().prepare().missing().word());
    m.put("imputed_cells", fit.imputedCells());
    Map<String, Long> missing = new LinkedHashMap<>();
    for (int j = 0; j < fit.missingCells().length; j++) {
      if (fit.missingCells()[j] > 0) {
        missing.put(fit.plan().features().get(j), fit.missingCells()[j]);
      }
    }
    m.put("missing_cells", missing);
    m.put("features", model.features());
    m.put("features_dropped_constant", fit.droppedConstant());
    m.put("scaling", model.scaling());
    m.put("method", model.method());
    m.put("method_reason", fit.plan().methodReason());
    m.put("read_path", fit.columnarRead() ? "columnar" : "rows");
    m.put("passes", fit.passes());
    m.put("components", model.k());
    m.put("components_rule", fit.kRule());
    m.put("eigenvalues", s.eigenvalues());
    m.put("eigenvalues_complete", model.eigenvaluesComplete());
    m.put("explained_variance_ratio", s.explainedRatios());
    m.put("cumulative_variance_ratio", s.cumulativeRatios());
    m.put("total_variance", s.totalVariance());
    m.put("means", model.means());
    m.put("scales", model.scales());
    m.put("schema_fingerprint", model.schemaFingerprint());
    m.put("blas", fit.blas());
    m.put("timings_seconds", fit.timings());
    m.put("warnings", List.copyOf(fit.warnings()));
    return m;
  }
}
