package io.eigenmill.math;

import java.io.Serializable;

/**
 * Per-column count, mean and centred sum of squares, each column on its own rows: NaN cells (missing values) are
 * skipped, so a column's statistics use every value it has. Used for mean imputation, where the row-wise
 * {@link Moments} would see only complete rows. Welford's update within a column, Chan's pairwise merge across
 * partitions. The zero is {@link #empty}.
 */
public final class ColumnStats implements Serializable {
  private static final long serialVersionUID = 1L;

  private final long[] count;
  private final double[] mean;
  private final double[] m2;

  private ColumnStats(int d) {
    count = new long[d];
    mean = new double[d];
    m2 = new double[d];
  }

  public static ColumnStats empty(int d) {
    return new ColumnStats(d);
  }

  /** Adds a column-major {@code rows x d} block (leading dimension {@code ld}); NaN cells are skipped. */
  public void addBlock(double[] block, int rows, int ld) {
    for (int j = 0; j < count.length; j++) {
      int off = j * ld;
      long c = count[j];
      double mu = mean[j];
      double s = m2[j];
      for (int i = 0; i < rows; i++) {
        double x = block[off + i];
        if (Double.isNaN(x)) {
          continue;
        }
        c++;
        double delta = x - mu;
        mu += delta / c;
        s += delta * (x - mu);
      }
      count[j] = c;
      mean[j] = mu;
      m2[j] = s;
    }
  }

  public ColumnStats merge(ColumnStats other) {
    for (int j = 0; j < count.length; j++) {
      long nb = other.count[j];
      if (nb == 0) {
        continue;
      }
      long na = count[j];
      long total = na + nb;
      double delta = other.mean[j] - mean[j];
      m2[j] += other.m2[j] + delta * delta * ((double) na * nb / total);
      mean[j] += delta * ((double) nb / total);
      count[j] = total;
    }
    return this;
  }

  public long[] counts() {
    return count.clone();
  }

  public double[] means() {
    return mean.clone();
  }
}
