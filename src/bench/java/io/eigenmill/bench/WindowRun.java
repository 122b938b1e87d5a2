package io.eigenmill.bench;

import io.eigenmill.engine.SparkLine;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.plan.Planner;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.nio.file.Path;
import java.time.LocalDate;
import java.util.Iterator;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.SplittableRandom;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.rdd.RDD;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.catalyst.InternalRow;
import org.apache.spark.sql.catalyst.expressions.GenericInternalRow;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.apache.spark.unsafe.types.UTF8String;

/**
 * Windows: the refit of a 7-day window from moment snapshots (one per day, written by an earlier fit) against the
 * fit of the same window from its rows, at several rows per day. The table has {@link #DAYS} daily partitions,
 * each split into {@link #SLICES} slices ({@code date=X/slice=Y}; {@link #DISTINCT_SLICES} with rows of their own, the others linked), so that rows per
 * day vary by partition pruning ({@code slice < S}) with the columnar read kept and one table generated once.
 *
 * <p>Per variant S: a snapshot store keyed by date is written first (untimed set-up: one fit over the 30 days with
 * {@code input.where = "slice < S"}); then four bodies are timed in turn, repetition by repetition: the fit step
 * ({@code Planner.plan} + {@code FitJob.execute}, no output) from the snapshots and from the rows, and the whole job
 * ({@code JobRunner.run}: plan, fit, model/, spectrum/, components/, summary.json, report.html, commit) from each.
 */
final class WindowRun {
  static final int DAYS = 30;
  static final int SLICES = 10;
  /**
   * Slices generated with rows of their own; slice k >= 3 holds hard links to the files of slice k mod 3. Writing
   * all ten (7 GB) took some 16 minutes on the 2-core benchmark machine under load; reading a linked file costs what
   * reading its original does (the same bytes decoded), and the covariance of repeated rows is still a covariance.
   */
  static final int DISTINCT_SLICES = 3;
  static final String FIRST_DAY = "2026-11-01";
  static final String WINDOW = "date >= '2026-11-20' and date <= '2026-11-26'";
  static final int WINDOW_DAYS = 7;
  /** Rows of one (date, slice) folder: 30,000 (300,000 a day over the 10 slices); 200 with --smoke. */
  static final long ROWS_PER_SLICE = 30_000L;
  static final long SMOKE_ROWS_PER_SLICE = 200L;
  /** The variants: slices read per day (slice < S). */
  static final int[] SLICES_READ = {1, 3, 10};
  static final int FACTORS = 5;
  static final long SEED = 20261101L;
  /**
   * The rows of one Spark partition, one (date, slice) cell: feature j is a fixed mix of {@link #FACTORS} Gaussian
   * factors plus its own noise, with a level and spread that drift a little with the day (so that windows differ),
   * scaled by 10^-2 .. 10^4. Seeded per cell: the same rows whatever runs where.
   */
  static final class Rows implements FlatMapFunction<Iterator<Object>, InternalRow> {
    private static final long serialVersionUID = 1L;
    private final long seed;
    private final long perSlice;
    private final double[] mix;
    private final double[] noise;
    private final double[] scale;
    private final double[] level;
    private final double[] drift;
    private final double[] spread;

    Rows(long seed, long perSlice, int d) {
      this.seed = seed;
      this.perSlice = perSlice;
      SplittableRandom r = new SplittableRandom(seed);
      mix = new double[d * FACTORS];
      noise = new double[d];
      scale = new double[d];
      level = new double[d];
      drift = new double[d];
      spread = new double[d];
      for (int j = 0; j < d; j++) {
        for (int k = 0; k < FACTORS; k++) {
          mix[j * FACTORS + k] = r.nextGaussian() * (FACTORS - k);
        }
        noise[j] = 0.5 + r.nextDouble();
        scale[j] = Math.pow(10, r.nextInt(-2, 5));
        level[j] = 100 * r.nextDouble();
        drift[j] = r.nextGaussian();
        spread[j] = 0.01 * r.nextDouble();
      }
    }

