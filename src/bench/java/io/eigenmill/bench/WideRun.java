package io.eigenmill.bench;

import io.eigenmill.engine.SessionSettings;
import io.eigenmill.io.TableLoader;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.plan.ScanSplits;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;

/**
 * Wide tables: the covariance method at d = 1,000 and 2,000 and the randomized method at d = 20,000 and 5,000, each
 * timed in turn with the read floor of the same table ({@link Floors#readFloor}, in the splits the plan chose) and
 * watched: the peak heap in use ({@link HeapWatch}) against the JVM's maximum (the script gives this run 4 GiB), and
 * every allocation outside a TLAB ({@link LargeAllocations}) during the first, untimed run, to show the largest
 * single array and whether any reached the size of a d x d array of doubles. Where the plan cuts the scan into
 * other splits than Spark would, the read floor also runs once in Spark's own splits.
 *
 * <p>Rows: the case's cells / d (capped by --rows): {@link #CELLS} for most, so that those tables hold about the
 * same number of values (200 million: 1.6 GB of doubles before compression): 200,000 rows at d = 1,000, 10,000 at
 * d = 20,000; and 100,000 rows at d = 5,000 (4 GB of doubles: more than a 4 GiB heap's storage memory, so the
 * randomized passes stream from the files).
 *
 * <p>Targets: fit / read floor <= 1.5 at d = 2,000 (covariance, one pass); fit / (passes x read floor) <= 1.5 at
 * d = 5,000 (randomized); at d = 20,000 fit / read floor <= 2 (the target allows the driver's solve on top; it is
 * counted in the fit here, so the bound is stricter) and 185 s / fit >= 10 (185 s: the fit's time before the wide
 * scans were reworked).
 */
final class WideRun {
  static final long CELLS = 200_000_000L;
  static final long SMOKE_CELLS = 2_000_000L;
  static final long MIN_ROWS = 100;
  /** The driver heap the wide cases are meant to fit in. */
  static final long HEAP_LIMIT = 4L << 30;
  /** The smoke run's tables hold this share of the cells of the full run's. */
  static final long SMOKE_DIVISOR = CELLS / SMOKE_CELLS;
  /** The wide fit's time before the wide scans were reworked (d = 20,000, 10,000 rows, randomized). */
  static final double BEFORE_SECONDS = 185;
  static final List<WideCase> CASES = List.of(new WideCase(1000, "covariance"), new WideCase(2000, "covariance"),
      new WideCase(20000, "randomized"), new WideCase(5000, "randomized", 500_000_000L));
  private static final String MAX_FIELDS = "spark.sql.codegen.maxFields";

  /** @param cells values in the full run's table (rows = cells / d) */
  record WideCase(int d, String method, long cells) {
    WideCase(int d, String method) {
      this(d, method, CELLS);
    }
  }

  /**
   * @param timing the fit's timed repetitions
   * @param floor the read floor's, timed in turn with the fit's
   * @param defaultFloor the read floor in Spark's own splits, once, or null when the plan keeps Spark's splits
   * @param allocations the first run's allocations outside TLABs
   * @param squareBytes bytes of a d x d array of doubles
   * @param stages the last timed fit's stage times (the fit's own clock)
   * @param splits the plan's splits of the scan
   */
  record WideResult(WideCase which, BenchTable table, Timing timing, Timing floor, Timing defaultFloor,
      long peakHeapBytes, long maxHeapBytes, LargeAllocations.Summary allocations, long squareBytes,
      boolean columnar, int passes, String estimate, Map<String, Double> stages, ScanSplits splits) {

    /** The ratios of this case and their targets (see the class comment). */
    List<Ratio> ratios() {
      List<Ratio> out = new ArrayList<>();
      String name = "d = " + which.d() + " " + which.method();
      double fit = timing.median();
      double read = floor.median();
      boolean widest = which.method().equals("randomized") && which.cells() == CELLS;
      out.add(new Ratio(name + ": fit / read floor", fit / read, which.method().equals("covariance")
          ? (which.d() == 2000 ? Ratio.Target.atMost(1.5) : null) : widest ? Ratio.Target.atMost(2) : null,
          inTurn(timing, floor, 1)));
      if (passes > 1) {
        out.add(new Ratio(name + ": fit / (" + passes + " passes x read floor)", fit / (passes * read),
            widest ? null : Ratio.Target.atMost(1.5), inTurn(timing, floor, passes)));
      }
      if (widest) {
        out.add(new Ratio(name + ": " + Report.number(BEFORE_SECONDS) + " s / fit", BEFORE_SECONDS / fit,
            Ratio.Target.atLeast(10)));
      }
      return out;
    }
  }

