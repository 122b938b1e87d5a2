package io.eigenmill.engine;

import static io.eigenmill.engine.ValueKinds.DOUBLE;
import static io.eigenmill.engine.ValueKinds.FLOAT;

import java.util.Arrays;
import java.util.Iterator;
import org.apache.spark.SparkExecutorInfo;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.execution.vectorized.OnHeapColumnVector;
import org.apache.spark.sql.types.DataTypes;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.apache.spark.storage.StorageLevel;

/**
 * The features of a multi-pass fit kept in executor memory after the first pass, so that the later passes (the
 * randomized method's sketch and power iterations) scan memory instead of Parquet: the first pass copies each
 * columnar batch's feature columns into on-heap vectors of doubles (nulls kept as nulls, every other value as the
 * pass would read it: exact widening of integers and floats, {@code Decimal.toDouble} for decimals), the RDD of
 * those batches is persisted {@code MEMORY_ONLY}, and every pass, the first included, reads it. A pass over kept
 * batches therefore fills the same blocks with the same values as a pass over Parquet, and the fit is the same bit
 * for bit. A partition Spark evicts is read again from Parquet (lineage), never lost.
 *
 * <p>Whether a fit keeps its batches is the plan's decision ({@code plan.KeptPasses}), from {@link #BYTES_PER_CELL}
 * and {@link #freeStorage}.
 */
public final class KeptBatches {
  /** Bytes per kept cell: a double and the vector's null flag. */
  public static final int BYTES_PER_CELL = 9;
  private KeptBatches() {}

  /** The storage memory free on the executors (the driver's, in local mode), from Spark's status tracker. */
  public static long freeStorage(SparkSession spark) {
    long free = 0;
    for (SparkExecutorInfo e : spark.sparkContext().statusTracker().getExecutorInfos()) {
      free += Math.max(0, e.totalOnHeapStorageMemory() - e.usedOnHeapStorageMemory());
    }
    return free;
  }

  /** The batches' feature columns (positions {@code ordinals}, kinds {@code kinds}) as kept batches, persisted. */
  static JavaRDD<ColumnarBatch> keep(JavaRDD<ColumnarBatch> batches, int[] ordinals, int[] kinds) {
    return batches.mapPartitions(new Copy(ordinals, kinds)).persist(StorageLevel.MEMORY_ONLY());
  }

  /** Positions 0..d-1 and kind double for every column: how a pass reads kept batches. */
  static int[] ordinals(int d) {
    int[] o = new int[d];
    Arrays.setAll(o, j -> j);
    return o;
  }

  static int[] kinds(int d) {
    int[] k = new int[d];
    Arrays.fill(k, DOUBLE);
    return k;
  }

  /** Copies every batch: the reader reuses its batch objects, the kept ones must not be. */
  private static final class Copy implements FlatMapFunction<Iterator<ColumnarBatch>, ColumnarBatch> {
    private static final long serialVersionUID = 1L;
    private final int[] ordinals;
    private final int[] kinds;

    Copy(int[] ordinals, int[] kinds) {
      this.ordinals = ordinals;
      this.kinds = kinds;
    }

    @Override
    public Iterator<ColumnarBatch> call(Iterator<ColumnarBatch> batches) {
      return new Iterator<>() {
        @Override
        public boolean hasNext() {
          return batches.hasNext();
        }

        @Override
        public ColumnarBatch next() {
          return copy(batches.next(), ordinals, kinds);
        }
      };
    }
  }

  static ColumnarBatch copy(ColumnarBatch batch, int[] ordinals, int[] kinds) {
    int n = batch.numRows();
    ColumnVector[] out = new ColumnVector[ordinals.length];
    for (int j = 0; j < ordinals.length; j++) {
      ColumnVector v = batch.column(ordinals[j]);
      OnHeapColumnVector c = new OnHeapColumnVector(Math.max(1, n), DataTypes.DoubleType);
      double[] heap = kinds[j] == DOUBLE ? HeapColumns.doubles(v) : null;
      boolean nulls = v.hasNull();
      if (heap != null && !nulls) {
        c.putDoubles(0, n, heap, 0);
      } else {
        for (int r = 0; r < n; r++) {
          if (nulls && v.isNullAt(r)) {
            c.putNull(r);
          } else {
            c.putDouble(r, kinds[j] == DOUBLE ? v.getDouble(r) : kinds[j] == FLOAT ? v.getFloat(r)
                : PartitionPasses.exactValue(v, kinds[j], r));
          }
        }
      }
      out[j] = c;
    }
    return new ColumnarBatch(out, n);
  }
}
