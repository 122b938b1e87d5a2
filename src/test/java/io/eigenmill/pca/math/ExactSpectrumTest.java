package io.eigenmill.pca.math;

import static io.eigenmill.testing.ErrorBudget.SOLVER;
import static io.eigenmill.testing.ErrorBudget.ULP;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.Moments;
import io.eigenmill.testing.ErrorBudget;
import io.eigenmill.testing.MathFixtures;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/**
 * The two exact routes of the fit on seeded matrices, against EJML 0.43.1's SVD of the full centred matrix computed
 * in the test: the covariance route (Moments in blocks, Spectrum.ofCovariance) and the TSQR route (means from
 * Moments; RFactor blocks, each centred on its mean, merged across partitions, Spectrum.ofRFactor), as FitJob chains them.
 *
 * <p>Checked: eigenvalues against sigma^2 / (n - 1) within the Weyl bound of {@link ErrorBudget}; eigenvectors as
 * subspaces (largest principal angle, sign-free), grouping eigenvalues closer than 100 times the perturbation, whose
 * individual vectors are not determined (Davis and Kahan 1970: only the spanned subspace is), with the Davis-Kahan
 * bound; orthonormality ||V^T V - I||_1 and residual ||C V - V Lambda||_1 / ||C||_1 against the ratio SOLVER d ulp
 * that LAPACK's tests accept (recalled from memory, see ErrorBudget).
 */
class ExactSpectrumTest {

  record Case(String name, double[] x, int n, int d) {
    @Override
    public String toString() {
      return name;
    }
  }

  static Stream<Case> cases() {
    return Stream.of(tall(), wideish(), rankDeficient(), clustered());
  }

  /** Adds column offsets 10 j so that every route has to centre. */
  private static double[] offset(double[] x, int n, int d) {
    for (int j = 0; j < d; j++) {
      for (int i = 0; i < n; i++) {
        x[i + j * n] += 10.0 * j;
      }
    }
    return x;
  }

  /** U S V^T with U centred and orthonormal (n x d), V orthogonal (d x d), both seeded; S given. */
  static double[] designed(int n, int d, double[] s, long seed) {
    double[] g = MathFixtures.centred(MathFixtures.gaussian(n, d, seed), n, d);
    double[] u = MathFixtures.orthonormalBasis(g, n, d);
    double[] v = MathFixtures.orthonormal(d, d, seed + 1);
    double[] us = u.clone();
    for (int j = 0; j < d; j++) {
      for (int i = 0; i < n; i++) {
        us[i + j * n] *= s[j];
      }
    }
    double[] vt = new double[d * d];
    for (int a = 0; a < d; a++) {
      for (int b = 0; b < d; b++) {
        vt[b + a * d] = v[a + b * d];
      }
    }
    return MathFixtures.multiply(us, vt, n, d, d);
  }

  /** n = 2000, d = 30, singular values 100 * 0.85^j: distinct, condition number 110. */
  static Case tall() {
    int n = 2000;
    int d = 30;
    double[] s = new double[d];
    for (int j = 0; j < d; j++) {
      s[j] = 100 * Math.pow(0.85, j);
    }
    return new Case("tall 2000 x 30", offset(designed(n, d, s, 31), n, d), n, d);
  }

  /** n = 120, d = 100, Gaussian entries with column scales 1 to 3. */
  static Case wideish() {
    int n = 120;
    int d = 100;
    double[] x = MathFixtures.gaussian(n, d, 32);
    for (int j = 0; j < d; j++) {
      for (int i = 0; i < n; i++) {
        x[i + j * n] *= 1 + 2.0 * j / d;
      }
    }
    return new Case("wide-ish 120 x 100", offset(x, n, d), n, d);
  }

  /** Rank 5 in d = 20: a Gaussian n x 5 times a Gaussian 5 x 20, then offsets (centring keeps the rank). */
  static Case rankDeficient() {
    int n = 500;
    int d = 20;
    int r = 5;
    double[] x = MathFixtures.multiply(MathFixtures.gaussian(n, r, 33), MathFixtures.gaussian(r, d, 34), n, r, d);
    return new Case("rank 5 of 20", offset(x, n, d), n, d);
  }

  /** Singular values with two clusters: 20 (1 + {0, 1e-9, -1e-9}) and 5 (1 + {0, 1e-12, 2e-12}). */
  static Case clustered() {
    int n = 800;
    int d = 12;
    double[] s = {50, 20, 20 * (1 + 1e-9), 20 * (1 - 1e-9), 10, 5, 5 * (1 + 1e-12), 5 * (1 + 2e-12), 2, 1, 0.5, 0.1};
    return new Case("clustered", offset(designed(n, d, s, 35), n, d), n, d);
  }

  private static final int[] BLOCKS = {97, 1, 250};
  private static final int PARTITIONS = 3;

