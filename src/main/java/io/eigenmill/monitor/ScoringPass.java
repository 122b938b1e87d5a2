package io.eigenmill.monitor;

import io.eigenmill.engine.ColumnarScan;
import io.eigenmill.engine.SparkLine;
import io.eigenmill.io.PcaModel;
import io.eigenmill.math.BlockBudget;
import io.eigenmill.monitor.math.ControlLimits;
import io.eigenmill.monitor.math.Scorer;
import io.eigenmill.plan.ScoreColumns;
import io.eigenmill.settings.Choices.MissingPolicy;
import io.eigenmill.settings.JobSettings;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructField;
import org.apache.spark.sql.types.StructType;
import org.apache.spark.util.LongAccumulator;

/**
 * Scores every row of a table against a model, one block of rows at a time ({@link Scorer}: two dgemm per block), and
 * emits per row the pass-through columns (keys, partition columns), the scores {@code pc_1..pc_k}, {@code t2},
 * {@code q} and the flags {@code flag_t2}, {@code flag_q} against the control limits; or, in reconstruction mode, the
 * pass-through columns and each feature reconstructed from k components in original units. Counts, the most severe
 * rows, per-feature errors, the monitoring series and the report's sample are gathered in accumulators during the
 * same pass (the write), so nothing reads the input or the scores again.
 *
 * <p>Two readers feed the same block code ({@link ScoreBlocks}): when the selection of pass-through and feature
 * columns is a plain Parquet scan served as columnar batches ({@link ColumnarScan}), partitions read the batches
 * directly; otherwise (CSV, a derived table, a type the vectorised reader lacks) they read the selection's rows, with
 * the features cast to double. Either way the pass emits Spark's internal rows: pass-through values are handed on
 * in their internal form (UTF8String, microseconds, days), never converted to Java objects.
 */
public final class ScoringPass {
  /** Points of the monitoring series: time buckets (at most), or sampled rows when no key is a time. */
  public static final int SERIES_POINTS = 600;
  /** Seed of the rank of the score-map sample. */
  static final long SAMPLE_SEED = 23;
  /** Seed of the rank of the series sample (tables without a time key). */
  static final long SERIES_SEED = 17;

  private ScoringPass() {}

  /**
   * The control limits of a pass and how they were computed, in words.
   *
   * @param qMethod the Q rule applied: {@code jackson-mudholkar}, {@code box}, or {@code none} (nothing discarded)
   * @param qH0 Jackson and Mudholkar's h0 of the discarded eigenvalues (NaN when nothing is discarded)
   */
  public record Limits(double t2, String t2Rule, double q, String qRule, String qMethod, double qH0)
      implements Serializable {

    /**
     * T2 (beta for the fitted rows, F for new rows) and Q limits of {@code model} at {@code monitor}'s confidence,
     * Q by {@code monitor.q-limit} ({@link ControlLimits#qLimit}). The randomized method's thetas beyond the
     * computed eigenvalues are estimated from the trace; both rules use them the same way (theta1 exact).
     */
    public static Limits of(PcaModel model, JobSettings.Monitor monitor, boolean fittedRows) {
      int k = model.k();
      double confidence = monitor.confidence();
      double t2 = fittedRows ? ControlLimits.t2Fitted(k, model.rows(), confidence)
          : ControlLimits.t2New(k, model.rows(), confidence);
      String t2Rule = fittedRows
          ? "fitted rows: (n-1)^2/n Beta(k/2, (n-k-1)/2) at " + confidence + " (Tracy, Young and Mason 1992)"
          : "new rows: k(n-1)(n+1)/(n(n-k)) F(k, n-k) at " + confidence;
      ControlLimits.Thetas thetas = ControlLimits.thetas(model.eigenvalues(), k, model.eigenvaluesComplete(),
          model.d(), model.totalVariance());
      ControlLimits.QLimit q = ControlLimits.qLimit(thetas, confidence,
          ControlLimits.QRule.valueOf(monitor.qLimit().name()));
      if (q.rule() == null || !(q.value() > 0)) {
        return new Limits(t2, t2Rule, 0.0, "no discarded variance (k = d): Q is zero for every row and flags nothing",
            "none", q.h0());
      }
      String h0 = String.format(Locale.ROOT, "%.4g", q.h0());
      String formula = q.rule() == ControlLimits.QRule.BOX
          ? "Box (1954) scaled chi-square g chi2(h), g = theta2/theta1 = "
              + String.format(Locale.ROOT, "%.4g", thetas.theta2() / thetas.theta1()) + ", h = theta1^2/theta2 = "
              + String.format(Locale.ROOT, "%.4g", thetas.theta1() * thetas.theta1() / thetas.theta2())
          : "Jackson and Mudholkar (1979)";
      String why = switch (monitor.qLimit()) {
        case AUTO -> q.rule() == ControlLimits.QRule.BOX
            ? " (monitor.q-limit = auto: h0 = " + h0 + " is below " + ControlLimits.H0_SAFE
                + ", where Jackson and Mudholkar's formula is unreliable)"
            : " (monitor.q-limit = auto: h0 = " + h0 + " is at least " + ControlLimits.H0_SAFE + ")";
        default -> " (monitor.q-limit = " + monitor.qLimit().word() + ", h0 = " + h0 + ")";
      };
      String qRule = formula + " at " + confidence + why + (thetas.exact()
          ? ", from all " + (model.eigenvalues().length - k) + " discarded eigenvalues"
          : ", discarded eigenvalues beyond the " + model.eigenvalues().length + " computed estimated from the trace"
              + " (theta1 exact; theta2, theta3 assume an even spread)");
      return new Limits(t2, t2Rule, q.value(), qRule, q.rule().word(), q.h0());
    }

    /** No limits (reconstruction): nothing is flagged. */
    public static Limits none() {
      return new Limits(Double.MAX_VALUE, "none", 0, "none", "none", Double.NaN);
    }
  }

