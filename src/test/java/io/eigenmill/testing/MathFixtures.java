package io.eigenmill.testing;

import io.eigenmill.pca.math.RFactor;
import io.eigenmill.pca.math.Spectrum;
import java.math.BigDecimal;
import java.math.MathContext;
import java.util.Arrays;
import java.util.Random;
import org.ejml.data.DMatrixRMaj;
import org.ejml.dense.row.CommonOps_DDRM;
import org.ejml.dense.row.NormOps_DDRM;
import org.ejml.dense.row.SingularOps_DDRM;
import org.ejml.dense.row.factory.DecompositionFactory_DDRM;
import org.ejml.interfaces.decomposition.EigenDecomposition_F64;
import org.ejml.interfaces.decomposition.QRDecomposition;
import org.ejml.interfaces.decomposition.SingularValueDecomposition_F64;

/**
 * Test data and reference computations for the math tests. Every reference here is computed by EJML 0.43.1
 * ({@code org.ejml:ejml-all}) or by a plain loop written out in this file, never by the package under test. Matrices
 * are column-major {@code double[]}, as in the package; EJML's row-major matrices are converted at the boundary.
 */
public final class MathFixtures {
  /** Unit roundoff of IEEE double, u = 2^-53 (Higham 2002, Accuracy and Stability of Numerical Algorithms, §2.1). */
  public static final double U = 0x1p-53;

  private MathFixtures() {}

  /** gamma_m = m u / (1 - m u), the factor of Higham (2002) §3.1 for m successive roundings. */
  public static double gamma(double m) {
    return m * U / (1 - m * U);
  }

  /** A rows x cols column-major matrix of independent standard normals from {@code seed}. */
  public static double[] gaussian(int rows, int cols, long seed) {
    Random random = new Random(seed);
    double[] a = new double[rows * cols];
    for (int i = 0; i < a.length; i++) {
      a[i] = random.nextGaussian();
    }
    return a;
  }

  public static DMatrixRMaj toEjml(double[] a, int rows, int cols) {
    DMatrixRMaj m = new DMatrixRMaj(rows, cols);
    for (int j = 0; j < cols; j++) {
      for (int i = 0; i < rows; i++) {
        m.unsafe_set(i, j, a[i + j * rows]);
      }
    }
    return m;
  }

  public static double[] fromEjml(DMatrixRMaj m) {
    int rows = m.numRows;
    int cols = m.numCols;
    double[] a = new double[rows * cols];
    for (int j = 0; j < cols; j++) {
      for (int i = 0; i < rows; i++) {
        a[i + j * rows] = m.unsafe_get(i, j);
      }
    }
    return a;
  }

  /** a (r x m) times b (m x c), by EJML. */
  public static double[] multiply(double[] a, double[] b, int r, int m, int c) {
    DMatrixRMaj out = new DMatrixRMaj(r, c);
    CommonOps_DDRM.mult(toEjml(a, r, m), toEjml(b, m, c), out);
    return fromEjml(out);
  }

  /** a^T b for a (m x r) and b (m x c), by EJML. */
  public static double[] multiplyTransA(double[] a, double[] b, int m, int r, int c) {
    DMatrixRMaj out = new DMatrixRMaj(r, c);
    CommonOps_DDRM.multTransA(toEjml(a, m, r), toEjml(b, m, c), out);
    return fromEjml(out);
  }

  /** Orthonormal basis (rows x cols) of the span of a seeded Gaussian matrix, by EJML's Householder QR. */
  public static double[] orthonormal(int rows, int cols, long seed) {
    return orthonormalBasis(gaussian(rows, cols, seed), rows, cols);
  }

  /** The thin Q of EJML's Householder QR of the column-major rows x cols matrix a (rows >= cols). */
  public static double[] orthonormalBasis(double[] a, int rows, int cols) {
    QRDecomposition<DMatrixRMaj> qr = DecompositionFactory_DDRM.qr(rows, cols);
    if (!qr.decompose(toEjml(a, rows, cols))) {
      throw new AssertionError("EJML QR failed");
    }
    return fromEjml(qr.getQ(null, true));
  }