    @Override
    public Iterator<InternalRow> call(Iterator<Object> ids) {
      List<InternalRow> out = new ArrayList<>();
      int d = noise.length;
      double[] f = new double[FACTORS];
      SplittableRandom r = null;
      while (ids.hasNext()) {
        long id = (Long) ids.next();
        long cell = id / perSlice;
        int day = (int) (cell / DISTINCT_SLICES);
        if (r == null) {
          r = new SplittableRandom(seed * 1_000_003L + cell);
        }
        for (int k = 0; k < FACTORS; k++) {
          f[k] = r.nextGaussian();
        }
        Object[] v = new Object[d + 2];
        for (int j = 0; j < d; j++) {
          double x = noise[j] * r.nextGaussian();
          for (int k = 0; k < FACTORS; k++) {
            x += mix[j * FACTORS + k] * f[k];
          }
          v[j] = ((1 + spread[j] * day) * x + drift[j] * day + level[j]) * scale[j];
        }
        v[d] = UTF8String.fromString(LocalDate.parse(FIRST_DAY).plusDays(day).toString());
        v[d + 1] = (int) (cell % DISTINCT_SLICES);
        out.add(new GenericInternalRow(v));
      }
      return out.iterator();
    }
  }

  /** Bumped when the generated rows change, so that an older table is regenerated. */
  private static final String GENERATOR = "window-table v3";

  /** The four timed bodies of a variant, in the order they run in turn. */
  enum Body {
    SNAPSHOT_FIT("snapshot-fit"), DATA_FIT("data-fit"), SNAPSHOT_JOB("snapshot-job"), DATA_JOB("data-job");

    final String word;

    Body(String word) {
      this.word = word;
    }
  }

  /**
   * One variant's timings, indexed by {@link Body}, the stages of each fit's last repetition, and the set-up.
   *
   * @param rowsPerDay rows a day reads (every row is complete)
   * @param windowRows rows of the 7-day window (the data fit's rows; the snapshots' merged count)
   * @param setupSeconds the untimed fit that wrote the snapshot store of this variant (30 days)
   */
  record Variant(int slices, long rowsPerDay, long windowRows, Timing[] timings, Timing[] fitStages,
      String[] stages, double setupSeconds) {
    double median(Body b) {
      return timings[b.ordinal()].median();
    }

    /** Median seconds of {@code m} on the snapshot side (0) or the data side (1). */
    double median(Measure m, int side) {
      return switch (m) {
        case STAGES -> fitStages[side].median();
        case FIT -> median(side == 0 ? Body.SNAPSHOT_FIT : Body.DATA_FIT);
        case JOB -> median(side == 0 ? Body.SNAPSHOT_JOB : Body.DATA_JOB);
      };
    }
  }

  /** What is compared, from the narrowest to the whole job. */
  enum Measure {
    STAGES("fit stages", "the sum of `FitResult.timings()` (snapshots: snapshots + covariance + model; rows: "
        + "plan (opening the input) + moments + covariance + model), from the same repetitions as the fit step"),
    FIT("fit step", "`Planner.plan` + `FitJob.execute`, wall clock: planning included (the schema and partition "
        + "listing for the rows; the store's key listing, the `input.where` selection over the keys and the "
        + "snapshot reads for the snapshots); no output written"),
    JOB("whole job", "`JobRunner.run`, wall clock: plan, fit, model/, spectrum/, components/, summary.json, "
        + "report.html, atomic commit");

    final String word;
    final String covers;

    Measure(String word, String covers) {
      this.word = word;
      this.covers = covers;
    }
  }

  record WindowResult(String tablePath, String spec, double generatedSeconds, int d, List<Variant> variants) {}

  private WindowRun() {}

  static WindowResult run(SparkSession spark, BenchOptions options) {
    long perSlice = options.smoke() ? SMOKE_ROWS_PER_SLICE : ROWS_PER_SLICE;
    int d = options.features();
    double[] generated = new double[1];
    String spec = String.format(Locale.ROOT, "%s: %d days from %s x %d slices x %d rows (slices %d-%d hard "
        + "links to slice k mod %d), %d double features, %d factors, seed %d", GENERATOR, DAYS, FIRST_DAY, SLICES,
        perSlice, DISTINCT_SLICES, SLICES - 1, DISTINCT_SLICES, d, FACTORS, SEED);
    Path dir = options.data().resolve(String.format(Locale.ROOT, "windows-%d-days-%d-slices-%d-rows-%d-features",
        DAYS, SLICES, perSlice, d)).toAbsolutePath();
    prepareTable(spark, dir, spec, perSlice, d, generated);
    List<String> features = features(d);
    Path work = ScalingRun.runWork(options).resolve("windows");
    List<Variant> variants = new ArrayList<>();
    for (int s : SLICES_READ) {
      variants.add(variant(spark, options, dir, features, work, s, perSlice));
    }
    return new WindowResult(dir.toString(), spec, generated[0], d, variants);
  }

