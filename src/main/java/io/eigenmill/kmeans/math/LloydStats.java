package io.eigenmill.kmeans.math;

import io.eigenmill.math.Linalg;
import java.io.Serializable;
import java.nio.ByteBuffer;

/**
 * The mergeable buffer of one Lloyd iteration (Lloyd 1982, "Least squares quantization in PCM", IEEE Trans. Inf.
 * Theory 28) for several runs at once: for every centroid, the count and the coordinate sums of the rows nearest to
 * it and the sum of their (Euclidean) distances; for every run, the within-cluster sum of squares and its
 * farthest rows (largest distance to their own centroid, ties by identity), which re-seed clusters that come out
 * empty. Rows are those of a {@link NearestSearch} result, shifted by the data mean: sums stay small and centred,
 * so the new centroids (sums / counts) carry rounding of order eps times the data's spread, not its offset.
 *
 * <p>Layout: run r owns the centroids {@code offsets[r] .. offsets[r+1]-1}; {@code sums} holds centroid j's d sums
 * at {@code j*d}. The zero is {@link #empty}; merging is element-wise addition plus a merge of the farthest rows,
 * so it is associative and commutative up to rounding. Memory: K (d + 2) + R (k d + k) words.
 */
public final class LloydStats implements Serializable {
  private static final long serialVersionUID = 1L;

  private final int d;
  private final int[] offsets;
  private final long[] counts;
  private final double[] sums;
  private final double[] distanceSums;
  private final double[] wcss;
  private final RankedPoints[] farthest;
  /** Scratch of {@link #add}: all zero between calls; not part of the buffer's state. */
  private transient double[] indicator;

  private LloydStats(int d, int[] offsets) {
    this.d = d;
    this.offsets = offsets.clone();
    int runs = offsets.length - 1;
    int total = offsets[runs];
    this.counts = new long[total];
    this.sums = new double[total * d];
    this.distanceSums = new double[total];
    this.wcss = new double[runs];
    this.farthest = new RankedPoints[runs];
    for (int r = 0; r < runs; r++) {
      // at most k - 1 clusters of a run can be empty at once
      farthest[r] = new RankedPoints(Math.max(1, offsets[r + 1] - offsets[r] - 1), d);
    }
  }

  /** No rows yet: the zero of {@link #merge}. */
  public static LloydStats empty(int d, int[] offsets) {
    return new LloydStats(d, offsets);
  }

  /**
   * Adds the {@code rows} rows just searched by {@code search}: row i is at {@code x[xoff + i + l * ldx]}, its
   * identity at {@code ids[idOff + i]}.
   */
  public void add(NearestSearch search, double[] x, int xoff, int rows, int ldx, long[] ids, int idOff) {
    int runs = wcss.length;
    // coordinate sums of every centroid in one BLAS level-3 call below: sums (d x K) += X^T H, with H the rows x K
    // indicator of each row's nearest centroid in every run (a scatter loop instead waits on the previous row's
    // store whenever consecutive rows share a centroid, as clustered data does); H is all zero between calls
    int total = counts.length;
    int ldh = search.chunk();
    if (indicator == null || indicator.length < ldh * total) {
      indicator = new double[ldh * total];
    }
    for (int r = 0; r < runs; r++) {
      RankedPoints far = farthest[r];
      double cost = 0;
      for (int i = 0; i < rows; i++) {
        int j = search.nearest(r, i);
        double d2 = search.distance2(r, i);
        indicator[i + j * ldh] = 1.0;
        counts[j]++;
        distanceSums[j] += Math.sqrt(d2);
        cost += d2;
        if (-d2 <= far.refusalRank()) { // almost every row is refused: call offer() rarely (see RankedPoints)
          far.offer(-d2, ids[idOff + i], x, xoff + i, ldx);
        }
      }
      wcss[r] += cost;
    }
    Linalg.blas().dgemm("T", "N", d, total, rows, 1.0, x, xoff, ldx, indicator, 0, ldh, 1.0, sums, 0, d);
    for (int r = 0; r < runs; r++) {
      for (int i = 0; i < rows; i++) {
        indicator[i + search.nearest(r, i) * ldh] = 0.0;
      }
    }
  }

  /** Adds {@code other} into this and returns this; {@code other} is unchanged. */
  public LloydStats merge(LloydStats other) {
    if (other.d != d || !java.util.Arrays.equals(other.offsets, offsets)) {
      throw new IllegalArgumentException("cannot merge Lloyd buffers of different runs or dimensions");
    }
    for (int j = 0; j < counts.length; j++) {
      counts[j] += other.counts[j];
      distanceSums[j] += other.distanceSums[j];
    }
    for (int i = 0; i < sums.length; i++) {
      sums[i] += other.sums[i];
    }
    for (int r = 0; r < wcss.length; r++) {
      wcss[r] += other.wcss[r];
      farthest[r].merge(other.farthest[r]);
    }
    return this;
  }

  public int runs() {
    return wcss.length;
  }

  public long count(int j) {
    return counts[j];
  }

  public double sum(int j, int l) {
    return sums[j * d + l];
  }

  public double distanceSum(int j) {
    return distanceSums[j];
  }

  /** Exact within-cluster sum of squares of run r (rows to their nearest centroid). */
  public double wcss(int r) {
    return wcss[r];
  }

  /** Rows of run r farthest from their centroids, farthest first (point-major, shifted coordinates). */
  public double[] farthestPoints(int r) {
    return farthest[r].points();
  }

  /** The serialized form: d, offsets, counts, sums, distance sums, within-cluster sum of squares, then each run's farthest rows. */
  public byte[] toBytes() {
    byte[][] far = new byte[farthest.length][];
    int farBytes = 0;
    for (int r = 0; r < far.length; r++) {
      far[r] = farthest[r].toBytes();
      farBytes += 4 + far[r].length;
    }
    ByteBuffer buf = ByteBuffer.allocate(8 + 4 * offsets.length + 8 * (counts.length + sums.length
        + distanceSums.length + wcss.length) + farBytes);
    buf.putInt(d).putInt(offsets.length);
    for (int o : offsets) {
      buf.putInt(o);
    }
    for (long c : counts) {
      buf.putLong(c);
    }
    for (double[] a : new double[][] {sums, distanceSums, wcss}) {
      for (double v : a) {
        buf.putDouble(v);
      }
    }
    for (byte[] f : far) {
      buf.putInt(f.length).put(f);
    }
    return buf.array();
  }

  public static LloydStats fromBytes(byte[] bytes) {
    ByteBuffer buf = ByteBuffer.wrap(bytes);
    int d = buf.getInt();
    int[] offsets = new int[buf.getInt()];
    for (int i = 0; i < offsets.length; i++) {
      offsets[i] = buf.getInt();
    }
    LloydStats s = new LloydStats(d, offsets);
    for (int j = 0; j < s.counts.length; j++) {
      s.counts[j] = buf.getLong();
    }
    for (double[] a : new double[][] {s.sums, s.distanceSums, s.wcss}) {
      for (int i = 0; i < a.length; i++) {
        a[i] = buf.getDouble();
      }
    }
    for (int r = 0; r < s.farthest.length; r++) {
      byte[] f = new byte[buf.getInt()];
      buf.get(f);
      s.farthest[r] = RankedPoints.fromBytes(f);
    }
    return s;
  }
}