  /** Repetition i of {@code top} over {@code times} x repetition i of {@code bottom}. */
  private static double[] inTurn(Timing top, Timing bottom, int times) {
    double[] a = top.seconds();
    double[] b = bottom.seconds();
    double[] r = new double[Math.min(a.length, b.length)];
    for (int i = 0; i < r.length; i++) {
      r[i] = a[i] / (times * b[i]);
    }
    return r;
  }

  private WideRun() {}

  /**
   * Runs {@code cases}, each on a table of its cells / {@code divisor} / d rows ({@link #SMOKE_DIVISOR} for a smoke
   * run, 1 for the full one).
   */
  static List<WideResult> run(SparkSession spark, BenchOptions options, List<WideCase> cases, long divisor) {
    List<WideResult> out = new ArrayList<>();
    for (WideCase c : cases) {
      long rows = Math.min(options.rows(), Math.max(MIN_ROWS, c.cells() / divisor / c.d()));
      String fields = Integer.toString(Math.max(Integer.parseInt(spark.conf().get(MAX_FIELDS)), c.d() + 64));
      // the columnar Parquet reader serves batches only up to this many columns
      out.add(SessionSettings.with(spark.conf(), Map.of(MAX_FIELDS, fields),
          () -> one(spark, options, c, BenchTables.prepare(spark, options.data(), rows, c.d()))));
    }
    return out;
  }

  private static WideResult one(SparkSession spark, BenchOptions options, WideCase c, BenchTable table) {
    List<String> columns = Benchmark.allNumeric(spark, table) ? List.of() : table.features();
    JobSettings settings = BenchJobs.fit(table, columns, c.method(), ScalingRun.workFor(options, table)
        .resolve("fit-output").toString());
    JobPlan plan = Planner.plan(spark, settings);
    if (plan.d() != c.d()) {
      throw new IllegalStateException("the planner resolved " + plan.d() + " features, expected " + c.d());
    }
    String name = "wide-" + c.method() + "-" + c.d();
    long square = (long) c.d() * c.d() * Double.BYTES;
    System.gc();
    try (HeapWatch heap = HeapWatch.start(); LargeAllocations record = LargeAllocations.start()) {
      System.out.printf(Locale.ROOT, "bench: %s first run (untimed, allocations recorded)%n", name);
      FitResult first = fit(spark, plan, settings);
      LargeAllocations.Summary allocations = record.stop(square);
      Dataset<Row> input = TableLoader.load(spark, settings.input());
      // the untimed run above warms the fit up; the read floor gets its own warm-ups
      for (int w = 0; w < options.warmups(); w++) {
        Floors.readFloor(input, plan.features(), plan.splitBytes());
        System.out.printf(Locale.ROOT, "bench: read-floor-%d warm-up done%n", c.d());
      }
      List<Timer.Timed<?>> timed = Timer.runInTurn(spark.sparkContext(), 0, options.repetitions(), List.of(
          new Timer.Case<>(name, () -> fit(spark, plan, settings)),
          new Timer.Case<>("read-floor-" + c.d(), () -> Floors.readFloor(input, plan.features(),
              plan.splitBytes()))));
      ScanSplits splits = plan.splits();
      Timing defaultFloor = null;
      if (splits != null && splits.applied() > 0) {
        defaultFloor = Timer.run(spark.sparkContext(), "read-floor-" + c.d() + "-spark-splits", 0, 1,
            () -> Floors.readFloor(input, plan.features(), 0)).timing();
      }
      FitResult last = (FitResult) timed.get(0).last();
      return new WideResult(c, table, timed.get(0).timing(), timed.get(1).timing(), defaultFloor, heap.peakBytes(),
          Machine.maxHeap(), allocations, square, first.columnarRead(), first.passes(),
          plan.memory().describe(), last.timings(), splits);
    }
  }

  private static FitResult fit(SparkSession spark, JobPlan plan, JobSettings settings) {
    return new FitJob(spark, plan).execute(TableLoader.load(spark, settings.input()));
  }

