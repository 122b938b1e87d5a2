package io.eigenmill.demo;

/**
 * The optional wide block of metrics {@code x_0001 .. x_M}: column j is
 * {@code offset_j + scale_j * (sum_k w_jk f_k + sigma_j * z)}, with f the row's six standardised drivers
 * ({@link TelemetryModel#factors}), one to three non-zero loadings w_jk, noise z ~ N(0, 1), sigma_j in [0.2, 1),
 * scale_j log-uniform over [1e-2, 1e3) and an offset of -5 to 20 scales. So the wide table keeps the low-rank
 * structure of the base metrics (and its faults), with columns on very different scales.
 *
 * <p>The coefficients are a pure function of (seed, j). Cost: O(M) memory, built once per task in O(M);
 * O(M) per row (one Gaussian and six multiply-adds per column).
 */
final class ExtraMetrics {
  private static final long COEFFICIENT_STREAM = 31;

  private final int count;
  private final double[] offset;
  private final double[] scale;
  private final double[] sigma;
  /** count x FACTORS, row-major. */
  private final double[] loading;

  ExtraMetrics(long seed, int count) {
    this.count = count;
    int k = TelemetryModel.FACTORS;
    offset = new double[count];
    scale = new double[count];
    sigma = new double[count];
    loading = new double[count * k];
    NoiseSource noise = new NoiseSource();
    for (int j = 0; j < count; j++) {
      noise.reset(NoiseSource.key(seed, COEFFICIENT_STREAM, j, 0));
      int nonZero = 1 + noise.below(3);
      for (int t = 0; t < nonZero; t++) {
        loading[j * k + noise.below(k)] += noise.gaussian();
      }
      sigma[j] = noise.uniform(0.2, 1.0);
      scale[j] = Math.pow(10, noise.uniform(-2, 3));
      offset[j] = scale[j] * noise.uniform(-5, 20);
    }
  }

  int count() {
    return count;
  }

  /** Column names {@code x_0001 ..}, zero-padded to at least four digits and to the width of the last one. */
  static String name(int j, int count) {
    int width = Math.max(4, Integer.toString(count).length());
    String digits = Integer.toString(j + 1);
    return "x_" + "0".repeat(Math.max(0, width - digits.length())) + digits;
  }

  /** Writes the row's extra values into {@code out[0 .. count)}. */
  void fill(double[] factors, NoiseSource noise, double[] out) {
    int k = TelemetryModel.FACTORS;
    for (int j = 0; j < count; j++) {
      int b = j * k;
      double s = sigma[j] * noise.gaussian();
      for (int t = 0; t < k; t++) {
        s += loading[b + t] * factors[t];
      }
      out[j] = offset[j] + scale[j] * s;
    }
  }
}