  /**
   * What the pass needs on the executors.
   *
   * @param sampleSize rows of the report's score sample ({@code output.report-sample}); 0 for none
   */
  public record Spec(Scorer scorer, List<String> features, int blockRows, MissingPolicy missing,
      double[] imputeValues, double t2Limit, double qLimit, boolean reconstruct, int sampleSize,
      GroupScoring groups) implements Serializable {
    public Spec(Scorer scorer, List<String> features, int blockRows, MissingPolicy missing, double[] imputeValues,
        double t2Limit, double qLimit, boolean reconstruct, int sampleSize) {
      this(scorer, features, blockRows, missing, imputeValues, t2Limit, qLimit, reconstruct, sampleSize, null);
    }

    /** Score columns: k, or with groups the largest k of the groups. */
    public int outputK() {
      return groups != null ? groups.outputK() : scorer.components();
    }
  }

  /**
   * The pass that scores each row with its group's model ({@link GroupScoring}); missing values drop the row or
   * fail (impute-mean is refused with groups by the planner).
   */
  public static Spec groupedSpec(GroupScoring groups, List<String> features, JobSettings settings) {
    return new Spec(groups.scorers()[0], features,
        BlockBudget.rows(settings.reduce().blockRows(), features.size() + 1), settings.prepare().missing(),
        null, Double.NaN, Double.NaN, false, settings.output().reportSample(), groups);
  }

  /**
   * The pass of {@code model} under {@code settings} (block size, missing values, report sample) against
   * {@code limits}: the one way the jobs and the benchmark build it. Missing values are imputed, under
   * {@code impute-mean}, with the model's means.
   */
  public static Spec spec(PcaModel model, JobSettings settings, Limits limits, boolean reconstruct) {
    Scorer scorer = new Scorer(model.means(), model.scales(), model.loadings(), model.eigenvalues(), model.k());
    return new Spec(scorer, model.features(),
        BlockBudget.rows(settings.reduce().blockRows(), model.features().size() + 1), settings.prepare().missing(),
        model.means(), limits.t2(), limits.q(), reconstruct, reconstruct ? 0 : settings.output().reportSample());
  }

  /** A row of the score sample: key values (Spark's internal form) and the first scores. */
  public record SampledRow(Object[] keys, double[] scores) implements Serializable {}

