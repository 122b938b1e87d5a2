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
 * The columnar scan's settings for wide reads: splits of a Parquet file hold at least 256 KiB per column read, so
 * that a wide file is not cut into many splits that each decode its whole footer. Checked against Spark's own split
 * count for the same file (a plain {@code executeColumnar()} of the same plan) and by counting the rows read.
 */
class ColumnarScanTest extends SparkSuite {
  private static final int ROWS = 20_000;
  private static final int COLUMNS = 60;
  private static final String SPLIT = ColumnarScan.SPLIT_BYTES_KEY;
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
  void wideScansReadFewerLargerSplitsAndEveryRow() {
    spark.conf().set(SPLIT, "1m");
    try {
      // a scan builds its splits once: Spark's count from one plan, ours from another plan of the same read
      int plain = splitsOf(spark.read().parquet(dir.resolve("t").toString()));
      Dataset<Row> wide = spark.read().parquet(dir.resolve("t").toString());
      assertTrue(plain >= 5, "1 MB splits cut the file into several: " + plain);
      ColumnarScan scan = ColumnarScan.of(wide);
      assertNotNull(scan);
      JavaRDD<ColumnarBatch> batches = scan.batches();
      // 60 columns x 256 KiB = 15 MB per split at least; Spark caps it at the bytes per core (2 cores here)
      assertTrue(batches.getNumPartitions() <= 2, "splits of the wide scan: " + batches.getNumPartitions());
      assertEquals(ROWS, rows(batches), "every row read once");
      assertEquals("1m", spark.conf().get(SPLIT), "the session's setting is restored");

      int narrowPlain = splitsOf(spark.read().parquet(dir.resolve("t").toString()).select("c0", "c1"));
      Dataset<Row> narrow = spark.read().parquet(dir.resolve("t").toString()).select("c0", "c1");
      JavaRDD<ColumnarBatch> narrowBatches = ColumnarScan.of(narrow).batches();
      assertEquals(narrowPlain, narrowBatches.getNumPartitions(), "2 x 256 KiB is below 1 MB: Spark's own splits");
      assertEquals(ROWS, rows(narrowBatches));
    } finally {
      spark.conf().unset(SPLIT);
    }
    assertFalse(spark.conf().contains(SPLIT));
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
