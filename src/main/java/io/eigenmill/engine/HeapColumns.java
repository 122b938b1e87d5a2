package io.eigenmill.engine;

import java.lang.invoke.MethodHandles;
import java.lang.invoke.VarHandle;
import org.apache.spark.sql.execution.vectorized.OnHeapColumnVector;
import org.apache.spark.sql.vectorized.ColumnVector;

/**
 * The array behind a column of doubles in Spark's on-heap columnar batches (the default for Parquet scans and cached
 * tables), so that a copy can read it in SIMD groups instead of through one {@code getDouble} call per value. Spark
 * keeps the array in a private field of {@code OnHeapColumnVector} ({@code doubleData}, read through a
 * {@link VarHandle}); when the field is not there (another Spark version), the vector is of another kind (off-heap,
 * a cached table's), or it holds dictionary codes instead of values, {@link #doubles} returns null and readers take
 * the values one by one as before. The kept batches of a multi-pass fit ({@link KeptColumn}) expose their array too.
 */
final class HeapColumns {
  private static final VarHandle DOUBLES = find();

  private HeapColumns() {}

  private static VarHandle find() {
    try {
      return MethodHandles.privateLookupIn(OnHeapColumnVector.class, MethodHandles.lookup())
          .findVarHandle(OnHeapColumnVector.class, "doubleData", double[].class);
    } catch (ReflectiveOperationException | RuntimeException e) {
      return null;
    }
  }

  /** Whether this Spark exposes the array (see the class comment). */
  static boolean available() {
    return DOUBLES != null;
  }

  /**
   * The values of {@code v}, row r at index {@link #start}(v) + r, when it is an on-heap vector of doubles without a
   * dictionary or a kept column ({@link KeptColumn}); null otherwise.
   */
  static double[] doubles(ColumnVector v) {
    if (v.getClass() == KeptColumn.class) {
      return ((KeptColumn) v).values();
    }
    if (DOUBLES == null || v.getClass() != OnHeapColumnVector.class) {
      return null;
    }
    OnHeapColumnVector heap = (OnHeapColumnVector) v;
    return heap.hasDictionary() ? null : (double[]) DOUBLES.get(heap);
  }

  /** The index of row 0 in the array {@link #doubles} returns: 0 but for a kept column. */
  static int start(ColumnVector v) {
    return v.getClass() == KeptColumn.class ? ((KeptColumn) v).start() : 0;
  }
}
