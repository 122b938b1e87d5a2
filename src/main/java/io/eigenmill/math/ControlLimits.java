package io.eigenmill.math;

import org.apache.commons.math3.distribution.BetaDistribution;
import org.apache.commons.math3.distribution.FDistribution;
import org.apache.commons.math3.distribution.NormalDistribution;

/**
 * Control limits of the PCA monitoring statistics at confidence {@code 1 - alpha}, from Commons Math's F, beta and
 * normal quantiles.
 *
 * <ul>
 *   <li>Hotelling T2 of a new row (independent of the fit): k (n-1)(n+1) / (n (n-k)) F(k, n-k).
 *   <li>T2 of a row the model was fitted on: (n-1)^2 / n Beta(k/2, (n-k-1)/2) (Tracy, Young and Mason 1992).
 *   <li>Q (squared prediction error): Jackson and Mudholkar (1979), from theta_i = sum of the discarded eigenvalues
 *       to the power i, h0 = 1 - 2 theta1 theta3 / (3 theta2^2):
 *       Q = theta1 [ c sqrt(2 theta2 h0^2) / theta1 + 1 + theta2 h0 (h0 - 1) / theta1^2 ]^(1/h0), c the normal
 *       quantile.
 * </ul>
 */
public final class ControlLimits {
  private ControlLimits() {}

  /** T2 limit for rows not used in the fit; requires n > k. */
  public static double t2New(int k, long n, double confidence) {
    requireRows(k, n, 0);
    double f = new FDistribution(null, k, n - k).inverseCumulativeProbability(confidence);
    return k * (n - 1.0) * (n + 1.0) / (n * (double) (n - k)) * f;
  }

  /** T2 limit for the rows the model was fitted on; requires n > k + 1. */
  public static double t2Fitted(int k, long n, double confidence) {
    requireRows(k, n, 1);
    double b = new BetaDistribution(null, k / 2.0, (n - k - 1) / 2.0).inverseCumulativeProbability(confidence);
    return (n - 1.0) * (n - 1.0) / n * b;
  }

  private static void requireRows(int k, long n, int extra) {
    if (n <= k + extra) {
      throw new IllegalArgumentException("a T2 limit with k = " + k + " components needs more than " + (k + extra)
          + " fitted rows, the model has " + n);
    }
  }

  /** theta1..theta3 of the discarded eigenvalues, and whether they are exact or estimated from the trace. */
  public record Thetas(double theta1, double theta2, double theta3, boolean exact) {}

  /**
   * The thetas from eigenvalues {@code k..} of {@code eigenvalues}. When {@code complete} is false (the randomized
   * method gives only the leading l), the variance beyond them, {@code totalVariance - sum(eigenvalues)} (the trace
   * identity), is spread evenly over the {@code d - l} eigenvalues not computed; theta1 stays exact, theta2 and
   * theta3 are then lower estimates (an even spread minimises them for a given sum).
   */
  public static Thetas thetas(double[] eigenvalues, int k, boolean complete, int d, double totalVariance) {
    double t1 = 0;
    double t2 = 0;
    double t3 = 0;
    double sum = 0;
    for (int j = 0; j < eigenvalues.length; j++) {
      sum += eigenvalues[j];
      if (j >= k) {
        double v = eigenvalues[j];
        t1 += v;
        t2 += v * v;
        t3 += v * v * v;
      }
    }
    if (!complete && d > eigenvalues.length) {
      double rest = Math.max(0, totalVariance - sum);
      int m = d - eigenvalues.length;
      double each = rest / m;
      t1 += rest;
      t2 += m * each * each;
      t3 += m * each * each * each;
    }
    return new Thetas(t1, t2, t3, complete);
  }

  /** Jackson-Mudholkar Q limit; 0 when nothing is discarded (Q is then identically zero). */
  public static double q(Thetas t, double confidence) {
    if (!(t.theta1() > 0) || !(t.theta2() > 0)) {
      return 0.0;
    }
    double h0 = 1.0 - 2.0 * t.theta1() * t.theta3() / (3.0 * t.theta2() * t.theta2());
    double c = new NormalDistribution(null, 0, 1).inverseCumulativeProbability(confidence);
    double inner = c * Math.sqrt(2.0 * t.theta2() * h0 * h0) / t.theta1() + 1.0
        + t.theta2() * h0 * (h0 - 1.0) / (t.theta1() * t.theta1());
    return t.theta1() * Math.pow(inner, 1.0 / h0);
  }
}
