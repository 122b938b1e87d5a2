package io.eigenmill.kmeans.math;

/**
 * The affine map from the space that was clustered back to original feature units: {@code x = offset + M y}, where
 * y is the first p coordinates of a point (the entity means when standard deviations follow them).
 *
 * <ul>
 *   <li>PCA scores: M = diag(scale) V_p (V_p the first p loadings), offset = the model means; so a centroid c of
 *       scores maps to mean + scale * (V c), the point of the PCA subspace it stands for.</li>
 *   <li>Prepared features (x - mean) / scale: M = diag(scale), offset = the means.</li>
 *   <li>No model: M = I, offset = 0 (the clustered columns are the features).</li>
 * </ul>
 * {@link #deviations} gives each feature's standard deviation as seen through the map, from the covariance of the
 * clustered points: sd_j = sqrt(m_j^T Cov(y) m_j) with m_j row j of M, the spread against which profiles
 * standardise a centroid's difference from the overall mean. For a diagonal M only the variances are needed.
 */
public final class BackProjection {
  private final int f;
  private final int p;
  private final double[] offset;
  private final double[] map;
  private final boolean diagonal;

  private BackProjection(int f, int p, double[] offset, double[] map, boolean diagonal) {
    this.f = f;
    this.p = p;
    this.offset = offset;
    this.map = map;
    this.diagonal = diagonal;
  }

  /**
   * @param loadings column-major {@code d x k} with k >= p
   */
  public static BackProjection ofScores(double[] means, double[] scales, double[] loadings, int d, int p) {
    double[] m = new double[d * p];
    for (int c = 0; c < p; c++) {
      for (int j = 0; j < d; j++) {
        m[j + c * d] = scales[j] * loadings[j + c * d];
      }
    }
    return new BackProjection(d, p, means.clone(), m, false);
  }

  public static BackProjection ofFeatures(double[] means, double[] scales) {
    int d = means.length;
    double[] m = new double[d * d];
    for (int j = 0; j < d; j++) {
      m[j + j * d] = scales[j];
    }
    return new BackProjection(d, d, means.clone(), m, true);
  }

  public static BackProjection identity(int p) {
    return ofFeatures(new double[p], ones(p));
  }

  private static double[] ones(int p) {
    double[] o = new double[p];
    java.util.Arrays.fill(o, 1.0);
    return o;
  }

  public int features() {
    return f;
  }

  /** True when M is diagonal (prepared features, or no model): feature variances need no covariances. */
  public boolean diagonal() {
    return diagonal;
  }

  /** Coordinates of the clustered space that the map reads (the first p). */
  public int reads() {
    return p;
  }

  /** {@code offset + M y} for y = {@code point[off .. off + p)}. */
  public double[] apply(double[] point, int off) {
    double[] x = offset.clone();
    for (int c = 0; c < p; c++) {
      double y = point[off + c];
      for (int j = 0; j < f; j++) {
        x[j] += map[j + c * f] * y;
      }
    }
    return x;
  }

  /**
   * Standard deviation of each feature through the map. {@code covariance} is the column-major {@code D x D}
   * covariance of the clustered points (D >= p), or null when the map is diagonal, in which case {@code variances}
   * (length >= p) suffices.
   */
  public double[] deviations(double[] covariance, double[] variances, int dims) {
    double[] sd = new double[f];
    if (covariance == null) {
      if (!diagonal) {
        throw new IllegalArgumentException("a non-diagonal back-projection needs the full covariance");
      }
      for (int j = 0; j < f; j++) {
        double m = map[j + j * f];
        sd[j] = Math.sqrt(Math.max(0.0, m * m * variances[j]));
      }
      return sd;
    }
    for (int j = 0; j < f; j++) {
      double s = 0;
      for (int a = 0; a < p; a++) {
        double ma = map[j + a * f];
        for (int b = 0; b < p; b++) {
          s += ma * covariance[a + b * dims] * map[j + b * f];
        }
      }
      sd[j] = Math.sqrt(Math.max(0.0, s));
    }
    return sd;
  }
}
