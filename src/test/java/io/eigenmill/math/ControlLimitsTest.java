package io.eigenmill.math;

import static org.junit.jupiter.api.Assertions.assertEquals;

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
}
