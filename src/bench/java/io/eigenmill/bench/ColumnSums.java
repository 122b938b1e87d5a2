package io.eigenmill.bench;

import static io.eigenmill.engine.ValueKinds.DOUBLE;
import static io.eigenmill.engine.ValueKinds.FLOAT;
import static io.eigenmill.engine.ValueKinds.INT;
import static io.eigenmill.engine.ValueKinds.LONG;
import static io.eigenmill.engine.ValueKinds.SHORT;

import io.eigenmill.engine.ValueKinds;
import java.util.Collections;
import java.util.Iterator;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.sql.vectorized.ColumnVector;
import org.apache.spark.sql.vectorized.ColumnarBatch;

/**
 * The read floor's executor side: sums every feature column of every columnar batch of a partition, one tight loop
 * per column and batch (the type dispatch sits outside the loop), and emits one array: the d sums and, last, the
 * row count. Null cells are skipped. The least work that still touches every value once.
 */
final class ColumnSums implements FlatMapFunction<Iterator<ColumnarBatch>, double[]> {
  private static final long serialVersionUID = 1L;

  private final int[] ordinals;
  private final int[] kinds;

  /**
   * @param ordinals each feature's column position in a batch
   * @param kinds each feature's type, one of the codes of {@link ValueKinds}
   */
  ColumnSums(int[] ordinals, int[] kinds) {
    this.ordinals = ordinals.clone();
    this.kinds = kinds.clone();
  }

  @Override
  public Iterator<double[]> call(Iterator<ColumnarBatch> batches) {
    int d = ordinals.length;
    double[] sums = new double[d + 1];
    while (batches.hasNext()) {
      ColumnarBatch batch = batches.next();
      int n = batch.numRows();
      for (int j = 0; j < d; j++) {
        ColumnVector v = batch.column(ordinals[j]);
        sums[j] += v.hasNull() ? sumWithNulls(v, kinds[j], n) : sum(v, kinds[j], n);
      }
      sums[d] += n;
    }
    return Collections.singletonList(sums).iterator();
  }

  private static double sum(ColumnVector v, int kind, int n) {
    double s = 0;
    switch (kind) {
      case DOUBLE -> {
        for (int i = 0; i < n; i++) {
          s += v.getDouble(i);
        }
      }
      case FLOAT -> {
        for (int i = 0; i < n; i++) {
          s += v.getFloat(i);
        }
      }
      case INT -> {
        for (int i = 0; i < n; i++) {
          s += v.getInt(i);
        }
      }
      case LONG -> {
        for (int i = 0; i < n; i++) {
          s += v.getLong(i);
        }
      }
      case SHORT -> {
        for (int i = 0; i < n; i++) {
          s += v.getShort(i);
        }
      }
      default -> {
        for (int i = 0; i < n; i++) {
          s += v.getByte(i);
        }
      }
    }
    return s;
  }

  /** Columns with nulls are rare in the benchmark's tables: this path checks every cell. */
  private static double sumWithNulls(ColumnVector v, int kind, int n) {
    double s = 0;
    for (int i = 0; i < n; i++) {
      if (!v.isNullAt(i)) {
        s += switch (kind) {
          case DOUBLE -> v.getDouble(i);
          case FLOAT -> v.getFloat(i);
          case INT -> v.getInt(i);
          case LONG -> v.getLong(i);
          case SHORT -> v.getShort(i);
          default -> v.getByte(i);
        };
      }
    }
    return s;
  }

  /** The kind constant of a numeric Spark type (decimal excluded: the floor sums primitive columns only). */
  static int kindOf(org.apache.spark.sql.types.DataType t) {
    int kind = ValueKinds.kindOf(t);
    if (kind >= 0 && kind != ValueKinds.DECIMAL) {
      return kind;
    }
    throw new IllegalArgumentException("not a numeric column type: " + t.simpleString());
  }
}
