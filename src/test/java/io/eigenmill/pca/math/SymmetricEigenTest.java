package io.eigenmill.pca.math;

import static io.eigenmill.testing.ErrorBudget.SOLVER;
import static io.eigenmill.testing.ErrorBudget.ULP;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.eigenmill.math.Linalg;
import io.eigenmill.math.Moments;
import io.eigenmill.testing.ErrorBudget;
import io.eigenmill.testing.MathFixtures;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.EigenDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.junit.jupiter.api.Test;

/**
 * {@link SymmetricEigen} against Apache Commons Math 3.6.1's {@code EigenDecomposition} (a Householder
 * tridiagonalisation and QL, independent of LAPACK) and the clamping rule of its Javadoc.
 */
class SymmetricEigenTest {

  /** A seeded PSD matrix G^T G / m with distinct eigenvalues, n x n. */
  private static double[] psd(int n, int m, long seed) {
    double[] g = MathFixtures.gaussian(m, n, seed);
    for (int j = 0; j < n; j++) {
      for (int i = 0; i < m; i++) {
        g[i + j * m] *= 1 + j;
      }
    }
    double[] a = MathFixtures.multiplyTransA(g, g, m, n, n);
    for (int i = 0; i < a.length; i++) {
      a[i] /= m;
    }
    // exact symmetry, as the package's inputs have
    Linalg.symmetrizeFromUpper(a, n);
    return a;
  }

  private static RealMatrix commons(double[] a, int n) {
    double[][] rows = new double[n][n];
    for (int i = 0; i < n; i++) {
      for (int j = 0; j < n; j++) {
        rows[i][j] = a[i + j * n];
      }
    }
    return new Array2DRowRealMatrix(rows, false);
  }

  /**
   * The reduction route (dsytrd, dsterf, dstemr, dormtr) against Commons Math on the same kind of matrix, at an order
   * where the driver uses the pure-Java LAPACK (n = 60) and above it (n = 600, native when installed): every
   * eigenvalue within 2 SOLVER n ulp lambda_1 (Weyl, both backward stable), the top m vectors within the
   * Davis-Kahan bound of the gap, the vectors orthonormal to SOLVER n ulp (common practice, no source: the
   * orthogonality MRRR delivers is O(n eps), Dhillon and Parlett 2004, recalled from memory), and the route
   * repeats bit for bit where the pure-Java LAPACK runs it.
   */
  @Test
  void reductionGivesEveryEigenvalueAndTheTopVectorsOfCommonsMath() {
    for (int n : new int[] {60, 600}) {
      int m = 7;
      double[] a = psd(n, 3 * n, 43 + n);
      SymmetricEigen.Reduced r = SymmetricEigen.reduce(a, n);
      double[] values = r.values();
      double[] top = r.top(m);
      EigenDecomposition ref = new EigenDecomposition(commons(a, n));
      double[] refValues = ref.getRealEigenvalues();
      double e = SOLVER * n * ULP * refValues[0];
      for (int i = 0; i < n; i++) {
        assertEquals(refValues[i], values[i], 2 * e, "n = " + n + ": eigenvalue " + i);
      }
      for (int i = 0; i < m; i++) {
        double gap = Math.min(i > 0 ? refValues[i - 1] - refValues[i] : Double.POSITIVE_INFINITY,
            refValues[i] - refValues[i + 1]);
        double[] v = MathFixtures.columns(top, n, i, i + 1);
        double sin = MathFixtures.sinLargestAngle(v, ref.getEigenvector(i).toArray(), n, 1);
        assertTrue(sin <= ErrorBudget.subspaceBound(e, e, gap), "n = " + n + ": eigenvector " + i + " at " + sin);
        for (int c = 0; c <= i; c++) {
          double dot = 0;
          for (int j = 0; j < n; j++) {
            dot += top[j + i * n] * top[j + c * n];
          }
          assertEquals(c == i ? 1.0 : 0.0, dot, SOLVER * n * ULP, "n = " + n + ": v" + i + " . v" + c);
        }
      }
      if (n <= Linalg.REPEATABLE_MAX_ORDER) {
        // the pure-Java LAPACK repeats bit for bit (the native one need not: Linalg.REPEATABLE_MAX_ORDER)
        org.junit.jupiter.api.Assertions.assertArrayEquals(top, SymmetricEigen.reduce(a, n).top(m), 0.0,
            "n = " + n + ": repeatable");
      }
      assertEquals(0, r.top(0).length);
      assertThrows(IllegalArgumentException.class, () -> r.top(n + 1));
    }
  }

