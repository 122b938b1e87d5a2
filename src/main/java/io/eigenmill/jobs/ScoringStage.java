package io.eigenmill.jobs;

import io.eigenmill.math.ControlLimits;
import io.eigenmill.math.Scorer;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.settings.Choices.MissingPolicy;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.spark.FeatureErrors;
import io.eigenmill.spark.OutputCommit;
import io.eigenmill.spark.Progress;
import io.eigenmill.spark.ScoringPass;
import io.eigenmill.spark.TopRows;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Scores a table against a model and writes {@code scores/} (partitioned like the input), then summarises the
 * monitoring statistics from what the pass gathered and from the written scores (a small table: keys, k scores,
 * T2, Q). Shared by the fit ({@code output.scores}) and apply jobs. Optionally writes the reconstruction.
 */
final class ScoringStage {
  private static final Logger LOG = LoggerFactory.getLogger(ScoringStage.class);
  static final int TOP_ROWS = 20;
  static final int SERIES_POINTS = 600;

  private final SparkSession spark;
  private final JobPlan plan;
  private final PcaModel model;
  private final OutputCommit out;

  ScoringStage(SparkSession spark, JobPlan plan, PcaModel model, OutputCommit out) {
    this.spark = spark;
    this.plan = plan;
    this.model = model;
    this.out = out;
  }

  /** What scoring produced: the monitoring record, a sample for the score map, and where the scores are. */
  record Outcome(MonitorResult monitor, ScoreSample sample, String scoresPath) {}

