package io.eigenmill.math;

/**
 * Per-column count, mean and centred sum of squares, each column on its own rows: NaN cells (missing values) are
 * skipped, so a column's statistics use every value it has. Used for mean imputation, where the row-wise
 * {@link Moments} would see only complete rows. Welford's update within a column, Chan's pairwise merge across
 * partitions. The zero is {@link #empty}; merging an empty side is the identity bit for bit (a column with no values
 * takes the other side's as they are: delta times 1, plus zero). Cost: one read of each cell per block (a
 * division per value), O(d) per merge.
 */
public final class ColumnStats implements BlockSummary<ColumnStats> {
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

  /** The factory of {@link #empty}{@code (d)}. */
  public static Factory<ColumnStats> factory(int d) {
    return new Empty(d);
  }

  private record Empty(int d) implements Factory<ColumnStats> {
    @Override public ColumnStats empty() {
      return ColumnStats.empty(d);
    }
  }

  /** Adds a column-major {@code rows x d} block (leading dimension {@code ld}); NaN cells are skipped. */
  @Override
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

  /** Merges {@code other} into this (Chan's pairwise update per column); {@code other} is unchanged. */
  @Override
  public ColumnStats merge(ColumnStats other) {
    if (other.count.length != count.length) {
      throw new IllegalArgumentException("cannot merge column statistics of " + other.count.length
          + " columns into statistics of " + count.length);
    }
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