  /**
   * Driver-side accumulators of one pass.
   *
   * @param drift the moments of the scored rows against the model ({@link #withDrift}), or null when not gathered
   */
  public record Counters(LongAccumulator scored, LongAccumulator dropped, LongAccumulator flaggedT2,
      LongAccumulator flaggedQ, LongAccumulator flaggedBoth, TopRows top, FeatureErrors errors, SeriesMaxima series,
      RowSample<double[]> seriesSample, RowSample<SampledRow> sample, DriftPartials drift, LongAccumulator unknown,
      org.apache.spark.util.CollectionAccumulator<String> unknownGroups) implements Serializable {

    /** These counters, also gathering the moments of the scored rows against the model (new data only). */
    public Counters withDrift(org.apache.spark.SparkContext sc, String stage, Spec spec) {
      DriftPartials partials = new DriftPartials(spec.scorer().dimension(), spec.scorer().components());
      sc.register(partials, "eigenmill data drift (" + stage + ")");
      return new Counters(scored, dropped, flaggedT2, flaggedQ, flaggedBoth, top, errors, series, seriesSample, sample,
          partials, unknown, unknownGroups);
    }

    public static Counters register(org.apache.spark.SparkContext sc, String stage, Spec spec, int topRows) {
      TopRows top = new TopRows(topRows);
      sc.register(top, "eigenmill top rows (" + stage + ")");
      FeatureErrors errors = new FeatureErrors(spec.scorer().dimension());
      sc.register(errors, "eigenmill feature errors (" + stage + ")");
      SeriesMaxima series = new SeriesMaxima(2 * SERIES_POINTS);
      sc.register(series, "eigenmill series (" + stage + ")");
      RowSample<double[]> seriesSample = new RowSample<>(SERIES_POINTS);
      sc.register(seriesSample, "eigenmill series sample (" + stage + ")");
      RowSample<SampledRow> sample = new RowSample<>(spec.sampleSize());
      sc.register(sample, "eigenmill score sample (" + stage + ")");
      return new Counters(sc.longAccumulator(stage + " scored"), sc.longAccumulator(stage + " dropped"),
          sc.longAccumulator(stage + " flagged T2"), sc.longAccumulator(stage + " flagged Q"),
          sc.longAccumulator(stage + " flagged both"), top, errors, series, seriesSample, sample, null,
          sc.longAccumulator(stage + " unknown group"), sc.collectionAccumulator(stage + " unknown groups"));
    }
  }

  /**
   * Where the pass-through columns are and what the pass gathers besides the scores.
   *
   * @param keys the first {@code keys} pass-through columns are the table's keys (hashed for the samples)
   * @param timeColumn the pass-through column along which the series runs (a timestamp or a date), or -1
   * @param groupColumns with groups, the pass-through position of each group column; else null
   */
  record Layout(int passThrough, int keys, DataType[] types, int timeColumn, int[] groupColumns)
      implements Serializable {
    boolean timeInDays() {
      return timeColumn >= 0 && types[timeColumn].equals(DataTypes.DateType);
    }
  }

  /**
   * The scored table (lazy: nothing runs until it is written, once) and what the report needs to read the
   * accumulators.
   *
   * @param columnar true when partitions read Parquet's columnar batches, false for the row reader
   * @param timeColumn the pass-through column the series runs along, or null (then the series is a row sample)
   * @param timeInDays true when that column is a date (its values are whole days)
   * @param keySchema the key columns (names and types) of the sampled rows
   * @param passThrough the pass-through columns in order (keys, then partition columns not among them): the
   *     columns of the most severe rows' key text
   */
  public record Scored(Dataset<Row> rows, boolean columnar, String timeColumn, boolean timeInDays,
      StructType keySchema, List<String> passThrough) {
    public String readPath() {
      return columnar ? "columnar Parquet batches" : "rows (no columnar scan for this input)";
    }
  }

  /**
   * Scores {@code table}: pass-through columns first ({@link #passThrough}: {@code keys}, then partition columns
   * not among them), then the scores (or the reconstruction).
   */
  public static Scored apply(Dataset<Row> table, List<String> keys, List<String> partitionColumns, Spec spec,
      Counters counters) {
    return apply(table, keys, partitionColumns, spec, counters, 0);
  }

