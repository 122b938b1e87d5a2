package io.eigenmill.monitor.math;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Random;
import org.apache.commons.math3.distribution.BinomialDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.linear.QRDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * Control limits against the published formulas evaluated with quantiles computed independently in this test:
 * each distribution function is integrated from its published density with composite Simpson's rule and inverted by
 * bisection (no Commons Math). The production code uses Commons Math 3.6.1's inverse CDFs.
 *
 * <p>Tolerance: Simpson with 20,000 panels on these smooth densities has an error far below 1e-9 in the CDF; bisection
 * to 1e-13; a quantile's relative error is then about 1e-9 / (x f(x)) which stays below 1e-7 here. Limits are
 * compared at 1e-6 relative.
 */
class ControlLimitsTest {

  /** ln Gamma by the Lanczos approximation (g = 7, n = 9; Numerical Recipes' coefficients, recalled from memory). */
  static double lnGamma(double x) {
    double[] c = {0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313,
        -176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6,
        1.5056327351493116e-7};
    x -= 1;
    double a = c[0];
    double t = x + 7.5;
    for (int i = 1; i < 9; i++) {
      a += c[i] / (x + i);
    }
    return 0.5 * Math.log(2 * Math.PI) + (x + 0.5) * Math.log(t) - t + Math.log(a);
  }

  interface Density {
    double at(double x);
  }

  static double simpson(Density f, double a, double b, int panels) {
    double h = (b - a) / panels;
    double s = f.at(a) + f.at(b);
    for (int i = 1; i < panels; i++) {
      s += f.at(a + i * h) * (i % 2 == 1 ? 4 : 2);
    }
    return s * h / 3;
  }

  /** Smallest x in [lo, hi] with integral of f from lo to x >= p, by bisection. */
  static double quantile(Density f, double lo, double hi, double p) {
    double a = lo;
    double b = hi;
    while (b - a > 1e-13 * Math.max(1, Math.abs(b))) {
      double mid = 0.5 * (a + b);
      if (simpson(f, lo, mid, 20_000) < p) {
        a = mid;
      } else {
        b = mid;
      }
    }
    return 0.5 * (a + b);
  }

  /**
   * Beta(a, b) quantile, a >= 1/2. The CDF is integrated in u = sqrt(x), where the density becomes
   * 2 u^(2a-1) (1-u^2)^(b-1) / B(a, b): smooth at 0 for the shapes used here (a = k/2), so Simpson keeps its
   * O(h^4) accuracy instead of degrading at the square-root singularity of x^(a-1).
   */
  static double betaQuantile(double a, double b, double p) {
    double lnB = lnGamma(a) + lnGamma(b) - lnGamma(a + b);
    double u = quantile(t -> t <= 0 || t >= 1 ? 0
        : 2 * Math.exp((2 * a - 1) * Math.log(t) + (b - 1) * Math.log1p(-t * t) - lnB), 0, 1, p);
    return u * u;
  }

  /** F(d1, d2) quantile through its relation to Beta: X ~ Beta(d1/2, d2/2) gives F = (d2 X) / (d1 (1 - X)). */
  static double fQuantile(int d1, int d2, double p) {
    double x = betaQuantile(d1 / 2.0, d2 / 2.0, p);
    return d2 * x / (d1 * (1 - x));
  }

  static double normalQuantile(double p) {
    // symmetric: integrate the standard normal density from 0
    double half = p - 0.5;
    return quantile(x -> Math.exp(-0.5 * x * x) / Math.sqrt(2 * Math.PI), 0, 10, half);
  }

  @ParameterizedTest(name = "k={0} n={1} confidence={2}")
  @CsvSource({"2, 50, 0.99", "3, 50, 0.95", "4, 178, 0.99", "5, 1000, 0.999"})
  void t2LimitForNewRowsFollowsTheFFormula(int k, long n, double confidence) {
    // published formula: k (n-1)(n+1) / (n (n-k)) F(k, n-k; confidence)
    double expected = k * (n - 1.0) * (n + 1.0) / (n * (double) (n - k)) * fQuantile(k, (int) (n - k), confidence);
    assertEquals(expected, ControlLimits.t2New(k, n, confidence), 1e-6 * expected);
  }

