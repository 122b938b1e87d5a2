package io.eigenmill.pca.math;

import io.eigenmill.math.Linalg;
import java.io.Serializable;

/**
 * One pass of the randomized range finder (Halko, Martinsson and Tropp 2011, Algorithm 4.4 on A^T A): accumulates
 * Z = A^T (A Q) for a fixed d x l matrix Q, block by block, without forming any d x d matrix. Each block B of m rows
 * costs two {@code dgemm}: T = B Q (m x l) and Z += B^T T. Partial sums merge by addition; the zero is
 * {@link #empty}.
 */
public final class SketchProduct implements Serializable {
  private static final long serialVersionUID = 1L;

  private final int d;
  private final int l;
  private long n;
  private final double[] z;
  private transient double[] t;

  private SketchProduct(int d, int l) {
    this.d = d;
    this.l = l;
    this.z = new double[d * l];
  }

  public static SketchProduct empty(int d, int l) {
    return new SketchProduct(d, l);
  }

  public long count() {
    return n;
  }

  /** Z as a column-major d x l matrix (a copy). */
  public double[] product() {
    return z.clone();
  }

  /** Adds {@code B^T B Q} for the column-major {@code rows x d} block B (leading dimension {@code ld}). */
  public void addBlock(double[] block, int rows, int ld, double[] q) {
    if (rows == 0) {
      return;
    }
    if (t == null || t.length < rows * l) {
      t = new double[Math.max(rows, ld) * l];
    }
    Linalg.blas().dgemm("N", "N", rows, l, d, 1.0, block, ld, q, d, 0.0, t, rows);
    Linalg.blas().dgemm("T", "N", d, l, rows, 1.0, block, ld, t, rows, 1.0, z, d);
    n += rows;
  }

  public SketchProduct merge(SketchProduct other) {
    if (other.d != d || other.l != l) {
      throw new IllegalArgumentException("cannot merge a " + other.d + " x " + other.l + " sketch into a "
          + d + " x " + l + " one");
    }
    for (int i = 0; i < z.length; i++) {
      z[i] += other.z[i];
    }
    n += other.n;
    return this;
  }
}