  /**
   * As above, a columnar Parquet scan cut into splits of {@code splitBytes} (the plan's,
   * {@code JobPlan.splitBytes()}; 0 for Spark's own splits).
   */
  public static Scored apply(Dataset<Row> table, List<String> keys, List<String> partitionColumns, Spec spec,
      Counters counters, long splitBytes) {
    List<String> passThrough = passThrough(table.schema(), keys, partitionColumns);
    List<Column> raw = new ArrayList<>();
    List<Column> cast = new ArrayList<>();
    for (String c : passThrough) {
      raw.add(functions.col(quoted(c)));
      cast.add(functions.col(quoted(c)));
    }
    for (String f : spec.features()) {
      raw.add(functions.col(quoted(f)));
      cast.add(functions.col(quoted(f)).cast("double"));
    }
    if (spec.groups() != null) {
      // the row reader finds each row's group in its text, after the features
      for (String g : spec.groups().keys().names()) {
        cast.add(functions.col(quoted(g)).cast("string"));
      }
    }
    Dataset<Row> selection = table.select(raw.toArray(new Column[0]));
    int p = passThrough.size();
    DataType[] types = new DataType[p];
    StructType out = new StructType();
    StructType keySchema = new StructType();
    int time = -1;
    for (int c = 0; c < p; c++) {
      StructField field = selection.schema().fields()[c];
      types[c] = field.dataType();
      out = out.add(field);
      if (c < keys.size()) {
        keySchema = keySchema.add(field);
      }
      if (time < 0 && isTime(field.dataType())) {
        time = c;
      }
    }
    out = scoreColumns(out, spec);
    int[] groupAt = null;
    if (spec.groups() != null) {
      groupAt = new int[spec.groups().keys().size()];
      for (int g = 0; g < groupAt.length; g++) {
        groupAt[g] = passThrough.indexOf(spec.groups().keys().names().get(g));
        if (groupAt[g] < 0) {
          throw new IllegalStateException("group column " + spec.groups().keys().names().get(g)
              + " is not among the pass-through columns " + passThrough);
        }
      }
    }
    Layout layout = new Layout(p, keys.size(), types, spec.reconstruct() ? -1 : time, groupAt);
    // the names as the selection resolved them (the scan's attributes carry the table's spelling)
    List<String> names = List.of(selection.schema().fieldNames());
    ColumnarScan scan = ColumnarScan.of(selection);
    int[] passOrdinals = scan == null ? null : scan.ordinals(names.subList(0, p));
    int[] featureOrdinals = scan == null ? null : scan.ordinals(names.subList(p, names.size()));
    int[] kinds = featureOrdinals == null ? null : scan.kinds(featureOrdinals);
    boolean columnar = passOrdinals != null && kinds != null && allKnown(kinds);
    JavaRDD<InternalRow> rows;
    if (columnar) {
      rows = scan.batches(splitBytes).mapPartitions(new ScoreBlocks.ColumnarScoring(spec, layout, counters,
          passOrdinals, featureOrdinals, kinds));
    } else {
      rows = table.select(cast.toArray(new Column[0])).queryExecution().toRdd().toJavaRDD()
          .mapPartitions(new ScoreBlocks.RowScoring(spec, layout, counters));
    }
    // the internal rows as they are, where a public constructor would need Rows and an encoder
    Dataset<Row> scored = SparkLine.fromInternalRows(table.sparkSession(), rows.rdd(), out);
    return new Scored(scored, columnar, time < 0 || spec.reconstruct() ? null : passThrough.get(time),
        layout.timeInDays(), keySchema, List.copyOf(passThrough));
  }

  private static StructType scoreColumns(StructType out, Spec spec) {
    if (spec.reconstruct()) {
      for (String f : spec.features()) {
        out = out.add(f, DataTypes.DoubleType, true);
      }
      return out;
    }
    // with groups, a group with fewer components has nulls beyond its k, and a row of an unknown group (flagged)
    // has null scores
    boolean nullable = spec.groups() != null;
    for (int c = 1; c <= spec.outputK(); c++) {
      out = out.add(ScoreColumns.component(c), DataTypes.DoubleType, nullable);
    }
    return out.add(ScoreColumns.T2, DataTypes.DoubleType, nullable)
        .add(ScoreColumns.Q, DataTypes.DoubleType, nullable)
        .add(ScoreColumns.FLAG_T2, DataTypes.BooleanType, false)
        .add(ScoreColumns.FLAG_Q, DataTypes.BooleanType, false);
  }

  private static boolean allKnown(int[] kinds) {
    for (int k : kinds) {
      if (k < 0) {
        return false;
      }
    }
    return true;
  }

  /** Timestamps (with or without a time zone) and dates: the types a series can run along. */
  static boolean isTime(DataType type) {
    return type.equals(DataTypes.TimestampType) || type.equals(DataTypes.DateType)
        || type.typeName().startsWith("timestamp");
  }

  private static String quoted(String column) {
    return "`" + column.replace("`", "``") + "`";
  }

  /** The pass-through columns present in {@code schema}, keys first, then partition columns not among the keys. */
  public static List<String> passThrough(StructType schema, List<String> keys, List<String> partitionColumns) {
    List<String> out = new ArrayList<>(keys);
    for (String c : partitionColumns) {
      if (!out.contains(c)) {
        for (StructField f : schema.fields()) {
          if (f.name().equals(c)) {
            out.add(c);
          }
        }
      }
    }
    return out;
  }
}
