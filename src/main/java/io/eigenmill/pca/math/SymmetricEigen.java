package io.eigenmill.pca.math;

import io.eigenmill.math.Linalg;
import org.netlib.util.intW;

/**
 * Eigen-decomposition of a symmetric positive semi-definite matrix with LAPACK {@code dsyevd} (divide and conquer).
 *
 * <p>Eigenvalues come back in descending order with their eigenvectors as the columns of a column-major n x n
 * matrix. Rounding can leave eigenvalues of a PSD matrix slightly below zero, from two sources: dsyevd itself, which
 * is backward stable with error O(n eps ||A||) (bound taken as {@code 4 n eps max|lambda|}), and the input, which is
 * a computed sum (a covariance or Gram accumulated over rows, blocks and partitions) whose entries carry errors up to
 * gamma_N sqrt(a_ii a_jj) for N roundings per entry (Higham 2002, eq. 3.5); by Weyl's inequality those move the
 * eigenvalues by up to gamma_N trace(A). Taking N up to 2^27 (gamma_N = 2^-26 = sqrt(eps)), eigenvalues within
 * {@code 4 n eps max|lambda| + sqrt(eps) sum|lambda|} of zero are clamped to zero. A value further below zero means
 * the input was not PSD and is an error. (Two identical columns accumulated over many small partitions give a
 * computed covariance whose smallest eigenvalue is a few eps times the trace below zero: the dsyevd term alone
 * rejected such inputs.)
 */
public final class SymmetricEigen {
  private SymmetricEigen() {}

  /** Values descending, vectors column-major n x n in the same order. */
  public record Result(double[] values, double[] vectors) {}

  /** Decomposes the symmetric column-major n x n matrix {@code a} (only its upper triangle is read). */
  public static Result decompose(double[] a, int n) {
    // LAPACK's dsyevd does not return on a NaN or infinite entry (its scaling step loops): refuse them here
    for (int j = 0; j < n; j++) {
      for (int i = 0; i <= j; i++) {
        double v = a[i + j * n];
        if (v - v != 0.0) {
          throw new IllegalArgumentException("the symmetric " + n + " x " + n + " matrix has a non-finite entry ("
              + v + " at row " + i + ", column " + j + "); it cannot be decomposed");
        }
      }
    }
    double[] z = a.clone();
    double[] w = new double[n];
    intW info = new intW(0);
    double[] workQuery = new double[1];
    int[] iworkQuery = new int[1];
    Linalg.driverLapack(n).dsyevd("V", "U", n, z, Math.max(1, n), w, workQuery, -1, iworkQuery, -1, info);
    double[] work = new double[Math.max(1, (int) workQuery[0])];
    int[] iwork = new int[Math.max(1, iworkQuery[0])];
    Linalg.driverLapack(n).dsyevd("V", "U", n, z, Math.max(1, n), w, work, work.length, iwork, iwork.length, info);
    Linalg.check("dsyevd", info);
    double[] values = new double[n];
    double[] vectors = new double[n * n];
    for (int c = 0; c < n; c++) {
      int src = n - 1 - c;
      values[c] = w[src];
      System.arraycopy(z, src * n, vectors, c * n, n);
    }
    clampNegatives(values, n);
    return new Result(values, vectors);
  }

  static void clampNegatives(double[] values, int n) {
    double max = 0;
    double sum = 0;
    for (double v : values) {
      max = Math.max(max, Math.abs(v));
      sum += Math.abs(v);
    }
    double eps = Math.ulp(1.0);
    double bound = 4.0 * Math.max(1, n) * eps * max + Math.sqrt(eps) * sum;
    for (int i = 0; i < values.length; i++) {
      if (values[i] < 0) {
        if (values[i] < -bound) {
          throw new ArithmeticException("eigenvalue " + values[i] + " is below -" + bound
              + ": the matrix is not positive semi-definite");
        }
        values[i] = 0.0;
      }
    }
  }
}
