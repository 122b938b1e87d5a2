package io.eigenmill.spark;

import java.io.Serializable;

/**
 * A block of clustered points as cached on the executors: {@code rows x d} doubles, column-major with leading
 * dimension {@code rows}, the 64-bit identity of each row (a hash of its values, or of its entity key), and the
 * number of rows skipped since the previous block because a coordinate was null, NaN or infinite. A block may hold
 * no rows and only a skipped count.
 */
public final class PointBlock implements Serializable {
  private static final long serialVersionUID = 1L;

  final int rows;
  final int d;
  final double[] values;
  final long[] ids;
  final long skipped;

  PointBlock(int rows, int d, double[] values, long[] ids, long skipped) {
    this.rows = rows;
    this.d = d;
    this.values = values;
    this.ids = ids;
    this.skipped = skipped;
  }

  public int rows() {
    return rows;
  }

  public long skipped() {
    return skipped;
  }
}
