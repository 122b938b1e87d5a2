package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotSame;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.BlockPrep;
import io.eigenmill.math.Moments;
import io.eigenmill.testing.SparkSuite;
import java.math.BigDecimal;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.SplittableRandom;
import java.util.stream.Stream;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.RowFactory;
import org.apache.spark.sql.execution.vectorized.OnHeapColumnVector;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.junit.jupiter.api.Test;

/**
 * Passes over kept batches read the same values as passes over Parquet: the moments of a table with doubles (with
 * nulls and NaN), floats, ints, longs and decimals are equal bit for bit whether a pass reads Parquet, keeps the
 * batches, or reads the kept batches after the Parquet files are gone (so it cannot have read them).
 */
class KeptBatchesTest extends SparkSuite {

  private static Path write(int rows) throws Exception {
    StructType schema = new StructType().add("host", DataTypes.StringType).add("a", DataTypes.DoubleType)
        .add("b", DataTypes.FloatType).add("c", DataTypes.IntegerType).add("e", DataTypes.LongType)
        .add("f", DataTypes.createDecimalType(10, 3));
    SplittableRandom r = new SplittableRandom(7);
    List<Row> data = new ArrayList<>();
    for (int i = 0; i < rows; i++) {
      Double a = i % 97 == 0 ? null : i % 89 == 0 ? Double.NaN : r.nextGaussian() * 5 + 1e3;
      data.add(RowFactory.create("h" + i, a, (float) r.nextGaussian(), i % 53 == 0 ? null : r.nextInt(1000),
          (long) r.nextInt(1 << 20), BigDecimal.valueOf(r.nextInt(1_000_000), 3)));
    }
    Path p = Files.createTempDirectory("eigenmill-kept").resolve("t");
    spark.createDataFrame(data, schema).repartition(3).write().parquet(p.toString());
    return p;
  }

  private static PartialResult<Moments> pass(FeatureInput input) {
    return input.run("test/moments", Moments.factory(5, true), ReadMode.DROP, BlockPrep.identity());
  }

  @Test
  void keptPassesGiveTheSameMomentsWithoutReadingTheInput() throws Exception {
    Path table = write(6000);
    List<String> features = List.of("a", "b", "c", "e", "f");
    FeatureInput input = new FeatureInput(spark.read().parquet(table.toString()), features, 256);
    assertTrue(input.columnar());
    PartialResult<Moments> fromParquet = pass(input);
    input.keepInMemory();
    PartialResult<Moments> keeping = pass(input);
    try (Stream<Path> files = Files.walk(table)) {
      files.sorted(Comparator.reverseOrder()).forEach(f -> f.toFile().delete());
    }
    assertFalse(Files.exists(table));
    PartialResult<Moments> fromMemory = pass(input);
    for (PartialResult<Moments> other : List.of(keeping, fromMemory)) {
      assertEquals(fromParquet.counts().rowsRead(), other.counts().rowsRead());
      assertEquals(fromParquet.counts().rowsDropped(), other.counts().rowsDropped());
      assertArrayEquals(fromParquet.counts().missingCells(), other.counts().missingCells());
      assertEquals(fromParquet.value().count(), other.value().count());
      assertArrayEquals(fromParquet.value().mean(), other.value().mean(), 0.0);
      assertArrayEquals(fromParquet.value().covariance(), other.value().covariance(), 0.0);
    }
    // rows with a null or NaN in a or a null in c are dropped: 6000 rows less those of i % 97, 89 or 53 = 0
    // (inclusion-exclusion over i = 0..5999; common practice, no source)
    long dropped = 0;
    for (int i = 0; i < 6000; i++) {
      dropped += i % 97 == 0 || i % 89 == 0 || i % 53 == 0 ? 1 : 0;
    }
    assertEquals(dropped, fromMemory.counts().rowsDropped());
    input.release();
  }

  /**
   * The kept copy of one batch, cell by cell, with two columns per shared array (five columns: three arrays): a null
   * cell is NaN and no kept column reports a null, a double is the same bits, a float, an int and a long are widened
   * exactly (Java's widening conversions, JLS 5.1.2), and the batch's columns after the kept ones are not copied.
   */
  @Test
  void aKeptBatchSharesArraysAndKeepsNullsAsNaN() {
    int n = 7;
    OnHeapColumnVector a = new OnHeapColumnVector(n, DataTypes.DoubleType);
    OnHeapColumnVector b = new OnHeapColumnVector(n, DataTypes.FloatType);
    OnHeapColumnVector c = new OnHeapColumnVector(n, DataTypes.IntegerType);
    OnHeapColumnVector e = new OnHeapColumnVector(n, DataTypes.LongType);
    OnHeapColumnVector f = new OnHeapColumnVector(n, DataTypes.DoubleType);
    OnHeapColumnVector unused = new OnHeapColumnVector(n, DataTypes.DoubleType);
    for (int r = 0; r < n; r++) {
      if (r == 2) {
        a.putNull(r);
        c.putNull(r);
      } else {
        a.putDouble(r, r == 4 ? Double.NaN : 0.1 * r - 1e300 * (r == 5 ? 1 : 0));
        c.putInt(r, Integer.MIN_VALUE + r);
      }
      b.putFloat(r, 1.1f * r);
      e.putLong(r, (1L << 53) + 1 + r);
      f.putDouble(r, -r);
      unused.putDouble(r, 99);
    }
    ColumnarBatch batch = new ColumnarBatch(new ColumnVector[] {unused, a, b, c, e, f}, n);
    int[] ordinals = {1, 2, 3, 4, 5};
    int[] kinds = {ValueKinds.DOUBLE, ValueKinds.FLOAT, ValueKinds.INT, ValueKinds.LONG, ValueKinds.DOUBLE};
    ColumnarBatch kept = KeptBatches.copy(batch, ordinals, kinds, 2L * n);
    assertEquals(n, kept.numRows());
    assertEquals(5, kept.numCols());
    for (int j = 0; j < 5; j++) {
      ColumnVector k = kept.column(j);
      assertFalse(k.hasNull());
      assertEquals(0, k.numNulls());
      assertSame(HeapColumns.doubles(kept.column(2 * (j / 2))), HeapColumns.doubles(k), "column " + j);
      assertEquals((j % 2) * n, HeapColumns.start(k), "column " + j);
      for (int r = 0; r < n; r++) {
        ColumnVector v = batch.column(ordinals[j]);
        double expected = v.isNullAt(r) ? Double.NaN : j == 1 ? (double) v.getFloat(r) : j == 2 ? (double) v.getInt(r)
            : j == 3 ? (double) v.getLong(r) : v.getDouble(r);
        assertEquals(Double.doubleToRawLongBits(expected), Double.doubleToRawLongBits(k.getDouble(r)),
            "column " + j + " row " + r);
      }
    }
    assertNotSame(HeapColumns.doubles(kept.column(0)), HeapColumns.doubles(kept.column(2)));
    assertNotSame(HeapColumns.doubles(kept.column(2)), HeapColumns.doubles(kept.column(4)));
  }
}
