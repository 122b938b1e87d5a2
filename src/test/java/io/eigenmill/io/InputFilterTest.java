package io.eigenmill.io;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.engine.FeatureInput;
import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.JobSettings;
import io.eigenmill.testing.CommandRun;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import java.util.stream.Stream;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * {@code input.where} through whole runs: a table written as Parquet partitioned by {@code date} (3 dates, 120 rows
 * each, in 2 files per date) with a {@code region} column (eu on every third row) and 4 numeric features. The
 * outside references are a fit of a copy holding only the kept rows (the same files, or the selected rows written
 * again), Apache Commons Math 3.6.1 on the selected rows, and row counts made in the test.
 */
class InputFilterTest extends SparkSuite {
  static final String[] DATES = {"2026-11-01", "2026-11-02", "2026-11-03"};
  static final int PER_DATE = 120;
  static final List<String> FEATURES = List.of("m0", "m1", "m2", "m3");
  private static Path dir;
  private static Path table;
  /** The rows as generated: date, region, m0..m3. */
  private static List<Row> rows;

  @BeforeAll
  static void write() throws Exception {
    dir = JobFiles.scratch("where");
    table = dir.resolve("telemetry");
    rows = telemetry();
    spark.createDataFrame(rows, schema()).repartition(2).write().partitionBy("date").parquet(table.toString());
  }

  static StructType schema() {
    StructType s = new StructType().add("date", DataTypes.StringType).add("region", DataTypes.StringType);
    for (String f : FEATURES) {
      s = s.add(f, DataTypes.DoubleType);
    }
    return s;
  }

  /** Features with population variances near 9, 4, 2 and 1 (well separated) about means 10, 20, 30, 40. */
  static List<Row> telemetry() {
    SplittableRandom r = new SplittableRandom(2026);
    List<Row> out = new ArrayList<>();
    for (String date : DATES) {
      for (int i = 0; i < PER_DATE; i++) {
        double a = gauss(r);
        double b = gauss(r);
        out.add(RowFactory.create(date, i % 3 == 0 ? "eu" : i % 3 == 1 ? "us" : "ap", 10 + 3 * a,
            20 + 2 * b + 0.2 * a, 30 + Math.sqrt(2) * gauss(r), 40 + gauss(r)));
      }
    }
    return out;
  }

  private static double gauss(SplittableRandom r) {
    return Math.sqrt(-2 * Math.log(1 - r.nextDouble())) * Math.cos(2 * Math.PI * r.nextDouble());
  }

  private static RunResult fit(Path input, String where, String out) {
    return JobRunner.run(spark, settings(input, where, "output.path = \"" + dir.resolve(out) + "\"\n"));
  }

  private static JobSettings settings(Path input, String where, String more) {
    return JobFiles.settings("input.path = \"" + input + "\"\n" + (where == null ? "" : "input.where = \"" + where
        + "\"\n") + "features.columns = [m0, m1, m2, m3]\nreduce.method = covariance\nreduce.components = 2\n"
        + more);
  }

  /** Copies the partition folders {@code date=...} of {@code dates} (every file, as written) to a new table. */
  private static Path copyOf(String name, String... dates) throws Exception {
    Path copy = dir.resolve(name);
    for (String date : dates) {
      Path from = table.resolve("date=" + date);
      Path to = copy.resolve("date=" + date);
      Files.createDirectories(to);
      try (Stream<Path> files = Files.list(from)) {
        for (Path f : files.toList()) {
          Files.copy(f, to.resolve(f.getFileName()));
        }
      }
    }
    return copy;
  }

