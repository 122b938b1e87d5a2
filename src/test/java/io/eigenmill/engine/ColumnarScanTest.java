package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
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
