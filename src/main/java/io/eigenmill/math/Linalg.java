package io.eigenmill.math;

import dev.ludovic.netlib.blas.BLAS;
import dev.ludovic.netlib.lapack.LAPACK;
import org.netlib.util.intW;

/**
 * The BLAS/LAPACK binding Spark ships ({@code dev.ludovic.netlib}): native (e.g. OpenBLAS through the system's
 * {@code libblas.so.3}) when one is installed, else the pure-Java implementation (vectorised when the JVM runs with
 * {@code --add-modules=jdk.incubator.vector}). All matrices in this package are column-major {@code double[]}.
 */
public final class Linalg {
  private static final BLAS BLAS_INSTANCE = BLAS.getInstance();
  private static final LAPACK LAPACK_INSTANCE = LAPACK.getInstance();

  private Linalg() {}

  public static BLAS blas() {
    return BLAS_INSTANCE;
  }

  public static LAPACK lapack() {
    return LAPACK_INSTANCE;
  }

  /** A line such as "BLAS JNIBLAS (native), LAPACK JNILAPACK (native)" for logs, summary and report. */
  public static String describe() {
    return "BLAS " + name(BLAS_INSTANCE) + ", LAPACK " + name(LAPACK_INSTANCE);
  }

  public static boolean nativeBlas() {
    return BLAS_INSTANCE.getClass().getSimpleName().startsWith("JNI");
  }

  private static String name(Object impl) {
    String simple = impl.getClass().getSimpleName();
    return simple + (simple.startsWith("JNI") ? " (native)" : " (pure Java)");
  }

  /** Throws with the routine's name when a LAPACK call reports {@code info != 0}. */
  static void check(String routine, intW info) {
    if (info.val != 0) {
      throw new ArithmeticException("LAPACK " + routine + " returned info = " + info.val
          + (info.val < 0 ? " (argument " + (-info.val) + " is invalid)" : " (no convergence)"));
    }
  }

  /** Copies the upper triangle of a column-major n x n matrix to its lower triangle. */
  public static void symmetrizeFromUpper(double[] a, int n) {
    for (int j = 0; j < n; j++) {
      for (int i = j + 1; i < n; i++) {
        a[i + j * n] = a[j + i * n];
      }
    }
  }

  /**
   * Replaces the first {@code cols} columns of the column-major {@code rows x cols} matrix {@code a} by an
   * orthonormal basis of their span (Householder QR, {@code dgeqrf} + {@code dorgqr}). Requires rows >= cols.
   */
  public static void orthonormalizeColumns(double[] a, int rows, int cols) {
    double[] tau = new double[cols];
    intW info = new intW(0);
    double[] query = new double[1];
    LAPACK_INSTANCE.dgeqrf(rows, cols, a, rows, tau, query, -1, info);
    double[] work = new double[Math.max(1, (int) query[0])];
    LAPACK_INSTANCE.dgeqrf(rows, cols, a, rows, tau, work, work.length, info);
    check("dgeqrf", info);
    LAPACK_INSTANCE.dorgqr(rows, cols, cols, a, rows, tau, query, -1, info);
    work = new double[Math.max(work.length, (int) query[0])];
    LAPACK_INSTANCE.dorgqr(rows, cols, cols, a, rows, tau, work, work.length, info);
    check("dorgqr", info);
  }
}