  /**
   * A predicate on the partition column keeps 2 of the 3 date folders. Reference: a fit of a copy of the table
   * holding only those two folders, the very same files: Spark plans the same splits in the same order, the block
   * readers read the same columnar batches (the filter is pruning only: no row filter above the scan), so the
   * eigenvalues, means and loadings agree bit for bit.
   */
  @Test
  void aPartitionPredicateFitsExactlyTheKeptFolders() throws Exception {
    String where = "date >= '2026-11-02'";
    RunResult filtered = fit(table, where, "fit-dates");
    RunResult copy = fit(copyOf("two-dates", DATES[1], DATES[2]), null, "fit-copy");
    assertEquals(2L * PER_DATE, filtered.model().rows(), "2 dates of " + PER_DATE + " rows (counted by the test)");
    assertEquals(copy.model().rows(), filtered.model().rows());
    assertArrayEquals(copy.fit().spectrum().eigenvalues(), filtered.fit().spectrum().eigenvalues(), "eigenvalues");
    assertArrayEquals(copy.model().means(), filtered.model().means(), "means");
    assertArrayEquals(copy.model().loadings(), filtered.model().loadings(), "loadings");
    FeatureInput input = new FeatureInput(TableLoader.load(spark, settings(table, where, "output.path = x\n")
        .input()), FEATURES, 1024);
    assertTrue(input.columnar(), "partition pruning leaves the scan's columnar batches to the readers");
    String summary = Files.readString(dir.resolve("fit-dates/summary.json"));
    assertTrue(summary.contains("\"input_where\" : \"" + where + "\""), "summary.json records the predicate");
    String report = Files.readString(dir.resolve("fit-dates/report.html"));
    assertTrue(report.contains("date &gt;= &#39;2026-11-02&#39;") || report.contains("date &gt;= '2026-11-02'"),
        "the report's header shows the predicate");
  }

  /**
   * A predicate on a data column ({@code region = 'eu'}, a third of the rows). Spark keeps a row filter above the
   * scan, so the passes read rows, not columnar batches. References:
   *
   * <ul>
   *   <li>a fit of a table holding only those rows (written again, in one file per date): the same n = 120 rows in
   *       another block and merge order. Each co-moment is a sum of n products of centred values; any order of
   *       summation is within gamma_n = n u (u = 2^-53, n u = 1.3e-14) of the exact sum times the sum of the
   *       products' magnitudes, at most n sqrt(var_i var_j) (Higham 2002, section 4.2), so two orders differ by at
   *       most 2.7e-14 of lambda_max per entry and 4 x that in the 2-norm (d = 4): 1.1e-13 lambda_max. By Weyl's
   *       inequality every eigenvalue moves by at most that, relative to the smallest (lambda_max / lambda_min
   *       about 9 here) 1e-12; a loading moves by at most that norm over the eigengap (at least lambda_min),
   *       again 1e-12. Means: n u of a mean at least three sds from zero, far below 1e-12.
   *   <li>Apache Commons Math 3.6.1 {@code Covariance} (two-pass, n - 1) of the selected rows and its
   *       {@code EigenDecomposition}: another algorithm (Householder tridiagonalisation and QL) whose backward error
   *       is a modest multiple of u lambda_max; 1e-9 relative leaves ample room.
   * </ul>
   */
  @Test
  void aDataColumnPredicateFitsTheSelectedRows() throws Exception {
    String where = "region = 'eu'";
    RunResult filtered = fit(table, where, "fit-eu");
    List<Row> eu = rows.stream().filter(row -> row.getString(1).equals("eu")).toList();
    Path only = dir.resolve("eu-only");
    spark.createDataFrame(eu, schema()).repartition(1).write().partitionBy("date").parquet(only.toString());
    RunResult copy = fit(only, null, "fit-eu-copy");
    assertEquals(eu.size(), filtered.model().rows(), "the rows whose region is eu, counted by the test");
    assertClose(copy.fit().spectrum().eigenvalues(), filtered.fit().spectrum().eigenvalues(), 1e-12, "eigenvalues");
    assertClose(copy.model().means(), filtered.model().means(), 1e-12, "means");
    double[] a = copy.model().loadings();
    double[] b = filtered.model().loadings();
    for (int i = 0; i < a.length; i++) {
      assertEquals(a[i], b[i], 1e-12, "loading " + i + " (unit vectors: absolute)");
    }
    double[][] x = new double[eu.size()][FEATURES.size()];
    for (int i = 0; i < x.length; i++) {
      for (int j = 0; j < FEATURES.size(); j++) {
        x[i][j] = eu.get(i).getDouble(2 + j);
      }
    }
    double[] reference = new EigenDecomposition(new Covariance(x).getCovarianceMatrix()).getRealEigenvalues();
    double[] sorted = reference.clone();
    Arrays.sort(sorted);
    double[] descending = new double[sorted.length];
    for (int i = 0; i < sorted.length; i++) {
      descending[i] = sorted[sorted.length - 1 - i];
    }
    double[] fitted = filtered.fit().spectrum().eigenvalues();
    assertClose(descending, Arrays.copyOf(fitted, descending.length), 1e-9, "Commons Math eigenvalues");
    FeatureInput input = new FeatureInput(TableLoader.load(spark, settings(table, where, "output.path = x\n")
        .input()), FEATURES, 1024);
    assertFalse(input.columnar(), "Spark's row filter sits above the scan: the passes read rows");
  }