  /** Columns centred by a two-pass computation (sum, then mean, then subtraction), in a new array. */
  public static double[] centred(double[] x, int n, int d) {
    double[] c = x.clone();
    for (int j = 0; j < d; j++) {
      double mean = columnMean(x, n, j);
      for (int i = 0; i < n; i++) {
        c[i + j * n] -= mean;
      }
    }
    return c;
  }

  public static double columnMean(double[] x, int n, int j) {
    double s = 0;
    for (int i = 0; i < n; i++) {
      s += x[i + j * n];
    }
    return s / n;
  }

  /** Two-pass sample covariance (denominator n - 1) of the column-major n x d matrix x, full d x d. */
  public static double[] twoPassCovariance(double[] x, int n, int d) {
    double[] c = centred(x, n, d);
    double[] cov = new double[d * d];
    for (int a = 0; a < d; a++) {
      for (int b = 0; b <= a; b++) {
        double s = 0;
        for (int i = 0; i < n; i++) {
          s += c[i + a * n] * c[i + b * n];
        }
        cov[a + b * d] = s / (n - 1);
        cov[b + a * d] = s / (n - 1);
      }
    }
    return cov;
  }

  /** Singular values (descending) and right singular vectors (column-major d x d) of an n x d matrix, by EJML. */
  public record Svd(double[] values, double[] right) {}

  public static Svd svd(double[] x, int n, int d) {
    SingularValueDecomposition_F64<DMatrixRMaj> svd = DecompositionFactory_DDRM.svd(n, d, false, true, false);
    if (!svd.decompose(toEjml(x, n, d))) {
      throw new AssertionError("EJML SVD failed");
    }
    DMatrixRMaj w = svd.getW(null);
    DMatrixRMaj v = svd.getV(null, false);
    SingularOps_DDRM.descendingOrder(null, false, w, v, false);
    int count = Math.min(n, d);
    double[] values = new double[d];
    for (int i = 0; i < count; i++) {
      values[i] = w.get(i, i);
    }
    return new Svd(values, fromEjml(v));
  }

  /** Eigenvalues (descending) and eigenvectors (column-major n x n, same order) of a symmetric matrix. */
  public record Eigen(double[] values, double[] vectors) {}

  /** EJML's symmetric eigen-decomposition (tridiagonal QR) of the column-major symmetric n x n matrix a. */
  public static Eigen symmetricEigen(double[] a, int n) {
    EigenDecomposition_F64<DMatrixRMaj> eig = DecompositionFactory_DDRM.eig(n, true, true);
    if (!eig.decompose(toEjml(a, n, n))) {
      throw new AssertionError("EJML eigen-decomposition failed");
    }
    Integer[] order = new Integer[n];
    for (int i = 0; i < n; i++) {
      order[i] = i;
    }
    Arrays.sort(order, (p, q) -> Double.compare(eig.getEigenvalue(q).real, eig.getEigenvalue(p).real));
    double[] values = new double[n];
    double[] vectors = new double[n * n];
    for (int c = 0; c < n; c++) {
      values[c] = eig.getEigenvalue(order[c]).real;
      DMatrixRMaj v = eig.getEigenVector(order[c]);
      for (int i = 0; i < n; i++) {
        vectors[i + c * n] = v.get(i, 0);
      }
    }
    return new Eigen(values, vectors);
  }

  /** Spectral norm of a rows x cols matrix, by EJML. */
  public static double norm2(double[] a, int rows, int cols) {
    return NormOps_DDRM.normP2(toEjml(a, rows, cols));
  }

  /** Frobenius norm, by a plain loop. */
  public static double normF(double[] a) {
    double s = 0;
    for (double v : a) {
      s += v * v;
    }
    return Math.sqrt(s);
  }

  /** The first {@code cols} columns of a column-major matrix with {@code rows} rows. */
  public static double[] leadingColumns(double[] a, int rows, int cols) {
    return Arrays.copyOf(a, rows * cols);
  }

  /** Columns {@code from} (inclusive) to {@code to} (exclusive) of a column-major matrix with {@code rows} rows. */
  public static double[] columns(double[] a, int rows, int from, int to) {
    return Arrays.copyOfRange(a, rows * from, rows * to);
  }

