package io.eigenmill.monitor.math;

import java.io.Serializable;

/**
 * Mergeable per-column means and centred sums of squares of scored rows, for comparing new data with the model that
 * scored them: the deviation of each feature from the model mean ({@code x_j - mean_j}, original units), each score
 * {@code p_c} and each prepared residual {@code r_j} (the part of the prepared row outside the model's subspace). The
 * rows a scoring pass hands over are complete (missing cells were dropped or imputed before), so every column has
 * the same count.
 *
 * <p>Per block, each column's mean is computed first and its sum of squares is taken about that mean with the
 * corrected two-pass formula {@code M2 = sum (v - m)^2 - (sum (v - m))^2 / n} (Chan, Golub and LeVeque 1983,
 * "Algorithms for computing the sample variance: analysis and recommendations"); blocks and partitions merge with
 * their pairwise update {@code M2 = M2a + M2b + delta^2 na nb / n} (Chan, Golub and LeVeque 1979). No sum of raw
 * squares is formed, so a feature far from the model mean keeps its variance. The features enter as deviations from
 * the model mean, so the mean shift is not the difference of two large numbers.
 *
 * <p>Cost: two reads of each of the {@code 2d + k} columns of a block (about 6 flops per value); memory
 * {@code 2 (2d + k)} doubles; nothing is allocated per block. The block's arrays are only read.
 */
public final class DriftMoments implements Serializable {
  private static final long serialVersionUID = 1L;

  private final int d;
  private final int k;
  private long n;
  /** Columns 0..d-1 the deviations from the model mean, d..d+k-1 the scores, d+k..2d+k-1 the residuals. */
  private final double[] mean;
  private final double[] m2;

  public DriftMoments(int d, int k) {
    this.d = d;
    this.k = k;
    this.mean = new double[2 * d + k];
    this.m2 = new double[2 * d + k];
  }

  public int features() {
    return d;
  }

  public int components() {
    return k;
  }

  public long rows() {
    return n;
  }

  /**
   * Adds {@code rows} scored rows.
   *
   * @param x the rows in original units, column-major with leading dimension {@code ld}
   * @param modelMeans the model's mean of each feature (subtracted from x)
   * @param scores column-major {@code rows x k}, leading dimension {@code rows}
   * @param residuals the prepared residuals, column-major {@code rows x d}, leading dimension {@code rows}
   */
  public void addBlock(double[] x, int ld, int rows, double[] modelMeans, double[] scores, double[] residuals) {
    if (rows == 0) {
      return;
    }
    for (int j = 0; j < d; j++) {
      addColumn(j, x, j * ld, rows, modelMeans[j]);
    }
    for (int c = 0; c < k; c++) {
      addColumn(d + c, scores, c * rows, rows, 0.0);
    }
    for (int j = 0; j < d; j++) {
      addColumn(d + k + j, residuals, j * rows, rows, 0.0);
    }
    n += rows;
  }

  /** Merges the column's values {@code a[off .. off + rows) - origin} into column {@code col} (n not yet updated). */
  private void addColumn(int col, double[] a, int off, int rows, double origin) {
    double sum = 0;
    for (int i = 0; i < rows; i++) {
      sum += a[off + i] - origin;
    }
    double mb = sum / rows;
    double ss = 0;
    double residual = 0;
    for (int i = 0; i < rows; i++) {
      double e = a[off + i] - origin - mb;
      ss += e * e;
      residual += e;
    }
    ss -= residual * residual / rows;
    combine(col, rows, mb, Math.max(0.0, ss));
  }

  private void combine(int col, long nb, double mb, double m2b) {
    if (n == 0) {
      mean[col] = mb;
      m2[col] = m2b;
      return;
    }
    long total = n + nb;
    double delta = mb - mean[col];
    m2[col] += m2b + delta * delta * ((double) n * (double) nb / (double) total);
    mean[col] += delta * ((double) nb / (double) total);
  }

  /** Merges {@code other} into this; {@code other} is unchanged. Merging an empty side is the identity. */
  public DriftMoments merge(DriftMoments other) {
    if (other.d != d || other.k != k) {
      throw new IllegalArgumentException("cannot merge drift moments of " + other.d + " features and " + other.k
          + " components into " + d + " and " + k);
    }
    if (other.n == 0) {
      return this;
    }
    for (int col = 0; col < mean.length; col++) {
      combine(col, other.n, other.mean[col], other.m2[col]);
    }
    n += other.n;
    return this;
  }

  /** A copy with the same values. */
  public DriftMoments copy() {
    DriftMoments c = new DriftMoments(d, k);
    return c.merge(this);
  }

  /** Mean of {@code x_j - modelMean_j}: the mean shift of feature j in original units. */
  public double meanShift(int j) {
    return mean[j];
  }

  /** Sample variance (n - 1) of feature j in original units; 0 below two rows. */
  public double featureVariance(int j) {
    return variance(j);
  }

  public double scoreMean(int c) {
    return mean[d + c];
  }

  /** Sample variance (n - 1) of score c. */
  public double scoreVariance(int c) {
    return variance(d + c);
  }

  /** Sample variance (n - 1) of the prepared residual of feature j. */
  public double residualVariance(int j) {
    return variance(d + k + j);
  }

  private double variance(int col) {
    return n < 2 ? 0.0 : m2[col] / (n - 1);
  }
}
