package io.eigenmill.monitor;

import io.eigenmill.engine.Progress;
import io.eigenmill.io.DriverTables;
import io.eigenmill.io.OutputCommit;
import io.eigenmill.engine.KeyColumns;
import io.eigenmill.engine.KeyValues;
import io.eigenmill.io.PcaModel;
import java.util.Map;
import io.eigenmill.monitor.math.ControlLimits;
import io.eigenmill.monitor.math.HashSample;
import io.eigenmill.monitor.math.TimeBuckets;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.settings.Choices.MissingPolicy;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.catalyst.CatalystTypeConverters;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Scores a table against a model and writes {@code scores/} (partitioned like the input), and summarises the
 * monitoring statistics from what the pass gathered in its accumulators (counts, most severe rows, the series of
 * T2 and Q maxima along time or a row sample, the score map's sample): the written scores are not read again.
 * Shared by the fit ({@code output.scores}) and apply jobs. Optionally writes the reconstruction.
 */
public final class ScoringStage {
  private static final Logger LOG = LoggerFactory.getLogger(ScoringStage.class);
  static final int TOP_ROWS = 20;
  static final int SERIES_POINTS = ScoringPass.SERIES_POINTS;

  private final SparkSession spark;
  private final JobPlan plan;
  private final PcaModel model;
  private final OutputCommit out;

  public ScoringStage(SparkSession spark, JobPlan plan, PcaModel model, OutputCommit out) {
    this.spark = spark;
    this.plan = plan;
    this.model = model;
    this.out = out;
  }

  /**
   * What scoring produced: the monitoring record, a sample for the score map, and where the scores are.
   *
   * @param dataDrift the scored rows against the model (new rows only; null for the fitted rows)
   */
  public record Outcome(MonitorResult monitor, ScoreSample sample, String scoresPath, DataDriftResult dataDrift) {}

  /**
   * The scores of {@code table} as the scoring pass makes them (keys, then scores, T2 and Q against the limits of
   * fitted or new rows), without running it: a lazy Dataset that scores when the caller acts on it, each time it
   * does. The same rows, bit for bit, as {@link #score} writes; no monitoring record (nothing has been counted).
   */
  public Dataset<Row> lazyScores(Dataset<Row> table, boolean fittedRows) {
    ScoringPass.Limits limits = ScoringPass.Limits.of(model, plan.settings().monitor(), fittedRows);
    ScoringPass.Spec spec = ScoringPass.spec(model, plan.settings(), limits, false);
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "scores", spec, TOP_ROWS);
    return ScoringPass.apply(table, plan.keys(), plan.partitionColumns(), spec, counters, plan.splitBytes())
        .rows();
  }

  public Outcome score(Dataset<Row> table, boolean fittedRows) {
    JobSettings s = plan.settings();
    double confidence = s.monitor().confidence();
    ScoringPass.Limits limits = ScoringPass.Limits.of(model, s.monitor(), fittedRows);
    LOG.info("score: Q limit {} by {} (h0 = {}): {}", limits.q(), limits.qMethod(), limits.qH0(), limits.qRule());
    ScoringPass.Spec spec = ScoringPass.spec(model, s, limits, false);
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "scores", spec, TOP_ROWS);
    if (!fittedRows) {
      counters = counters.withDrift(spark.sparkContext(), "scores", spec);
    }
    ScoringPass.Scored scored = ScoringPass.apply(table, plan.keys(), plan.partitionColumns(), spec, counters,
        plan.splitBytes());
    LOG.info("score: reading {}", scored.readPath());
    String path = writeScores(scored, counters);
    failOnMissing(counters.dropped().value(), s.prepare().missing());
    long rows = counters.scored().value();
    long flaggedT2 = counters.flaggedT2().value();
    long flaggedQ = counters.flaggedQ().value();
    List<String> warnings = new ArrayList<>();
    excess("T2", flaggedT2, rows, confidence, fittedRows, limits, warnings);
    if (limits.q() > 0) {
      excess("Q", flaggedQ, rows, confidence, fittedRows, limits, warnings);
    }
    MonitorResult monitor = new MonitorResult(confidence, model.k(), rows, flaggedT2, flaggedQ,
        counters.flaggedBoth().value(), limits.t2(), limits.t2Rule(), limits.q(), limits.qRule(), limits.qMethod(),
        limits.qH0(), fittedRows, series(scored, counters), scored.passThrough(), flagged(counters.top(), model.features()),
        List.copyOf(warnings));
    LOG.info("score: {} rows, flagged T2 {}, Q {}, both {}", monitor.rowsScored(), monitor.flaggedT2(),
        monitor.flaggedQ(), monitor.flaggedBoth());
    for (String w : warnings) {
      LOG.warn("score: {}", w);
    }
    DataDriftResult dataDrift = fittedRows ? null : DataDrift.of(model, counters.drift().value());
    return new Outcome(monitor, sample(scored, counters), path, dataDrift);
  }

  /**
   * Scores every row with its group's model ({@code models}: key, the group values as text, to model; the group
   * columns {@code by}): one pass, blocks of one group each ({@link GroupScoring}). A row of a group without a model
   * follows {@code apply.unknown-group}: fail (exit 2 after the pass, naming up to 20 such groups), skip (left out,
   * counted) or flag (kept with null scores, flagged by both statistics, counted). The monitoring series holds T2 and
   * Q as ratios to each row's group limits (the limit line is 1). No data drift: it is of one model.
   */
  public Outcome scoreGroups(Dataset<Row> table, KeyColumns by, Map<KeyValues, PcaModel> models,
      List<String> features, boolean fittedRows) {
    JobSettings s = plan.settings();
    double confidence = s.monitor().confidence();
    if (models.isEmpty()) {
      throw new InvalidJobException("reduce.group-by = " + by.names() + ": no group has a model, so no row can be"
          + " scored; lower reduce.min-group-rows or group by fewer columns");
    }
    GroupScoring groups = GroupScoring.of(by, models, features, s.monitor(), fittedRows, s.apply().unknownGroup());
    ScoringPass.Spec spec = ScoringPass.groupedSpec(groups, features, s);
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "scores", spec, TOP_ROWS);
    List<String> keys = new ArrayList<>(plan.keys());
    for (String g : by.names()) {
      if (!keys.contains(g)) {
        keys.add(g);
      }
    }
    ScoringPass.Scored scored = ScoringPass.apply(table, keys, plan.partitionColumns(), spec, counters,
        plan.splitBytes());
    LOG.info("score: {} group models, reading {}", models.size(), scored.readPath());
    String path = writeScores(scored, counters);
    failOnMissing(counters.dropped().value(), s.prepare().missing());
    long unknown = counters.unknown().value();
    List<String> unknownGroups = new ArrayList<>(new java.util.TreeSet<>(counters.unknownGroups().value()));
    if (unknownGroups.size() > PartitionGathering.UNKNOWN_LISTED) {
      unknownGroups = unknownGroups.subList(0, PartitionGathering.UNKNOWN_LISTED);
    }
    List<String> warnings = new ArrayList<>();
    if (unknown > 0) {
      String which = String.format(Locale.ROOT, "%,d rows of %s without a model (%s%s)", unknown,
          unknownGroups.size() == 1 ? "a group" : "groups", String.join("; ", unknownGroups),
          unknownGroups.size() >= PartitionGathering.UNKNOWN_LISTED ? "; ..." : "");
      switch (s.apply().unknownGroup()) {
        case FAIL -> throw new InvalidJobException("apply.unknown-group = fail: " + which + "; set"
            + " apply.unknown-group = flag (scored as unusual) or skip, or refit with these groups");
        case SKIP -> warnings.add(which + ": left out (apply.unknown-group = skip)");
        default -> warnings.add(which + ": kept with null scores and flagged by T2 and Q (apply.unknown-group ="
            + " flag)");
      }
    }
    long rows = counters.scored().value();
    String rule = "per group: each row against its own group's model's limit at " + confidence
        + (fittedRows ? " (fitted rows: beta limit)" : " (new rows: F limit)") + "; series drawn as the ratio to it";
    MonitorResult monitor = new MonitorResult(confidence, groups.outputK(), rows, counters.flaggedT2().value(),
        counters.flaggedQ().value(), counters.flaggedBoth().value(), 1.0, rule, 1.0, rule, "per group", Double.NaN,
        fittedRows, series(scored, counters), scored.passThrough(), flagged(counters.top(), features),
        List.copyOf(warnings), unknown, List.copyOf(unknownGroups));
    LOG.info("score: {} rows with {} group models, flagged T2 {}, Q {}, unknown group {}", rows, models.size(),
        monitor.flaggedT2(), monitor.flaggedQ(), unknown);
    for (String w : warnings) {
      LOG.warn("score: {}", w);
    }
    return new Outcome(monitor, sample(scored, counters), path, null);
  }

  /**
   * Adds a warning when {@code flagged} of {@code rows} exceeds {@link ControlLimits#flaggedAbove} (a binomial
   * bound at 1 - confidence, three times the expected count, 10 rows). On the fitted rows a limit that holds
   * flags about 1 - confidence of them, so the excess says the limit does not hold for this data; on new rows it
   * may also be drift, and the warning says "new data".
   */
  private static void excess(String statistic, long flagged, long rows, double confidence, boolean fittedRows,
      ScoringPass.Limits limits, List<String> warnings) {
    long bound = ControlLimits.flaggedAbove(rows, confidence);
    if (flagged <= bound) {
      return;
    }
    double expected = rows * (1 - confidence);
    String counts = String.format(Locale.ROOT, "%,d of %,d %s (%s) are above the %s limit at confidence %s, where"
        + " about %,.0f (%s) are expected and more than %,d is not chance", flagged, rows,
        fittedRows ? "fitted rows" : "new rows", percent(flagged / (double) rows), statistic, confidence, expected,
        percent(1 - confidence), bound);
    String why;
    if (!fittedRows) {
      why = "new data: the rows may have drifted from the model (apply.compare-with compares the model with one fitted"
          + " on recent data), or the limit does not hold for this data";
    } else if (statistic.equals("Q") && limits.qMethod().equals("jackson-mudholkar")
        && !(limits.qH0() >= ControlLimits.H0_SAFE)) {
      why = String.format(Locale.ROOT, "the Q limit is Jackson and Mudholkar's with h0 = %.4g, below %s where"
          + " that formula fails: set monitor.q-limit = auto (or box)", limits.qH0(), ControlLimits.H0_SAFE);
    } else if (statistic.equals("Q")) {
      why = "the Q limit (" + limits.qMethod() + ") assumes roughly normal residuals: heavy tails, outliers or"
          + " groups in the data flag more; read the flagged rows' largest contributions before trusting the flags";
    } else {
      why = "the T2 limit assumes roughly normal scores: heavy tails, outliers or groups in the data flag more;"
          + " read the score map before trusting the flags";
    }
    warnings.add("flagged share far above the expected: " + counts + "; " + why);
  }

  private static String percent(double share) {
    return String.format(Locale.ROOT, "%.3g%%", 100 * share);
  }

  /** Writes the scores to {@code scores/} in the staging folder (the pass runs here), with progress; the path. */
  private String writeScores(ScoringPass.Scored scored, ScoringPass.Counters counters) {
    String path = out.staged("scores");
    try (Progress progress = Progress.start(spark, "score", counters.scored())) {
      write(scored.rows(), path);
      progress.done(counters.scored().value());
    }
    return path;
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
      throw new InvalidJobException("prepare.missing = fail: " + dropped + " rows of "
          + plan.settings().input().source() + " have a missing value (null, NaN or infinite) in a model feature; set prepare.missing = drop-rows"
          + " or impute-mean");
    }
  }

  /**
   * A bucket width in words: seconds, with hours or days beside them when that helps; for a date column whose
   * buckets are narrower than a day (its values are whole days), "day".
   */
  static String bucketWords(long seconds, boolean days) {
    if (days && seconds < 86_400) {
      return "day";
    }
    if (seconds >= 86_400) {
      return String.format(java.util.Locale.ROOT, "%d s, %.3g days", seconds, seconds / 86_400.0);
    }
    if (seconds >= 3_600) {
      return String.format(java.util.Locale.ROOT, "%d s, %.3g hours", seconds, seconds / 3_600.0);
    }
    return seconds + " s";
  }

  /**
   * T2 and Q along time when a key is a timestamp or date: per bucket of a power-of-two number of seconds, the
   * narrowest for which at most {@value #SERIES_POINTS} buckets hold rows, the bucket's rows, its rows above each
   * limit and its maxima; else along a sample of {@value #SERIES_POINTS} rows chosen by a seeded hash of their keys
   * (in that hash's order), each with its own T2 and Q.
   */
  private static MonitorResult.Series series(ScoringPass.Scored scored, ScoringPass.Counters counters) {
    String time = scored.timeColumn();
    if (time != null) {
      TimeBuckets buckets = counters.series().value();
      if (buckets.isEmpty()) {
        return MonitorResult.Series.ofRows(time, new double[0], new double[0], new double[0]);
      }
      buckets.coarsenToAtMost(SERIES_POINTS);
      TimeBuckets.Points points = buckets.points();
      double[] at = new double[points.starts().length];
      for (int i = 0; i < at.length; i++) {
        at[i] = points.starts()[i];
      }
      String width = bucketWords(points.width(), scored.timeInDays());
      // rows at a coarser spacing than the buckets (every 5 minutes in buckets of 1 s): say so, or a reader takes
      // the width for the spacing
      long gap = Long.MAX_VALUE;
      for (int i = 1; i < points.starts().length; i++) {
        gap = Math.min(gap, points.starts()[i] - points.starts()[i - 1]);
      }
      String apart = gap != Long.MAX_VALUE && gap > points.width() && !width.equals("day")
          ? ", at least " + bucketWords(gap, scored.timeInDays()) + " apart" : "";
      return new MonitorResult.Series(time + (width.equals("day") ? " (per day)" : " (buckets of " + width + apart
          + ")"), at, points.maxA(), points.maxB(), points.rows(), points.overA(), points.overB());
    }
    List<HashSample.Entry<double[]>> rows = counters.seriesSample().value().entries();
    double[] at = new double[rows.size()];
    double[] t2 = new double[rows.size()];
    double[] q = new double[rows.size()];
    for (int i = 0; i < at.length; i++) {
      at[i] = i;
      t2[i] = rows.get(i).value()[0];
      q[i] = rows.get(i).value()[1];
    }
    return MonitorResult.Series.ofRows("row (seeded sample)", at, t2, q);
  }

  private static List<MonitorResult.FlaggedRow> flagged(TopRows top, List<String> features) {
    List<MonitorResult.FlaggedRow> out = new ArrayList<>();
    for (TopRows.Candidate c : top.value()) {
      List<MonitorResult.Contribution> contributions = new ArrayList<>();
      for (int i = 0; i < c.topFeatures().length; i++) {
        if (c.topContributions()[i] >= 0) {
          contributions.add(new MonitorResult.Contribution(features.get(c.topFeatures()[i]),
              c.topContributions()[i]));
        }
      }
      out.add(new MonitorResult.FlaggedRow(c.keys(), c.t2(), c.q(), c.flagT2(), c.flagQ(), contributions));
    }
    return out;
  }

  /**
   * The score map's sample: the {@code output.report-sample} rows of smallest seeded hash of their keys, gathered by
   * the pass. Keys as text as Spark casts them to string (the clustering looks rows up by that text), "" for null.
   */
  private ScoreSample sample(ScoringPass.Scored scored, ScoringPass.Counters counters) {
    List<String> keys = new ArrayList<>(plan.keys());
    List<HashSample.Entry<ScoringPass.SampledRow>> rows = counters.sample().value().entries();
    List<List<String>> keyValues = keyText(scored.keySchema(), rows);
    double[][] values = new double[rows.size()][];
    for (int i = 0; i < values.length; i++) {
      values[i] = rows.get(i).value().scores().clone();
    }
    return new ScoreSample(keys, keyValues, values, null);
  }

  private List<List<String>> keyText(StructType keySchema, List<HashSample.Entry<ScoringPass.SampledRow>> rows) {
    List<List<String>> out = new ArrayList<>();
    int width = keySchema.fields().length;
    if (width == 0 || rows.isEmpty()) {
      for (int i = 0; i < rows.size(); i++) {
        out.add(List.of());
      }
      return out;
    }
    List<Row> external = new ArrayList<>();
    for (HashSample.Entry<ScoringPass.SampledRow> e : rows) {
      Object[] v = new Object[width];
      for (int c = 0; c < width; c++) {
        Object internal = e.value().keys()[c];
        v[c] = internal == null ? null
            : CatalystTypeConverters.convertToScala(internal, keySchema.fields()[c].dataType());
      }
      external.add(RowFactory.create(v));
    }
    Column[] text = new Column[width];
    for (int c = 0; c < width; c++) {
      text[c] = functions.col("`" + keySchema.fields()[c].name().replace("`", "``") + "`").cast("string");
    }
    // a local relation: evaluated on the driver, in order, with the session's time zone
    for (Row r : spark.createDataFrame(external, keySchema).select(text).collectAsList()) {
      List<String> kv = new ArrayList<>();
      for (int c = 0; c < width; c++) {
        kv.add(r.isNullAt(c) ? "" : r.getString(c));
      }
      out.add(kv);
    }
    return out;
  }

  /** Writes {@code reconstruction/} (original units) and returns the per-feature errors. */
  public ReconstructionResult reconstruct(Dataset<Row> table) {
    JobSettings s = plan.settings();
    ScoringPass.Spec spec = ScoringPass.spec(model, s, ScoringPass.Limits.none(), true);
    ScoringPass.Counters counters = ScoringPass.Counters.register(spark.sparkContext(), "reconstruction", spec, 1);
    Dataset<Row> rebuilt = ScoringPass.apply(table, plan.keys(), plan.partitionColumns(), spec, counters,
        plan.splitBytes()).rows();
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
    DriverTables.write(spark, schema, rows, out.staged("reconstruction-error"));
  }
}
