package io.eigenmill.bench;

import io.eigenmill.engine.ColumnarScan;
import io.eigenmill.io.LongTable;
import io.eigenmill.io.WriterSession;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SaveMode;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataType;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.vectorized.ColumnarBatch;

/**
 * Long input: the main benchmark table written long, one row per (host, ts, metric, value), and the fit of the
 * same model two ways: our long fit ({@code input.layout = long}, entity host, 5-minute buckets of ts, mean) and
 * Spark's route to the wide table, {@code groupBy(host, bucket).pivot("metric", names).agg(avg("value"))},
 * followed by our wide fit over that DataFrame; beside them a plain read of the long table's four columns.
 *
 * <p>The long table is written once next to the main table ({@code <main table>-long}) and reused while its
 * specification matches: every metric cell of the main table that is not null becomes a row (a missing cell is an
 * absent row, as in a long table), the metric values cast to double, partitioned by date like the main table. The
 * main table's ts are 5-minute steps, so each (host, bucket) holds one value per metric and both routes fit the
 * main table's rows.
 *
 * <p>Legs (covariance, k = 10, standardize, the metric names as the explicit feature list on both routes), timed in
 * turn after one warm-up each: the read floor, the Spark route (pivot + fit step, the fit reading the pivot's rows
 * directly: nothing written between them) and the long fit (fit step as the job runs it, its pivot staged as
 * Parquet and read back). The two fits must give the same k and
 * eigenvalues within {@link #TOLERANCE} relative; otherwise the run fails after writing its section.
 */
final class LongRun {
  /** Bumped when the long table's rows change, so that an older copy is rewritten. */
  private static final String GENERATOR = "long-table v1";
  static final String BUCKET = "5 minutes";
  static final long BUCKET_SECONDS = 300;
  static final String AGGREGATE = "mean";
  /** Largest relative difference of an eigenvalue allowed between the two fits. */
  static final double TOLERANCE = 1e-9;
  static final List<String> COLUMNS = List.of("host", "ts", "metric", "value");

  enum Leg {
    READ_FLOOR("read-floor", "a columnar read of the long table's four columns, each cell touched once (value and "
        + "ts summed, host and metric by their dictionary ids, or string lengths where a page has no dictionary; "
        + "`LongSums`)"),
    SPARK_ROUTE("spark-pivot-fit", "`groupBy(host, bucket).pivot(\"metric\", names).agg(avg(\"value\"))`, bucket = "
        + "`timestamp_seconds(unix_seconds(ts) - pmod(unix_seconds(ts), " + BUCKET_SECONDS + "))`, the names given "
        + "(no distinct pass of Spark's own), then our fit step (`Planner.plan` + `FitJob.execute`) over that "
        + "DataFrame: the fit reads the pivot's rows as they come out of its aggregation, nothing written in between "
        + "(our long fit stages its pivot as Parquet, but for this one-pass covariance fit staging would only add a "
        + "write and a read to Spark's route, so the route is timed without it)"),
    LONG_FIT("long-fit", "our fit step over the long table: `input.layout = long`, `input.long { entity = [host], "
        + "time = ts, metric = metric, value = value, bucket = \"" + BUCKET + "\", aggregate = " + AGGREGATE + " }`, "
        + "run as the job runs it: `Planner.plan`, the pivot staged as Parquet in a work folder and read back "
        + "(`LongTable.View.stage`), `Planner.afterPivot`, `FitJob.execute` over the staged rows; the long table's "
        + "partition column `date` is carried as a key of the pivoted rows");

    final String word;
    final String what;

    Leg(String word, String what) {
      this.word = word;
      this.what = what;
    }
  }

  /**
   * One leg's clock and where its last repetition spent its time.
   *
   * @param stages the fit's own timings of the last repetition (fits only)
   * @param spark the Spark stages of the last repetition ({@link StageLog#describe})
   * @param eachStage the same stages one by one (a shuffle's map and reduce sides apart)
   */
  record LegResult(Leg leg, Timing timing, String stages, String spark, String eachStage) {}