  /**
   * Both solvers are backward stable, each exact for A + E with ||E|| <= SOLVER n ulp ||A|| (ErrorBudget), so each
   * eigenvalue differs by at most twice that (Weyl) and each eigenvector by the Davis-Kahan bound with the gap to the
   * neighbouring eigenvalues.
   */
  @Test
  void matchesCommonsMathOnASeededPsdMatrix() {
    int n = 25;
    double[] a = psd(n, 200, 41);
    SymmetricEigen.Result r = SymmetricEigen.decompose(a, n);
    EigenDecomposition ref = new EigenDecomposition(commons(a, n));
    double[] refValues = ref.getRealEigenvalues(); // Commons Math sorts them descending
    double e = SOLVER * n * ULP * refValues[0];
    for (int i = 0; i < n; i++) {
      assertEquals(refValues[i], r.values()[i], 2 * e, "eigenvalue " + i);
      if (i > 0) {
        assertTrue(r.values()[i] <= r.values()[i - 1], "descending at " + i);
      }
      double gap = Double.POSITIVE_INFINITY;
      if (i > 0) {
        gap = Math.min(gap, refValues[i - 1] - refValues[i]);
      }
      if (i < n - 1) {
        gap = Math.min(gap, refValues[i] - refValues[i + 1]);
      }
      double[] v = MathFixtures.columns(r.vectors(), n, i, i + 1);
      double[] w = ref.getEigenvector(i).toArray();
      double sin = MathFixtures.sinLargestAngle(v, w, n, 1);
      assertTrue(sin <= ErrorBudget.subspaceBound(e, e, gap), "eigenvector " + i + " at sin " + sin);
    }
    ExactSpectrumTest.assertOrthonormal(r.vectors(), n);
  }

  @Test
  void readsOnlyTheUpperTriangleAndLeavesTheInputAlone() {
    int n = 6;
    double[] a = psd(n, 30, 42);
    double[] garbled = a.clone();
    for (int j = 0; j < n; j++) {
      for (int i = j + 1; i < n; i++) {
        garbled[i + j * n] = 1e6 * (i + 1);
      }
    }
    double[] before = garbled.clone();
    SymmetricEigen.Result clean = SymmetricEigen.decompose(a, n);
    SymmetricEigen.Result fromUpper = SymmetricEigen.decompose(garbled, n);
    assertTrue(java.util.Arrays.equals(before, garbled), "input modified");
    // the same LAPACK call on the same upper triangle: identical bits
    assertTrue(java.util.Arrays.equals(clean.values(), fromUpper.values()));
  }

  /**
   * The covariance of two identical columns (x + 1e6 and x + 2e6), accumulated from 20000 one-row partitions, is a
   * computed sum whose smallest eigenvalue comes out a few eps times the trace below zero: within the rounding of
   * the accumulation (gamma_N trace, Higham 2002 eq. 3.5 and Weyl), so it is clamped, not rejected. The exact
   * covariance is PSD with its smallest eigenvalue at most the rounding of the stored values, (ulp(2e6))^2.
   */
  @Test
  void identicalColumnsFromManyTinyPartitionsAreAcceptedAndClamped() {
    int n = 20000;
    double[] g = MathFixtures.gaussian(n, 1, 2);
    double[] x = new double[2 * n];
    for (int i = 0; i < n; i++) {
      x[i] = 1e6 + g[i];
      x[i + n] = 2e6 + g[i];
    }
    Moments total = Moments.empty(2, true);
    for (int p = 0; p < n; p++) {
      Moments part = Moments.empty(2, true);
      part.addBlock(new double[] {x[p], x[p + n]}, 1, 1);
      total.merge(part);
    }
    double[] cov = total.covariance();
    Spectrum s = Spectrum.ofCovariance(cov, 2);
    double trace = cov[0] + cov[3];
    assertEquals(trace, s.eigenvalues()[0], 1e-12 * trace);
    assertTrue(s.eigenvalues()[1] >= 0, "clamped, not negative: " + s.eigenvalues()[1]);
    // the N = 2 n roundings of this accumulation move eigenvalues by at most gamma_N trace
    assertTrue(s.eigenvalues()[1] <= MathFixtures.gamma(2.0 * n) * trace, "second eigenvalue " + s.eigenvalues()[1]);
  }

  @Test
  void aTinyNegativeEigenvalueIsClampedToZero() {
    // [[1, 1 + t], [1 + t, 1]] has eigenvalues 2 + t and -t: with t = 4e-15 a computed covariance of identical
    // columns can look like this (entries within gamma_N of each other)
    double t = 4e-15;
    SymmetricEigen.Result r = SymmetricEigen.decompose(new double[] {1, 1 + t, 1 + t, 1}, 2);
    assertEquals(2 + t, r.values()[0], 4 * ULP);
    assertEquals(0.0, r.values()[1], 0.0);
  }

  @Test
  void aClearlyIndefiniteMatrixIsRejected() {
    // eigenvalues 2.001 and -0.001: far below any rounding of a PSD input
    assertThrows(ArithmeticException.class,
        () -> SymmetricEigen.decompose(new double[] {1, 1.001, 1.001, 1}, 2));
  }

  /** LAPACK's dsyevd never returns on a non-finite entry (its scaling loops); the decomposition refuses it first. */
  @Test
  void aNonFiniteEntryIsRefusedInsteadOfHangingTheSolver() {
    for (double bad : new double[] {Double.NaN, Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY}) {
      double[] a = {2.0, 0.5, 0.5, 1.0};
      a[2] = bad;
      IllegalArgumentException e = org.junit.jupiter.api.Assertions.assertThrows(IllegalArgumentException.class,
          () -> SymmetricEigen.decompose(a, 2));
      org.junit.jupiter.api.Assertions.assertTrue(e.getMessage().contains("non-finite entry"), e.getMessage());
    }
  }
}