  @ParameterizedTest(name = "k={0} n={1} confidence={2}")
  @CsvSource({"2, 50, 0.99", "3, 50, 0.95", "4, 178, 0.99"})
  void t2LimitForFittedRowsFollowsTracyYoungMason(int k, long n, double confidence) {
    // Tracy, Young and Mason (1992): (n-1)^2 / n Beta(k/2, (n-k-1)/2; confidence)
    double expected = (n - 1.0) * (n - 1.0) / n * betaQuantile(k / 2.0, (n - k - 1) / 2.0, confidence);
    assertEquals(expected, ControlLimits.t2Fitted(k, n, confidence), 1e-6 * expected);
  }

  @ParameterizedTest(name = "confidence={0}")
  @CsvSource({"0.95", "0.99", "0.999"})
  void qLimitFollowsJacksonMudholkar(double confidence) {
    double[] eigenvalues = {5.0, 2.0, 0.9, 0.5, 0.31, 0.2, 0.05};
    int k = 2;
    double t1 = 0;
    double t2 = 0;
    double t3 = 0;
    for (int j = k; j < eigenvalues.length; j++) {
      t1 += eigenvalues[j];
      t2 += Math.pow(eigenvalues[j], 2);
      t3 += Math.pow(eigenvalues[j], 3);
    }
    // Jackson and Mudholkar (1979), eq. for Q_alpha with h0 = 1 - 2 t1 t3 / (3 t2^2)
    double h0 = 1 - 2 * t1 * t3 / (3 * t2 * t2);
    double c = normalQuantile(confidence);
    double expected = t1 * Math.pow(c * Math.sqrt(2 * t2 * h0 * h0) / t1 + 1 + t2 * h0 * (h0 - 1) / (t1 * t1),
        1 / h0);
    ControlLimits.Thetas thetas = ControlLimits.thetas(eigenvalues, k, true, eigenvalues.length, 8.96);
    assertEquals(t1, thetas.theta1(), 1e-12);
    assertEquals(expected, ControlLimits.q(thetas, confidence), 1e-6 * expected);
  }

  @ParameterizedTest(name = "total={0}")
  @CsvSource({"10.0", "12.5"})
  void incompleteSpectrumKeepsTheTraceIdentity(double total) {
    // trace identity: theta1 = total variance - sum of the computed eigenvalues up to k ... the rest spread evenly
    double[] computed = {5.0, 2.0, 0.9, 0.5};
    int d = 10;
    ControlLimits.Thetas t = ControlLimits.thetas(computed, 2, false, d, total);
    double rest = total - 8.4;
    assertEquals(0.9 + 0.5 + rest, t.theta1(), 1e-12);
    double each = rest / 6;
    assertEquals(0.81 + 0.25 + 6 * each * each, t.theta2(), 1e-12);
  }

  /** theta1..3 of {@code discarded}, summed here. */
  private static ControlLimits.Thetas thetasOf(double... discarded) {
    double t1 = 0;
    double t2 = 0;
    double t3 = 0;
    for (double v : discarded) {
      t1 += v;
      t2 += v * v;
      t3 += v * v * v;
    }
    return new ControlLimits.Thetas(t1, t2, t3, true);
  }

  /**
   * Chi-square(h) quantile for a real h > 1: the CDF integrated in u = sqrt(x), where the density becomes
   * 2 u^(h-1) exp(-u^2/2) / (2^(h/2) Gamma(h/2)), smooth at 0 for h > 1 (same Simpson and bisection as above).
   */
  static double chiSquareQuantile(double h, double p) {
    double lnC = Math.log(2) - (h / 2) * Math.log(2) - lnGamma(h / 2);
    double hi = Math.sqrt(h + 40 * Math.sqrt(2 * h) + 40);
    double u = quantile(t -> t <= 0 ? 0 : Math.exp(lnC + (h - 1) * Math.log(t) - 0.5 * t * t), 0, hi, p);
    return u * u;
  }