  /**
   * @param longRows rows of the long table (from the read floor's count)
   * @param writtenSeconds the long table's write in this run; 0 when reused
   * @param agree whether the two fits gave the same model
   * @param check what the model check found
   */
  record LongResult(BenchTable base, String tablePath, String spec, double writtenSeconds, long longRows,
      int partitions, Map<Leg, LegResult> legs, boolean agree, String check, List<Ratio> ratios) {}

  private LongRun() {}

  static LongResult run(SparkSession spark, BenchOptions options) {
    BenchTable base = BenchTables.prepare(spark, options.data(), options.rows(), options.features());
    Path dir = Path.of(base.path() + "-long");
    List<String> names = base.features();
    String spec = String.format(Locale.ROOT, "%s: %s, %d metrics melted to (host, ts, metric, value double), null "
        + "cells left out, partitioned by %s", GENERATOR, base.spec().replace('\n', ' '), names.size(),
        BenchTables.PARTITION_COLUMN);
    double written = prepareTable(spark, base, dir, spec);
    int partitions = spark.read().parquet(dir.toString()).rdd().getNumPartitions();
    Path work = ScalingRun.runWork(options).resolve("long");
    JobSettings wide = wideSettings(dir.toString(), names, work.resolve("spark-route").toString());
    JobSettings longFit = longSettings(dir.toString(), names, work.resolve("long-fit").toString());
    Map<Leg, long[]> windows = new EnumMap<>(Leg.class);
    double[] pivotSeconds = new double[1];
    try (StageLog log = StageLog.start(spark.sparkContext())) {
      List<Timer.Case<?>> bodies = List.of(
          new Timer.Case<>(Leg.READ_FLOOR.word, GroupRun.watched(windows, Leg.READ_FLOOR, () -> readFloor(spark,
              dir.toString()))),
          new Timer.Case<>(Leg.SPARK_ROUTE.word, GroupRun.watched(windows, Leg.SPARK_ROUTE, () -> {
            Dataset<Row> pivoted = pivot(spark, dir.toString(), names);
            return new FitJob(spark, Planner.plan(spark, wide, pivoted)).execute(pivoted);
          })),
          new Timer.Case<>(Leg.LONG_FIT.word, GroupRun.watched(windows, Leg.LONG_FIT, () -> longFit(spark, longFit,
              work.resolve("long-pivot").toString(), pivotSeconds))));
      List<Timer.Timed<?>> timed = Timer.runInTurn(spark.sparkContext(), options.warmups(), options.repetitions(),
          bodies);
      double[] floor = (double[]) timed.get(0).last();
      FitResult route = (FitResult) timed.get(1).last();
      FitResult ours = (FitResult) timed.get(2).last();
      Map<Leg, LegResult> legs = new EnumMap<>(Leg.class);
      for (Leg leg : Leg.values()) {
        Timer.Timed<?> t = timed.get(leg.ordinal());
        String fitStages = t.last() instanceof FitResult f ? (leg == Leg.LONG_FIT ? String.format(Locale.ROOT,
            "pivot staged %.3f, ", pivotSeconds[0]) : "") + GroupRun.stages(f.timings()) + ", " + (f.columnarRead()
            ? "columnar" : "Row path") : "";
        long[] w = windows.get(leg);
        List<StageLog.Stage> ran = log.between(w[0], w[1]);
        legs.put(leg, new LegResult(leg, t.timing(), fitStages, StageLog.describe(ran), each(ran)));
      }
      long longRows = (long) floor[floor.length - 1];
      String[] check = new String[1];
      boolean agree = sameModel(route, ours, check);
      return new LongResult(base, dir.toString(), spec, written, longRows, partitions, legs, agree, check[0],
          ratios(legs));
    }
  }

