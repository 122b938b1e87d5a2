package io.eigenmill.pca.math;

/**
 * What the residuals of the randomized method's Ritz pairs say about its k kept components, a posteriori (from the
 * computed pairs alone, no knowledge of the true spectrum). C is the covariance the passes work on (centred,
 * optionally scaled), theta_1 >= ... >= theta_l its Ritz values on the sketch, v_i the Ritz vectors, lambda_1 >= ...
 * >= lambda_d its eigenvalues, R_k = C V_k - V_k Theta_k the residual of the first k pairs.
 *
 * <p>The statements behind the figures:
 * <ul>
 *   <li><b>Eigenvalues (the reported bound).</b> For symmetric C and orthonormal V_k with Theta_k = V_k^T C V_k there
 *       are k eigenvalues alpha_1 >= ... >= alpha_k of C with |theta_i - alpha_i| <= ||R_k||_2 (Kahan's theorem:
 *       Parlett, The Symmetric Eigenvalue Problem, 1998, Thm 11.5.1; for one pair, |theta_i - alpha| <= ||r_i||_2,
 *       Thm 4.5.1, the symmetric case of Bauer-Fike). And theta_i <= lambda_i always (Cauchy interlacing, Parlett
 *       §10.1). {@link #bound} is ||R_k||_2 / theta_1. When the alpha_i are the leading eigenvalues, i.e. the sketch
 *       missed no leading direction, 0 <= lambda_i - theta_i <= ||R_k||_2 for each kept component. That condition is
 *       not checked by the residuals (a sketch orthogonal to a leading eigenvector can have tiny residuals); a
 *       Gaussian start with oversampling meets it with high probability (Halko, Martinsson and Tropp 2011, §10).
 *   <li><b>Captured variance.</b> The k Ritz vectors capture trace(V_k^T C V_k) = sum theta_i of the variance, at
 *       most the optimum sum lambda_i (Ky Fan's maximum principle; Parlett §11.5), and, under the same condition, at
 *       least the optimum minus k ||R_k||_2 (summing the eigenvalue statement). Both as shares of trace(C).
 *   <li><b>Directions (an estimate).</b> The angle between v_i and the eigenvector of the eigenvalue nearest theta_i
 *       has sin <= ||r_i||_2 / delta_i, with delta_i the distance from theta_i to the other eigenvalues (Davis and
 *       Kahan 1970, the sin theta theorem for one vector; Parlett Thm 11.7.1). delta_i is unknown: it is estimated
 *       by the distance to the nearest other computed Ritz value, so {@link #angleBounds} are estimates, not bounds.
 *       A near-degenerate pair has a small delta and a large angle: its individual directions are ill-determined
 *       (only their plane is), which the figure says.
 * </ul>
 *
 * @param residuals per kept component, ||C v_i - theta_i v_i||_2 / theta_1
 * @param bound ||R_k||_2 / theta_1, at least the largest of {@code residuals}
 * @param capturedVariance sum_{i <= k} theta_i / trace(C)
 * @param capturedVarianceBound k ||R_k||_2 / trace(C): the optimum share lies in [captured, captured + this]
 * @param angleBounds per kept component, asin(min(1, ||r_i|| / delta_i)) in radians with delta_i estimated; NaN when
 *     no other Ritz value exists
 */
public record RitzAccuracy(int k, double[] residuals, double bound, double capturedVariance,
    double capturedVarianceBound, double[] angleBounds) implements java.io.Serializable {

  /** The figures of the first {@code k} pairs of {@code ritz}. */
  public static RitzAccuracy of(RandomizedSubspace.Ritz ritz, int k) {
    Spectrum s = ritz.spectrum();
    double[] theta = s.eigenvalues();
    int l = theta.length;
    if (k < 1 || k > l) {
      throw new IllegalArgumentException("k = " + k + " of " + l + " Ritz pairs");
    }
    double top = theta[0];
    double scale = top > 0 ? top : 1.0;
    double[] residuals = new double[k];
    double[] angles = new double[k];
    double captured = 0;
    for (int i = 0; i < k; i++) {
      double r = ritz.residualNorms()[i];
      residuals[i] = r / scale;
      captured += theta[i];
      double gap = Double.POSITIVE_INFINITY;
      for (int j = 0; j < l; j++) {
        if (j != i) {
          gap = Math.min(gap, Math.abs(theta[i] - theta[j]));
        }
      }
      angles[i] = l == 1 ? Double.NaN : r == 0 ? 0.0 : gap == 0 ? Math.PI / 2 : Math.asin(Math.min(1.0, r / gap));
    }
    double normRk = blockNorm(ritz.residualGram(), l, k);
    double trace = s.totalVariance();
    double share = trace > 0 ? captured / trace : 0.0;
    double shareBound = trace > 0 ? k * normRk / trace : 0.0;
    return new RitzAccuracy(k, residuals, normRk / scale, share, shareBound, angles);
  }

  /**
   * ||R_k||_2 from the leading k x k block of R^T R (l x l): the square root of its largest eigenvalue, and never
   * below the largest column norm (rounding in the eigenvalue could otherwise put it a few ulps under).
   */
  static double blockNorm(double[] gram, int l, int k) {
    double[] block = new double[k * k];
    double largestColumn = 0;
    for (int j = 0; j < k; j++) {
      for (int i = 0; i < k; i++) {
        block[i + j * k] = gram[i + j * l];
      }
      largestColumn = Math.max(largestColumn, gram[j + j * l]);
    }
    double top = SymmetricEigen.decompose(block, k).values()[0];
    return Math.sqrt(Math.max(top, largestColumn));
  }
}
