package io.eigenmill.kmeans.math;

import io.eigenmill.math.Linalg;

/**
 * Nearest (and optionally second-nearest) centroid of every row of a block, for several independent sets of
 * centroids at once (one set per k-means run: all restarts and all k of a k-range are searched in the same pass).
 *
 * <p>Method: with the centroids of all runs as the columns of one {@code d x K} matrix C, one BLAS level-3 call
 * {@code P = -2 X C} ({@code dgemm}) gives every cross term; the nearest centroid of row i within a run minimises
 * {@code ||c_j||^2 - 2 x_i.c_j} over that run's columns (the row's own {@code ||x_i||^2} does not change the order).
 * The expansion loses accuracy when distances are small against the norms: callers pass rows shifted by the data
 * mean (so the norms measure the spread of the data, not its offset); the nearest-only search (Lloyd passes,
 * k-means|| rounds) reads the squared distance off the expansion, with an absolute error of order u times the
 * squared norms (see {@link #nearestOnly}), and the search with the second-nearest (assignments, silhouette)
 * recomputes both distances exactly as sums of squared differences. A near-tie that
 * rounding resolves the other way changes a row's cluster but no reported distance by more than the tie's width.
 * Ties go to the lower centroid index.
 *
 * <p>Cost per chunk of r rows: 2 r d K flops in dgemm, r K comparisons, and 2 r d flops for the rows' norms (or
 * 4 r d R flops, R runs, for the exact distances of the second-nearest search); memory r K doubles for P, allocated
 * once. Not thread-safe; one instance per partition.
 */
public final class NearestSearch {
  /** Upper bound on the doubles of the product matrix of one chunk (2 MiB). */
  public static final int PRODUCT_BUDGET = 1 << 18;

  private final int d;
  private final int total;
  private final double[] centroids;
  private final double[] norms;
  private final int[] offsets;
  private final int runs;
  private final int chunk;
  private final boolean second;
  private final double[] product;
  private final double[] bestScore;
  private final double[] secondScore;
  private final double[] rowNorm;
  private final long[] keys;
  private final int[] nearest;
  private final int[] runnerUp;
  private final double[] distance2;
  private final double[] secondDistance2;
  private final NearestKeys kernel;

  /**
   * @param centroids column-major {@code d x K}: centroid j is {@code centroids[j*d .. j*d+d)}
   * @param offsets run r owns centroids {@code offsets[r] .. offsets[r+1]-1}; each run owns at least one
   * @param chunk the most rows one {@link #search} call may pass
   * @param second also find the second-nearest centroid of each run
   */
  public NearestSearch(int d, double[] centroids, int[] offsets, int chunk, boolean second) {
    this(d, centroids, offsets, chunk, second, NearestKeys.best());
  }

  /** As above, with the kernel of the nearest-only search given. */
  public NearestSearch(int d, double[] centroids, int[] offsets, int chunk, boolean second, NearestKeys kernel) {
    this.kernel = kernel;
    this.d = d;
    this.total = offsets[offsets.length - 1];
    this.centroids = centroids;
    this.offsets = offsets;
    this.runs = offsets.length - 1;
    this.chunk = chunk;
    this.second = second;
    this.norms = new double[total];
    for (int j = 0; j < total; j++) {
      double s = 0;
      for (int l = 0; l < d; l++) {
        double c = centroids[j * d + l];
        s += c * c;
      }
      norms[j] = s;
    }
    this.product = new double[chunk * total];
    this.bestScore = new double[chunk];
    this.secondScore = new double[chunk];
    this.rowNorm = new double[chunk];
    this.keys = new long[chunk];
    this.nearest = new int[runs * chunk];
    this.runnerUp = new int[second ? runs * chunk : 0];
    this.distance2 = new double[runs * chunk];
    this.secondDistance2 = new double[second ? runs * chunk : 0];
  }

  /** Rows per chunk so that the product of a chunk stays within {@link #PRODUCT_BUDGET}: in [16, maxRows]. */
  public static int chunkRows(int centroids, int maxRows) {
    return Math.max(1, Math.min(maxRows, Math.max(16, PRODUCT_BUDGET / Math.max(1, centroids))));
  }

  public int chunk() {
    return chunk;
  }

  public int runs() {
    return runs;
  }

  public int[] offsets() {
    return offsets;
  }

  public int dimension() {
    return d;
  }

  /**
   * Searches {@code rows <= chunk()} rows of the column-major matrix {@code x} (row i, coordinate l at
   * {@code x[xoff + i + l * ldx]}), already shifted like the centroids. {@code x} must hold at least
   * {@code xoff + ldx * d} values: the BLAS binding checks the whole last column, not just the rows used.
   */
  public void search(double[] x, int xoff, int rows, int ldx) {
    search(x, xoff, rows, ldx, null);
  }