  @ParameterizedTest(name = "confidence={0}")
  @CsvSource({"0.95", "0.99", "0.999"})
  void boxLimitIsTheScaledChiSquareQuantile(double confidence) {
    // Box (1954): Q ~ g chi2(h), g = theta2 / theta1, h = theta1^2 / theta2; the quantile computed in this test
    ControlLimits.Thetas t = thetasOf(4, 1, 1, 1, 1, 0.5);
    double g = t.theta2() / t.theta1();
    double h = t.theta1() * t.theta1() / t.theta2();
    assertTrue(Math.abs(h - Math.rint(h)) > 0.2, "non-integer degrees of freedom: " + h);
    double expected = g * chiSquareQuantile(h, confidence);
    assertEquals(expected, ControlLimits.qBox(t, confidence), 1e-6 * expected);
    ControlLimits.QLimit box = ControlLimits.qLimit(t, confidence, ControlLimits.QRule.BOX);
    assertEquals(ControlLimits.qBox(t, confidence), box.value(), 0.0);
    assertSame(ControlLimits.QRule.BOX, box.rule());
  }

  @Test
  void autoIsJacksonMudholkarExactlyWhereH0IsSafelyPositive() {
    // h0 = 1 - 2 theta1 theta3 / (3 theta2^2) (Jackson and Mudholkar 1979), computed here: 0.1888 for the spectrum
    // of qLimitFollowsJacksonMudholkar, 1/3 for equal eigenvalues
    double[][] spectra = {{0.9, 0.5, 0.31, 0.2, 0.05}, {1, 1, 1, 1}, {2, 1.5, 1, 0.8, 0.5}};
    for (double[] spectrum : spectra) {
      ControlLimits.Thetas t = thetasOf(spectrum);
      double h0 = 1 - 2 * t.theta1() * t.theta3() / (3 * t.theta2() * t.theta2());
      assertTrue(h0 >= ControlLimits.H0_SAFE, "h0 = " + h0);
      assertEquals(h0, ControlLimits.h0(t), 1e-15);
      for (double c : new double[] {0.95, 0.99, 0.999}) {
        ControlLimits.QLimit auto = ControlLimits.qLimit(t, c, ControlLimits.QRule.AUTO);
        assertSame(ControlLimits.QRule.JACKSON_MUDHOLKAR, auto.rule());
        assertEquals(ControlLimits.q(t, c), auto.value(), 0.0, "the same value as before the rule existed");
      }
    }
    // below the threshold auto takes Box; an explicit jackson-mudholkar keeps the formula whatever h0 is
    ControlLimits.Thetas low = thetasOf(6, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5);
    assertTrue(ControlLimits.h0(low) < 0);
    assertSame(ControlLimits.QRule.BOX, ControlLimits.qLimit(low, 0.99, ControlLimits.QRule.AUTO).rule());
    assertEquals(ControlLimits.q(low, 0.99),
        ControlLimits.qLimit(low, 0.99, ControlLimits.QRule.JACKSON_MUDHOLKAR).value(), 0.0);
    ControlLimits.QLimit nothing = ControlLimits.qLimit(thetasOf(), 0.99, ControlLimits.QRule.AUTO);
    assertEquals(0.0, nothing.value(), 0.0, "nothing discarded: Q is zero, no limit");
  }

  /** Gaussian rows with covariance A diag(lambda) A^T (A a seeded random rotation): r z with z standard normal. */
  private static double[][] rows(Random r, RealMatrix root, int n) {
    int d = root.getRowDimension();
    double[][] out = new double[n][d];
    double[] z = new double[d];
    for (int i = 0; i < n; i++) {
      for (int j = 0; j < d; j++) {
        z[j] = r.nextGaussian();
      }
      out[i] = root.operate(z);
    }
    return out;
  }