  /** Rows of partition p of {@link #PARTITIONS} consecutive slices. */
  private static int[] slice(int n, int p) {
    int start = (int) ((long) n * p / PARTITIONS);
    int end = (int) ((long) n * (p + 1) / PARTITIONS);
    return new int[] {start, end - start};
  }

  /** Number of blocks fed in one partition of the given length, plus one for its merge. */
  private static int steps(int n) {
    int total = 0;
    for (int p = 0; p < PARTITIONS; p++) {
      int rows = slice(n, p)[1];
      int start = 0;
      for (int b = 0; start < rows; b++) {
        start += Math.min(BLOCKS[b % BLOCKS.length], rows - start);
        total++;
      }
      total++;
    }
    return total;
  }

  /** The covariance route: Moments per partition in blocks, merged; then Spectrum.ofCovariance. */
  static double[] covarianceOf(Case c) {
    Moments total = Moments.empty(c.d, true);
    for (int p = 0; p < PARTITIONS; p++) {
      int[] s = slice(c.n, p);
      Moments part = Moments.empty(c.d, true);
      MathFixtures.feed(MathFixtures.rows(c.x, c.n, c.d, s[0], s[1]), s[1], c.d, BLOCKS, 2, part::addBlock);
      total.merge(part);
    }
    return total.covariance();
  }

  /** The TSQR route: raw blocks into one RFactor per partition (each block centred on its mean), merged. */
  static RFactor rFactorOf(Case c) {
    RFactor total = RFactor.empty(c.d);
    for (int p = 0; p < PARTITIONS; p++) {
      int[] s = slice(c.n, p);
      RFactor part = RFactor.empty(c.d);
      MathFixtures.feed(MathFixtures.rows(c.x, c.n, c.d, s[0], s[1]), s[1], c.d, BLOCKS, 2, part::addBlock);
      total.merge(part);
    }
    return total;
  }