  /** An apply job with input.where scores the selected rows only (count made in the test from the generated rows). */
  @Test
  void anApplyScoresTheSelectedRowsOnly() {
    fit(table, null, "fit-all");
    String where = "region = 'eu' and date <= '2026-11-02'";
    RunResult applied = JobRunner.run(spark, JobFiles.settings("input.path = \"" + table + "\"\ninput.where = \""
        + where + "\"\napply.model = \"" + dir.resolve("fit-all") + "\"\noutput.path = \"" + dir.resolve("apply-eu")
        + "\"\n"));
    long expected = rows.stream().filter(r -> r.getString(1).equals("eu") && r.getString(0).compareTo(DATES[1]) <= 0)
        .count();
    assertEquals(2L * PER_DATE / 3, expected, "a third of the rows of 2 dates");
    assertEquals(expected, applied.monitor().rowsScored());
    assertEquals(expected, spark.read().parquet(dir.resolve("apply-eu/scores").toString()).count());
  }

  /** Each bad predicate: exit 2, one message naming input.where, the value and the rule; nothing written. */
  @Test
  void badPredicatesExitWith2AndWriteNothing() throws Exception {
    assertRejected("bad-parse", "date >= ", "eigenmill: error: input.where = \"date >=\": not a Spark SQL"
        + " expression: [PARSE_SYNTAX_ERROR]");
    assertRejected("bad-column", "zone = 'eu'", "eigenmill: error: input.where = \"zone = 'eu'\": column zone is"
        + " not in the input (columns: region, m0, m1, m2, m3, date); the predicate may name only the input's"
        + " columns");
    assertRejected("bad-type", "m0 + 1", "eigenmill: error: input.where = \"m0 + 1\": the expression has type"
        + " double; input.where must be a boolean predicate (the rows where it is true are kept)");
    assertRejected("no-rows", "region = 'nowhere'", "eigenmill: error: input.where = \"region = 'nowhere'\" selects"
        + " no rows of input.path = " + table + " (a fit needs at least 2 rows)");
  }

  private static void assertRejected(String name, String where, String message) throws Exception {
    Path out = dir.resolve(name + "-out");
    Path f = dir.resolve(name + ".conf");
    Files.writeString(f, "input.path = \"" + table + "\"\ninput.where = \"" + where + "\"\noutput.path = \"" + out
        + "\"\n");
    CommandRun o = CommandRun.of("run", f.toString());
    assertEquals(2, o.code(), name + ": " + o.err());
    assertTrue(o.err().startsWith(message), name + ": " + o.err());
    assertFalse(Files.exists(out), name + ": no output");
    try (Stream<Path> siblings = Files.list(dir)) {
      assertTrue(siblings.noneMatch(p -> p.getFileName().toString().startsWith("." + name + "-out")),
          name + ": no staging folder left");
    }
  }

  private static void assertClose(double[] expected, double[] actual, double relative, String what) {
    assertEquals(expected.length, actual.length, what);
    for (int i = 0; i < expected.length; i++) {
      assertEquals(expected[i], actual[i], relative * Math.abs(expected[i]), what + " " + i);
    }
  }
}