  /**
   * The auto Q limit on fresh rows whose discarded spectrum gives h0 <= 0. Data: d = 33, eigenvalues 30, 15 (kept,
   * k = 2), then 6 and thirty of 0.5 (h0 = -0.626), rotated by a seeded random orthogonal matrix. The model is fitted
   * here on 50,000 rows (sample covariance, Commons Math's eigen-decomposition); 200,000 fresh rows are scored with
   * Q = |residual off the fitted plane|^2, computed exactly here.
   *
   * <p>Band: Box (1954) matches Q's first two moments only and is liberal here. numpy 2.4 measured the share of
   * Q = sum lambda_i z_i^2 (the true discarded spectrum, 10^7 draws, numpy.random.default_rng(11)) above Box's limit
   * at 0.99: 0.019519 (sd 4.4e-5). Fitting the model on 50,000 rows moved it, over 30 repetitions of this procedure
   * in numpy (2,000,000 fresh rows each, sampling sd 1e-4), to 0.01886..0.02036: at most 8.4e-4 from 0.019519. The
   * band allows 0.019519 +- 0.0012 (1.5 times that) for the approximation and the fit, widened by the binomial
   * sampling of 200,000 fresh rows at a one-in-a-million tail each side (Commons Math). Jackson and Mudholkar's
   * (1979) formula on the same spectrum flags more than 99% of the rows (numpy, same runs): checked too.
   */
  @Test
  void autoQLimitHoldsOnFreshRowsWhenH0IsNotPositive() {
    double[] lambda = new double[33];
    lambda[0] = 30;
    lambda[1] = 15;
    lambda[2] = 6;
    for (int j = 3; j < lambda.length; j++) {
      lambda[j] = 0.5;
    }
    int d = lambda.length;
    int k = 2;
    Random r = new Random(20261203L);
    double[][] g = new double[d][d];
    for (double[] row : g) {
      for (int j = 0; j < d; j++) {
        row[j] = r.nextGaussian();
      }
    }
    RealMatrix rotation = new QRDecomposition(new Array2DRowRealMatrix(g)).getQ();
    RealMatrix root = rotation.multiply(new Array2DRowRealMatrix(d, d));
    for (int i = 0; i < d; i++) {
      for (int j = 0; j < d; j++) {
        root.setEntry(i, j, rotation.getEntry(i, j) * Math.sqrt(lambda[j]));
      }
    }
    // fit: mean and sample covariance (n - 1), eigen-decomposition
    int nFit = 50_000;
    double[][] fit = rows(r, root, nFit);
    double[] mean = new double[d];
    for (double[] x : fit) {
      for (int j = 0; j < d; j++) {
        mean[j] += x[j] / nFit;
      }
    }
    double[][] cov = new double[d][d];
    for (double[] x : fit) {
      for (int a = 0; a < d; a++) {
        double da = x[a] - mean[a];
        for (int b = 0; b <= a; b++) {
          cov[a][b] += da * (x[b] - mean[b]);
        }
      }
    }
    for (int a = 0; a < d; a++) {
      for (int b = 0; b <= a; b++) {
        cov[a][b] /= nFit - 1;
        cov[b][a] = cov[a][b];
      }
    }
    EigenDecomposition eig = new EigenDecomposition(new Array2DRowRealMatrix(cov));
    double[] values = eig.getRealEigenvalues().clone();
    Integer[] order = new Integer[d];
    for (int i = 0; i < d; i++) {
      order[i] = i;
    }
    java.util.Arrays.sort(order, (a, b) -> Double.compare(values[b], values[a]));
    double[] sorted = new double[d];
    double[][] plane = new double[k][];
    for (int i = 0; i < d; i++) {
      sorted[i] = values[order[i]];
    }
    for (int c = 0; c < k; c++) {
      plane[c] = eig.getEigenvector(order[c]).toArray();
    }
    ControlLimits.Thetas thetas = ControlLimits.thetas(sorted, k, true, d, 0);
    assertTrue(ControlLimits.h0(thetas) < -0.5, "h0 of the fitted spectrum: " + ControlLimits.h0(thetas));
    ControlLimits.QLimit auto = ControlLimits.qLimit(thetas, 0.99, ControlLimits.QRule.AUTO);
    assertSame(ControlLimits.QRule.BOX, auto.rule());
    double jm = ControlLimits.q(thetas, 0.99);
    // fresh rows: Q exactly, as the squared norm of the residual off the fitted plane
    int n = 200_000;
    long overAuto = 0;
    long overJm = 0;
    double[] y = new double[d];
    for (double[] x : rows(r, root, n)) {
      for (int j = 0; j < d; j++) {
        y[j] = x[j] - mean[j];
      }
      for (double[] v : plane) {
        double s = 0;
        for (int j = 0; j < d; j++) {
          s += v[j] * y[j];
        }
        for (int j = 0; j < d; j++) {
          y[j] -= s * v[j];
        }
      }
      double q = 0;
      for (int j = 0; j < d; j++) {
        q += y[j] * y[j];
      }
      overAuto += q > auto.value() ? 1 : 0;
      overJm += q > jm ? 1 : 0;
    }
    double measured = 0.019519;
    double allowance = 0.0012;
    int lo = new BinomialDistribution(null, n, measured - allowance).inverseCumulativeProbability(1e-6);
    int hi = new BinomialDistribution(null, n, measured + allowance).inverseCumulativeProbability(1 - 1e-6);
    assertTrue(overAuto >= lo && overAuto <= hi, overAuto + " of " + n + " fresh rows above the auto limit "
        + auto.value() + ", band " + lo + ".." + hi);
    assertTrue(overJm > 0.9 * n, "Jackson-Mudholkar at h0 <= 0 flags nearly every row: " + overJm);
    assertTrue(overAuto <= ControlLimits.flaggedAbove(n, 0.99), "no false-alarm warning at the auto limit");
  }

