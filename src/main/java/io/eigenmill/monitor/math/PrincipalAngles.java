package io.eigenmill.monitor.math;

import io.eigenmill.math.Linalg;
import java.util.Arrays;
import org.netlib.util.intW;

/**
 * Principal angles between two subspaces spanned by orthonormal columns (Bjorck and Golub 1973). The singular values
 * of A^T B are the cosines; those of B - A A^T B are the sines. Cosines lose small angles (acos near 1 has error
 * ~sqrt(eps) = 1.5e-8 rad), sines lose angles near 90 degrees, so each angle is taken from the better-conditioned of
 * the two (Knyazev and Argentati 2002): asin of the sine below 45 degrees, acos of the cosine above. Angles come back
 * ascending, in radians; there are min(ka, kb) of them.
 */
public final class PrincipalAngles {
  private PrincipalAngles() {}

  /** {@code a} is d x ka, {@code b} is d x kb, both column-major with orthonormal columns. */
  public static double[] between(double[] a, int ka, double[] b, int kb, int d) {
    int r = Math.min(ka, kb);
    if (r == 0) {
      return new double[0];
    }
    double[] m = new double[ka * kb];
    Linalg.repeatableBlas().dgemm("T", "N", ka, kb, d, 1.0, a, d, b, d, 0.0, m, ka);
    double[] perp = b.clone();
    Linalg.repeatableBlas().dgemm("N", "N", d, kb, ka, -1.0, a, d, m, ka, 1.0, perp, d);
    double[] cos = singularValues(m.clone(), ka, kb);
    double[] sin = singularValues(perp, d, kb);
    // cosines descending = angles ascending; sines: the kb singular values of B_perp, ascending angles take the
    // smallest r of them in ascending order
    double[] sinAsc = sin.clone();
    Arrays.sort(sinAsc);
    double[] angles = new double[r];
    for (int i = 0; i < r; i++) {
      double c = Math.min(1.0, Math.max(0.0, cos[i]));
      double s = Math.min(1.0, Math.max(0.0, sinAsc[i]));
      angles[i] = c >= Math.sqrt(0.5) ? Math.asin(s) : Math.acos(c);
    }
    Arrays.sort(angles);
    return angles;
  }

  private static double[] singularValues(double[] m, int rows, int cols) {
    double[] s = new double[Math.min(rows, cols)];
    double[] u = new double[1];
    double[] vt = new double[1];
    intW info = new intW(0);
    double[] query = new double[1];
    Linalg.driverLapack(Math.min(rows, cols)).dgesvd("N", "N", rows, cols, m, rows, s, u, 1, vt, 1, query, -1, info);
    double[] work = new double[Math.max(1, (int) query[0])];
    Linalg.driverLapack(Math.min(rows, cols)).dgesvd("N", "N", rows, cols, m, rows, s, u, 1, vt, 1, work, work.length, info);
    Linalg.check("dgesvd", info);
    return s;
  }
}
