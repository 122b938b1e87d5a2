package io.eigenmill.pca.math;

import io.eigenmill.math.Linalg;
import java.util.SplittableRandom;

/**
 * Driver-side steps of the randomized PCA (Halko, Martinsson and Tropp 2011, Algorithms 4.4 and 5.1 applied to the
 * centred, optionally scaled matrix A): a seeded Gaussian start, orthonormalisation between power iterations, and the
 * final Rayleigh-Ritz step. Each distributed pass computes Z = A^T A Q ({@link SketchProduct}); with Q orthonormal,
 * Q^T Z = (AQ)^T (AQ) is the small l x l matrix whose eigenpairs give the leading eigenvalues and, through Q, the
 * loadings. Only d x l and l x l arrays exist; nothing is d x d.
 *
 * <p>Accuracy (HMT 2011, Corollary 10.10): with p = l - k oversampling columns and q power iterations, the error in
 * the k-th component decays like (sigma_{l+1} / sigma_k)^(2q+1).
 */
public final class RandomizedSubspace {
  private RandomizedSubspace() {}

  /** A d x l Gaussian matrix from {@code seed}, orthonormalised. */
  public static double[] start(int d, int l, long seed) {
    SplittableRandom random = new SplittableRandom(seed);
    double[] q = new double[d * l];
    for (int i = 0; i < q.length; i++) {
      q[i] = gaussian(random);
    }
    Linalg.orthonormalizeColumns(q, d, l);
    return q;
  }

  private static double gaussian(SplittableRandom random) {
    // Box-Muller; SplittableRandom has no nextGaussian on Java 17
    double u = random.nextDouble();
    double v = random.nextDouble();
    return Math.sqrt(-2.0 * Math.log(1.0 - u)) * Math.cos(2.0 * Math.PI * v);
  }

  /** The next orthonormal basis from a product Z = A^T A Q (d x l); Z is overwritten. */
  public static double[] next(double[] z, int d, int l) {
    Linalg.orthonormalizeColumns(z, d, l);
    return z;
  }

  /**
   * Rayleigh-Ritz: from an orthonormal Q (d x l) and Z = A^T A Q, the eigenvalues (divided by n - 1) and loadings
   * V = Q W of the small matrix Q^T Z = W Lambda W^T, sign-normalised.
   */
  public static Spectrum finish(double[] q, double[] z, int d, int l, long n, double totalVariance) {
    return rayleighRitz(q, z, d, l, n, totalVariance).spectrum();
  }

  /**
   * The Ritz pairs of one pass with their residuals, at no extra pass. With C = A^T A / (n - 1) the covariance the
   * passes work on, the pass that produced Z was taken against this very Q, so C Q = Z / (n - 1) and, for the Ritz
   * vectors V = Q W, C V = Z W / (n - 1): the residuals R = C V - V Theta come from the last power iteration's own
   * product (d x l x l flops on the driver), not from another read of the data.
   *
   * @param spectrum the Ritz values theta (descending) and sign-normalised Ritz vectors, as {@link #finish}
   * @param residualNorms ||C v_i - theta_i v_i||_2 for each of the l Ritz pairs (covariance units)
   * @param residualGram R^T R (l x l, column-major, before the sign convention: a column's sign flips the signs of
   *     its row and column of R^T R, which leaves the norm of every leading block unchanged)
   */
  public record Ritz(Spectrum spectrum, double[] residualNorms, double[] residualGram) {}

  /** {@link #finish} with the residuals of every Ritz pair ({@link Ritz}). */
  public static Ritz rayleighRitz(double[] q, double[] z, int d, int l, long n, double totalVariance) {
    double[] g = new double[l * l];
    Linalg.repeatableBlas().dgemm("T", "N", l, l, d, 1.0, q, d, z, d, 0.0, g, l);
    for (int j = 0; j < l; j++) {
      for (int i = 0; i < j; i++) {
        double avg = 0.5 * (g[i + j * l] + g[j + i * l]);
        g[i + j * l] = avg;
        g[j + i * l] = avg;
      }
    }
    SymmetricEigen.Result e = SymmetricEigen.decompose(g, l);
    double[] v = new double[d * l];
    Linalg.repeatableBlas().dgemm("N", "N", d, l, l, 1.0, q, d, e.vectors(), l, 0.0, v, d);
    double denominator = Math.max(1, n - 1);
    double[] values = new double[l];
    for (int i = 0; i < l; i++) {
      values[i] = e.values()[i] / denominator;
    }
    // R = Z W / (n - 1) - V Theta, column by column
    double[] r = new double[d * l];
    Linalg.repeatableBlas().dgemm("N", "N", d, l, l, 1.0 / denominator, z, d, e.vectors(), l, 0.0, r, d);
    for (int c = 0; c < l; c++) {
      for (int i = 0; i < d; i++) {
        r[i + c * d] -= values[c] * v[i + c * d];
      }
    }
    double[] gram = new double[l * l];
    Linalg.repeatableBlas().dgemm("T", "N", l, l, d, 1.0, r, d, r, d, 0.0, gram, l);
    double[] norms = new double[l];
    for (int c = 0; c < l; c++) {
      double s = 0;
      for (int i = 0; i < d; i++) {
        s += r[i + c * d] * r[i + c * d];
      }
      norms[c] = Math.sqrt(s);
    }
    SignConvention.apply(v, d, l);
    return new Ritz(new Spectrum(d, values, v, totalVariance), norms, gram);
  }
}
