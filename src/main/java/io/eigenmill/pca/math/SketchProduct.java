package io.eigenmill.pca.math;

import io.eigenmill.math.BlockSummary;
import io.eigenmill.math.Linalg;

/**
 * One pass of the randomized range finder (Halko, Martinsson and Tropp 2011, Algorithm 4.4 on A^T A): accumulates
 * Z = A^T (A Q) for a fixed d x l matrix Q, block by block, without forming any d x d matrix. Each block B of m rows
 * costs two {@code dgemm}: T = B Q (m x l) and Z += B^T T. Partial sums merge by addition; the zero is
 * {@link #empty}, and merging an empty side is the identity bit for bit (zeros plus the other side). As a
 * {@link BlockSummary} a sketch takes its blocks against the basis it was made with ({@link #empty(int, int,
 * double[])}); the basis is not state (it is not serialized: each task makes its summary from the basis it has).
 */
public final class SketchProduct implements BlockSummary<SketchProduct> {
  private static final long serialVersionUID = 1L;

  private final int d;
  private final int l;
  private long n;
  private final double[] z;
  private transient double[] t;
  /** Q for {@link #addBlock(double[], int, int)}, or null when blocks come with their Q. */
  private transient double[] basis;

  private SketchProduct(int d, int l) {
    this.d = d;
    this.l = l;
    this.z = new double[d * l];
  }

  public static SketchProduct empty(int d, int l) {
    return new SketchProduct(d, l);
  }

  /** An empty sketch whose blocks ({@link #addBlock(double[], int, int)}) are taken against Q = {@code q} (d x l). */
  public static SketchProduct empty(int d, int l, double[] q) {
    if (q.length != d * l) {
      throw new IllegalArgumentException("a basis of " + d + " x " + l + " needs " + d * l + " values, not "
          + q.length);
    }
    SketchProduct s = new SketchProduct(d, l);
    s.basis = q;
    return s;
  }

  public long count() {
    return n;
  }

  /** Z as a column-major d x l matrix (a copy). */
  public double[] product() {
    return z.clone();
  }

  /** Adds {@code B^T B Q} for the basis this sketch was made with ({@link #empty(int, int, double[])}). */
  @Override
  public void addBlock(double[] block, int rows, int ld) {
    if (basis == null) {
      throw new IllegalStateException("this sketch was made without a basis: give Q with each block");
    }
    addBlock(block, rows, ld, basis);
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

  /** Adds {@code other}'s Z and count to this; {@code other} is unchanged. */
  @Override
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
