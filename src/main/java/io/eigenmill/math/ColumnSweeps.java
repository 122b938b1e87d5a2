package io.eigenmill.math;

/**
 * The column sweeps that centre a block of rows in memory, shared by {@link Moments} and {@link RFactor}. Sums run in
 * independent chains so that a sweep is bound by loads, not by the latency of one adder (Java keeps the order of
 * floating-point additions, so a single-chain sum cannot be vectorised).
 */
final class ColumnSweeps {
  private ColumnSweeps() {}

  /** Sum of {@code rows} values from {@code off}, in four independent chains (no wait on one adder). */
  static double sum(double[] a, int off, int rows) {
    double s0 = 0;
    double s1 = 0;
    double s2 = 0;
    double s3 = 0;
    int i = 0;
    for (; i + 3 < rows; i += 4) {
      s0 += a[off + i];
      s1 += a[off + i + 1];
      s2 += a[off + i + 2];
      s3 += a[off + i + 3];
    }
    for (; i < rows; i++) {
      s0 += a[off + i];
    }
    return (s0 + s1) + (s2 + s3);
  }

  /**
   * Subtracts {@code mu} in place; {@code out[0]} gets the sum of the centred values, {@code out[1]} the sum of
   * their squares (two chains each).
   */
  static void centre(double[] a, int off, int rows, double mu, double[] out) {
    double s0 = 0;
    double s1 = 0;
    double q0 = 0;
    double q1 = 0;
    int i = 0;
    for (; i + 1 < rows; i += 2) {
      double v0 = a[off + i] - mu;
      double v1 = a[off + i + 1] - mu;
      a[off + i] = v0;
      a[off + i + 1] = v1;
      s0 += v0;
      s1 += v1;
      q0 += v0 * v0;
      q1 += v1 * v1;
    }
    if (i < rows) {
      double v = a[off + i] - mu;
      a[off + i] = v;
      s0 += v;
      q0 += v * v;
    }
    out[0] = s0 + s1;
    out[1] = q0 + q1;
  }
}