  /** P(X > m) for X ~ Binomial(n, p), by summing the probability mass function in log space (brute force). */
  private static double upperTail(int n, double p, int m) {
    double tail = 0;
    for (int x = m + 1; x <= n; x++) {
      double ln = lnGamma(n + 1.0) - lnGamma(x + 1.0) - lnGamma(n - x + 1.0) + x * Math.log(p)
          + (n - x) * Math.log1p(-p);
      tail += Math.exp(ln);
    }
    return tail;
  }

  /**
   * The chance range is the central 95% of Binomial(n, 1 - c) (Commons Math's quantiles); above 2^31 - 1 rows,
   * n p -/+ 1.959964 sqrt(n p (1 - p)) rounded outward (the normal quantile, Abramowitz and Stegun table 26.5).
   */
  @Test
  void chanceRangeIsTheCentralBinomialRange() {
    BinomialDistribution b = new BinomialDistribution(null, 200_000, 1 - 0.99);
    long[] r = ControlLimits.chanceRange(200_000, 0.99, 0.95);
    assertEquals(b.inverseCumulativeProbability(0.025), r[0]);
    assertEquals(b.inverseCumulativeProbability(0.975), r[1]);
    long n = 3_000_000_000L;
    double p = 1 - 0.99;
    double sd = Math.sqrt(n * p * (1 - p));
    long[] big = ControlLimits.chanceRange(n, 0.99, 0.95);
    assertEquals((long) Math.floor(n * p - 1.959964 * sd), big[0], 1);
    assertEquals((long) Math.ceil(n * p + 1.959964 * sd), big[1], 1);
    assertEquals(0, ControlLimits.chanceRange(0, 0.99, 0.95)[1]);
  }

  @Test
  void flaggedBoundIsABinomialTailWithAFactorAndAFloor() {
    // n = 400 at 0.99: 4 rows expected; the bound is the binomial quantile (above 3 x 4 = 12 and the floor 10):
    // the smallest m with P(X > m) <= 1e-6, checked by brute force over the binomial mass function
    long m = ControlLimits.flaggedAbove(400, 0.99);
    assertTrue(m > 12, "the binomial part decides at n = 400: " + m);
    assertTrue(upperTail(400, 0.01, (int) m) <= 1e-6, "P(X > " + m + ")");
    assertTrue(upperTail(400, 0.01, (int) m - 1) > 1e-6, "P(X > " + (m - 1) + ")");
    // n = 200,000: three times the expected 2,000 rows decides (the binomial quantile is about 2,210)
    assertEquals(6000, ControlLimits.flaggedAbove(200_000, 0.99));
    // tiny tables: the floor of 10 rows
    assertEquals(10, ControlLimits.flaggedAbove(50, 0.99));
    assertEquals(10, ControlLimits.flaggedAbove(0, 0.99));
    // the user's report (common practice, no source: a limit that holds flags about 1 - confidence): 198,535 of
    // 200,000 rows is far above the bound; Box's 1.9% on the same rows is not
    assertTrue(198_535 > ControlLimits.flaggedAbove(200_000, 0.99));
    assertTrue(3_800 <= ControlLimits.flaggedAbove(200_000, 0.99));
  }
}
