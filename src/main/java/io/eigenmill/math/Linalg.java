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
  private static final BLAS JAVA_BLAS = dev.ludovic.netlib.blas.JavaBLAS.getInstance();
  private static final LAPACK JAVA_LAPACK = dev.ludovic.netlib.lapack.JavaLAPACK.getInstance();

  static {
    // The pure-Java LAPACK computes its machine constants (dlamch: eps, safe minimum, ...) on its first call into
    // static fields behind a "first" flag, without a lock. Two Spark tasks making their first LAPACK calls at once
    // can read eps before it is set (0), and dlarfg's rescaling loop (safe minimum / eps = infinity) then never
    // ends: seen here as a solve of order 100 that ran for minutes in dsytrd. Computing them here, under the class
    // initialization lock, publishes them before any caller of this class can run a decomposition.
    JAVA_LAPACK.dlamch("E");
    JAVA_LAPACK.dlamch("S");
  }

  /**
   * Largest order for which driver-side decompositions run in the pure-Java LAPACK. Measured here: native LAPACK
   * (OpenBLAS) is not bit-for-bit repeatable between calls on identical input (its level-2 kernels take different
   * paths depending on the memory alignment of the array the JVM hands over), so two runs could differ in the last
   * bits. The pure-Java routines are repeatable; at n = 400 a dsyevd takes 0.45 s against 0.09 s natively, at
   * n = 100 45 ms against 4 ms. Above this order speed wins and repeatability holds to rounding only.
   */
  public static final int REPEATABLE_MAX_ORDER = 512;

  private Linalg() {}

  public static BLAS blas() {
    return BLAS_INSTANCE;
  }

  public static LAPACK lapack() {
    return LAPACK_INSTANCE;
  }

  /**
   * The BLAS for level-2 updates (dsyr, dgemv): pure Java, so that results repeat bit for bit (see
   * {@link #REPEATABLE_MAX_ORDER}); their O(n^2) cost is negligible next to the level-3 work.
   */
  public static BLAS repeatableBlas() {
    return JAVA_BLAS;
  }

  /** The LAPACK for a driver-side decomposition of order {@code n}: pure Java up to REPEATABLE_MAX_ORDER. */
  public static LAPACK driverLapack(int n) {
    return n <= REPEATABLE_MAX_ORDER ? JAVA_LAPACK : LAPACK_INSTANCE;
  }

  /** Whether BLAS calls go to a native library (loaded by now: this class loads it). */
  public static boolean isNative() {
    return BLAS_INSTANCE.getClass().getSimpleName().startsWith("JNI");
  }

  /** A line such as "BLAS JNIBLAS (native), LAPACK JNILAPACK (native)" for logs, summary and report. */
  public static String describe() {
    return "BLAS " + name(BLAS_INSTANCE) + ", LAPACK " + name(LAPACK_INSTANCE);
  }

  private static String name(Object impl) {
    String simple = impl.getClass().getSimpleName();
    if (!simple.startsWith("JNI")) {
      return simple + " (pure Java)";
    }
    // OpenBLAS's kernel choice, when forced (local-demo/blas-env sets it from the CPU flags)
    String core = System.getenv("OPENBLAS_CORETYPE");
    return simple + (core == null || core.isBlank() ? " (native)" : " (native, OPENBLAS_CORETYPE=" + core + ")");
  }

  /** Throws with the routine's name when a LAPACK call reports {@code info != 0}. */
  public static void check(String routine, intW info) {
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
    // pure Java whatever the size: this runs on the driver on d x l sketches (l small), where repeatability is worth
    // more than the native speed-up (0.3 s for 20,000 x 60)
    double[] tau = new double[cols];
    intW info = new intW(0);
    double[] query = new double[1];
    JAVA_LAPACK.dgeqrf(rows, cols, a, rows, tau, query, -1, info);
    double[] work = new double[Math.max(1, (int) query[0])];
    JAVA_LAPACK.dgeqrf(rows, cols, a, rows, tau, work, work.length, info);
    check("dgeqrf", info);
    JAVA_LAPACK.dorgqr(rows, cols, cols, a, rows, tau, query, -1, info);
    work = new double[Math.max(work.length, (int) query[0])];
    JAVA_LAPACK.dorgqr(rows, cols, cols, a, rows, tau, work, work.length, info);
    check("dorgqr", info);
  }
}