  Outcome score(Dataset<Row> table, boolean fittedRows) {
    JobSettings s = plan.settings();
    double confidence = s.monitor().confidence();
    int k = model.k();
    double t2Limit = fittedRows ? ControlLimits.t2Fitted(k, model.rows(), confidence)
        : ControlLimits.t2New(k, model.rows(), confidence);
    String t2Rule = fittedRows
        ? "fitted rows: (n-1)^2/n Beta(k/2, (n-k-1)/2) at " + confidence + " (Tracy, Young and Mason 1992)"
        : "new rows: k(n-1)(n+1)/(n(n-k)) F(k, n-k) at " + confidence;
    ControlLimits.Thetas thetas = ControlLimits.thetas(model.eigenvalues(), k, model.eigenvaluesComplete(),
        model.d(), model.totalVariance());
    double qLimit = ControlLimits.q(thetas, confidence);
    String qRule = "Jackson and Mudholkar (1979) at " + confidence + (thetas.exact()
        ? ", from all " + (model.eigenvalues().length - k) + " discarded eigenvalues"
        : ", discarded eigenvalues beyond the " + model.eigenvalues().length + " computed estimated from the trace"
            + " (theta1 exact; theta2, theta3 assume an even spread)");
    if (!(qLimit > 0)) {
      qRule = "no discarded variance (k = d): Q is zero for every row and flags nothing";
    }
    List<String> passThrough = ScoringPass.passThrough(table.schema(), plan.keys(), plan.partitionColumns());
    ScoringPass.Spec spec = spec(s, passThrough.size(), false, t2Limit, qLimit);
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "scores", model.d(),
        TOP_ROWS);
    Dataset<Row> scored = ScoringPass.apply(table, passThrough, spec, counters);
    String path = out.staged("scores");
    try (Progress progress = Progress.start(spark, "score", counters.scored())) {
      write(scored, path);
      progress.done(counters.scored().value());
    }
    failOnMissing(counters.dropped().value(), s.prepare().missing());
    Dataset<Row> written = spark.read().parquet(path);
    long rows = counters.scored().value();
    MonitorResult monitor = new MonitorResult(confidence, k, rows,
        counters.flaggedT2().value(), counters.flaggedQ().value(), counters.flaggedBoth().value(), t2Limit, t2Rule,
        qLimit, qRule, series(written, passThrough, rows), flagged(counters.top(), t2Limit, qLimit));
    LOG.info("score: {} rows, flagged T2 {}, Q {}, both {}", monitor.rowsScored(), monitor.flaggedT2(),
        monitor.flaggedQ(), monitor.flaggedBoth());
    return new Outcome(monitor, sample(written, k, rows), path);
  }

  private ScoringPass.Spec spec(JobSettings s, int passThrough, boolean reconstruct, double t2Limit,
      double qLimit) {
    Scorer scorer = new Scorer(model.means(), model.scales(), model.loadings(), model.eigenvalues(), model.k());
    return new ScoringPass.Spec(scorer, passThrough, model.features(), s.reduce().blockRows(), s.prepare().missing(),
        model.means(), t2Limit, qLimit, reconstruct);
  }

  private void write(Dataset<Row> scored, String path) {
    List<String> parts = new ArrayList<>();
    for (String c : plan.partitionColumns()) {
      if (List.of(scored.schema().fieldNames()).contains(c)) {
        parts.add(c);
      }
    }
    if (parts.isEmpty()) {
      scored.write().parquet(path);
    } else {
      scored.write().partitionBy(parts.toArray(new String[0])).parquet(path);
    }
  }

  private void failOnMissing(long dropped, MissingPolicy policy) {
    if (policy == MissingPolicy.FAIL && dropped > 0) {
      throw new InvalidJobException("prepare.missing = fail: " + dropped + " rows of " + plan.settings().input().path()
          + " have a missing value (null, NaN or infinite) in a model feature; set prepare.missing = drop-rows"
          + " or impute-mean");
    }
  }

  /** T2 and Q along time (maximum per time bucket) when a key is a timestamp, else along a seeded row sample. */
  /** {@code n} is the number of scored rows (counted by the scoring pass: the written table is not counted again). */
  private MonitorResult.Series series(Dataset<Row> scores, List<String> passThrough, long n) {
    String time = null;
    for (StructField f : scores.schema().fields()) {
      if (passThrough.contains(f.name()) && isTime(f.dataType())) {
        time = f.name();
        break;
      }
    }
    List<Row> rows;
    String label;
    if (time != null) {
      Column t = functions.col(time).cast("long");
      Row range = scores.agg(functions.min(t), functions.max(t)).first();
      if (range.isNullAt(0)) {
        return new MonitorResult.Series(time, new double[0], new double[0], new double[0]);
      }
      long lo = range.getLong(0);
      long hi = range.getLong(1);
      long width = Math.max(1, (hi - lo + SERIES_POINTS) / SERIES_POINTS);
      Column bucket = functions.floor(t.minus(lo).divide(width)).multiply(width).plus(lo);
      rows = scores.groupBy(bucket.as("at")).agg(functions.max("t2"), functions.max("q")).orderBy("at")
          .collectAsList();
      label = time + " (maximum per " + width + " s)";
    } else {
      double fraction = Math.min(1.0, 1.5 * SERIES_POINTS / Math.max(1, n));
      rows = scores.sample(false, fraction, 17).limit(SERIES_POINTS)
          .select(functions.monotonically_increasing_id(), functions.col("t2"), functions.col("q")).collectAsList();
      label = "row (seeded sample)";
    }
    double[] at = new double[rows.size()];
    double[] t2 = new double[rows.size()];
    double[] q = new double[rows.size()];
    for (int i = 0; i < at.length; i++) {
      Row r = rows.get(i);
      at[i] = time != null ? ((Number) r.get(0)).doubleValue() : i;
      t2[i] = r.getDouble(1);
      q[i] = r.getDouble(2);
    }
    return new MonitorResult.Series(label, at, t2, q);
  }

  private static boolean isTime(DataType type) {
    return type.equals(DataTypes.TimestampType) || type.equals(DataTypes.DateType)
        || type.typeName().startsWith("timestamp");
  }

  private List<MonitorResult.FlaggedRow> flagged(TopRows top, double t2Limit, double qLimit) {
    List<MonitorResult.FlaggedRow> out = new ArrayList<>();
    for (TopRows.Candidate c : top.value()) {
      List<MonitorResult.Contribution> contributions = new ArrayList<>();
      for (int i = 0; i < c.topFeatures().length; i++) {
        if (c.topContributions()[i] >= 0) {
          contributions.add(new MonitorResult.Contribution(model.features().get(c.topFeatures()[i]),
              c.topContributions()[i]));
        }
      }
      out.add(new MonitorResult.FlaggedRow(c.keys(), c.t2(), c.q(), c.t2() > t2Limit, qLimit > 0 && c.q() > qLimit,
          contributions));
    }
    return out;
  }

  private ScoreSample sample(Dataset<Row> scores, int k, long n) {
    int size = plan.settings().output().reportSample();
    List<String> keys = new ArrayList<>(plan.keys());
    List<Column> cols = new ArrayList<>();
    for (String key : keys) {
      cols.add(functions.col(key).cast("string"));
    }
    int dims = Math.min(3, k);
    for (int c = 1; c <= dims; c++) {
      cols.add(functions.col("pc_" + c));
    }
    double fraction = Math.min(1.0, 1.2 * size / Math.max(1, n));
    List<Row> rows = size == 0 ? List.of()
        : scores.sample(false, fraction, 23).limit(size).select(cols.toArray(new Column[0])).collectAsList();
    List<List<String>> keyValues = new ArrayList<>();
    double[][] values = new double[rows.size()][dims];
    for (int i = 0; i < rows.size(); i++) {
      Row r = rows.get(i);
      List<String> kv = new ArrayList<>();
      for (int j = 0; j < keys.size(); j++) {
        kv.add(r.isNullAt(j) ? "" : r.getString(j));
      }
      keyValues.add(kv);
      for (int c = 0; c < dims; c++) {
        values[i][c] = r.getDouble(keys.size() + c);
      }
    }
    return new ScoreSample(keys, keyValues, values, null);
  }

  /** Writes {@code reconstruction/} (original units) and returns the per-feature errors. */
  ReconstructionResult reconstruct(Dataset<Row> table) {
    JobSettings s = plan.settings();
    List<String> passThrough = ScoringPass.passThrough(table.schema(), plan.keys(), plan.partitionColumns());
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "reconstruction",
        model.d(), 1);
    Dataset<Row> rebuilt = ScoringPass.apply(table, passThrough, spec(s, passThrough.size(), true, Double.MAX_VALUE, 0), counters);
    try (Progress progress = Progress.start(spark, "reconstruct", counters.scored())) {
      write(rebuilt, out.staged("reconstruction"));
      progress.done(counters.scored().value());
    }
    FeatureErrors.Sums sums = counters.errors().value();
    List<ReconstructionResult.FeatureError> errors = new ArrayList<>();
    long n = Math.max(1, sums.rows());
    for (int j = 0; j < model.d(); j++) {
      double kept = sums.squaredDeviation()[j] > 0 ? 1.0 - sums.squaredError()[j] / sums.squaredDeviation()[j] : 1.0;
      errors.add(new ReconstructionResult.FeatureError(model.features().get(j),
          Math.sqrt(sums.squaredError()[j] / n), sums.maxAbsError()[j], kept));
    }
    LOG.info("reconstruct: {} rows, worst RMSE {}", sums.rows(), errors.stream()
        .mapToDouble(ReconstructionResult.FeatureError::rmse).max().orElse(0));
    ReconstructionResult result = new ReconstructionResult(model.k(), sums.rows(), errors);
    writeErrorTable(result);
    return result;
  }

  private void writeErrorTable(ReconstructionResult result) {
    List<Row> rows = new ArrayList<>();
    for (ReconstructionResult.FeatureError e : result.features()) {
      rows.add(org.apache.spark.sql.RowFactory.create(e.feature(), e.rmse(), e.maxAbsError(), e.varianceKept()));
    }
    var schema = new org.apache.spark.sql.types.StructType().add("feature", DataTypes.StringType, false)
        .add("rmse", DataTypes.DoubleType, false).add("max_abs_error", DataTypes.DoubleType, false)
        .add("variance_kept", DataTypes.DoubleType, false);
    spark.createDataFrame(rows, schema).coalesce(1).write().parquet(out.staged("reconstruction-error"));
  }
}
