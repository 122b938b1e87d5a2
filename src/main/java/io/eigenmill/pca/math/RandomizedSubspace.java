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
    SignConvention.apply(v, d, l);
    return new Spectrum(d, values, v, totalVariance);
  }
}