  private static MathFixtures.Svd reference(Case c) {
    return MathFixtures.svd(MathFixtures.centred(c.x, c.n, c.d), c.n, c.d);
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("cases")
  void covarianceRouteMatchesEjmlSvd(Case c) {
    MathFixtures.Svd ref = reference(c);
    ErrorBudget budget = ErrorBudget.of(c.x, c.n, c.d, ref.values());
    double[] cov = covarianceOf(c);
    Spectrum spectrum = Spectrum.ofCovariance(cov, c.d);
    double code = budget.covarianceC(steps(c.n));
    double reference = budget.referenceC();
    assertSpectrumMatches(c, spectrum, ref, budget, code, reference);
    assertOrthonormal(spectrum.loadings(), c.d);
    // dsyevd on the very matrix it was given: residual within SOLVER d ulp ||C|| (1-norms)
    double residual = residualNorm1(cov, spectrum, c.d);
    double ratio = residual / (norm1(cov, c.d) * c.d * ULP);
    assertTrue(ratio < SOLVER, c + ": residual ratio " + ratio);
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource("cases")
  void tsqrRouteMatchesEjmlSvd(Case c) {
    MathFixtures.Svd ref = reference(c);
    ErrorBudget budget = ErrorBudget.of(c.x, c.n, c.d, ref.values());
    RFactor r = rFactorOf(c);
    assertEquals(c.n, r.count());
    int steps = steps(c.n);
    double[] sv = r.svd().singularValues();
    for (int i = 0; i < c.d; i++) {
      // Weyl for singular values: |sigma_i(X + E) - sigma_i(X)| <= ||E||_2, for both sides
      double tol = budget.tsqrSigma(steps, i) + budget.referenceX();
      assertEquals(ref.values()[i], sv[i], tol, c + ": singular value " + i);
    }
    Spectrum spectrum = MathFixtures.spectrumOf(r);
    double code = budget.tsqrC(steps);
    double reference = budget.referenceC();
    assertSpectrumMatches(c, spectrum, ref, budget, code, reference);
    assertOrthonormal(spectrum.loadings(), c.d);
    // residual against the test's own covariance X_c^T X_c / (n - 1) (EJML product, within gamma_n of the trace
    // entrywise, Higham 2002 eq. 3.5): the TSQR pairs are exact for a covariance within `code` of the exact one
    double[] xc = MathFixtures.centred(c.x, c.n, c.d);
    double[] cov = MathFixtures.multiplyTransA(xc, xc, c.n, c.d, c.d);
    for (int i = 0; i < cov.length; i++) {
      cov[i] /= c.n - 1;
    }
    double residual = residualNorm2(cov, spectrum, c.d);
    double bound = code + MathFixtures.gamma(c.n) * budget.trace;
    assertTrue(residual <= bound, c + ": residual " + residual + " > " + bound);
  }

  /**
   * Eigenvalues within code + reference (Weyl); eigenvector groups within the Davis-Kahan bound; every eigenvalue
   * non-negative; trace equal to the sum of eigenvalues within the same perturbation times d.
   */
  private static void assertSpectrumMatches(Case c, Spectrum s, MathFixtures.Svd ref, ErrorBudget budget,
      double code, double reference) {
    assertEquals(c.d, s.d());
    assertEquals(c.d, s.available());
    double tol = code + reference;
    double[] values = s.eigenvalues();
    for (int i = 0; i < c.d; i++) {
      assertTrue(values[i] >= 0, c + ": negative eigenvalue " + values[i]);
      assertEquals(budget.lambda(i), values[i], tol, c + ": eigenvalue " + i);
      if (i > 0) {
        assertTrue(values[i] <= values[i - 1], c + ": eigenvalues not descending at " + i);
      }
    }
    double traceRef = 0;
    for (int i = 0; i < c.d; i++) {
      traceRef += budget.lambda(i);
    }
    assertEquals(traceRef, s.totalVariance(), c.d * tol + MathFixtures.gamma(c.d) * traceRef, c + ": trace");
    for (int[] group : groups(budget, c.d, tol)) {
      double gap = gapOf(budget, c.d, group);
      double bound = ErrorBudget.subspaceBound(code, reference, gap);
      double[] v = MathFixtures.columns(s.loadings(), c.d, group[0], group[1]);
      double[] w = MathFixtures.columns(ref.right(), c.d, group[0], group[1]);
      double sin = MathFixtures.sinLargestAngle(v, w, c.d, group[1] - group[0]);
      assertTrue(sin <= bound, c + ": components " + group[0] + ".." + (group[1] - 1) + " at angle sin " + sin
          + " > Davis-Kahan bound " + bound + " (gap " + gap + ", perturbations " + code + ", " + reference + ")");
      if (group[1] - group[0] == 1 && gap > 1e6 * tol) {
        assertTrue(bound < 1e-4, c + ": a well separated component must have a sharp bound, got " + bound);
      }
    }
  }

  /** Consecutive index ranges [from, to) of reference eigenvalues closer than 100 tol to their neighbour. */
  static List<int[]> groups(ErrorBudget budget, int d, double tol) {
    List<int[]> out = new ArrayList<>();
    int start = 0;
    for (int i = 1; i <= d; i++) {
      if (i == d || budget.lambda(i - 1) - budget.lambda(i) > 100 * tol) {
        out.add(new int[] {start, i});
        start = i;
      }
    }
    return out;
  }

  /** Distance from the group's reference eigenvalues to the others. */
  static double gapOf(ErrorBudget budget, int d, int[] group) {
    double gap = Double.POSITIVE_INFINITY;
    if (group[0] > 0) {
      gap = Math.min(gap, budget.lambda(group[0] - 1) - budget.lambda(group[0]));
    }
    if (group[1] < d) {
      gap = Math.min(gap, budget.lambda(group[1] - 1) - budget.lambda(group[1]));
    }
    return gap;
  }

  /** ||V^T V - I||_1 < SOLVER d ulp (LAPACK's orthogonality test ratio) for a square V. */
  static void assertOrthonormal(double[] v, int d) {
    assertOrthonormalColumns(v, d, d);
  }

  /** ||V^T V - I||_1 < SOLVER d ulp for a d x k matrix with (supposedly) orthonormal columns. */
  static void assertOrthonormalColumns(double[] v, int d, int k) {
    double[] g = MathFixtures.multiplyTransA(v, v, d, k, k);
    for (int i = 0; i < k; i++) {
      g[i + i * k] -= 1;
    }
    double ratio = norm1(g, k) / (d * ULP);
    assertTrue(ratio < SOLVER, "orthonormality ratio ||V^T V - I||_1 / (d ulp) = " + ratio);
  }

  static double norm1(double[] a, int d) {
    double max = 0;
    for (int j = 0; j < d; j++) {
      double s = 0;
      for (int i = 0; i < d; i++) {
        s += Math.abs(a[i + j * d]);
      }
      max = Math.max(max, s);
    }
    return max;
  }

  private static double[] residual(double[] c, Spectrum s, int d) {
    double[] cv = MathFixtures.multiply(c, s.loadings(), d, d, d);
    for (int j = 0; j < d; j++) {
      for (int i = 0; i < d; i++) {
        cv[i + j * d] -= s.loadings()[i + j * d] * s.eigenvalues()[j];
      }
    }
    return cv;
  }

  static double residualNorm1(double[] c, Spectrum s, int d) {
    return norm1(residual(c, s, d), d);
  }

  static double residualNorm2(double[] c, Spectrum s, int d) {
    return MathFixtures.norm2(residual(c, s, d), d, d);
  }
}
