package io.eigenmill.pca.math;

import io.eigenmill.math.BlockSummary;
import io.eigenmill.math.ColumnSweeps;
import io.eigenmill.math.Linalg;
import io.eigenmill.math.Moments;
import org.netlib.util.intW;

/**
 * Count, mean and the R factor of the centred rows, built block by block in one pass and merged pairwise: a tall-skinny
 * QR (TSQR; Demmel et al. 2012, Benson, Gleich and Demmel 2013) of X - 1 mean^T that needs no earlier pass for the
 * mean. Only R (d x d, upper triangular, column-major) is kept; Q is never formed. The singular values of the final R
 * are those of the centred matrix, so eigenvalues come out as sigma^2 / (n - 1) without squaring the condition number
 * as a Gram matrix would.
 *
 * <p>Centring is the QR form of Chan, Golub and LeVeque's update. A block is centred on its own mean in memory (the
 * sweeps of {@link Moments}), and two sets of rows a and b, each centred on its own mean, have as the R factor of
 * their union, centred on the common mean, the R of the stack [R_a; R_b; sqrt(n_a n_b / n) (mean_b - mean_a)^T]:
 * both have the Gram M2_a + M2_b + (n_a n_b / n) delta delta^T, and an orthogonal factorisation of the stack never
 * forms that Gram. A block enters the same way, its centred rows standing for R_b. Means are kept relative to a fixed
 * origin (the rounded mean of the first block) as in {@link Moments}, so an offset of 1e9 on a column of spread 1e-3
 * does not cost accuracy.
 *
 * <p>The QR needs the block centred on its exact mean, not on a rounded one: a Gram about a point off the mean by r
 * exceeds the centred one by rows r r^T, which an orthogonal update cannot take back. So a block is centred again
 * while its residual mean r matters, i.e. while rows r^2 exceeds 2^-52 of the column's sum of squares (at most
 * {@link #MAX_CENTRINGS} sweeps; for data whose offset is below ~1e6 times the spread one sweep leaves r at rounding
 * level and the check passes at once). What is left, rows r^2 below 2^-52 of the sum of squares, is below the
 * rounding of the QR itself.
 *
 * <p>Cost per block of m rows: one Householder QR of an (m + d + 1) x d matrix, O((m + d) d^2) flops; memory
 * (m + d + 1) d doubles of scratch. The zero is {@link #empty}; merging an empty side is the identity bit for bit
 * (an empty summary takes a copy of the other side's state, with no QR step).
 */
public final class RFactor implements BlockSummary<RFactor> {
  private static final long serialVersionUID = 2L;

  /** Centring sweeps per column and block at most (the first plus corrections). */
  static final int MAX_CENTRINGS = 3;
  /** A residual mean matters while rows r^2 exceeds 2^-RESIDUAL_BITS of the sum of squares. */
  static final int RESIDUAL_BITS = 52;

  private final int d;
  private long n;
  /** The origin of {@link #mean}: the rounded mean of the first block, fixed from then on. */
  private final double[] shift;
  /** The mean minus {@link #shift}. */
  private final double[] mean;
  private final double[] r;
  private transient double[] stack;
  private transient double[] tau;
  private transient double[] work;

  private RFactor(int d) {
    this.d = d;
    this.shift = new double[d];
    this.mean = new double[d];
    this.r = new double[d * d];
  }

  public static RFactor empty(int d) {
    return new RFactor(d);
  }

  /** The factory of {@link #empty}{@code (d)}. */
  public static Factory<RFactor> factory(int d) {
    return new Empty(d);
  }

  private record Empty(int d) implements Factory<RFactor> {
    @Override public RFactor empty() {
      return RFactor.empty(d);
    }
  }

  public int dimension() {
    return d;
  }

  public long count() {
    return n;
  }

  public double[] mean() {
    double[] m = new double[d];
    for (int j = 0; j < d; j++) {
      m[j] = shift[j] + mean[j];
    }
    return m;
  }

  /** Sample variances (n - 1) from the column norms of R; zeros when n < 2. */
  public double[] variances() {
    double[] v = new double[d];
    if (n < 2) {
      return v;
    }
    for (int j = 0; j < d; j++) {
      double s = 0;
      for (int i = 0; i <= j; i++) {
        s += r[i + j * d] * r[i + j * d];
      }
      v[j] = s / (n - 1);
    }
    return v;
  }

