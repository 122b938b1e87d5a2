package io.eigenmill.monitor.math;

import org.apache.commons.math3.distribution.BetaDistribution;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.apache.commons.math3.distribution.ChiSquaredDistribution;
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
 *   <li>Q by Box (1954): Q is approximately g chi2(h) with g = theta2 / theta1 and h = theta1^2 / theta2 (the scaled
 *       chi-square with Q's first two moments; h need not be an integer).
 * </ul>
 *
 * <p>Which Q rule ({@link #qLimit}): Jackson and Mudholkar's normal approximation of (Q / theta1)^h0 degenerates as
 * h0 falls to 0 (the power 1 / h0 explodes) and is meaningless for h0 <= 0, which many small discarded eigenvalues
 * after one larger one give (h0 <= 1/3 always, with equality for equal eigenvalues, since theta2^2 <= theta1
 * theta3). {@code auto} therefore takes Jackson-Mudholkar only when h0 >= {@value #H0_SAFE}, Box otherwise. The
 * threshold is measured, not published (numpy, the share of Q = sum lambda_i z_i^2 above each limit at 0.99, 300,000
 * draws per spectrum, 280 spectra: one to three large eigenvalues over many equal ones, geometric decays): for
 * h0 <= 0 Jackson-Mudholkar flagged 98.6% to 99.99% of the rows and Box 1.4% to 2.1%; for h0 in (0, 0.1] it flagged
 * 0.5% to 0.94% (worst |log(share / 0.01)| 0.68) against Box's 1.24% to 1.38% (0.32), and it degrades quickly
 * toward 0; for h0 in (0.14, 0.16] its worst error was 0.35 (0.71% flagged, on the side of fewer alarms) against
 * Box's 0.24, but its average 0.19 against 0.22, and above 0.16 it is the better of the two on average
 * (0.05 to 0.14 against 0.08 to 0.19). DEVELOPERS.md has the table.
 */
public final class ControlLimits {
  /** Smallest h0 at which {@code auto} takes Jackson and Mudholkar's Q limit (see the class comment). */
  public static final double H0_SAFE = 0.15;
  /** Tail probability of the flagged-count check ({@link #flaggedAbove}): one in a million. */
  public static final double EXCESS_TAIL = 1e-6;
  /** The flagged share must also exceed this multiple of 1 - confidence ({@link #flaggedAbove}). */
  public static final double EXCESS_FACTOR = 3.0;
  /** ... and this many rows ({@link #flaggedAbove}). */
  public static final long EXCESS_FLOOR = 10;

  private ControlLimits() {}

  /** How a Q limit is computed: the job file's {@code monitor.q-limit} words, and what auto resolves to. */
  public enum QRule {
    JACKSON_MUDHOLKAR("jackson-mudholkar"), BOX("box"), AUTO("auto");
    private final String word;
    QRule(String word) { this.word = word; }
    public String word() { return word; }
  }

  /**
   * A Q limit, the rule that gave it (never AUTO; null when nothing is discarded and the limit is 0) and h0 (NaN
   * when nothing is discarded).
   */
  public record QLimit(double value, QRule rule, double h0) {}

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

  /** h0 = 1 - 2 theta1 theta3 / (3 theta2^2) (Jackson and Mudholkar 1979); NaN when nothing is discarded. */
  public static double h0(Thetas t) {
    if (!(t.theta1() > 0) || !(t.theta2() > 0)) {
      return Double.NaN;
    }
    return 1.0 - 2.0 * t.theta1() * t.theta3() / (3.0 * t.theta2() * t.theta2());
  }

  /**
   * The Q limit by {@code rule}: {@code auto} is Jackson-Mudholkar when h0 >= {@value #H0_SAFE}, Box otherwise.
   * Cost: one quantile (Commons Math).
   */
  public static QLimit qLimit(Thetas t, double confidence, QRule rule) {
    double h0 = h0(t);
    if (Double.isNaN(h0)) {
      return new QLimit(0.0, null, Double.NaN);
    }
    QRule used = rule == QRule.AUTO ? (h0 >= H0_SAFE ? QRule.JACKSON_MUDHOLKAR : QRule.BOX) : rule;
    double value = used == QRule.BOX ? qBox(t, confidence) : q(t, confidence);
    return new QLimit(value, used, h0);
  }

  /**
   * Box's (1954) Q limit: g chi2_h(confidence), g = theta2 / theta1, h = theta1^2 / theta2 (Commons Math's
   * chi-square with non-integer degrees of freedom); 0 when nothing is discarded.
   */
  public static double qBox(Thetas t, double confidence) {
    if (!(t.theta1() > 0) || !(t.theta2() > 0)) {
      return 0.0;
    }
    double g = t.theta2() / t.theta1();
    double h = t.theta1() * t.theta1() / t.theta2();
    return g * new ChiSquaredDistribution(null, h).inverseCumulativeProbability(confidence);
  }

  /**
   * The largest count of flagged rows among {@code n} that does not suggest a limit flagging too much at
   * {@code confidence}: the largest of the (1 - {@value #EXCESS_TAIL}) quantile of Binomial(n, 1 - confidence)
   * (Commons Math; a normal approximation, mean + z sd, above 2^31 - 1 rows), {@value #EXCESS_FACTOR} times the
   * expected count, and {@value #EXCESS_FLOOR}. With limits that hold, a count above it has a chance below one in
   * a million from sampling alone; the factor absorbs the approximation error of the limits themselves (Box's Q
   * limit flagged up to 2.1 times its share when h0 was far below 0, see the class comment) and mild departures
   * from normality; the floor keeps tiny tables quiet.
   */
  public static long flaggedAbove(long n, double confidence) {
    double p = 1.0 - confidence;
    double upper;
    if (n <= Integer.MAX_VALUE) {
      upper = n == 0 ? 0 : new BinomialDistribution(null, (int) n, p).inverseCumulativeProbability(1 - EXCESS_TAIL);
    } else {
      double z = new NormalDistribution(null, 0, 1).inverseCumulativeProbability(1 - EXCESS_TAIL);
      upper = Math.ceil(n * p + z * Math.sqrt(n * p * (1 - p)));
    }
    // a count is above x when it is above floor(x); 1e-6 absorbs the rounding of 1 - confidence
    return Math.max(EXCESS_FLOOR, (long) Math.max(upper, Math.floor(EXCESS_FACTOR * n * p + 1e-6)));
  }

  /** Probability of the chance range of flagged counts shown beside the observed ones ({@link #chanceRange}). */
  public static final double CHANCE_LEVEL = 0.95;

  /**
   * The central {@code level} range of the count of rows above a limit that holds, among {@code n} rows scored at
   * {@code confidence}: the (1 - level) / 2 and (1 + level) / 2 quantiles of Binomial(n, 1 - confidence) (Commons
   * Math; above 2^31 - 1 rows the normal approximation mean -/+ z sd, rounded outward). A limit that holds gives a
   * count inside it in about {@code level} of runs, so a count above it is more than chance suggests. For new rows
   * the count is binomial only given the fitted model: the model's own sampling error adds spread (small when the
   * model was fitted on thousands of rows), so read a count just outside as a hint, one far outside as a finding.
   */
  public static long[] chanceRange(long n, double confidence, double level) {
    double p = 1.0 - confidence;
    if (n <= 0 || !(p > 0)) {
      return new long[] {0, 0};
    }
    double tail = (1.0 - level) / 2.0;
    if (n <= Integer.MAX_VALUE) {
      BinomialDistribution b = new BinomialDistribution(null, (int) n, Math.min(1.0, p));
      return new long[] {b.inverseCumulativeProbability(tail), b.inverseCumulativeProbability(1.0 - tail)};
    }
    double z = new NormalDistribution(null, 0, 1).inverseCumulativeProbability(1.0 - tail);
    double sd = Math.sqrt(n * p * (1 - p));
    return new long[] {Math.max(0, (long) Math.floor(n * p - z * sd)), (long) Math.ceil(n * p + z * sd)};
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