  /**
   * Writes the long table unless a copy of the same specification is there. Each input file is read whole by one
   * task (as the groups copy does), so the long table has one file per date like the main table; each wide row
   * becomes its metrics' rows by one generator ({@code inline} of an array of (metric, value) structs), nulls
   * filtered; host, ts and metric keep Parquet's dictionary encoding, the values go without.
   */
  private static double prepareTable(SparkSession spark, BenchTable base, Path dir, String spec) {
    if (spec.equals(BenchTables.readSpec(dir))) {
      System.out.printf(Locale.ROOT, "bench: reusing %s%n", dir);
      return 0;
    }
    System.out.printf(Locale.ROOT, "bench: writing %s long (%,d rows x %d metrics) into %s%n", base.path(),
        base.rows(), base.d(), dir);
    long t0 = System.nanoTime();
    BenchTables.deleteTree(dir);
    SparkSession copy = WriterSession.of(spark, Map.of()).newSession();
    copy.conf().set("spark.sql.files.maxPartitionBytes", String.valueOf(1L << 40));
    Dataset<Row> wide = copy.read().parquet(base.path());
    boolean partitioned = List.of(wide.columns()).contains(BenchTables.PARTITION_COLUMN);
    StringBuilder melt = new StringBuilder("inline(array(");
    for (int j = 0; j < base.d(); j++) {
      String m = base.features().get(j);
      melt.append(j == 0 ? "" : ", ").append("named_struct('metric', '").append(m.replace("'", "\\'"))
          .append("', 'value', cast(").append(Floors.quoted(m)).append(" as double))");
    }
    melt.append("))");
    List<String> select = new ArrayList<>(List.of("host", "ts"));
    if (partitioned) {
      select.add(BenchTables.PARTITION_COLUMN);
    }
    select.add(melt.toString());
    Dataset<Row> rows = wide.selectExpr(select.toArray(new String[0])).where("value is not null");
    List<Column> order = new ArrayList<>();
    for (String c : COLUMNS) {
      order.add(functions.col(c));
    }
    if (partitioned) {
      order.add(functions.col(BenchTables.PARTITION_COLUMN));
    }
    var writer = rows.select(order.toArray(new Column[0])).write().mode(SaveMode.Overwrite)
        .option("parquet.enable.dictionary#value", "false");
    if (partitioned) {
      writer = writer.partitionBy(BenchTables.PARTITION_COLUMN);
    }
    writer.parquet(dir.toString());
    BenchTables.writeSpec(dir, spec);
    double seconds = (System.nanoTime() - t0) / 1e9;
    System.out.printf(Locale.ROOT, "bench: wrote the long table in %.1f s%n", seconds);
    return seconds;
  }

  /** The read floor: the four columns' checksums and, last, the row count ({@link LongSums}). */
  static double[] readFloor(SparkSession spark, String path) {
    Dataset<Row> table = spark.read().parquet(path);
    ColumnarScan scan = ColumnarScan.of(table.select(COLUMNS.stream().map(functions::col).toArray(Column[]::new)));
    int[] ordinals = scan == null ? null : scan.ordinals(COLUMNS);
    if (ordinals == null) {
      throw new IllegalStateException("the long table " + path + " has no columnar Parquet scan of " + COLUMNS);
    }
    LongSums.Kind[] kinds = new LongSums.Kind[COLUMNS.size()];
    for (int j = 0; j < kinds.length; j++) {
      DataType t = table.schema().apply(COLUMNS.get(j)).dataType();
      kinds[j] = t.equals(DataTypes.StringType) ? LongSums.Kind.STRING : t.equals(DataTypes.TimestampType)
          ? LongSums.Kind.TIME : LongSums.Kind.DOUBLE;
    }
    JavaRDD<ColumnarBatch> batches = scan.batches();
    double[] total = new double[COLUMNS.size() + 1];
    for (double[] partial : batches.mapPartitions(new LongSums(ordinals, kinds)).collect()) {
      for (int j = 0; j < total.length; j++) {
        total[j] += partial[j];
      }
    }
    return total;
  }

  /** Spark's route to the wide table: one row per (host, 5-minute bucket), one column per metric, the mean. */
  static Dataset<Row> pivot(SparkSession spark, String path, List<String> names) {
    Column bucket = functions.expr("timestamp_seconds(unix_seconds(ts) - pmod(unix_seconds(ts), " + BUCKET_SECONDS
        + "))").as("bucket");
    return spark.read().parquet(path).groupBy(functions.col("host"), bucket)
        .pivot("metric", new ArrayList<Object>(names)).agg(functions.avg("value"));
  }

