package io.eigenmill.record;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import io.eigenmill.Version;
import io.eigenmill.io.PcaModel;
import io.eigenmill.kmeans.ClusterResult;
import io.eigenmill.kmeans.LabelResult;
import io.eigenmill.monitor.DataDriftResult;
import io.eigenmill.monitor.DriftResult;
import io.eigenmill.monitor.MonitorResult;
import io.eigenmill.monitor.ReconstructionResult;
import io.eigenmill.pca.FitResult;
import io.eigenmill.pca.RandomizedAccuracy;
import io.eigenmill.pca.math.Spectrum;
import java.util.ArrayList;
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

  /** The summary with a {@code tables} block: the catalog tables the run wrote (output.table-prefix). */
  public static String render(RunResult run, List<Map<String, Object>> tables) {
    Map<String, Object> m = toMap(run);
    if (!tables.isEmpty()) {
      m.put("tables", tables);
    }
    try {
      return JSON.writeValueAsString(m) + "\n";
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("summary is not serialisable", e);
    }
  }

  public static Map<String, Object> toMap(RunResult run) {
    Map<String, Object> m = new LinkedHashMap<>();
    var s = run.plan().settings();
    m.put("product", "eigenmill");
    m.put("version", Version.current());
    // what the run ran on (the driver's class path; on a cluster, the cluster's Spark)
    m.put("spark", Version.spark());
    m.put("scala", Version.scala());
    m.put("job", s.name());
    m.put("kind", run.plan().kind());
    m.put("input", s.input().fromSnapshots() ? s.input().snapshots() : s.input().source());
    m.put("input_where", s.input().filtered() ? s.input().where() : null);
    m.put("source", s.input().fromSnapshots() ? "snapshots" : "table");
    m.put("layout", s.input().layout().word());
    if (run.plan().longInput() != null) {
      m.put("long_input", longSection(run.plan().longInput()));
    }
    m.put("output", run.outputPath());
    if (run.fit() != null) {
      m.putAll(fitSection(run.fit()));
      if (run.fit().snapshots() != null) {
        m.put("snapshots", snapshotSection(run.fit().snapshots()));
      }
      if (run.fit().groups() != null) {
        m.put("group_by", groupBySection(run.fit().groups()));
        m.put("groups", groupsSection(run.fit().groups()));
      }
    } else {
      m.put("model", modelSection(run.model(), s.apply().model()));
    }
    if (run.monitor() != null) {
      m.put("monitoring", monitorSection(run.monitor()));
    }
    if (run.reconstruction() != null) {
      m.put("reconstruction", reconstructionSection(run.reconstruction()));
    }
    if (run.drift() != null) {
      m.put("drift", driftSection(run.drift()));
    }
    if (run.clusters() != null) {
      m.put("clusters", clusterSection(run.clusters()));
    }
    if (run.dataDrift() != null) {
      m.put("data_drift", dataDriftSection(run.dataDrift()));
    }
    if (run.labels() != null) {
      m.put("labels", labelSection(run.labels()));
    }
    m.put("blas", io.eigenmill.math.Linalg.describe());
    m.put("timings_seconds", run.timings());
    m.put("warnings", run.warnings());
    m.put("total_seconds", run.totalSeconds());
    return m;
  }

  /** The pivot of a long table: its columns, the metrics (name, column, rows with a value), the rows it skipped. */
  static Map<String, Object> longSection(io.eigenmill.io.LongTable.View view) {
    Map<String, Object> m = new LinkedHashMap<>();
    var l = view.layout();
    m.put("entity", l.entity());
    m.put("time", l.timed() ? l.time() : null);
    m.put("bucket_seconds", l.timed() ? l.bucketMicros() / 1e6 : null);
    m.put("aggregate", l.aggregate().word());
    m.put("key_columns", view.keyColumns());
    m.put("metrics_found", view.discovered());
    var p = view.pivoted();
    List<Map<String, Object>> metrics = new java.util.ArrayList<>();
    for (int j = 0; j < view.metrics().size(); j++) {
      Map<String, Object> one = new LinkedHashMap<>();
      one.put("metric", view.metrics().get(j));
      one.put("column", view.columns().get(j));
      if (p != null) {
        one.put("rows_present", p.present()[j]);
        one.put("rows_missing", p.rows() - p.present()[j]);
      }
      metrics.add(one);
    }
    m.put("metrics", metrics);
    if (p != null) {
      m.put("long_rows_read", p.longRows());
      m.put("rows", p.rows());
      Map<String, Object> skipped = new LinkedHashMap<>();
      skipped.put("null_metric", p.nullMetric());
      skipped.put("other_metric", p.otherMetric());
      skipped.put("null_value", p.nullValue());
      skipped.put("nan_or_infinite_value", p.nonFinite());
      skipped.put("null_time", p.nullTime());
      m.put("long_rows_skipped", skipped);
      m.put("pivot_seconds", p.seconds());
    }
    return m;
  }

  /**
   * The snapshot store a fit wrote to ({@code written}: true) or merged from: its path, the key columns and each
   * key with its rows (read, and used in the moments).
   */
  static Map<String, Object> snapshotSection(io.eigenmill.pca.SnapshotUse use) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("store", use.store());
    m.put("written", use.written());
    m.put("key_columns", use.keyColumns());
    List<Map<String, Object>> keys = new java.util.ArrayList<>();
    for (var k : use.keys()) {
      Map<String, Object> key = new LinkedHashMap<>();
      Map<String, String> values = new LinkedHashMap<>();
      for (int i = 0; i < use.keyColumns().size(); i++) {
        values.put(use.keyColumns().get(i), k.values().get(i));
      }
      key.put("key", values);
      key.put("rows_read", k.rowsRead());
      key.put("rows_used", k.rowsUsed());
      keys.add(key);
    }
    m.put("keys", keys);
    return m;
  }

  /** How a grouped fit grouped: the columns, the row threshold, where the groups were solved, the counts. */
  static Map<String, Object> groupBySection(io.eigenmill.pca.Groups g) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("columns", g.by().names());
    m.put("min_group_rows", g.minRows());
    m.put("solved_on", g.onDriver() ? "driver" : "executors");
    m.put("groups", g.groups().size());
    m.put("groups_with_model", g.groups().size() - g.skipped());
    return m;
  }

  /**
   * Each group, by rows read (descending): its key, rows, and either its model's k, variance shares of the kept
   * components and total variance, or why it has none.
   */
  static List<Map<String, Object>> groupsSection(io.eigenmill.pca.Groups g) {
    List<Map<String, Object>> out = new java.util.ArrayList<>();
    for (io.eigenmill.pca.GroupFit f : g.groups()) {
      Map<String, Object> m = new LinkedHashMap<>();
      Map<String, String> key = new LinkedHashMap<>();
      for (int i = 0; i < g.by().size(); i++) {
        key.put(g.by().names().get(i), f.key().get(i));
      }
      m.put("key", key);
      m.put("rows_read", f.rowsRead());
      m.put("rows_used", f.rowsUsed());
      m.put("skipped", !f.hasModel());
      if (f.hasModel()) {
        PcaModel model = f.solved().model();
        m.put("components", model.k());
        double[] shares = f.solved().spectrum().varianceShares();
        m.put("variance_shares", java.util.Arrays.copyOf(shares, model.k()));
        m.put("total_variance", model.totalVariance());
        m.put("features_dropped", f.solved().dropped());
      } else {
        m.put("reason", f.skipReason());
      }
      out.add(m);
    }
    return out;
  }

  static Map<String, Object> modelSection(PcaModel model, String path) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("path", path);
    m.put("features", model.features());
    m.put("scaling", model.scaling());
    m.put("method", model.method().word());
    m.put("components", model.k());
    m.put("fitted_rows", model.rows());
    m.put("eigenvalues", model.eigenvalues());
    m.put("total_variance", model.totalVariance());
    m.put("schema_fingerprint", model.schemaFingerprint());
    m.put("written_by_version", model.productVersion());
    return m;
  }

  static Map<String, Object> monitorSection(MonitorResult r) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("rows_scored", r.rowsScored());
    m.put("flagged_t2", r.flaggedT2());
    m.put("flagged_q", r.flaggedQ());
    m.put("flagged_both", r.flaggedBoth());
    m.put("confidence", r.confidence());
    m.put("components", r.k());
    m.put("t2_limit", r.t2Limit());
    m.put("t2_limit_rule", r.t2LimitRule());
    m.put("q_limit", r.qLimit());
    m.put("q_limit_rule", r.qLimitRule());
    m.put("q_rule", r.qRule());
    m.put("q_h0", Double.isNaN(r.qH0()) ? null : r.qH0());
    if (r.qRule().equals("per group")) {
      // each row against its group's limits: the limits above are the ratio 1 (see the rules)
      m.put("unknown_group_rows", r.unknownGroupRows());
      m.put("unknown_groups", r.unknownGroups());
    }
    // 1 - confidence in decimal (0.01, not the binary difference 0.010000000000000009)
    double expectedShare = java.math.BigDecimal.ONE.subtract(java.math.BigDecimal.valueOf(r.confidence()))
        .doubleValue();
    m.put("expected_flagged_share", expectedShare);
    // beside flagged_t2 and flagged_q: what limits that hold flag, and the counts chance alone gives in 95% of runs
    m.put("expected_flagged", r.rowsScored() * expectedShare);
    m.put("expected_flagged_range", io.eigenmill.monitor.math.ControlLimits.chanceRange(r.rowsScored(),
        r.confidence(), io.eigenmill.monitor.math.ControlLimits.CHANCE_LEVEL));
    List<Map<String, Object>> top = new java.util.ArrayList<>();
    for (MonitorResult.FlaggedRow row : r.top()) {
      Map<String, Object> t = new LinkedHashMap<>();
      t.put("keys", row.keys());
      t.put("t2", row.t2());
      t.put("q", row.q());
      t.put("flag_t2", row.flaggedT2());
      t.put("flag_q", row.flaggedQ());
      Map<String, Double> c = new LinkedHashMap<>();
      row.qContributions().forEach(x -> c.put(x.feature(), x.value()));
      t.put("q_contributions", c);
      top.add(t);
    }
    m.put("top_rows", top);
    return m;
  }

  static Map<String, Object> reconstructionSection(ReconstructionResult r) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("components", r.k());
    m.put("rows", r.rows());
    List<Map<String, Object>> features = new java.util.ArrayList<>();
    for (ReconstructionResult.FeatureError e : r.features()) {
      Map<String, Object> f = new LinkedHashMap<>();
      f.put("feature", e.feature());
      f.put("rmse", e.rmse());
      f.put("max_abs_error", e.maxAbsError());
      f.put("variance_kept", e.varianceKept());
      features.add(f);
    }
    m.put("features", features);
    return m;
  }

  static Map<String, Object> driftSection(DriftResult r) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("compared_with", r.otherModel());
    m.put("principal_angles_deg", r.principalAnglesDegrees());
    m.put("variance_share_old", r.varianceShareOld());
    m.put("variance_share_new", r.varianceShareNew());
    Map<String, Double> shifts = new LinkedHashMap<>();
    r.meanShifts().forEach(x -> shifts.put(x.feature(), x.shiftInOldSd()));
    m.put("mean_shift_in_old_sd", shifts);
    return m;
  }

  static Map<String, Object> dataDriftSection(DataDriftResult r) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("rows", r.rows());
    m.put("model_rows", r.modelRows());
    m.put("model_total_variance", r.modelTotalVariance());
    m.put("new_total_variance", r.newTotalVariance());
    m.put("total_variance_ratio", r.totalVarianceRatio());
    m.put("model_inside_share", r.modelInsideShare());
    m.put("new_inside_share", r.newInsideShare());
    m.put("model_outside_share", r.modelOutsideShare());
    m.put("new_outside_share", r.newOutsideShare());
    List<Map<String, Object>> components = new java.util.ArrayList<>();
    for (DataDriftResult.ComponentDrift c : r.components()) {
      Map<String, Object> e = new LinkedHashMap<>();
      e.put("component", c.component());
      e.put("eigenvalue", c.eigenvalue());
      e.put("new_variance", c.newVariance());
      e.put("variance_ratio", c.varianceRatio());
      e.put("score_mean_sd", c.scoreMeanSd());
      e.put("model_share", c.modelShare());
      e.put("new_share", c.newShare());
      components.add(e);
    }
    m.put("components", components);
    List<Map<String, Object>> features = new java.util.ArrayList<>();
    for (DataDriftResult.FeatureDrift f : r.features()) {
      Map<String, Object> e = new LinkedHashMap<>();
      e.put("feature", f.feature());
      e.put("model_mean", f.modelMean());
      e.put("model_sd", f.modelSd());
      e.put("new_mean", f.newMean());
      e.put("new_sd", f.newSd());
      e.put("mean_shift_sd", f.meanShiftSd());
      e.put("variance_ratio", f.varianceRatio());
      features.add(e);
    }
    m.put("features", features);
    return m;
  }

  static Map<String, Object> labelSection(LabelResult r) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("centroids", r.centroids());
    m.put("by", r.byEntity() ? r.entity() : "row");
    m.put("entity_spread", r.spread());
    m.put("space", r.space().word());
    m.put("window", r.byEntity() ? "input" : "row");
    m.put("labelled", r.labelled());
    m.put("unlabelled", r.unlabelled());
    Map<String, Long> sizes = new LinkedHashMap<>();
    r.sizes().forEach((c, n) -> sizes.put(Integer.toString(c), n));
    m.put("sizes", sizes);
    if (r.rowSizes() != null) {
      Map<String, Long> rows = new LinkedHashMap<>();
      r.rowSizes().forEach((c, n) -> rows.put(c < 0 ? "none" : Integer.toString(c), n));
      m.put("row_label_sizes", rows);
    }
    return m;
  }

  static Map<String, Object> clusterSection(ClusterResult r) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("space", r.space().word());
    m.put("entity", r.entity());
    m.put("k", r.k());
    m.put("selection_rule", r.selectionRule());
    m.put("wcss", r.wcss());
    m.put("silhouette", r.silhouette());
    m.put("silhouette_sample", r.silhouetteSample());
    m.put("init_sample", r.initSample());
    for (ClusterResult.KScore k : r.selection()) {
      if (k.k() == r.k()) {
        putRestarts(m, k.restarts());
      }
    }
    m.put("sizes", r.sizes());
    List<Map<String, Object>> sel = new java.util.ArrayList<>();
    for (ClusterResult.KScore k : r.selection()) {
      Map<String, Object> e = new LinkedHashMap<>();
      e.put("k", k.k());
      e.put("wcss", k.wcss());
      e.put("silhouette", k.silhouette());
      e.put("calinski_harabasz", k.calinskiHarabasz());
      e.put("davies_bouldin", k.daviesBouldin());
      putRestarts(e, k.restarts());
      sel.add(e);
    }
    m.put("k_selection", sel);
    return m;
  }

  /**
   * The restarts of one k: {@code restarts_run}, {@code restarts_at_best} (within 1e-9 relative of the lowest),
   * {@code restarts_wcss} ({@code min}, {@code median}, {@code max} of their within-cluster sums of squares) and
   * {@code restarts_on_driver}; nothing when unknown.
   */
  private static void putRestarts(Map<String, Object> m, ClusterResult.Restarts r) {
    if (r == null) {
      return;
    }
    m.put("restarts_run", r.run());
    m.put("restarts_at_best", r.atBest());
    Map<String, Object> spread = new LinkedHashMap<>();
    spread.put("min", r.min());
    spread.put("median", r.median());
    spread.put("max", r.max());
    m.put("restarts_wcss", spread);
    m.put("restarts_on_driver", r.onDriver());
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
    m.put("method", model.method().word());
    m.put("method_reason", fit.plan().methodReason());
    m.put("read_path", fit.columnarRead() ? "columnar" : "rows");
    m.put("passes", fit.passes());
    m.put("components", model.k());
    m.put("components_rule", fit.kRule());
    m.put("eigenvalues", s.eigenvalues());
    m.put("eigenvalues_complete", model.eigenvaluesComplete());
    m.put("variance_share", s.varianceShares());
    m.put("cumulative_variance_share", s.cumulativeVarianceShares());
    m.put("total_variance", s.totalVariance());
    if (fit.randomizedAccuracy() != null) {
      m.put("randomized_accuracy", randomizedAccuracySection(fit.randomizedAccuracy()));
    }
    m.put("means", model.means());
    m.put("scales", model.scales());
    m.put("schema_fingerprint", model.schemaFingerprint());
    return m;
  }

  /**
   * The randomized method's a-posteriori accuracy (README, Methods): per kept component the residual
   * ||C v - theta v|| / theta_1 and the estimated angle bound; the bound ||R_k||_2 / theta_1 against the tolerance;
   * the captured variance share with the width of the interval the optimum lies in; the iterations run.
   */
  static Map<String, Object> randomizedAccuracySection(RandomizedAccuracy a) {
    Map<String, Object> m = new LinkedHashMap<>();
    var f = a.figures();
    m.put("components", f.k());
    m.put("residuals", f.residuals());
    m.put("bound", f.bound());
    m.put("tolerance", a.tolerance());
    m.put("target_met", a.targetMet());
    m.put("captured_variance", f.capturedVariance());
    m.put("captured_variance_bound", f.capturedVarianceBound());
    List<Double> angles = new ArrayList<>();
    for (double x : f.angleBounds()) {
      angles.add(Double.isNaN(x) ? null : x);
    }
    m.put("angle_bounds_estimated_rad", angles);
    m.put("power_iterations_set", a.powerIterationsSet());
    m.put("power_iterations_run", a.powerIterationsRun());
    m.put("max_power_iterations", a.maxPowerIterations());
    m.put("extra_passes", a.extraPasses());
    m.put("bound_by_pass", a.boundByPass());
    return m;
  }
}
