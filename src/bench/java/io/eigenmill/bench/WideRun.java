package io.eigenmill.bench;

import io.eigenmill.io.TableLoader;
import io.eigenmill.pca.FitJob;
import io.eigenmill.pca.FitResult;
import io.eigenmill.plan.JobPlan;
import io.eigenmill.plan.Planner;
import io.eigenmill.settings.JobSettings;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.SparkSession;

/**
 * Wide tables: the covariance method at d = 1,000 and 2,000 and the randomized method at d = 20,000, each timed and
 * watched: the peak heap in use ({@link HeapWatch}) against the JVM's maximum (the script gives this run 4 GiB), and
 * every allocation outside a TLAB ({@link LargeAllocations}) during the first, untimed run, to show the largest
 * single array and whether any reached the size of a d x d array of doubles.
 *
 * <p>Rows: {@link #CELLS} / d (capped by --rows), so that every wide table holds about the same number of values
 * (200 million: 1.6 GB of doubles before compression): 200,000 rows at d = 1,000, 10,000 at d = 20,000.
 */
final class WideRun {
  static final long CELLS = 200_000_000L;
  static final long SMOKE_CELLS = 2_000_000L;
  static final long MIN_ROWS = 100;
  /** The driver heap the wide cases are meant to fit in. */
  static final long HEAP_LIMIT = 4L << 30;
  static final List<WideCase> CASES = List.of(new WideCase(1000, "covariance"), new WideCase(2000, "covariance"),
      new WideCase(20000, "randomized"));
  private static final String MAX_FIELDS = "spark.sql.codegen.maxFields";

  record WideCase(int d, String method) {}

  /**
   * @param allocations the first run's allocations outside TLABs
   * @param squareBytes bytes of a d x d array of doubles
   */
  record WideResult(WideCase which, BenchTable table, Timing timing, long peakHeapBytes, long maxHeapBytes,
      LargeAllocations.Summary allocations, long squareBytes, boolean columnar, int passes, String estimate) {}

  private WideRun() {}

  static List<WideResult> run(SparkSession spark, BenchOptions options, List<WideCase> cases, long cells) {
    List<WideResult> out = new ArrayList<>();
    for (WideCase c : cases) {
      long rows = Math.min(options.rows(), Math.max(MIN_ROWS, cells / c.d()));
      String before = spark.conf().get(MAX_FIELDS);
      // the columnar Parquet reader serves batches only up to this many columns
      spark.conf().set(MAX_FIELDS, Integer.toString(Math.max(Integer.parseInt(before), c.d() + 64)));
      try {
        out.add(one(spark, options, c, BenchTables.prepare(spark, options.data(), rows, c.d())));
      } finally {
        spark.conf().set(MAX_FIELDS, before);
      }
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
      Timer.Timed<FitResult> timed = Timer.run(spark.sparkContext(), name, 0, options.repetitions(),
          () -> fit(spark, plan, settings));
      return new WideResult(c, table, timed.timing(), heap.peakBytes(), Runtime.getRuntime().maxMemory(),
          allocations, square, first.columnarRead(), first.passes(), plan.memory().describe());
    }
  }

  private static FitResult fit(SparkSession spark, JobPlan plan, JobSettings settings) {
    return new FitJob(spark, plan).execute(TableLoader.load(spark, settings.input()));
  }

  static String render(List<WideResult> results, List<String> header) {
    StringBuilder s = new StringBuilder("## Wide tables\n\n");
    header.forEach(h -> s.append(h).append('\n'));
    long max = results.isEmpty() ? Runtime.getRuntime().maxMemory() : results.get(0).maxHeapBytes();
    s.append("- each fit: `FitJob.execute`, k = 10, standardize, no output; the first run of each is untimed and "
        + "records every allocation outside a TLAB (JFR); the peak heap in use covers all runs and counts garbage "
        + "not yet collected (G1 lets the old generation fill before it marks), so near the maximum it says that "
        + "the fit allocates fast, not that it keeps that much alive; the fit completing in this heap is the test\n");
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
    return s.append(Report.table(List.of("d", "method", "rows", "min s", "median s", "peak heap in use",
        "largest single allocation", "a d x d double array", "allocations >= d x d doubles", "passes, read",
        "plan's memory estimate"), rows)).toString();
  }
}