  static String render(List<WideResult> results, List<String> header) {
    StringBuilder s = new StringBuilder("## Wide tables\n\n");
    header.forEach(h -> s.append(h).append('\n'));
    long max = results.isEmpty() ? Machine.maxHeap() : results.get(0).maxHeapBytes();
    s.append("- each fit: `FitJob.execute`, k = 10, standardize, no output; the first run of each is untimed and "
        + "records every allocation outside a TLAB (JFR); the peak heap in use covers all runs and counts garbage "
        + "not yet collected (the collector lets the old generation fill before it collects it), so near the maximum "
        + "it says that the fit allocates fast, not that it keeps that much alive; the fit completing in this heap is "
        + "the test; in local mode the driver is the executor, so this is also the peak executor heap\n");
    s.append("- read floor: Spark's columnar batches of the same features summed column by column "
        + "(`Floors.readFloor`, as the main section's read-floor case), in the splits the plan chose for the fit, "
        + "one untimed warm-up, then timed in turn with the fit (fit 1, floor 1, fit 2, ...); where the plan's "
        + "splits differ from Spark's own, the floor also runs once in Spark's splits\n");
    if (max > HEAP_LIMIT) {
      s.append("- **note**: this JVM's heap is ").append(Report.bytes(max))
          .append(", above the 4 GiB the wide cases are meant for (the script sets -Xmx4g for --wide)\n");
    }
    s.append('\n');
    List<List<String>> rows = new ArrayList<>();
    for (WideResult r : results) {
      LargeAllocations.Summary a = r.allocations();
      rows.add(List.of(Integer.toString(r.which().d()), r.which().method(),
          String.format(Locale.ROOT, "%,d", r.table().rows()), Report.seconds(r.timing().min()),
          Report.seconds(r.timing().median()), Report.bytes(r.peakHeapBytes()) + " of " + Report.bytes(
          r.maxHeapBytes()), Report.bytes(a.largestBytes()) + " " + a.largestType() + " in " + a.largestWhere(),
          Report.bytes(r.squareBytes()), a.atLeastThreshold() == 0 ? "none" : Long.toString(a.atLeastThreshold()),
          r.passes() + (r.columnar() ? ", columnar" : ", Row path"), r.estimate()));
    }
    s.append(Report.table(List.of("d", "method", "rows", "min s", "median s", "peak heap in use",
        "largest single allocation", "a d x d double array", "allocations >= d x d doubles", "passes, read",
        "plan's memory estimate"), rows)).append('\n');
    s.append("### Fit against the read floor\n\nMedians; the fit's stages are its own clock in the last timed "
        + "repetition (the first pass, then the later passes with the driver's solve).\n\n");
    List<List<String>> floors = new ArrayList<>();
    for (WideResult r : results) {
      floors.add(List.of(Integer.toString(r.which().d()), r.which().method(),
          String.format(Locale.ROOT, "%,d", r.table().rows()), Report.seconds(r.timing().median()),
          Report.seconds(r.floor().median()), Report.number(r.timing().median() / r.floor().median()),
          r.passes() > 1 ? Report.number(r.timing().median() / (r.passes() * r.floor().median())) : "",
          stages(r), splitCount(r), r.defaultFloor() == null ? "" : Report.seconds(r.defaultFloor().median())));
    }
    s.append(Report.table(List.of("d", "method", "rows", "fit s", "read floor s", "fit / read floor",
        "fit / (passes x read floor)", "fit's stages", "splits: plan (Spark's own)",
        "read floor in Spark's splits s"), floors)).append('\n');
    List<Ratio> ratios = new ArrayList<>();
    results.forEach(r -> ratios.addAll(r.ratios()));
    s.append("### Ratios and targets\n\n").append(Report.table(List.of("ratio", "value", "target", "verdict"),
        MainReport.ratioRows(ratios))).append('\n');
    List<String> pairs = MainReport.inTurnLines(ratios);
    if (!pairs.isEmpty()) {
      s.append("Timed in turn, repetition by repetition:\n\n");
      pairs.forEach(line -> s.append("- ").append(line).append('\n'));
      s.append('\n');
    }
    s.append("### Splits (the plan's line)\n\n");
    for (WideResult r : results) {
      s.append("- d = ").append(r.which().d()).append(": ").append(r.splits() == null ? "not planned"
          : r.splits().line()).append('\n');
    }
    return s.toString();
  }

  /** "first pass 18.7 s + later passes and solve 3.1 s" from the fit's own clock. */
  private static String stages(WideResult r) {
    Double first = r.stages().get("moments");
    Double rest = r.stages().get(r.which().method());
    if (first == null || rest == null) {
      return "";
    }
    return String.format(Locale.ROOT, r.passes() > 1 ? "first pass %.2f s + later passes and solve %.2f s"
        : "pass %.2f s + solve %.2f s", first, rest);
  }

  private static String splitCount(WideResult r) {
    ScanSplits p = r.splits();
    if (p == null || p.splits() < 0) {
      return "Spark's";
    }
    return p.splits() + " (" + p.sparkSplits() + ")";
  }

  /** The ratios as console lines. */
  static void print(List<WideResult> results) {
    for (WideResult r : results) {
      for (Ratio q : r.ratios()) {
        System.out.printf(Locale.ROOT, "bench: %-52s %10s  %-8s %s%n", q.name(), Report.number(q.value()),
            q.target() == null ? "" : q.target().describe(), q.verdict());
      }
    }
  }
}
