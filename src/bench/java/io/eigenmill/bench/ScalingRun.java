package io.eigenmill.bench;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.EnumMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.apache.spark.sql.SparkSession;

/**
 * Scaling in rows: the cases at 0.5, 1, 2 and 4 million rows (the same d), and per case the least-squares line of
 * median seconds against millions of rows: its slope is the cost of one more million rows, its intercept the fixed
 * cost. A size equal to the main run's reuses the main run's times.
 *
 * <p>Cases: those of {@code --cases} when given; otherwise the floors, our three fits, the scoring pass and our
 * k-means (the engine's own PCA and k-means are left out to keep the run within reason).
 */
final class ScalingRun {
  static final long[] ROWS = {500_000L, 1_000_000L, 2_000_000L, 4_000_000L};
  /** With --smoke: the same shape on tiny tables. */
  static final long[] SMOKE_ROWS = {5_000L, 10_000L, 20_000L, 40_000L};
  static final List<BenchCase> DEFAULT_CASES = List.of(BenchCase.SQL_SUM, BenchCase.READ_FLOOR,
      BenchCase.FIT_COVARIANCE, BenchCase.FIT_TSQR, BenchCase.FIT_RANDOMIZED, BenchCase.APPLY_PASS, BenchCase.KMEANS);

  /** One case across the sizes: median seconds per size and the fitted line. */
  record Line(BenchCase which, long[] rows, double[] medians, double slopePerMillion, double intercept) {}

  record ScalingResult(int d, long[] rows, List<Line> lines) {}

  private ScalingRun() {}

  static ScalingResult run(SparkSession spark, BenchOptions options, MainResult main) {
    long[] sizes = options.smoke() ? SMOKE_ROWS : ROWS;
    List<BenchCase> cases = options.casesGiven() ? options.cases() : DEFAULT_CASES;
    List<Map<BenchCase, Timing>> perSize = new ArrayList<>();
    for (long rows : sizes) {
      Map<BenchCase, Timing> times = new EnumMap<>(BenchCase.class);
      List<BenchCase> missing = new ArrayList<>();
      for (BenchCase c : cases) {
        var reused = main != null && main.table().rows() == rows ? main.result(c) : java.util.Optional.<MainResult
            .CaseResult>empty();
        if (reused.isPresent()) {
          times.put(c, reused.get().timing());
        } else {
          missing.add(c);
        }
      }
      if (!missing.isEmpty()) {
        System.out.printf(Locale.ROOT, "bench: scaling at %,d rows%n", rows);
        BenchTable table = BenchTables.prepare(spark, options.data(), rows, options.features());
        MainResult r = new MainCases(spark, table, Benchmark.allNumeric(spark, table), workFor(options, table),
            options.warmups(), options.repetitions()).run(missing);
        r.cases().forEach(c -> times.put(c.which(), c.timing()));
      }
      perSize.add(times);
    }
    List<Line> lines = new ArrayList<>();
    for (BenchCase c : cases) {
      double[] medians = new double[sizes.length];
      for (int i = 0; i < sizes.length; i++) {
        medians[i] = perSize.get(i).get(c).median();
      }
      double[] fit = leastSquares(millions(sizes), medians);
      lines.add(new Line(c, sizes.clone(), medians, fit[0], fit[1]));
    }
    return new ScalingResult(options.features(), sizes.clone(), lines);
  }

  /**
   * The scratch folder of this run for a table (models, scores, outputs): under the run's own folder
   * {@link #runWork}, so that two benchmark runs sharing a data folder never read each other's scratch tables.
   */
  static Path workFor(BenchOptions options, BenchTable table) {
    return runWork(options).resolve(Path.of(table.path()).getFileName().toString());
  }

  /** This process's scratch folder under the data folder; {@link Benchmark#run} deletes it at the end. */
  static Path runWork(BenchOptions options) {
    return options.data().resolve("work").resolve("run-" + ProcessHandle.current().pid());
  }

  static double[] millions(long[] rows) {
    double[] x = new double[rows.length];
    for (int i = 0; i < x.length; i++) {
      x[i] = rows[i] / 1e6;
    }
    return x;
  }

  /** Slope and intercept of the least-squares line through (x, y). */
  static double[] leastSquares(double[] x, double[] y) {
    double mx = 0;
    double my = 0;
    for (int i = 0; i < x.length; i++) {
      mx += x[i] / x.length;
      my += y[i] / y.length;
    }
    double sxy = 0;
    double sxx = 0;
    for (int i = 0; i < x.length; i++) {
      sxy += (x[i] - mx) * (y[i] - my);
      sxx += (x[i] - mx) * (x[i] - mx);
    }
    double slope = sxx > 0 ? sxy / sxx : Double.NaN;
    return new double[] {slope, my - slope * mx};
  }

  static String render(ScalingResult r, List<String> header) {
    StringBuilder s = new StringBuilder();
    s.append(String.format(Locale.ROOT, "## Scaling in rows: d = %d%n%n", r.d()));
    header.forEach(h -> s.append(h).append('\n'));
    s.append("- median seconds per size; slope and intercept of the least-squares line of seconds against "
        + "millions of rows\n\n");
    List<String> heads = new ArrayList<>(List.of("case"));
    for (long rows : r.rows()) {
      heads.add(String.format(Locale.ROOT, "%s M rows (s)", Report.number(rows / 1e6)));
    }
    heads.addAll(List.of("slope (s per M rows)", "intercept (s)"));
    List<List<String>> rows = new ArrayList<>();
    for (Line line : r.lines()) {
      List<String> row = new ArrayList<>(List.of(line.which().word()));
      for (double m : line.medians()) {
        row.add(Report.seconds(m));
      }
      row.add(Report.number(line.slopePerMillion()));
      row.add(Report.number(line.intercept()));
      rows.add(row);
    }
    return s.append(Report.table(heads, rows)).toString();
  }
}