  /**
   * The sine of the largest principal angle between the spans of two matrices with orthonormal columns (d x k each):
   * ||(I - W W^T) V||_2, which equals ||V V^T - W W^T||_2 for equal dimensions (Golub and Van Loan, Matrix
   * Computations, 4th ed., §2.5.3 and §6.4.3). Independent of the sign and of any rotation within either span.
   */
  public static double sinLargestAngle(double[] v, double[] w, int d, int k) {
    double[] wtv = multiplyTransA(w, v, d, k, k);
    double[] proj = multiply(w, wtv, d, k, k);
    double[] diff = new double[d * k];
    for (int i = 0; i < diff.length; i++) {
      diff[i] = v[i] - proj[i];
    }
    return Math.min(1.0, norm2(diff, d, k));
  }

  /** Something that takes a column-major block of rows with a leading dimension (addBlock of the aggregators). */
  @FunctionalInterface
  public interface BlockSink {
    void add(double[] block, int rows, int ld);
  }

  /**
   * Feeds the rows of the column-major n x d matrix {@code x} to {@code sink} in consecutive blocks of the given
   * sizes (cycled until every row is fed), each in a fresh array with leading dimension rows + {@code pad} whose
   * padding holds NaN, so that reading past the rows of a block would poison the result.
   */
  public static void feed(double[] x, int n, int d, int[] sizes, int pad, BlockSink sink) {
    int start = 0;
    for (int b = 0; start < n; b++) {
      int rows = Math.min(sizes[b % sizes.length], n - start);
      sink.add(block(x, n, d, start, rows, rows + pad), rows, rows + pad);
      start += rows;
    }
  }

  /** Rows [start, start + rows) of x as a block with leading dimension ld, padding NaN. */
  public static double[] block(double[] x, int n, int d, int start, int rows, int ld) {
    double[] b = new double[Math.max(1, ld * d)];
    Arrays.fill(b, Double.NaN);
    for (int j = 0; j < d; j++) {
      System.arraycopy(x, start + j * n, b, j * ld, rows);
    }
    return b;
  }

  /** Rows [start, start + rows) of the column-major n x d matrix x as a compact rows x d matrix. */
  public static double[] rows(double[] x, int n, int d, int start, int rows) {
    double[] b = new double[rows * d];
    for (int j = 0; j < d; j++) {
      System.arraycopy(x, start + j * n, b, j * rows, rows);
    }
    return b;
  }

  /** Exact sample covariance of the stored doubles with BigDecimal (sums exact, one division to 34 digits). */
  public static double[] exactCovariance(double[] x, int n, int d) {
    BigDecimal[][] centred = new BigDecimal[d][n];
    for (int j = 0; j < d; j++) {
      BigDecimal sum = BigDecimal.ZERO;
      for (int i = 0; i < n; i++) {
        sum = sum.add(new BigDecimal(x[i + j * n]));
      }
      BigDecimal mean = sum.divide(BigDecimal.valueOf(n), MathContext.DECIMAL128);
      for (int i = 0; i < n; i++) {
        centred[j][i] = new BigDecimal(x[i + j * n]).subtract(mean);
      }
    }
    double[] cov = new double[d * d];
    for (int a = 0; a < d; a++) {
      for (int b = 0; b < d; b++) {
        BigDecimal s = BigDecimal.ZERO;
        for (int i = 0; i < n; i++) {
          s = s.add(centred[a][i].multiply(centred[b][i]));
        }
        cov[a + b * d] = s.divide(BigDecimal.valueOf(n - 1), MathContext.DECIMAL128).doubleValue();
      }
    }
    return cov;
  }

  /** Spectrum.ofRFactor on every column, unscaled. */
  public static Spectrum spectrumOf(RFactor r) {
    int d = r.dimension();
    int[] all = new int[d];
    double[] ones = new double[d];
    for (int j = 0; j < d; j++) {
      all[j] = j;
      ones[j] = 1.0;
    }
    return Spectrum.ofRFactor(r, all, ones);
  }
}
