package io.eigenmill.math;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.DoubleBuffer;

/**
 * Mergeable first and second moments of d columns: count, mean and the centred co-moment matrix
 * M2 = sum (x - mean)(x - mean)^T (full upper triangle, column-major d x d), or only its diagonal.
 *
 * <p>Stability by construction: each block of rows is centred on its own mean (computed exactly, the block being in
 * memory) before its Gram is formed with BLAS level 3 ({@code dsyrk}); blocks and partitions are then combined with
 * the pairwise update of Chan, Golub and LeVeque (1979): M2 = M2a + M2b + delta delta^T na nb / n with
 * delta = mean_b - mean_a. No sum of raw squares is ever formed. Means are kept relative to a fixed shift (the
 * rounded mean of the first rows seen), so that a mean near 1e9 is not rounded to ulp(1e9) = 1.2e-7 at every merge:
 * with a standard deviation of 1e-3 that rounding alone would cost a relative error of 1e-5 in the variances. Each
 * block records the residual mean left by centring on its rounded mean, and that residual enters the merge. An
 * offset of 1e9 on a column with standard deviation 1e-3 then costs nothing in accuracy. The zero is
 * {@link #empty}; merging with an empty side is the identity.
 *
 * <p>Cost: O(rows d^2) flops per block in dsyrk plus O(d^2) per merge; memory d^2 doubles ({@code gram}) or d.
 */
public final class Moments implements BlockSummary<Moments> {
  private static final long serialVersionUID = 1L;

  private final int d;
  private final boolean gram;
  private long n;
  /** The origin of {@link #mean}: the rounded mean of the first rows seen, fixed from then on. */
  private final double[] shift;
  /** The mean minus {@link #shift}: small next to the mean itself when the data sit far from zero. */
  private final double[] mean;
  /** gram: upper triangle of the column-major d x d co-moment matrix; otherwise the d diagonal entries. */
  private final double[] m2;
  private transient double[] scratch;
  private transient double[] residualScratch;
  private transient double[] gramResidualScratch;
  /** The mean of the last block added (rounded), the origin offered for the next one; null before the first. */
  private transient double[] lastMean;
  /** The (d + 1) x (d + 1) Gram of a shifted block and its column of ones, for d + 1 above SHARED_GRAM_ORDER. */
  private transient double[] augmented;

  private Moments(int d, boolean gram, long n, double[] shift, double[] mean, double[] m2) {
    this.d = d;
    this.gram = gram;
    this.n = n;
    this.shift = shift;
    this.mean = mean;
    this.m2 = m2;
  }

  /** The zero of the merge: no rows. {@code gram} false keeps only the variances (O(d) memory). */
  public static Moments empty(int d, boolean gram) {
    return new Moments(d, gram, 0, new double[d], new double[d], new double[gram ? d * d : d]);
  }

  /** The factory of {@link #empty}{@code (d, gram)}, for passes that make one summary per partition. */
  public static Factory<Moments> factory(int d, boolean gram) {
    return new Empty(d, gram);
  }

  private record Empty(int d, boolean gram) implements Factory<Moments> {
    @Override public Moments empty() {
      return Moments.empty(d, gram);
    }
  }

  public int dimension() {
    return d;
  }

