package io.eigenmill.monitor;

import org.apache.spark.util.AccumulatorV2;

/**
 * Per-feature reconstruction error sums of a scoring pass, in original units: sum of squared errors, largest absolute
 * error, and the sum of squared deviations from the model mean (for the share of variance kept). Merged by addition
 * (max for the largest error).
 */
public final class FeatureErrors extends AccumulatorV2<double[], FeatureErrors.Sums> {
  private static final long serialVersionUID = 1L;

  /** Sums over {@code rows} rows; arrays indexed by feature. */
  public record Sums(long rows, double[] squaredError, double[] maxAbsError, double[] squaredDeviation)
      implements java.io.Serializable {}

  private final int d;
  private long rows;
  private final double[] sse;
  private final double[] max;
  private final double[] ssd;

  public FeatureErrors(int d) {
    this.d = d;
    sse = new double[d];
    max = new double[d];
    ssd = new double[d];
  }

  /** Adds one partition's sums directly (the executor path; no per-row objects). */
  void addSums(long n, double[] squaredError, double[] maxAbs, double[] squaredDeviation) {
    rows += n;
    for (int j = 0; j < d; j++) {
      sse[j] += squaredError[j];
      max[j] = Math.max(max[j], maxAbs[j]);
      ssd[j] += squaredDeviation[j];
    }
  }

  @Override public boolean isZero() {
    return rows == 0;
  }

  @Override public AccumulatorV2<double[], Sums> copy() {
    FeatureErrors c = new FeatureErrors(d);
    c.addSums(rows, sse, max, ssd);
    return c;
  }

  @Override public void reset() {
    rows = 0;
    java.util.Arrays.fill(sse, 0);
    java.util.Arrays.fill(max, 0);
    java.util.Arrays.fill(ssd, 0);
  }

  /** Not used: partitions add whole sums through {@link #addSums}. */
  @Override public void add(double[] v) {
    throw new UnsupportedOperationException("use addSums");
  }

  @Override public void merge(AccumulatorV2<double[], Sums> other) {
    Sums s = other.value();
    addSums(s.rows(), s.squaredError(), s.maxAbsError(), s.squaredDeviation());
  }

  @Override public Sums value() {
    return new Sums(rows, sse.clone(), max.clone(), ssd.clone());
  }
}