  /**
   * Our long fit's fit step, as the job runs it: the plan, the pivot staged as Parquet under {@code staging} and read
   * back, the plan completed with what the pivot found, the fit over the staged rows; nothing else written. The
   * pivot's seconds (its write and the read-back's opening) go to {@code pivotSeconds[0]}.
   */
  static FitResult longFit(SparkSession spark, JobSettings settings, String staging, double[] pivotSeconds) {
    JobPlan plan = Planner.plan(spark, settings);
    if (plan.longInput() == null) {
      throw new IllegalStateException("the long fit's plan has no long input");
    }
    LongTable.Staged staged = plan.longInput().stage(spark, staging);
    pivotSeconds[0] = staged.view().pivoted().seconds();
    return new FitJob(spark, Planner.afterPivot(plan, staged)).execute(staged.table());
  }

  /** The wide fit of the pivot's rows (its input.path only names the long table; the fit is given the pivot). */
  private static JobSettings wideSettings(String path, List<String> names, String output) {
    return read("bench-long-spark-route", List.of(
        "input.path = " + BenchJobs.quote(path),
        "features.columns = " + BenchJobs.list(names),
        "features.keys = [host, bucket]",
        "output.path = " + BenchJobs.quote(output),
        "output.mode = overwrite"));
  }

  private static JobSettings longSettings(String path, List<String> names, String output) {
    return read("bench-long-fit", List.of(
        "input.path = " + BenchJobs.quote(path),
        "input.layout = long",
        "input.long { entity = [host], time = ts, metric = metric, value = value, bucket = "
            + BenchJobs.quote(BUCKET) + ", aggregate = " + AGGREGATE + " }",
        "features.columns = " + BenchJobs.list(names),
        "output.path = " + BenchJobs.quote(output),
        "output.mode = overwrite"));
  }

  private static JobSettings read(String name, List<String> lines) {
    List<String> all = new ArrayList<>(List.of("name = " + BenchJobs.quote(name)));
    all.addAll(lines);
    all.add("prepare.scaling = standardize");
    all.add("reduce.method = covariance");
    all.add("reduce.components = " + BenchJobs.COMPONENTS);
    return new SettingsReader().readString(String.join("\n", all), List.of(), name);
  }

  /** Same rows, same k and every eigenvalue within {@link #TOLERANCE} relative; {@code says[0]} tells. */
  static boolean sameModel(FitResult route, FitResult ours, String[] says) {
    double[] a = route.model().eigenvalues();
    double[] b = ours.model().eigenvalues();
    double largest = 0;
    for (int i = 0; i < Math.min(a.length, b.length); i++) {
      largest = Math.max(largest, Math.abs(a[i] - b[i]) / Math.max(Math.abs(a[i]), Double.MIN_NORMAL));
    }
    boolean ok = route.model().k() == ours.model().k() && a.length == b.length && route.model().rows() == ours
        .model().rows() && largest <= TOLERANCE;
    says[0] = String.format(Locale.ROOT, "%s: k %d and %d, %,d and %,d rows fitted, %d and %d eigenvalues, largest "
        + "relative difference of an eigenvalue %.3g (tolerance %.0e)", ok ? "same model" : "DIFFERENT MODELS",
        route.model().k(), ours.model().k(), route.model().rows(), ours.model().rows(), a.length, b.length, largest,
        TOLERANCE);
    System.out.println("bench: long, " + says[0]);
    return ok;
  }

  private static List<Ratio> ratios(Map<Leg, LegResult> legs) {
    return List.of(
        ratio(legs, Leg.SPARK_ROUTE, Leg.LONG_FIT, Ratio.Target.atLeast(2)),
        ratio(legs, Leg.LONG_FIT, Leg.READ_FLOOR, null),
        ratio(legs, Leg.SPARK_ROUTE, Leg.READ_FLOOR, null));
  }

  /** "id name: tasks, wall, task time" for each stage, in order of submission. */
  private static String each(List<StageLog.Stage> stages) {
    List<String> parts = new ArrayList<>();
    for (StageLog.Stage st : stages) {
      parts.add(String.format(Locale.ROOT, "%d %s: %d tasks, %.2f s wall, %.2f s task time", st.id(), st.name()
          .replaceAll(" at .*", ""), st.tasks(), st.wallSeconds(), st.taskMillis() / 1e3));
    }
    return String.join("; ", parts);
  }

