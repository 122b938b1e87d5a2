package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.BuildDir;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The columnar fast paths are in use on the Spark line under test (the suite runs on each line): a Parquet table of
 * doubles is read as the scan's columnar batches ({@link ColumnarScan}), and every double column of every batch gives
 * up its array ({@link HeapColumns}). Both paths fall back silently to slower ones when Spark changes underneath
 * (another plan shape, another vector class or field name); this test is what makes such a fallback fail the build.
 */
class FastPathsTest extends SparkSuite {
  private static final int ROWS = 5_000;
  private static Path dir;

  @BeforeAll
  static void table() throws Exception {
    dir = Files.createTempDirectory("eigenmill-fast-paths");
    // continuous values without dictionaries, as eigenmill's own tables and the demo's are written
    spark.range(ROWS).select(functions.rand(1).as("a"), functions.rand(2).as("b"),
            functions.col("id").cast("double").as("c"), functions.col("id").cast("string").as("key"))
        .repartition(2).write().option("parquet.enable.dictionary", "false").parquet(dir.resolve("t").toString());
  }

  @AfterAll
  static void clean() {
    LoopbackCluster.deleteTree(dir);
  }

  @Test
  void heapColumnAccessIsAvailable() {
    assertTrue(HeapColumns.available(), "Spark " + BuildDir.sparkLine() + " line (" + org.apache.spark.package$.MODULE$
        .SPARK_VERSION() + "): OnHeapColumnVector keeps its doubles in the field doubleData");
  }

  @Test
  void parquetDoublesAreReadAsColumnarBatchesWhoseArraysAreTaken() {
    Dataset<Row> selection = spark.read().parquet(dir.resolve("t").toString()).select("key", "a", "b", "c");
    ColumnarScan scan = ColumnarScan.of(selection);
    assertNotNull(scan, "the plan of a plain selection is the columnar Parquet scan: "
        + selection.queryExecution().executedPlan());
    int[] doubles = scan.ordinals(java.util.List.of("a", "b", "c"));
    assertNotNull(doubles);
    // per batch: rows, and the double columns whose array was taken
    long[] counts = scan.batches().map(batch -> arraysTaken(batch, doubles)).reduce((x, y) -> new long[] {
        x[0] + y[0], x[1] + y[1], x[2] + y[2]});
    long batches = counts[2];
    assertTrue(batches > 0);
    assertArrayEquals(new long[] {ROWS, batches * doubles.length, batches}, counts,
        "rows read, double columns read from their arrays (every one of every batch), batches");
  }

  private static long[] arraysTaken(ColumnarBatch batch, int[] doubles) {
    long taken = 0;
    for (int j : doubles) {
      double[] values = HeapColumns.doubles(batch.column(j));
      if (values != null && values.length >= batch.numRows()) {
        taken++;
      }
    }
    return new long[] {batch.numRows(), taken, 1};
  }
}
