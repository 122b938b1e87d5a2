package io.eigenmill.pca.math;

/**
 * Eigenvalues (sample variances of the components, descending) and loadings of a PCA, after the sign convention.
 *
 * @param eigenvalues every eigenvalue the method produced (all d for covariance and TSQR, k + oversample for the
 *     randomized method)
 * @param loadings column-major {@code d x eigenvalues.length}; column c is component c + 1
 * @param totalVariance trace of the (scaled) covariance: the sum of all d eigenvalues, known even when the method
 *     does not produce them all
 */
public record Spectrum(int d, double[] eigenvalues, double[] loadings, double totalVariance)
    implements java.io.Serializable {

  /** The loading of feature {@code j} in component {@code c} (both zero-based). */
  public double loading(int j, int c) {
    return loadings[j + c * d];
  }

  public int available() {
    return eigenvalues.length;
  }

  public double[] varianceShares() {
    double[] r = new double[eigenvalues.length];
    for (int i = 0; i < r.length; i++) {
      r[i] = totalVariance > 0 ? eigenvalues[i] / totalVariance : 0.0;
    }
    return r;
  }

  public double[] cumulativeVarianceShares() {
    double[] r = varianceShares();
    double s = 0;
    for (int i = 0; i < r.length; i++) {
      s += r[i];
      r[i] = s;
    }
    return r;
  }

  /**
   * The smallest k whose cumulative variance share reaches {@code target}, or -1 when the available eigenvalues do not
   * reach it. A tolerance of 1e-12 absorbs rounding in a cumulative sum that should reach exactly 1.
   */
  public int smallestReaching(double target) {
    double[] cumulative = cumulativeVarianceShares();
    for (int i = 0; i < cumulative.length; i++) {
      if (cumulative[i] >= target - 1e-12) {
        return i + 1;
      }
    }
    return -1;
  }

  /**
   * From a sample covariance (or correlation) matrix: every eigenvalue, and the loadings of the first
   * {@code components.applyAsInt(eigenvalues)} components only (sign-normalised): the tridiagonal reduction once,
   * the vectors of the kept components ({@link SymmetricEigen#reduce}).
   */
  public static Spectrum ofCovarianceKept(double[] covariance, int d,
      java.util.function.ToIntFunction<Spectrum> components) {
    SymmetricEigen.Reduced r = SymmetricEigen.reduce(covariance, d);
    double trace = 0;
    for (int j = 0; j < d; j++) {
      trace += covariance[j + j * d];
    }
    double[] values = r.values();
    int m = Math.max(0, Math.min(d, components.applyAsInt(new Spectrum(d, values, new double[0], trace))));
    double[] vectors = r.top(m);
    SignConvention.apply(vectors, d, m);
    return new Spectrum(d, values, vectors, trace);
  }

  /**
   * From a sample covariance (or correlation) matrix: every eigenvalue and every component's loadings,
   * sign-normalised; the same route as {@link #ofCovarianceKept} with all d components kept.
   */
  public static Spectrum ofCovariance(double[] covariance, int d) {
    return ofCovarianceKept(covariance, d, s -> d);
  }

  /**
   * From the R factor of the centred rows, restricted to the columns {@code keep} and column i multiplied by
   * {@code factor[i]}: eigenvalues sigma^2 / (n - 1).
   */
  public static Spectrum ofRFactor(RFactor r, int[] keep, double[] factor) {
    int d = keep.length;
    RFactor.Svd svd = r.svd(keep, factor);
    long n = r.count();
    double denominator = Math.max(1, n - 1);
    double[] values = new double[d];
    double trace = 0;
    for (int i = 0; i < d; i++) {
      double s = svd.singularValues()[i];
      values[i] = s * s / denominator;
      trace += values[i];
    }
    double[] v = svd.rightVectors();
    SignConvention.apply(v, d, d);
    return new Spectrum(d, values, v, trace);
  }
}