  /** The ratio of the medians, with the ratio of each repetition pair (the legs were timed in turn). */
  private static Ratio ratio(Map<Leg, LegResult> legs, Leg top, Leg bottom, Ratio.Target target) {
    double[] a = legs.get(top).timing().seconds();
    double[] b = legs.get(bottom).timing().seconds();
    double[] pairs = new double[a.length];
    for (int i = 0; i < a.length; i++) {
      pairs[i] = a[i] / b[i];
    }
    return new Ratio(top.word + " / " + bottom.word, legs.get(top).timing().median() / legs.get(bottom).timing()
        .median(), target, pairs);
  }

  static String render(LongResult r, List<String> header, int cores) {
    StringBuilder s = new StringBuilder(String.format(Locale.ROOT, "## Long input: %,d rows x %d metrics written "
        + "long%n%n", r.base().rows(), r.base().d()));
    header.forEach(h -> s.append(h).append('\n'));
    s.append(String.format(Locale.ROOT, "- main table: `%s`, %,d rows x %d metrics%n", GroupRun.shortPath(r.base()
        .path()), r.base().rows(), r.base().d()));
    s.append(String.format(Locale.ROOT, "- long table: `%s` (%s; %s), %,d rows (host string, ts timestamp, metric "
        + "string, value double), %d input partitions; Spark local[%d]%n", GroupRun.shortPath(r.tablePath()), r.spec(),
        r.writtenSeconds() > 0 ? String.format(Locale.ROOT, "written in %.0f s", r.writtenSeconds()) : "reused",
        r.longRows(), r.partitions(), cores));
    s.append("- both fits: covariance, k = 10, standardize, the metric names as the explicit feature list; one row "
        + "per (host, 5-minute bucket), the mean of its values per metric; rows with a missing metric dropped "
        + "(`prepare.missing = drop-rows`)\n");
    for (Leg leg : Leg.values()) {
      s.append("- ").append(leg.word).append(": ").append(leg.what).append('\n');
    }
    s.append("- the three legs time their repetitions in turn (repetition 1 of each, then 2, ...), after their "
        + "warm-ups; figures are medians; the machine's cores are shared with other work, so the figures are "
        + "indicative\n");
    s.append("- check: ").append(r.check()).append("\n\n");
    List<List<String>> rows = new ArrayList<>();
    for (LegResult l : r.legs().values()) {
      List<String> each = new ArrayList<>();
      for (double v : l.timing().seconds()) {
        each.add(Report.seconds(v));
      }
      rows.add(List.of(l.leg().word, String.valueOf(l.timing().repetitions()), Report.seconds(l.timing().median()),
          Report.seconds(l.timing().min()), String.join(", ", each)));
    }
    s.append(Report.table(List.of("leg", "reps", "median s", "min s", "each repetition s"), rows));
    s.append('\n');
    s.append(Report.table(List.of("ratio", "value", "target", "verdict"), MainReport.ratioRows(r.ratios())));
    s.append("\nRatios of each repetition pair (timed next to each other):\n\n");
    for (String line : MainReport.inTurnLines(r.ratios())) {
      s.append("- ").append(line).append('\n');
    }
    s.append("\nWhere the time went (last repetition: the fit's own timings, the long fit's staged pivot first; the "
        + "Spark stages by job group, wall and summed task time):\n\n");
    for (LegResult l : r.legs().values()) {
      s.append("- ").append(l.leg().word).append(": ").append(l.stages().isEmpty() ? "" : l.stages() + "; ")
          .append("stages: ").append(l.spark()).append('\n');
    }
    s.append("\nThe same stages one by one (stage id, call site; a shuffle's map side and reduce side are stages of "
        + "their own):\n\n");
    for (LegResult l : r.legs().values()) {
      s.append("- ").append(l.leg().word).append(": ").append(l.eachStage()).append('\n');
    }
    return s.toString();
  }
}