  /**
   * As {@link #search(double[], int, int, int)}, with the rows' squared norms {@code ||x_i||^2} in
   * {@code givenNorms}, or null to compute them here (only the nearest-only search uses them; the search with the
   * second-nearest recomputes distances). Given norms must be {@link #squaredNorms} of exactly these rows, so that
   * the distances round alike.
   */
  public void search(double[] x, int xoff, int rows, int ldx, double[] givenNorms) {
    if (rows == 0) {
      return;
    }
    // P = -2 X C, column-major with leading dimension chunk: centroid j's scores of all rows are contiguous
    Linalg.blas().dgemm("N", "N", rows, total, d, -2.0, x, xoff, ldx, centroids, 0, d, 0.0, product, 0, chunk);
    if (second) {
      for (int r = 0; r < runs; r++) {
        searchRun(r, rows);
        int base = r * chunk;
        for (int i = 0; i < rows; i++) {
          distance2[base + i] = squaredDistance(x, xoff + i, ldx, centroids, nearest[base + i] * d, d);
          int j = runnerUp[base + i];
          secondDistance2[base + i] = j < 0 ? Double.NaN
              : squaredDistance(x, xoff + i, ldx, centroids, j * d, d);
        }
      }
      return;
    }
    if (givenNorms == null) {
      java.util.Arrays.fill(rowNorm, 0, rows, 0.0);
      squaredNorms(x, xoff, rows, ldx, d, rowNorm);
    } else {
      System.arraycopy(givenNorms, 0, rowNorm, 0, rows);
    }
    for (int r = 0; r < runs; r++) {
      nearestOnly(r, rows);
    }
  }

  /**
   * Adds ||x_i||^2 of {@code rows} rows of a column-major matrix to {@code out[0 .. rows)}, coordinate by
   * coordinate (rows read contiguously): the one order in which the search and the cached blocks' norms are summed.
   */
  public static void squaredNorms(double[] x, int xoff, int rows, int ldx, int d, double[] out) {
    for (int l = 0; l < d; l++) {
      int xl = xoff + l * ldx;
      for (int i = 0; i < rows; i++) {
        double v = x[xl + i];
        out[i] += v * v;
      }
    }
  }

  /**
   * The nearest centroid of each row within run r, without a branch in the loop (the branch a compiler emits for a
   * running minimum mispredicts on clustered data, where the nearest centroid changes from row to row). The squared
   * distance ||x||^2 + (||c||^2 - 2 x.c) is read off the expansion, clamped at 0, and its bit pattern, which orders
   * non-negative doubles like their values, becomes a key whose lowest {@code bits = ceil(log2(k))} bits are replaced
   * by the centroid's place in the run; the smallest key wins (the loop is a {@link NearestKeys} kernel, SIMD where
   * the JVM has the vector module). So distances that agree to within 2^bits units in the
   * last place count as tied, and ties go to the lower index as in {@link #searchRun}. The distance kept is the
   * chosen centroid's untruncated one. Its rounding error is at most about (d + 2) u (||x|| + ||c||)^2 (Higham 2002,
   * §3.1, for the dot product and the two sums), an absolute error of the size of the rows' spread times u, since
   * rows and centroids are shifted by the data mean. Summed over the rows, the within-cluster sum of squares is then off by at most about
   * 4 (d + 2) u times the total sum of squares. The second-nearest search recomputes distances exactly.
   */
  private void nearestOnly(int r, int rows) {
    int first = offsets[r];
    int count = offsets[r + 1] - first;
    // 2^bits - 1 with 2^bits >= count, 0 for one centroid; without a branch (a branch taken for the first time makes
    // the JIT recompile this method and the kernel inlined in it)
    long tags = (1L << (64 - Long.numberOfLeadingZeros(count - 1L))) - 1;
    int base = r * chunk;
    kernel.smallest(product, chunk, norms, first, count, rowNorm, rows, tags, keys, distance2, base);
    for (int i = 0; i < rows; i++) {
      nearest[base + i] = first + (int) (keys[i] & tags);
    }
  }

  private void searchRun(int r, int rows) {
    int base = r * chunk;
    int first = offsets[r];
    for (int i = 0; i < rows; i++) {
      bestScore[i] = Double.POSITIVE_INFINITY;
      secondScore[i] = Double.POSITIVE_INFINITY;
      nearest[base + i] = first;
      runnerUp[base + i] = -1;
    }
    for (int j = first; j < offsets[r + 1]; j++) {
      double norm = norms[j];
      for (int i = 0; i < rows; i++) {
        double s = product[j * chunk + i] + norm;
        if (s < bestScore[i]) {
          secondScore[i] = bestScore[i];
          runnerUp[base + i] = bestScore[i] == Double.POSITIVE_INFINITY ? -1 : nearest[base + i];
          bestScore[i] = s;
          nearest[base + i] = j;
        } else if (s < secondScore[i]) {
          secondScore[i] = s;
          runnerUp[base + i] = j;
        }
      }
    }
  }

  /** Global index of the nearest centroid of row i within run r. */
  public int nearest(int r, int i) {
    return nearest[r * chunk + i];
  }

  /**
   * Squared distance of row i to its nearest centroid of run r: exact with the second-nearest search, from the
   * expansion otherwise (see {@link #nearestOnly}).
   */
  public double distance2(int r, int i) {
    return distance2[r * chunk + i];
  }

  /** Global index of the second-nearest centroid of row i within run r, or -1 when the run has one centroid. */
  public int secondNearest(int r, int i) {
    return runnerUp[r * chunk + i];
  }

  /** Exact squared distance to the second-nearest centroid, NaN when the run has one centroid. */
  public double secondDistance2(int r, int i) {
    return secondDistance2[r * chunk + i];
  }

  /** Sum over l of (x[xoff + l * ldx] - c[coff + l])^2. */
  public static double squaredDistance(double[] x, int xoff, int ldx, double[] c, int coff, int d) {
    double s = 0;
    for (int l = 0; l < d; l++) {
      double t = x[xoff + l * ldx] - c[coff + l];
      s += t * t;
    }
    return s;
  }
}
