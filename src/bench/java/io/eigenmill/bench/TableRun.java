package io.eigenmill.bench;

import io.eigenmill.pca.math.Spectrum;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.settings.SettingsReader;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import org.apache.spark.sql.SparkSession;

/**
 * The table-input case ({@code --tables}): the main table copied once into an Iceberg table (a Hadoop catalog under
 * the data folder, unpartitioned, Iceberg's default Parquet settings), then the covariance fit from the table
 * ({@code input.table}) against the same fit from the Parquet folder ({@code input.path}). Needs the Iceberg runtime
 * on the classpath (the script adds it for {@code --tables}, 3.5 line). Never generates the main table: without it
 * the case is skipped.
 */
final class TableRun {
  static final String CATALOG = "benchlake";

  record TableResult(String folder, String table, boolean copied, double copySeconds, double folderSeconds,
      double tableSeconds, boolean tableColumnar, double eigenGap) {
    double ratio() {
      return tableSeconds / folderSeconds;
    }
  }

  private TableRun() {}

  /** The result, or null when the main table is not under the data folder (then nothing is run). */
  static TableResult run(SparkSession spark, BenchOptions options) {
    Path folder = options.data().resolve(String.format(Locale.ROOT, "fleet-%d-rows-%d-metrics", options.rows(),
        options.features())).toAbsolutePath();
    if (!Files.isRegularFile(folder.resolve(BenchTables.SPEC_FILE))) {
      System.out.println("bench: --tables: no main table at " + folder + "; skipped (this case never generates one)");
      return null;
    }
    Path warehouse = options.data().resolve("iceberg-warehouse").toAbsolutePath();
    spark.conf().set("spark.sql.catalog." + CATALOG, "org.apache.iceberg.spark.SparkCatalog");
    spark.conf().set("spark.sql.catalog." + CATALOG + ".type", "hadoop");
    spark.conf().set("spark.sql.catalog." + CATALOG + ".warehouse", warehouse.toUri().toString());
    String table = CATALOG + ".bench." + folder.getFileName().toString().replace('-', '_');
    List<String> features = BenchTables.numericColumns(spark.read().parquet(folder.toString()).schema())
        .subList(0, options.features());
    boolean copied = false;
    double copySeconds = 0;
    if (!exists(spark, table)) {
      System.out.println("bench: copying " + folder + " into the Iceberg table " + table + " (once)");
      long t0 = System.nanoTime();
      try {
        spark.read().parquet(folder.toString()).writeTo(table).using("iceberg").create();
      } catch (Exception e) { // TableAlreadyExistsException is checked
        throw new IllegalStateException("cannot copy the main table into " + table, e);
      }
      copySeconds = (System.nanoTime() - t0) / 1e9;
      copied = true;
    }
    Path work = ScalingRun.runWork(options).resolve("tables");
    double[] folderTimes = new double[options.repetitions()];
    double[] tableTimes = new double[options.repetitions()];
    Spectrum fromFolder = null;
    Spectrum fromTable = null;
    boolean columnar = false;
    for (int r = -options.warmups(); r < options.repetitions(); r++) {
      // alternate the two, so that a change of the machine's load falls on both
      Timed f = fit(spark, "input.path = \"" + folder + "\"", features, work.resolve("folder"));
      Timed t = fit(spark, "input.table = \"" + table + "\"", features, work.resolve("table"));
      if (r >= 0) {
        folderTimes[r] = f.seconds();
        tableTimes[r] = t.seconds();
      }
      fromFolder = f.run().fit().spectrum();
      fromTable = t.run().fit().spectrum();
      columnar = t.run().fit().columnarRead();
    }
    double gap = 0;
    for (int c = 0; c < 10; c++) {
      gap = Math.max(gap, Math.abs(fromFolder.eigenvalues()[c] - fromTable.eigenvalues()[c])
          / fromFolder.eigenvalues()[0]);
    }
    return new TableResult(folder.toString(), table, copied, copySeconds, median(folderTimes), median(tableTimes),
        columnar, gap);
  }

  private record Timed(RunResult run, double seconds) {}

  private static Timed fit(SparkSession spark, String input, List<String> features, Path out) {
    String conf = input + "\nfeatures.columns = [" + String.join(", ", features.stream().map(f -> "\"" + f + "\"")
        .toList()) + "]\nprepare.scaling = standardize\nreduce.method = covariance\nreduce.components = 10\n"
        + "output { path = \"" + out + "\", mode = overwrite }\n";
    JobSettings settings = new SettingsReader().readString(conf, List.of(), "bench-tables.conf");
    System.gc();
    long t0 = System.nanoTime();
    RunResult run = JobRunner.run(spark, settings);
    return new Timed(run, (System.nanoTime() - t0) / 1e9);
  }

  private static boolean exists(SparkSession spark, String table) {
    try {
      spark.table(table);
      return true;
    } catch (Exception e) { // AnalysisException is checked
      return false;
    }
  }

  private static double median(double[] x) {
    double[] s = x.clone();
    Arrays.sort(s);
    return s.length % 2 == 1 ? s[s.length / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
  }

  static String render(TableResult r, List<String> header) {
    StringBuilder s = new StringBuilder("## Table input: the covariance fit from an Iceberg table against the Parquet"
        + " folder\n\n");
    header.forEach(h -> s.append(h).append('\n'));
    s.append("- folder: `").append(r.folder()).append("`; table: `").append(r.table()).append("` (")
        .append(r.copied() ? String.format(Locale.ROOT, "copied in %.0f s", r.copySeconds()) : "reused")
        .append("; unpartitioned, Iceberg's default Parquet settings)\n");
    s.append("- both: whole fit job, covariance, k = 10, standardize, the 100 metrics as the feature list\n\n");
    List<List<String>> rows = new ArrayList<>();
    rows.add(List.of("Parquet folder (input.path)", Report.seconds(r.folderSeconds()), "1.00", "columnar Parquet"));
    rows.add(List.of("Iceberg table (input.table)", Report.seconds(r.tableSeconds()),
        String.format(Locale.ROOT, "%.2f", r.ratio()), r.tableColumnar() ? "columnar (vector getters)" : "rows"));
    s.append(Report.table(List.of("input", "seconds", "ratio to the folder", "read path"), rows));
    s.append(String.format(Locale.ROOT, "%n- target: ratio <= 1.2; largest eigenvalue difference (k = 10) relative"
        + " to the first: %.1e%n", r.eigenGap()));
    return s.toString();
  }
}
