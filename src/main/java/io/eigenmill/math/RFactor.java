package io.eigenmill.math;

import java.io.Serializable;
import org.netlib.util.intW;

/**
 * The R factor of a tall-skinny QR (TSQR; Demmel et al. 2012, Benson, Gleich and Demmel 2013), built block by block
 * and merged pairwise: R of [R_a; R_b] is the R of the rows of both sides. Only R (d x d, upper triangular,
 * column-major) is kept; Q is never formed. The singular values of the final R are those of the whole matrix, so
 * eigenvalues come out as sigma^2 / (n - 1) without squaring the condition number as a Gram matrix would.
 *
 * <p>Cost per block of m rows: one Householder QR of an (m + d) x d matrix, O((m + d) d^2) flops; memory
 * (m + d) d doubles of scratch. The zero is {@link #empty}.
 */
public final class RFactor implements Serializable {
  private static final long serialVersionUID = 1L;

  private final int d;
  private long n;
  private final double[] r;
  private transient double[] stack;
  private transient double[] tau;
  private transient double[] work;

  private RFactor(int d) {
    this.d = d;
    this.r = new double[d * d];
  }

  public static RFactor empty(int d) {
    return new RFactor(d);
  }

  public long count() {
    return n;
  }

  /** Adds the rows of a column-major {@code rows x d} block with leading dimension {@code ld}. */
  public void addBlock(double[] block, int rows, int ld) {
    if (rows == 0) {
      return;
    }
    int m = d + rows;
    double[] s = stackOf(m);
    for (int j = 0; j < d; j++) {
      System.arraycopy(r, j * d, s, j * m, d);
      System.arraycopy(block, j * ld, s, j * m + d, rows);
    }
    factor(s, m);
    n += rows;
  }

  /** Merges {@code other} into this; {@code other} is unchanged. */
  public RFactor merge(RFactor other) {
    if (other.d != d) {
      throw new IllegalArgumentException("cannot merge an R factor of " + other.d + " columns into one of " + d);
    }
    if (other.n == 0) {
      return this;
    }
    int m = 2 * d;
    double[] s = stackOf(m);
    for (int j = 0; j < d; j++) {
      System.arraycopy(r, j * d, s, j * m, d);
      System.arraycopy(other.r, j * d, s, j * m + d, d);
    }
    factor(s, m);
    n += other.n;
    return this;
  }

  private double[] stackOf(int m) {
    if (stack == null || stack.length < m * d) {
      stack = new double[m * d];
    }
    return stack;
  }

  private void factor(double[] s, int m) {
    if (tau == null) {
      tau = new double[d];
    }
    intW info = new intW(0);
    if (work == null) {
      double[] query = new double[1];
      Linalg.lapack().dgeqrf(m, d, s, m, tau, query, -1, info);
      work = new double[Math.max(d, (int) query[0])];
    }
    Linalg.lapack().dgeqrf(m, d, s, m, tau, work, work.length, info);
    Linalg.check("dgeqrf", info);
    java.util.Arrays.fill(r, 0.0);
    for (int j = 0; j < d; j++) {
      System.arraycopy(s, j * m, r, j * d, j + 1);
    }
  }

  /** Singular values (descending) and right singular vectors (column-major d x d, columns in the same order). */
  public record Svd(double[] singularValues, double[] rightVectors) {}

  /** SVD of R with LAPACK {@code dgesvd}. */
  public Svd svd() {
    double[] a = r.clone();
    double[] s = new double[d];
    double[] vt = new double[d * d];
    double[] u = new double[1];
    intW info = new intW(0);
    double[] query = new double[1];
    Linalg.driverLapack(d).dgesvd("N", "A", d, d, a, d, s, u, 1, vt, d, query, -1, info);
    double[] w = new double[Math.max(1, (int) query[0])];
    Linalg.driverLapack(d).dgesvd("N", "A", d, d, a, d, s, u, 1, vt, d, w, w.length, info);
    Linalg.check("dgesvd", info);
    double[] v = new double[d * d];
    for (int i = 0; i < d; i++) {
      for (int j = 0; j < d; j++) {
        v[j + i * d] = vt[i + j * d];
      }
    }
    return new Svd(s, v);
  }
}
