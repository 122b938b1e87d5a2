package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
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
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.types.StructType;
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
}