  /**
   * Adds the rows of a column-major {@code rows x d} block with leading dimension {@code ld}. The block is centred
   * in place (its values are changed).
   */
  @Override
  public void addBlock(double[] block, int rows, int ld) {
    if (rows == 0) {
      return;
    }
    double[] origin = new double[d];
    double[] offset = new double[d];
    double[] sums = new double[2];
    for (int j = 0; j < d; j++) {
      int off = j * ld;
      double mu = ColumnSweeps.sum(block, off, rows) / rows;
      origin[j] = mu;
      ColumnSweeps.centre(block, off, rows, mu, sums);
      double res = sums[0] / rows;
      double total = 0;
      for (int sweep = 1; sweep < MAX_CENTRINGS && res != 0
          && rows * res * res * 0x1p52 > sums[1]; sweep++) {
        total += res;
        ColumnSweeps.centre(block, off, rows, res, sums);
        res = sums[0] / rows;
      }
      // the block's mean relative to mu: what the centrings took off plus what is left
      offset[j] = total + res;
    }
    int m = d + rows + 1;
    double[] s = stackOf(m);
    for (int j = 0; j < d; j++) {
      System.arraycopy(r, j * d, s, j * m, d);
      System.arraycopy(block, j * ld, s, j * m + d, rows);
    }
    combine(origin, offset, rows, s, m);
  }

  /** Merges {@code other} into this; {@code other} is unchanged. */
  @Override
  public RFactor merge(RFactor other) {
    if (other.d != d) {
      throw new IllegalArgumentException("cannot merge an R factor of " + other.d + " columns into one of " + d);
    }
    if (other.n == 0) {
      return this;
    }
    if (n == 0) {
      // the identity: the other side's R as it is (a QR of [0; R; 0] would give the same R^T R, rounded once more)
      n = other.n;
      System.arraycopy(other.shift, 0, shift, 0, d);
      System.arraycopy(other.mean, 0, mean, 0, d);
      System.arraycopy(other.r, 0, r, 0, d * d);
      return this;
    }
    int m = 2 * d + 1;
    double[] s = stackOf(m);
    for (int j = 0; j < d; j++) {
      System.arraycopy(r, j * d, s, j * m, d);
      System.arraycopy(other.r, j * d, s, j * m + d, d);
    }
    combine(other.shift, other.mean, other.n, s, m);
    return this;
  }

  /**
   * Completes a stack whose rows 0..m-2 hold this R and the other side's centred rows (or R): the last row gets
   * sqrt(n_a n_b / n) delta, the stack is factored into R, and the count and mean are updated. The difference of the
   * two origins is exact when they are within a factor 2 of each other (Sterbenz), so delta keeps the accuracy of
   * the small relative means.
   */
  private void combine(double[] originB, double[] meanB, long nb, double[] s, int m) {
    long total = n + nb;
    double w = Math.sqrt((double) n * (double) nb / (double) total);
    double f = (double) nb / (double) total;
    boolean first = n == 0;
    for (int j = 0; j < d; j++) {
      double delta = first ? 0.0 : (originB[j] - shift[j]) + (meanB[j] - mean[j]);
      s[j * m + m - 1] = w * delta;
      if (first) {
        shift[j] = originB[j];
        mean[j] = meanB[j];
      } else {
        mean[j] += delta * f;
      }
    }
    n = total;
    factor(s, m);
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
      System.arraycopy(s, j * m, r, j * d, Math.min(j + 1, m));
    }
  }

  /** Singular values (descending) and right singular vectors (column-major, columns in the same order). */
  public record Svd(double[] singularValues, double[] rightVectors) {}

  /** SVD of R with LAPACK {@code dgesvd}. */
  public Svd svd() {
    int[] all = new int[d];
    double[] ones = new double[d];
    for (int j = 0; j < d; j++) {
      all[j] = j;
      ones[j] = 1.0;
    }
    return svd(all, ones);
  }

  /**
   * SVD of R restricted to the columns {@code keep}, column i multiplied by {@code factor[i]}: the d x dk matrix
   * R[:, keep] diag(factor) has the singular values and right vectors of the centred rows of those columns so scaled
   * (X_c = Q R, and dropping or scaling columns commutes with Q). dgesvd on the driver (pure-Java LAPACK up to order
   * 512, see {@link Linalg#driverLapack}).
   */
  public Svd svd(int[] keep, double[] factor) {
    int dk = keep.length;
    double[] a = new double[d * dk];
    for (int c = 0; c < dk; c++) {
      for (int i = 0; i < d; i++) {
        a[i + c * d] = r[i + keep[c] * d] * factor[c];
      }
    }
    double[] s = new double[dk];
    double[] vt = new double[dk * dk];
    double[] u = new double[1];
    intW info = new intW(0);
    double[] query = new double[1];
    Linalg.driverLapack(dk).dgesvd("N", "A", d, dk, a, d, s, u, 1, vt, dk, query, -1, info);
    double[] w = new double[Math.max(1, (int) query[0])];
    Linalg.driverLapack(dk).dgesvd("N", "A", d, dk, a, d, s, u, 1, vt, dk, w, w.length, info);
    Linalg.check("dgesvd", info);
    double[] v = new double[dk * dk];
    for (int i = 0; i < dk; i++) {
      for (int j = 0; j < dk; j++) {
        v[j + i * dk] = vt[i + j * dk];
      }
    }
    return new Svd(s, v);
  }
}
