package io.eigenmill.monitor.math;

import io.eigenmill.math.Linalg;
import java.io.Serializable;

/**
 * Scores blocks of rows against a PCA model, with BLAS level 3. For a block X (m x d, original units):
 * Z = (X - mean) / scale, P = Z V (the scores, m x k), R = Z - P V^T (the residual, m x d), then per row
 * T2 = sum_c P_c^2 / lambda_c (Hotelling) and Q = ||R||^2 (squared prediction error). The residual is formed
 * explicitly rather than as ||Z||^2 - ||P||^2, which would cancel for rows that the model explains well.
 * Cost 2 m d k flops per block for each of the two products. Scratch arrays are kept between blocks.
 */
public final class Scorer implements Serializable {
  private static final long serialVersionUID = 1L;

  private final int d;
  private final int k;
  private final double[] means;
  private final double[] scales;
  private final double[] loadings;
  private final double[] inverseEigenvalues;
  private transient double[] z;

  /**
   * @param loadings column-major d x k, orthonormal columns
   * @param eigenvalues the k retained eigenvalues (variances of the scores)
   */
  public Scorer(double[] means, double[] scales, double[] loadings, double[] eigenvalues, int k) {
    this.d = means.length;
    this.k = k;
    this.means = means.clone();
    this.scales = scales.clone();
    this.loadings = loadings.clone();
    this.inverseEigenvalues = new double[k];
    for (int c = 0; c < k; c++) {
      inverseEigenvalues[c] = eigenvalues[c] > 0 ? 1.0 / eigenvalues[c] : 0.0;
    }
  }

  public int components() {
    return k;
  }

  /**
   * Scores {@code rows} rows of the column-major block {@code x} (leading dimension {@code ld}, original units).
   * Fills {@code scores} (column-major rows x k, leading dimension rows), {@code t2} and {@code q} (length >= rows),
   * and leaves the prepared residual of row i, feature j at {@link #residual}(i, j, rows) until the next call.
   */
  public void score(double[] x, int rows, int ld, double[] scores, double[] t2, double[] q) {
    score(x, rows, ld, null, scores, t2, q);
  }

  /**
   * {@link #score} of a block whose columns are a superset of the model's features: the model's feature j is the
   * block's column {@code columns[j]} ({@code columns} null: column j).
   */
  public void score(double[] x, int rows, int ld, int[] columns, double[] scores, double[] t2, double[] q) {
    if (rows == 0) {
      return;
    }
    if (z == null || z.length < rows * d) {
      z = new double[Math.max(rows * d, 1)];
    }
    for (int j = 0; j < d; j++) {
      double mu = means[j];
      double inv = 1.0 / scales[j];
      int src = (columns == null ? j : columns[j]) * ld;
      int dst = j * rows;
      for (int i = 0; i < rows; i++) {
        z[dst + i] = (x[src + i] - mu) * inv;
      }
    }
    if (k > 0) {
      Linalg.blas().dgemm("N", "N", rows, k, d, 1.0, z, rows, loadings, d, 0.0, scores, rows);
      // z := z - P V^T (the residual)
      Linalg.blas().dgemm("N", "T", rows, d, k, -1.0, scores, rows, loadings, d, 1.0, z, rows);
    }
    for (int i = 0; i < rows; i++) {
      double s = 0;
      for (int c = 0; c < k; c++) {
        double v = scores[c * rows + i];
        s += v * v * inverseEigenvalues[c];
      }
      t2[i] = s;
      q[i] = 0;
    }
    for (int j = 0; j < d; j++) {
      int off = j * rows;
      for (int i = 0; i < rows; i++) {
        double r = z[off + i];
        q[i] += r * r;
      }
    }
  }

  /** The prepared-unit residual of row i, feature j, from the last {@link #score} call on {@code rows} rows. */
  public double residual(int i, int j, int rows) {
    return z[j * rows + i];
  }

  /**
   * The prepared residuals of the last {@link #score} call on {@code rows} rows: column-major {@code rows x d},
   * leading dimension {@code rows}, valid until the next call. Read only.
   */
  public double[] residuals() {
    return z;
  }

  /** Reconstruction of row i, feature j in original units: mean + scale * (x - residual) in prepared units. */
  public double reconstructed(double[] x, int ld, int i, int j, int rows) {
    double prepared = (x[j * ld + i] - means[j]) / scales[j];
    return means[j] + scales[j] * (prepared - z[j * rows + i]);
  }

  public double mean(int j) {
    return means[j];
  }

  public int dimension() {
    return d;
  }
}
