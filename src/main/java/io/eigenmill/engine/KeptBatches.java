package io.eigenmill.engine;

import static io.eigenmill.engine.ValueKinds.DOUBLE;
import static io.eigenmill.engine.ValueKinds.FLOAT;

import java.util.Arrays;
import java.util.Iterator;
import org.apache.spark.SparkExecutorInfo;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.SparkSession;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;
import org.apache.spark.storage.StorageLevel;

/**
 * The features of a multi-pass fit kept in executor memory after the first pass, so that the later passes (the
 * randomized method's sketch and power iterations) scan memory instead of Parquet: the first pass copies each
 * columnar batch's feature columns into large shared arrays of doubles ({@link KeptColumn}: a null as NaN, which a
 * pass reads as the same missing cell; every other value as the pass would read it: exact widening of integers and
 * floats, {@code Decimal.toDouble} for decimals), the RDD of those batches is persisted {@code MEMORY_ONLY}, and
 * every pass, the first included, reads it. A pass over kept batches therefore fills the same blocks with the same
 * values as a pass over Parquet, and the fit is the same bit for bit. A partition Spark evicts is read again from
 * Parquet (lineage), never lost.
 *
 * <p>Whether a fit keeps its batches is the plan's decision ({@code plan.KeptPasses}), from {@link #BYTES_PER_CELL}
 * and {@link #freeStorage}.
 */
public final class KeptBatches {
  /** Bytes per kept cell: a double (a null is kept as NaN, see {@link KeptColumn}). */
  public static final int BYTES_PER_CELL = 8;
  /** Values per shared array of a kept batch at most: 16 Mi doubles, 128 MiB. */
  static final long SLAB_VALUES = 1L << 24;
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

  /**
   * The kept copy of a batch's feature columns: the columns of at most {@link #SLAB_VALUES} values share one array
   * of doubles, column j's rows one after another, a null cell as NaN ({@link KeptColumn}).
   */
  static ColumnarBatch copy(ColumnarBatch batch, int[] ordinals, int[] kinds) {
    return copy(batch, ordinals, kinds, SLAB_VALUES);
  }

  /** {@link #copy} with at most {@code slabValues} values per shared array (at least one column each). */
  static ColumnarBatch copy(ColumnarBatch batch, int[] ordinals, int[] kinds, long slabValues) {
    int n = batch.numRows();
    int d = ordinals.length;
    int perSlab = (int) Math.max(1, Math.min(d, slabValues / Math.max(1, n)));
    ColumnVector[] out = new ColumnVector[d];
    for (int first = 0; first < d; first += perSlab) {
      int width = Math.min(perSlab, d - first);
      double[] values = new double[Math.max(1, n * width)];
      for (int c = 0; c < width; c++) {
        int j = first + c;
        ColumnVector v = batch.column(ordinals[j]);
        int off = c * n;
        double[] heap = kinds[j] == DOUBLE ? HeapColumns.doubles(v) : null;
        if (v.hasNull()) {
          for (int r = 0; r < n; r++) {
            values[off + r] = v.isNullAt(r) ? Double.NaN : value(v, kinds[j], r);
          }
        } else if (heap != null) {
          System.arraycopy(heap, HeapColumns.start(v), values, off, n);
        } else {
          for (int r = 0; r < n; r++) {
            values[off + r] = value(v, kinds[j], r);
          }
        }
        out[j] = new KeptColumn(values, off);
      }
    }
    return new ColumnarBatch(out, n);
  }

  /** Non-null row r of {@code v} as a pass reads it. */
  private static double value(ColumnVector v, int kind, int r) {
    return kind == DOUBLE ? v.getDouble(r) : kind == FLOAT ? v.getFloat(r) : PartitionPasses.exactValue(v, kind, r);
  }
}
