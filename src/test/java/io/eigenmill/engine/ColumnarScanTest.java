package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The columnar scan's split size for wide reads: {@code batches(splitBytes)} makes a file scan's splits that size
 * (the plan's choice, {@code plan.ScanSplits}), also above Spark's cap of the input's bytes per core, and
 * {@code batches()} keeps Spark's own splits. Checked against Spark's own split count for the same file (a plain
 * {@code executeColumnar()} of the same plan) and by counting the rows read; the session's settings are restored.
 */
class ColumnarScanTest extends SparkSuite {
  private static final int ROWS = 20_000;
  private static final int COLUMNS = 60;
  private static final String SPLIT = ColumnarScan.SPLIT_BYTES_KEY;
  private static final String MIN_SPLITS = ColumnarScan.MIN_SPLITS_KEY;
  private static Path dir;

  @BeforeAll
  static void table() throws Exception {
    dir = Files.createTempDirectory("eigenmill-columnar-scan");
    List<Column> cols = new ArrayList<>();
    for (int j = 0; j < COLUMNS; j++) {
      cols.add(functions.rand(j).as("c" + j));
    }
    // one file of about 9.6 MB in row groups of 256 KiB, so that 1 MB splits cut it into many
    spark.range(ROWS).select(cols.toArray(new Column[0])).coalesce(1).write()
        .option("parquet.block.size", 256 * 1024).parquet(dir.resolve("t").toString());
  }

  @AfterAll
  static void clean() {
    LoopbackCluster.deleteTree(dir);
  }

  @Test
  void aGivenSplitSizeHoldsAndSparksOwnSplitsStayTheDefault() {
    spark.conf().set(SPLIT, "1m");
    try {
      // a scan builds its splits once: Spark's count from one plan, ours from another plan of the same read
      int plain = splitsOf(spark.read().parquet(dir.resolve("t").toString()));
      assertTrue(plain >= 5, "1 MB splits cut the file into several: " + plain);
      ColumnarScan scan = ColumnarScan.of(spark.read().parquet(dir.resolve("t").toString()));
      assertNotNull(scan);
      // 16 MiB holds the 9.6 MB file; Spark alone would cap a split at (9.6 MB + 4 MiB open cost) / 2 cores
      JavaRDD<ColumnarBatch> batches = scan.batches(16L << 20);
      assertEquals(1, batches.getNumPartitions(), "one split of the given size");
      assertEquals(ROWS, rows(batches), "every row read once");
      assertEquals("1m", spark.conf().get(SPLIT), "the session's setting is restored");
      assertFalse(spark.conf().contains(MIN_SPLITS), "the session's unset setting stays unset");

      JavaRDD<ColumnarBatch> own = ColumnarScan.of(spark.read().parquet(dir.resolve("t").toString())).batches();
      assertEquals(plain, own.getNumPartitions(), "no size given: Spark's own splits");
      assertEquals(ROWS, rows(own));
    } finally {
      spark.conf().unset(SPLIT);
    }
    assertFalse(spark.conf().contains(SPLIT));
  }

  /**
   * A scan of more fields than {@code spark.sql.codegen.maxFields} (here a partitioned table: 60 data columns and the
   * partition column against a limit of 60) is one Spark's own plan serves as rows; the columnar scan plans it with
   * the limit raised and reads every row as batches, and the session keeps its setting. The premise is checked
   * first (Spark's plan of the same selection is not columnar at this limit), so the test fails if the limit stops
   * mattering or the raise stops counting the partition column.
   */
  @Test
  void moreFieldsThanTheCodegenLimitStillReadAsBatches() {
    String table = dir.resolve("parted").toString();
    spark.read().parquet(dir.resolve("t").toString()).withColumn("day", functions.lit("2026-11-02"))
        .write().partitionBy("day").parquet(table);
    String before = spark.conf().get(ColumnarScan.MAX_FIELDS_KEY);
    spark.conf().set(ColumnarScan.MAX_FIELDS_KEY, Integer.toString(COLUMNS));
    try {
      Column[] features = new Column[COLUMNS];
      for (int j = 0; j < COLUMNS; j++) {
        features[j] = functions.col("c" + j);
      }
      org.apache.spark.sql.execution.SparkPlan own = spark.read().parquet(table).select(features).queryExecution()
          .executedPlan();
      while (!(own instanceof org.apache.spark.sql.execution.FileSourceScanExec)) {
        own = own.children().head();
      }
      assertFalse(own.supportsColumnar(), "Spark serves rows for 61 fields at a limit of 60");
      ColumnarScan scan = ColumnarScan.of(spark.read().parquet(table).select(features));
      assertNotNull(scan, "the columnar scan reads batches above the limit");
      assertEquals(ROWS, rows(scan.batches()), "every row read once as batches");
      assertEquals(ROWS, rows(scan.batches(16L << 20)), "also in the plan's splits");
      assertEquals(Integer.toString(COLUMNS), spark.conf().get(ColumnarScan.MAX_FIELDS_KEY),
          "the session's setting is restored");
      assertTrue(new FeatureInput(spark.read().parquet(table), List.of("c0", "c1"), 64).columnar(),
          "the passes' input is columnar too");
    } finally {
      spark.conf().set(ColumnarScan.MAX_FIELDS_KEY, before);
    }
  }

  /**
   * {@code select} plans a selection without making it a Dataset: it must find the scan {@code of(table.select)}
   * finds, with the same columns at the same positions and the same values read, for columns in another order than
   * the table's; fall back to Spark's resolution for a name spelled in another case (Spark resolves names without
   * case by default, spark.sql.caseSensitive = false); and find no columnar scan where Spark's selection has none (a
   * computed column, a filter on a data column).
   */
  @Test
  void aSelectionPlannedWithoutADatasetFindsTheSameScan() {
    Dataset<Row> table = spark.read().parquet(dir.resolve("t").toString());
    List<String> cols = List.of("c5", "c0", "c3");
    ColumnarScan direct = ColumnarScan.select(table, cols);
    ColumnarScan viaDataset = ColumnarScan.of(table.select(cols.stream().map(functions::col).toArray(Column[]::new)));
    assertNotNull(direct);
    assertNotNull(viaDataset);
    int[] at = direct.ordinals(cols);
    int[] atDataset = viaDataset.ordinals(cols);
    assertNotNull(at);
    assertEquals(Arrays.toString(at), Arrays.toString(atDataset));
    assertEquals(Arrays.toString(sums(direct, at)), Arrays.toString(sums(viaDataset, atDataset)),
        "the same values, summed in the same order");

    ColumnarScan otherCase = ColumnarScan.select(table, List.of("C5", "c0"));
    assertNotNull(otherCase, "a name in another case takes Spark's resolution");
    assertNotNull(otherCase.ordinals(List.of("c5", "c0")), "the scan carries the table's spelling");

    Dataset<Row> computed = table.withColumn("twice", functions.col("c1").multiply(2));
    assertNull(ColumnarScan.select(computed, List.of("twice", "c0")));
    assertNull(ColumnarScan.of(computed.select("twice", "c0")));
    Dataset<Row> filtered = table.where("c2 > 0.5");
    assertNull(ColumnarScan.select(filtered, List.of("c0")));
    assertNull(ColumnarScan.of(filtered.select("c0")));
  }

  /** The sum of each column at {@code at}, over every batch of the scan in its order. */
  private static double[] sums(ColumnarScan scan, int[] at) {
    return scan.batches().map(b -> {
      double[] s = new double[at.length];
      for (int j = 0; j < at.length; j++) {
        for (int r = 0; r < b.numRows(); r++) {
          s[j] += b.column(at[j]).getDouble(r);
        }
      }
      return s;
    }).collect().stream().reduce(new double[at.length], (x, y) -> {
      double[] z = x.clone();
      for (int j = 0; j < z.length; j++) {
        z[j] += y[j];
      }
      return z;
    });
  }

  /** Spark's own split count for the plan of {@code frame}. */
  private static int splitsOf(Dataset<Row> frame) {
    org.apache.spark.sql.execution.SparkPlan node = frame.queryExecution().executedPlan();
    while (!(node instanceof org.apache.spark.sql.execution.FileSourceScanExec)) {
      node = node.children().head();
    }
    return node.executeColumnar().getNumPartitions();
  }

  private static long rows(JavaRDD<ColumnarBatch> batches) {
    return batches.map(b -> (long) b.numRows()).fold(0L, Long::sum);
  }
}
