package io.eigenmill.kmeans;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.engine.ColumnarScan;
import io.eigenmill.testing.LoopbackCluster;
import io.eigenmill.testing.SparkSuite;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.Column;
import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.functions;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The clustering cache's two readers: blocks copied from columnar batches (Parquet, a table cached in memory), with
 * the identity hashed here, must equal the blocks copied row by row from the executed plan, with the identity
 * computed by Spark's own {@code xxhash64} (the outside reference: Spark's SQL function). Same rows, same block
 * boundaries, same skipped counts, identities equal bit for bit, on a table with both zeros, nulls, NaN and
 * infinities in double, float and int columns.
 */
class PointBlocksTest extends SparkSuite {
  private static final int ROWS = 2000;
  /** Small blocks, so that skipped rows fall on block boundaries. */
  private static final int CAPACITY = 7;
  private static final String[] COLS = {"a", "b", "c", "e"};
  private static Path dir;

  @BeforeAll
  static void table() throws Exception {
    dir = Files.createTempDirectory("eigenmill-point-blocks");
    SplittableRandom r = new SplittableRandom(11);
    StructType schema = new StructType().add("host", DataTypes.StringType).add("a", DataTypes.DoubleType)
        .add("b", DataTypes.FloatType).add("c", DataTypes.IntegerType).add("e", DataTypes.DoubleType);
    List<Row> rows = new ArrayList<>();
    for (int i = 0; i < ROWS; i++) {
      Double a = i % 53 == 1 ? null : i % 61 == 2 ? Double.NaN : i % 17 == 0 ? -0.0 : r.nextDouble() * 100 - 50;
      Float b = i % 67 == 3 ? Float.POSITIVE_INFINITY : i % 19 == 0 ? 0.0f : (float) (r.nextDouble() * 8);
      Integer c = i % 71 == 4 ? null : r.nextInt(-1000, 1000);
      double e = i % 23 == 0 ? 0.0 : i % 29 == 0 ? -0.0 : r.nextDouble();
      rows.add(RowFactory.create("h" + (i % 9), a, b, c, e));
    }
    spark.createDataFrame(rows, schema).repartition(3).write().parquet(dir.resolve("t").toString());
  }

  @AfterAll
  static void clean() {
    LoopbackCluster.deleteTree(dir);
  }

  @Test
  void parquetBatchesAndRowsGiveTheSameBlocks() {
    Dataset<Row> t = spark.read().parquet(dir.resolve("t").toString());
    compare(t);
  }

  @Test
  void cachedTableBatchesAndRowsGiveTheSameBlocks() {
    Dataset<Row> t = spark.read().parquet(dir.resolve("t").toString()).select(columns(COLS)).cache();
    try {
      t.count();
      compare(t);
    } finally {
      t.unpersist(true);
    }
  }

  @Test
  void aComputedColumnHasNoColumnarScan() {
    Dataset<Row> t = spark.read().parquet(dir.resolve("t").toString());
    assertNull(ColumnarScan.of(t.select(functions.col("a").plus(1), functions.col("b"))));
  }

  private static void compare(Dataset<Row> t) {
    Dataset<Row> coordinates = t.select(columns(COLS));
    assertNotNull(ColumnarScan.of(coordinates), "the columnar reader serves this table");
    List<Column> framed = new ArrayList<>();
    framed.add(functions.xxhash64(castColumns()).as("id"));
    for (Column c : castColumns()) {
      framed.add(c);
    }
    Dataset<Row> frame = t.select(framed.toArray(new Column[0]));
    List<PointBlock> byRows = collect(PointBlocks.cache(frame, null, COLS.length, CAPACITY));
    List<PointBlock> byBatches = collect(PointBlocks.cache(frame, coordinates, COLS.length, CAPACITY));
    assertEquals(byRows.size(), byBatches.size(), "blocks");
    long kept = 0;
    long skipped = 0;
    for (int b = 0; b < byRows.size(); b++) {
      PointBlock x = byRows.get(b);
      PointBlock y = byBatches.get(b);
      assertEquals(x.rows, y.rows, "rows of block " + b);
      assertEquals(x.skipped, y.skipped, "skipped before block " + b);
      assertArrayEquals(x.values, y.values, "values of block " + b);
      assertArrayEquals(x.ids, y.ids, "identities of block " + b);
      kept += x.rows;
      skipped += x.skipped;
    }
    // rows with a null, NaN or infinite coordinate, counted independently here
    long bad = t.filter(functions.col("a").isNull().or(functions.isnan(functions.col("a")))
        .or(functions.col("b").equalTo(Float.POSITIVE_INFINITY)).or(functions.col("c").isNull())).count();
    assertTrue(bad > 0);
    assertEquals(bad, skipped, "rows skipped");
    assertEquals(ROWS - bad, kept, "rows kept");
  }

  private static List<PointBlock> collect(JavaRDD<PointBlock> blocks) {
    try {
      return blocks.collect();
    } finally {
      blocks.unpersist(false);
    }
  }

  private static Column[] columns(String[] names) {
    Column[] c = new Column[names.length];
    for (int i = 0; i < names.length; i++) {
      c[i] = functions.col(names[i]);
    }
    return c;
  }

  private static Column[] castColumns() {
    Column[] c = columns(COLS);
    for (int i = 0; i < c.length; i++) {
      c[i] = c[i].cast("double").as(COLS[i]);
    }
    return c;
  }
}
