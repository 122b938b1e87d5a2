package io.eigenmill.pca;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.record.RunResult;
import io.eigenmill.run.JobRunner;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.testing.JobFiles;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * Results do not depend on the partitioning beyond rounding: the same table written as 1, 3 and 50 files (50 files of
 * 40 rows leave several partitions empty after the scan's split planning) gives the same eigenvalues, ratios, means
 * and loadings for every method. Tolerance: 1e-12 relative, with an absolute floor of 1e-13 times the largest entry.
 * Only the order of the pairwise merges changes; that perturbs the Gram (or R) by a few hundred ulps of its norm at
 * most, and by Weyl's inequality every eigenvalue moves by at most that absolute amount, so small eigenvalues are
 * compared against the norm, not against themselves (1e-13 = 450 eps).
 */
class PartitionInvarianceTest extends SparkSuite {

  private static Path write(int files, int rows, long seed) throws Exception {
    StructType schema = new StructType().add("host", DataTypes.StringType);
    for (int j = 0; j < 5; j++) {
      schema = schema.add("m" + j, DataTypes.DoubleType);
    }
    SplittableRandom r = new SplittableRandom(seed);
    List<Row> data = new ArrayList<>();
    for (int i = 0; i < rows; i++) {
      double a = r.nextDouble() * 10;
      double b = r.nextDouble() * 3;
      data.add(RowFactory.create("h" + i, 1e6 + a + b, 2 * a - b + r.nextDouble(), 50 + b * 4 + r.nextDouble(),
          -a + 0.1 * r.nextDouble(), r.nextDouble()));
    }
    Path p = Files.createTempDirectory("eigenmill-parts").resolve("t");
    spark.createDataFrame(data, schema).coalesce(1).sortWithinPartitions("host").repartition(files)
        .write().parquet(p.toString());
    return p;
  }

  private static RunResult fit(Path table, String method, String scaling) throws Exception {
    Path out = Files.createTempDirectory("eigenmill-parts-out").resolve("o");
    return JobRunner.run(spark, JobFiles.settings("input.path = \"" + table + "\"\nfeatures.keys = [host]\n"
        + "reduce.method = " + method + "\nreduce.components = 3\nprepare.scaling = " + scaling + "\n"
        + "reduce.randomized.oversample = 2\noutput.path = \"" + out + "\"\n"));
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"covariance", "tsqr", "randomized"})
  void sameNumbersFor1And3And50Partitions(String method) throws Exception {
    List<RunResult> runs = new ArrayList<>();
    for (int files : new int[] {1, 3, 50}) {
      runs.add(fit(write(files, 2000, 42), method, "standardize"));
    }
    RunResult base = runs.get(0);
    for (RunResult run : runs) {
      // the randomized method's passes 2..n read the features the first pass kept in memory (KeptBatches)
      assertEquals(method.equals("randomized"), run.plan().notes().stream()
          .anyMatch(n -> n.contains("the first pass keeps the features in executor memory")), run.plan().notes()
          .toString());
    }
    for (RunResult other : runs.subList(1, runs.size())) {
      assertEquals(base.model().rows(), other.model().rows());
      assertClose(base.fit().spectrum().eigenvalues(), other.fit().spectrum().eigenvalues(), 1e-12);
      assertClose(base.model().means(), other.model().means(), 1e-12);
      assertClose(base.model().scales(), other.model().scales(), 1e-12);
      assertClose(base.model().loadings(), other.model().loadings(), 1e-10);
    }
  }

  @ParameterizedTest(name = "{0}")
  @ValueSource(strings = {"covariance", "tsqr", "randomized"})
  void twoRunsWithTheSameInputGiveIdenticalSummaries(String method) throws Exception {
    Path t = write(7, 500, 3);
    RunResult a = fit(t, method, "none");
    RunResult b = fit(t, method, "none");
    assertArrayEquals(a.model().means(), b.model().means(), "means");
    if (method.equals("tsqr")) {
      // TSQR factors each block with the native LAPACK on the executors, which is repeatable only to rounding
      // (its kernels depend on memory alignment), and its variances are the column norms of R: same bound as for a
      // change of partitioning. Its means are plain Java sums: bit for bit.
      assertClose(a.model().sds(), b.model().sds(), 1e-12);
      assertEquals(a.fit().spectrum().totalVariance(), b.fit().spectrum().totalVariance(),
          1e-12 * a.fit().spectrum().totalVariance(), "trace");
      assertClose(a.fit().spectrum().eigenvalues(), b.fit().spectrum().eigenvalues(), 1e-12);
      assertClose(a.model().loadings(), b.model().loadings(), 1e-10);
      return;
    }
    // covariance and randomized: bit for bit (ordered merge, level-3 BLAS, pure-Java driver-side LAPACK)
    assertArrayEquals(a.model().sds(), b.model().sds(), "sds");
    assertEquals(a.fit().spectrum().totalVariance(), b.fit().spectrum().totalVariance(), 0.0, "trace");
    assertArrayEquals(a.fit().spectrum().eigenvalues(), b.fit().spectrum().eigenvalues());
    assertArrayEquals(a.model().loadings(), b.model().loadings());
  }

  /**
   * The block size moves the block boundaries, hence which blocks the reader shifts by the previous block's mean
   * and where incomplete rows are dropped from a slice, but not the numbers: 3,000 rows in 3 files, one row in 25
   * with a null or NaN cell (dropped), fitted with blocks of 16, 100 and 1024 rows. Reference: Apache Commons Math
   * 3.6.1 {@code Covariance} (two-pass, n - 1) of the complete rows and its {@code EigenDecomposition}. Tolerance
   * 1e-10 of the largest eigenvalue: both sides are within a few hundred ulps of the exact covariance's norm (class
   * comment), and Weyl's inequality carries that to every eigenvalue; means to 1e-12 relative.
   */
  @Test
  void blockSizeAndDroppedRowsDoNotChangeTheCovariance() throws Exception {
    int rows = 3000;
    StructType schema = new StructType();
    for (int j = 0; j < 4; j++) {
      schema = schema.add("m" + j, DataTypes.DoubleType);
    }
    SplittableRandom r = new SplittableRandom(77);
    List<Row> data = new ArrayList<>();
    List<double[]> complete = new ArrayList<>();
    for (int i = 0; i < rows; i++) {
      double a = r.nextDouble() * 10;
      double[] x = {1e6 + a + r.nextDouble(), 2 * a - r.nextDouble(), 50 + 3 * r.nextDouble(), -a + (i % 300) * 0.1};
      Object[] cells = {x[0], x[1], x[2], x[3]};
      if (i % 25 == 7) {
        cells[i % 4] = i % 2 == 0 ? null : Double.NaN;
      } else {
        complete.add(x);
      }
      data.add(RowFactory.create(cells));
    }
    Path table = Files.createTempDirectory("eigenmill-blocks").resolve("t");
    spark.createDataFrame(data, schema).coalesce(1).repartition(3).write().parquet(table.toString());
    double[][] matrix = complete.toArray(new double[0][]);
    org.apache.commons.math3.linear.RealMatrix cov =
        new org.apache.commons.math3.stat.correlation.Covariance(matrix, true).getCovarianceMatrix();
    double[] reference = new org.apache.commons.math3.linear.EigenDecomposition(cov).getRealEigenvalues();
    java.util.Arrays.sort(reference);
    double[] referenceMeans = new double[4];
    for (double[] x : matrix) {
      for (int j = 0; j < 4; j++) {
        referenceMeans[j] += x[j] / matrix.length;
      }
    }
    for (int blockRows : new int[] {16, 100, 1024}) {
      Path out = Files.createTempDirectory("eigenmill-blocks-out").resolve("o");
      RunResult run = JobRunner.run(spark, JobFiles.settings("input.path = \"" + table + "\"\n"
          + "reduce.method = covariance\nreduce.components = 2\nreduce.block-rows = " + blockRows + "\n"
          + "output.path = \"" + out + "\"\n"));
      assertEquals(matrix.length, run.model().rows(), "rows kept, blocks of " + blockRows);
      double[] eigenvalues = run.fit().spectrum().eigenvalues();
      double largest = reference[reference.length - 1];
      for (int c = 0; c < 4; c++) {
        assertEquals(reference[3 - c], eigenvalues[c], 1e-10 * largest,
            "eigenvalue " + (c + 1) + ", blocks of " + blockRows);
      }
      for (int j = 0; j < 4; j++) {
        assertEquals(referenceMeans[j], run.model().means()[j], 1e-12 * Math.abs(referenceMeans[j]),
            "mean " + j + ", blocks of " + blockRows);
      }
    }
  }

  @Test
  void oneFeatureAndTwoRows() throws Exception {
    Path p = Files.createTempDirectory("eigenmill-tiny").resolve("t");
    spark.createDataFrame(List.of(RowFactory.create(1.0), RowFactory.create(4.0)),
        new StructType().add("x", DataTypes.DoubleType)).write().parquet(p.toString());
    Path out = Files.createTempDirectory("eigenmill-tiny-out").resolve("o");
    RunResult r = JobRunner.run(spark, JobFiles.settings("input.path = \"" + p + "\"\noutput.path = \"" + out
        + "\"\n"));
    // d = 1: the single eigenvalue is the sample variance of {1, 4} = 4.5 (n - 1 denominator), loading +1
    assertEquals(4.5, r.fit().spectrum().eigenvalues()[0], 1e-15);
    assertEquals(1.0, r.model().loading(0, 0), 0.0);
    assertEquals(1, r.model().k());
  }

  @Test
  void oneRowIsAClearError() throws Exception {
    Path p = Files.createTempDirectory("eigenmill-one").resolve("t");
    spark.createDataFrame(List.of(RowFactory.create(1.0, 2.0)),
        new StructType().add("x", DataTypes.DoubleType).add("y", DataTypes.DoubleType)).write().parquet(p.toString());
    Path out = Files.createTempDirectory("eigenmill-one-out").resolve("o");
    InvalidJobException e = assertThrows(InvalidJobException.class, () -> JobRunner.run(spark,
        JobFiles.settings("input.path = \"" + p + "\"\noutput.path = \"" + out + "\"\n")));
    assertEquals("input.path = " + p + ": only 1 usable row; a PCA needs at least 2 rows", e.getMessage());
    assertTrue(Files.notExists(out));
  }

  private static void assertClose(double[] expected, double[] actual, double relative) {
    assertEquals(expected.length, actual.length);
    double scale = 0;
    for (double v : expected) {
      scale = Math.max(scale, Math.abs(v));
    }
    for (int i = 0; i < expected.length; i++) {
      assertEquals(expected[i], actual[i], Math.max(relative * Math.abs(expected[i]), 1e-13 * scale), "entry " + i);
    }
  }
}