  static List<String> features(int d) {
    List<String> out = new ArrayList<>();
    for (int j = 0; j < d; j++) {
      out.add(String.format(Locale.ROOT, "m_%03d", j));
    }
    return out;
  }

  /**
   * Writes the table unless a folder with the same specification is there: one Spark partition per (date, slice)
   * folder (a range of {@code perSlice} ids each), so every folder gets one file ({@link Rows}).
   */
  private static void prepareTable(SparkSession spark, Path dir, String spec, long perSlice, int d,
      double[] seconds) {
    if (spec.equals(BenchTables.readSpec(dir))) {
      System.out.printf(Locale.ROOT, "bench: reusing %s%n", dir);
      return;
    }
    long rows = DAYS * DISTINCT_SLICES * perSlice;
    System.out.printf(Locale.ROOT, "bench: generating %,d rows x %d features (%d days x %d slices, slices %d-%d "
        + "linked) into %s%n", rows, d, DAYS, DISTINCT_SLICES, DISTINCT_SLICES, SLICES - 1, dir);
    long t0 = System.nanoTime();
    BenchTables.deleteTree(dir);
    StructType schema = new StructType();
    for (String f : features(d)) {
      schema = schema.add(f, DataTypes.DoubleType, false);
    }
    schema = schema.add("date", DataTypes.StringType, false).add("slice", DataTypes.IntegerType, false);
    RDD<Object> ids = spark.sparkContext().range(0, rows, 1, DAYS * DISTINCT_SLICES);
    JavaRDD<InternalRow> table = ids.toJavaRDD().mapPartitions(new Rows(SEED, perSlice, d));
    // continuous values: no dictionary (trying one per column chunk only costs time, as in the fleet generator)
    SparkLine.fromInternalRows(spark, table.rdd(), schema).write().partitionBy("date", "slice")
        .option("parquet.enable.dictionary", "false").parquet(dir.toString());
    link(dir);
    BenchTables.writeSpec(dir, spec);
    seconds[0] = (System.nanoTime() - t0) / 1e9;
    System.out.printf(Locale.ROOT, "bench: generated in %.0f s%n", seconds[0]);
  }

  /** Slices {@link #DISTINCT_SLICES} .. {@link #SLICES} - 1 of every day: hard links to slice k mod 3's files. */
  private static void link(Path dir) {
    try (var days = java.nio.file.Files.list(dir)) {
      for (Path day : days.filter(java.nio.file.Files::isDirectory).toList()) {
        for (int k = DISTINCT_SLICES; k < SLICES; k++) {
          Path from = day.resolve("slice=" + (k % DISTINCT_SLICES));
          Path to = java.nio.file.Files.createDirectories(day.resolve("slice=" + k));
          try (var files = java.nio.file.Files.list(from)) {
            for (Path f : files.toList()) {
              java.nio.file.Files.createLink(to.resolve(f.getFileName()), f);
            }
          }
        }
      }
    } catch (java.io.IOException e) {
      throw new java.io.UncheckedIOException("cannot link the slices of " + dir, e);
    }
  }