  public boolean hasGram() {
    return gram;
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

  /**
   * Adds a block of rows: the column-major {@code rows x d} matrix in {@code block} with leading dimension
   * {@code ld}. The block is centred in place (its values are changed).
   */
  @Override
  public void addBlock(double[] block, int rows, int ld) {
    add(block, rows, ld, null);
  }

  /**
   * Where the next block may be centred before it reaches {@link #addShiftedBlock}: the mean of the last block
   * added (rounded), or null before the first block. A reader that subtracts it while copying the rows spares the
   * block every sweep: its column sums come from the same {@code dsyrk} as its Gram (see addShiftedBlock). The
   * returned array is not changed afterwards.
   *
   * <p>Accuracy, relative to the total co-moment M of a column (or sqrt(M_aa M_bb) off the diagonal), as for the
   * merge. Block b (r rows, mean m_b) arrives shifted by o = m_(b-1) rounded, so its sum of squares about o is
   * q_b = M_b + r (m_b - o)^2, and the block's co-moment is taken as q_b - r res^2 (res = m_b - o): an error of
   * a few gamma_r q_b, large next to M_b when the block jumped away from the previous one, but not next to M.
   * The previous block is full (blocks are handed over when full, only the last may be short), so the pair of
   * blocks has co-moment M_(b-1,b) >= M_b + (r / 2) (m_b - m_(b-1))^2, and r res^2 <= 2 M_(b-1,b) up to the
   * rounding of o (u |m_(b-1)|, below the spread whenever the spread is representable at that magnitude). A pair's
   * co-moment about its own mean is at most its sum of squares about the total mean, and every block is in two
   * pairs, so the sum over blocks of q_b is at most M + 4 M = 5 M: the shifted blocks together add at most about
   * 5 gamma_r M. The shift itself, x - o, is exact when o is within a factor 2 of x (Sterbenz), else rounded by at
   * most u |x - o|, which the same sum bounds. No block needs a second centring for this (unlike the first block,
   * centred on its own computed mean, whose rounding is not a between-block term).
   */
  @Override
  public double[] nextOrigin() {
    return lastMean;
  }

  /**
   * Adds a block of rows holding {@code x - origin[j]} instead of x: the rows of a block whose values were shifted
   * while they were copied, {@code origin} being what {@link #nextOrigin} returned (or any finite values). Column d
   * of the block (after the d feature columns, same leading dimension) must hold 1.0 in its first {@code rows}
   * rows: one {@code dsyrk} of the d + 1 columns then gives the Gram about the origin and, in its last column, the
   * column sums; the block is only read. (Without the Gram, only variances, the sums are swept as for any block.)
   *
   * @throws IllegalArgumentException when column d does not sum to {@code rows}
   */
  @Override
  public void addShiftedBlock(double[] block, int rows, int ld, double[] origin) {
    if (rows == 0) {
      return;
    }
    if (!gram) {
      add(block, rows, ld, origin);
      return;
    }
    int e = d + 1;
    double[] g = augmented(e);
    Linalg.blas().dsyrk("U", "T", e, rows, 1.0, block, ld, 0.0, g, e);
    if (g[d + d * e] != rows) {
      throw new IllegalArgumentException("column " + d + " of a shifted block of " + rows
          + " rows must hold ones; its squares sum to " + g[d + d * e]);
    }
    double[] res = scratch();
    for (int j = 0; j < d; j++) {
      res[j] = g[j + d * e] / rows;
    }
    // the block's Gram about its mean, origin + res: the Gram about the origin minus rows res res^T
    for (int j = 0; j < d; j++) {
      double rj = rows * res[j];
      int gj = j * e;
      int mj = j * d;
      for (int i = 0; i <= j; i++) {
        m2[mj + i] += g[gj + i] - rj * res[i];
      }
    }
    combineMeans(origin, res, rows);
    keepMean(origin, res);
  }

  private void add(double[] block, int rows, int ld, double[] origin) {
    if (rows == 0) {
      return;
    }
    double[] centre = scratch();
    double[] residual = residualScratch;
    double[] gramResidual = gramResidualScratch;
    double[] sums = new double[2];
    for (int j = 0; j < d; j++) {
      int off = j * ld;
      double mu;
      if (origin == null) {
        mu = ColumnSweeps.sum(block, off, rows) / rows;
        // centre on mu (rounded): the centred values are exact when mu is within a factor 2 of them, and their
        // mean, the residual, is what the rounding of the sum left over; it enters the Gram and the merge below
        ColumnSweeps.centre(block, off, rows, mu, sums);
      } else {
        // variances only, of a block centred on the origin by the copy: the residual is its mean relative to it
        mu = origin[j];
        ColumnSweeps.centre(block, off, rows, 0.0, sums);
      }
      double res = sums[0] / rows;
      double offset = res;
      if (rows * res * res * (1 << CANCEL_BITS) > sums[1]) {
        // the residual correction would cost more than 2^-CANCEL_BITS of the sum of squares: centre once more, on
        // mu + res; mu stays the block's origin and the two residuals add up to its mean relative to mu
        ColumnSweeps.centre(block, off, rows, res, sums);
        res = sums[0] / rows;
        offset += res;
      }
      centre[j] = mu;
      residual[j] = offset;
      gramResidual[j] = res;
      if (!gram) {
        m2[j] += sums[1] - rows * res * res;
      }
    }
    // the Gram of the centred rows is taken about what the block was centred on; subtract rows * res res^T to have
    // it about the block's exact mean, centre + residual, which is what the merge below combines
    if (gram) {
      Linalg.blas().dsyrk("U", "T", d, rows, 1.0, block, ld, 1.0, m2, d);
      Linalg.repeatableBlas().dsyr("U", d, -(double) rows, gramResidual, 1, m2, d);
    }
    combineMeans(centre, residual, rows);
    keepMean(centre, residual);
  }

  /**
   * Keeps origin + residual, the mean of the block just added, as the next origin (a fresh array: the caller may
   * still hold the previous one).
   */
  private void keepMean(double[] origin, double[] residual) {
    double[] blockMean = new double[d];
    for (int j = 0; j < d; j++) {
      blockMean[j] = origin[j] + residual[j];
    }
    lastMean = blockMean;
  }

  /**
   * A block is centred a second time when the correction of its Gram by the residual mean, rows res^2, exceeds
   * 2^-CANCEL_BITS of the sum of squares about the first mean (the correction then costs more than
   * log2(16 / 15) = 0.1 bit). A block's sum in eight chains has a relative error of about (rows / 8) eps, so this
   * happens only when a column's offset exceeds its spread by many orders of magnitude.
   */
  static final int CANCEL_BITS = 4;

  /**
   * Merges {@code other} into this (Chan, Golub and LeVeque); {@code other} is unchanged. An empty side is the
   * identity bit for bit (the other side's values are copied or added to zeros).
   */
  @Override
  public Moments merge(Moments other) {
    if (other.d != d || other.gram != gram) {
      throw new IllegalArgumentException("cannot merge moments of " + other.d + " columns (gram " + other.gram
          + ") into moments of " + d + " columns (gram " + gram + ")");
    }
    if (other.n == 0) {
      return this;
    }
    for (int i = 0; i < m2.length; i++) {
      m2[i] += other.m2[i];
    }
    combineMeans(other.shift, other.mean, other.n);
    return this;
  }

  /**
   * Adds the between-group term for a group of {@code nb} rows with mean {@code originB + meanB} and updates the
   * mean. The difference of the two origins is exact when they are within a factor 2 of each other (Sterbenz), so
   * delta keeps the accuracy of the small relative means.
   */
  private void combineMeans(double[] originB, double[] meanB, long nb) {
    if (n == 0) {
      System.arraycopy(originB, 0, shift, 0, d);
      System.arraycopy(meanB, 0, mean, 0, d);
      n = nb;
      return;
    }
    long total = n + nb;
    double[] delta = new double[d];
    for (int j = 0; j < d; j++) {
      delta[j] = (originB[j] - shift[j]) + (meanB[j] - mean[j]);
    }
    double w = (double) n * (double) nb / (double) total;
    if (gram) {
      Linalg.repeatableBlas().dsyr("U", d, w, delta, 1, m2, d);
    } else {
      for (int j = 0; j < d; j++) {
        m2[j] += w * delta[j] * delta[j];
      }
    }
    double f = (double) nb / (double) total;
    for (int j = 0; j < d; j++) {
      mean[j] += delta[j] * f;
    }
    n = total;
  }

  /**
   * The (d + 1) x (d + 1) Gram of a shifted block, only read within {@link #addShiftedBlock}: shared by the summaries
   * a thread makes up to {@link #SHARED_GRAM_ORDER} columns, the summary's own beyond (a thread keeps its array for as
   * long as it lives). A keyed pass keeps one summary per key: with one array each, a task of 10,000 keys at d = 100
   * allocated 10,000 x 101^2 doubles (816 MB) for a scratch that one call at a time reads.
   */
  private double[] augmented(int e) {
    if (e > SHARED_GRAM_ORDER) {
      if (augmented == null) {
        augmented = new double[e * e];
      }
      return augmented;
    }
    double[] g = SHARED_GRAM.get();
    if (g == null || g.length != e * e) {
      g = new double[e * e];
      SHARED_GRAM.set(g);
    }
    return g;
  }

  /** Largest order of the per-thread Gram ({@link #augmented}): 512 x 512 doubles, 2 MiB. */
  static final int SHARED_GRAM_ORDER = 512;

  private static final ThreadLocal<double[]> SHARED_GRAM = new ThreadLocal<>();

  private double[] scratch() {
    if (scratch == null) {
      scratch = new double[d];
      residualScratch = new double[d];
      gramResidualScratch = new double[d];
    }
    return scratch;
  }

  /** Sample variances (denominator n - 1); zeros when n < 2. */
  public double[] variances() {
    double[] v = new double[d];
    if (n < 2) {
      return v;
    }
    for (int j = 0; j < d; j++) {
      v[j] = Math.max(0.0, gram ? m2[j + j * d] : m2[j]) / (n - 1);
    }
    return v;
  }

  /** Sample covariance (n - 1), full symmetric column-major d x d. Requires the Gram. */
  public double[] covariance() {
    if (!gram) {
      throw new IllegalStateException("these moments keep only the variances, not the covariance");
    }
    double[] c = new double[d * d];
    double denominator = n < 2 ? 1.0 : n - 1.0;
    for (int j = 0; j < d; j++) {
      for (int i = 0; i <= j; i++) {
        double v = m2[i + j * d] / denominator;
        c[i + j * d] = v;
        c[j + i * d] = v;
      }
    }
    return c;
  }

  /**
   * The state to keep between runs (a snapshot): count, the shift (the fixed origin of the means), the mean relative
   * to the shift, and the upper triangle of the co-moment matrix packed column by column (entry (i, j), i <= j, at
   * j (j + 1) / 2 + i). {@link #restore} rebuilds these moments bit for bit. Requires the Gram.
   */
  public State state() {
    if (!gram) {
      throw new IllegalStateException("these moments keep only the variances; a snapshot needs the co-moments");
    }
    double[] packed = new double[d * (d + 1) / 2];
    int at = 0;
    for (int j = 0; j < d; j++) {
      for (int i = 0; i <= j; i++) {
        packed[at++] = m2[i + j * d];
      }
    }
    return new State(n, shift.clone(), mean.clone(), packed);
  }

  /**
   * The moments of the columns {@code cols} of these (in that order): the same count, the columns' means and the
   * co-moments among them, exactly (values are copied, nothing is recomputed). Requires the Gram.
   */
  public Moments select(int[] cols) {
    if (!gram) {
      throw new IllegalStateException("these moments keep only the variances, not the co-moments");
    }
    int e = cols.length;
    Moments m = empty(e, true);
    m.n = n;
    for (int a = 0; a < e; a++) {
      m.shift[a] = shift[cols[a]];
      m.mean[a] = mean[cols[a]];
      for (int b = a; b < e; b++) {
        int i = Math.min(cols[a], cols[b]);
        int j = Math.max(cols[a], cols[b]);
        m.m2[a + b * e] = m2[i + j * d];
      }
    }
    return m;
  }

  /** See {@link #state}: arrays of d, d and d (d + 1) / 2 values. */
  public record State(long n, double[] shift, double[] mean, double[] packedM2) implements java.io.Serializable {}

  /** The moments (with the Gram) whose {@link #state} is {@code s}; bit for bit. */
  public static Moments restore(State s) {
    int d = s.shift().length;
    if (s.mean().length != d || s.packedM2().length != d * (d + 1) / 2 || s.n() < 0) {
      throw new IllegalArgumentException("a moments state of " + d + " columns needs " + d + " means and "
          + d * (d + 1) / 2 + " co-moments, not " + s.mean().length + " and " + s.packedM2().length);
    }
    Moments m = empty(d, true);
    m.n = s.n();
    System.arraycopy(s.shift(), 0, m.shift, 0, d);
    System.arraycopy(s.mean(), 0, m.mean, 0, d);
    int at = 0;
    for (int j = 0; j < d; j++) {
      for (int i = 0; i <= j; i++) {
        m.m2[i + j * d] = s.packedM2()[at++];
      }
    }
    return m;
  }

  /**
   * Java serialization (partials travel between executors and the driver, and through the shuffle of a keyed pass
   * with many keys) writes the moments with the Gram as their {@link #state}: the upper triangle packed, half the
   * bytes of the d x d array, and rebuilt bit for bit by {@link #restore} (the lower triangle is never read).
   */
  private Object writeReplace() {
    return gram ? new Packed(packedBytes()) : this;
  }

  /**
   * The serialized form of moments with the Gram: one byte array (Java serialization copies it whole, where an
   * array of doubles goes through the stream value by value, and reading the partials of a keyed pass with many
   * keys spent as long on that as on the merges): n, then the shift, the mean and the packed upper triangle as in
   * {@link #state}, little-endian. Read straight into the co-moment matrix, bit for bit.
   */
  private record Packed(byte[] bytes) implements java.io.Serializable {
    private Object readResolve() {
      return fromPackedBytes(bytes);
    }
  }

  private byte[] packedBytes() {
    ByteBuffer buf = ByteBuffer.allocate(8 + 8 * (2 * d + d * (d + 1) / 2)).order(ByteOrder.LITTLE_ENDIAN);
    buf.putLong(n);
    DoubleBuffer doubles = buf.asDoubleBuffer();
    doubles.put(shift).put(mean);
    for (int j = 0; j < d; j++) {
      doubles.put(m2, j * d, j + 1);
    }
    return buf.array();
  }

  private static Moments fromPackedBytes(byte[] bytes) {
    // 8 + 8 (2 d + d (d + 1) / 2) bytes: solve d (d + 5) / 2 = doubles for d
    long doubles = (bytes.length - 8L) / 8;
    int d = (int) Math.round((Math.sqrt(25.0 + 8.0 * doubles) - 5.0) / 2.0);
    if (bytes.length % 8 != 0 || (long) d * (d + 5) / 2 != doubles) {
      throw new IllegalArgumentException("a packed moments form of " + bytes.length + " bytes has no column count");
    }
    ByteBuffer buf = ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN);
    Moments m = empty(d, true);
    m.n = buf.getLong();
    DoubleBuffer in = buf.asDoubleBuffer();
    in.get(m.shift).get(m.mean);
    for (int j = 0; j < d; j++) {
      in.get(m.m2, j * d, j + 1);
    }
    return m;
  }

  /** The serialized form: d, gram flag, n, shift, mean relative to the shift, m2 (big-endian). */
  public byte[] toBytes() {
    ByteBuffer buf = ByteBuffer.allocate(4 + 1 + 8 + 8 * (shift.length + mean.length + m2.length));
    buf.putInt(d).put((byte) (gram ? 1 : 0)).putLong(n);
    buf.asDoubleBuffer().put(shift).put(mean).put(m2);
    return buf.array();
  }

  public static Moments fromBytes(byte[] bytes) {
    ByteBuffer buf = ByteBuffer.wrap(bytes);
    int d = buf.getInt();
    boolean gram = buf.get() == 1;
    long n = buf.getLong();
    Moments m = empty(d, gram);
    m.n = n;
    var doubles = buf.asDoubleBuffer();
    doubles.get(m.shift).get(m.mean).get(m.m2);
    return m;
  }
}
