package io.eigenmill.engine;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.apache.spark.sql.execution.vectorized.OffHeapColumnVector;
import org.apache.spark.sql.execution.vectorized.OnHeapColumnVector;
import org.apache.spark.sql.execution.vectorized.WritableColumnVector;
import org.apache.spark.sql.types.DataTypes;
import org.junit.jupiter.api.Test;

/**
 * The array behind Spark's on-heap double vectors ({@link HeapColumns}) and the copy that reads it: a column copied
 * from an on-heap vector (array and SIMD copy) must give the same block and the same missing cells as the same
 * values in an off-heap vector (no array: one {@code getDouble} per value, the path of other vector kinds), nulls,
 * NaN and infinities included, with and without an origin. Reference: Spark's own {@code getDouble} and
 * {@code isNullAt}.
 */
class HeapColumnsTest {
  private static final int ROWS = 4100;

  /** A sink that records the block and the missing cells. */
  private static final class Recorder implements BlockSink {
    final double[] block;
    final double[] origin;
    final List<String> missing = new ArrayList<>();
    final int base;

    Recorder(int ld, double[] origin, int base) {
      this.block = new double[ld * 2];
      this.origin = origin;
      this.base = base;
    }

    @Override public double[] block() {
      return block;
    }

    @Override public int ld() {
      return block.length / 2;
    }

    @Override public int base() {
      return base;
    }

    @Override public double[] origin() {
      return origin;
    }

    @Override public void markMissing(int i, int j) {
      missing.add(i + "," + j);
    }
  }

  private static void fill(WritableColumnVector v) {
    for (int i = 0; i < ROWS; i++) {
      if (i % 97 == 5) {
        v.putNull(i);
      } else if (i % 89 == 7) {
        v.putDouble(i, i % 2 == 0 ? Double.NaN : Double.NEGATIVE_INFINITY);
      } else {
        v.putDouble(i, i % 13 == 0 ? -0.0 : 1e9 + i * 0.001 - (i % 7));
      }
    }
  }

  @Test
  void theArrayIsTheVectorsValues() {
    OnHeapColumnVector v = new OnHeapColumnVector(ROWS, DataTypes.DoubleType);
    fill(v);
    double[] values = HeapColumns.doubles(v);
    assertTrue(HeapColumns.available(), "Spark 3.5 keeps doubles in OnHeapColumnVector.doubleData");
    for (int i = 0; i < ROWS; i++) {
      if (!v.isNullAt(i)) {
        assertEquals(Double.doubleToRawLongBits(v.getDouble(i)), Double.doubleToRawLongBits(values[i]), "row " + i);
      }
    }
    try (OffHeapColumnVector off = new OffHeapColumnVector(ROWS, DataTypes.DoubleType)) {
      assertNull(HeapColumns.doubles(off), "off-heap vectors have no array");
    }
    OnHeapColumnVector ints = new OnHeapColumnVector(ROWS, DataTypes.IntegerType);
    assertNull(HeapColumns.doubles(ints), "a vector of ints has no array of doubles");
  }

  @Test
  void copiesThroughTheArrayEqualCopiesValueByValue() {
    OnHeapColumnVector heap = new OnHeapColumnVector(ROWS, DataTypes.DoubleType);
    fill(heap);
    try (OffHeapColumnVector off = new OffHeapColumnVector(ROWS, DataTypes.DoubleType)) {
      fill(off);
      for (double[] origin : new double[][] {null, {1e9}}) {
        for (int[] slice : new int[][] {{0, ROWS}, {5, 1024}, {4096, 4}, {13, 0}, {100, 9}}) {
          int start = slice[0];
          int t = slice[1];
          Recorder a = new Recorder(ROWS + 8, origin == null ? null : origin.clone(), 3);
          Recorder b = new Recorder(ROWS + 8, origin == null ? null : origin.clone(), 3);
          PartitionPasses.copyColumn(heap, ValueKinds.DOUBLE, start, t, a, 0);
          PartitionPasses.copyColumn(off, ValueKinds.DOUBLE, start, t, b, 0);
          String what = "rows " + start + ".." + (start + t) + ", origin " + (origin == null ? "none" : origin[0]);
          assertEquals(b.missing, a.missing, what);
          // cells marked missing hold whatever the sink makes of them; compare the others bit for bit
          for (int i = 0; i < t; i++) {
            if (!b.missing.contains(i + ",0")) {
              assertEquals(Double.doubleToRawLongBits(b.block[3 + i]), Double.doubleToRawLongBits(a.block[3 + i]),
                  what + ", row " + i);
            }
          }
          assertArrayEquals(java.util.Arrays.copyOf(b.block, 3), java.util.Arrays.copyOf(a.block, 3), what);
        }
      }
    }
  }
}