  private static Variant variant(SparkSession spark, BenchOptions options, Path table, List<String> features,
      Path work, int s, long perSlice) {
    Path store = work.resolve("store-slices-" + s);
    String slices = "slice < " + s;
    System.out.printf(Locale.ROOT, "bench: windows, slice < %d (%,d rows a day): writing the snapshot store "
        + "(untimed, %d days)%n", s, s * perSlice, DAYS);
    long t0 = System.nanoTime();
    JobRunner.run(spark, settings("bench-windows-store", String.join("\n",
        "input.path = " + BenchJobs.quote(table.toString()),
        "input.where = " + BenchJobs.quote(slices),
        "snapshots.by = [date]",
        "output.snapshots = " + BenchJobs.quote(store.toString()),
        "output.path = " + BenchJobs.quote(work.resolve("store-output-" + s).toString()),
        "output.mode = overwrite"), features));
    double setup = (System.nanoTime() - t0) / 1e9;
    JobSettings fromSnapshots = settings("bench-windows-snapshots", String.join("\n",
        "input.snapshots = " + BenchJobs.quote(store.toString()),
        "input.where = " + BenchJobs.quote(WINDOW),
        "output.path = " + BenchJobs.quote(work.resolve("snapshot-output").toString()),
        "output.mode = overwrite"), features);
    JobSettings fromData = settings("bench-windows-data", String.join("\n",
        "input.path = " + BenchJobs.quote(table.toString()),
        "input.where = " + BenchJobs.quote(slices + " and " + WINDOW),
        "output.path = " + BenchJobs.quote(work.resolve("data-output").toString()),
        "output.mode = overwrite"), features);
    String tag = " S=" + s;
    List<Double> snapStages = new ArrayList<>();
    List<Double> dataStages = new ArrayList<>();
    List<Timer.Case<?>> cases = List.of(
        new Timer.Case<>(Body.SNAPSHOT_FIT.word + tag, () -> kept(new FitJob(spark, Planner.plan(spark,
            fromSnapshots)).execute(null), snapStages)),
        new Timer.Case<>(Body.DATA_FIT.word + tag, () -> kept(new FitJob(spark, Planner.plan(spark, fromData))
            .execute(), dataStages)),
        new Timer.Case<>(Body.SNAPSHOT_JOB.word + tag, () -> JobRunner.run(spark, fromSnapshots)),
        new Timer.Case<>(Body.DATA_JOB.word + tag, () -> JobRunner.run(spark, fromData)));
    List<Timer.Timed<?>> timed = Timer.runInTurn(spark.sparkContext(), options.warmups(), options.repetitions(),
        cases);
    FitResult snapFit = (FitResult) timed.get(0).last();
    FitResult dataFit = (FitResult) timed.get(1).last();
    RunResult snapJob = (RunResult) timed.get(2).last();
    RunResult dataJob = (RunResult) timed.get(3).last();
    long windowRows = dataFit.model().rows();
    if (snapFit.model().rows() != windowRows || snapJob.model().rows() != windowRows
        || dataJob.model().rows() != windowRows) {
      throw new IllegalStateException("the window's fits disagree on its rows: snapshots " + snapFit.model().rows()
          + ", data " + windowRows);
    }
    if (windowRows != WINDOW_DAYS * s * perSlice) {
      throw new IllegalStateException("the window holds " + windowRows + " rows, expected " + WINDOW_DAYS * s
          * perSlice);
    }
    double relGap = Math.abs(snapFit.model().eigenvalues()[0] - dataFit.model().eigenvalues()[0])
        / dataFit.model().eigenvalues()[0];
    if (relGap > 1e-9) {
      throw new IllegalStateException("the window's fits disagree: first eigenvalue " + snapFit.model()
          .eigenvalues()[0] + " from snapshots, " + dataFit.model().eigenvalues()[0] + " from rows");
    }
    Timing[] timings = new Timing[Body.values().length];
    for (int i = 0; i < timings.length; i++) {
      timings[i] = timed.get(i).timing();
    }
    String[] stages = {stages(snapFit.timings()), stages(dataFit.timings()) + (dataFit.columnarRead()
        ? ", columnar" : ", Row path"), stages(snapJob.timings()), stages(dataJob.timings())};
    int reps = options.repetitions();
    Timing[] fitStages = {new Timing(last(snapStages, reps)), new Timing(last(dataStages, reps))};
    return new Variant(s, s * perSlice, windowRows, timings, fitStages, stages, setup);
  }

  /** Keeps the sum of the fit's own stage timings in {@code sums}. */
  private static FitResult kept(FitResult f, List<Double> sums) {
    sums.add(f.timings().values().stream().mapToDouble(Double::doubleValue).sum());
    return f;
  }

  private static double[] last(List<Double> values, int n) {
    return values.subList(values.size() - n, values.size()).stream().mapToDouble(Double::doubleValue).toArray();
  }

