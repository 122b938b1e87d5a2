package io.eigenmill.bench;

import java.util.Collections;
import java.util.Iterator;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.execution.vectorized.WritableColumnVector;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;

/**
 * The read floor of a long table, executor side: touches every cell of the four columns of each columnar batch of a
 * partition once, one loop per column and batch, and emits one array: a checksum per column and, last, the row count.
 * The value column is summed; the time column's microseconds are summed; a string column adds up the dictionary ids
 * when the batch holds them (Parquet's dictionary-encoded pages, what a reader that maps names to indices needs) and
 * otherwise the byte lengths of the strings. Null cells are skipped.
 */
final class LongSums implements FlatMapFunction<Iterator<ColumnarBatch>, double[]> {
  private static final long serialVersionUID = 1L;

  /** What a column holds. */
  enum Kind { STRING, TIME, DOUBLE }

  private final int[] ordinals;
  private final Kind[] kinds;

  LongSums(int[] ordinals, Kind[] kinds) {
    this.ordinals = ordinals.clone();
    this.kinds = kinds.clone();
  }

  @Override
  public Iterator<double[]> call(Iterator<ColumnarBatch> batches) {
    int c = ordinals.length;
    double[] sums = new double[c + 1];
    while (batches.hasNext()) {
      ColumnarBatch batch = batches.next();
      int n = batch.numRows();
      for (int j = 0; j < c; j++) {
        sums[j] += sum(batch.column(ordinals[j]), kinds[j], n);
      }
      sums[c] += n;
    }
    return Collections.singletonList(sums).iterator();
  }

  private static double sum(ColumnVector v, Kind kind, int n) {
    boolean nulls = v.hasNull();
    long whole = 0;
    double s = 0;
    switch (kind) {
      case DOUBLE -> {
        for (int i = 0; i < n; i++) {
          if (!nulls || !v.isNullAt(i)) {
            s += v.getDouble(i);
          }
        }
      }
      case TIME -> {
        for (int i = 0; i < n; i++) {
          if (!nulls || !v.isNullAt(i)) {
            s += v.getLong(i);
          }
        }
      }
      default -> {
        if (v instanceof WritableColumnVector w && w.hasDictionary()) {
          WritableColumnVector ids = w.getDictionaryIds();
          for (int i = 0; i < n; i++) {
            if (!nulls || !v.isNullAt(i)) {
              whole += ids.getInt(i);
            }
          }
        } else {
          for (int i = 0; i < n; i++) {
            if (!nulls || !v.isNullAt(i)) {
              whole += v.getUTF8String(i).numBytes();
            }
          }
        }
      }
    }
    return s + whole;
  }
}