  private static JobSettings settings(String name, String hocon, List<String> features) {
    String text = String.join("\n",
        "name = " + BenchJobs.quote(name),
        hocon,
        "features.columns = " + BenchJobs.list(features),
        "prepare.scaling = standardize",
        "reduce.method = covariance",
        "reduce.components = " + BenchJobs.COMPONENTS);
    return new SettingsReader().readString(text, List.of(), name);
  }

  private static String stages(Map<String, Double> seconds) {
    List<String> parts = new ArrayList<>();
    seconds.forEach((stage, v) -> parts.add(stage + " " + String.format(Locale.ROOT, "%.3f", v)));
    return String.join(", ", parts);
  }

  static String render(WindowResult r, List<String> header) {
    StringBuilder s = new StringBuilder("## Windows: a 7-day refit from snapshots against the data fit\n\n");
    header.forEach(h -> s.append(h).append('\n'));
    s.append(String.format(Locale.ROOT, "- table: `%s` (%s; %s)%n", shortPath(r.tablePath()), r.spec(),
        r.generatedSeconds() > 0 ? String.format(Locale.ROOT, "generated in %.0f s", r.generatedSeconds())
            : "reused"));
    s.append("- window: `").append(WINDOW).append("` (7 of 30 days); rows per day by partition pruning, `slice < S`;"
        + " covariance, k = 10, standardize, explicit feature list\n");
    s.append("- set-up per S (untimed): one fit over the 30 days with `input.where = \"slice < S\"`, "
        + "`snapshots.by = [date]`, `output.snapshots` = the store of S:");
    for (Variant v : r.variants()) {
      s.append(String.format(Locale.ROOT, " S = %d %.1f s;", v.slices(), v.setupSeconds()));
    }
    s.setLength(s.length() - 1);
    s.append('\n');
    for (Measure m : Measure.values()) {
      s.append("- ").append(m.word).append(": ").append(m.covers).append('\n');
    }
    s.append("- the four timed bodies of a variant (fit step and whole job, each from snapshots and from rows) run "
        + "their repetitions in turn; ratios are of medians; both sides checked to fit the same rows and the same "
        + "first eigenvalue\n\n");
    List<List<String>> rows = new ArrayList<>();
    Variant first = r.variants().get(0);
    Variant lastV = r.variants().get(r.variants().size() - 1);
    for (Measure m : Measure.values()) {
      for (Variant v : r.variants()) {
        rows.add(List.of(m.word, String.format(Locale.ROOT, "%,d", v.rowsPerDay()), String.format(Locale.ROOT,
            "%,d", v.windowRows()), Report.seconds(v.median(m, 0)), Report.seconds(v.median(m, 1)),
            Report.number(v.median(m, 1) / v.median(m, 0))));
      }
      rows.add(List.of(m.word, String.format(Locale.ROOT, "growth %,d -> %,d", first.rowsPerDay(),
          lastV.rowsPerDay()), "", Report.number(lastV.median(m, 0) / first.median(m, 0)) + "x",
          Report.number(lastV.median(m, 1) / first.median(m, 1)) + "x", ""));
    }
    s.append(Report.table(List.of("measure", "rows per day", "window rows", "from snapshots s", "from rows s",
        "ratio rows / snapshots"), rows));
    Variant last = r.variants().get(r.variants().size() - 1);
    for (Measure m : List.of(Measure.STAGES, Measure.FIT)) {
      double ratio = last.median(m, 1) / last.median(m, 0);
      s.append(String.format(Locale.ROOT, "%nTarget, %s: rows / snapshots at %,d rows per day >= 20: %s (%s).",
          m.word, last.rowsPerDay(), ratio >= 20 ? "met" : "not met", Report.number(ratio)));
    }
    s.append("\n\n");
    s.append("Stages of the last repetition (seconds, the fit's own timings):\n\n");
    for (Variant v : r.variants()) {
      s.append(String.format(Locale.ROOT, "- %,d rows per day: snapshot fit (%s); data fit (%s); snapshot job (%s);"
          + " data job (%s)%n", v.rowsPerDay(), v.stages()[0], v.stages()[1], v.stages()[2], v.stages()[3]));
    }
    return s.toString();
  }

  private static String shortPath(String path) {
    int i = path.indexOf("local-demo/");
    return i < 0 ? path : path.substring(i);
  }
}
