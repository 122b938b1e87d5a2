package io.eigenmill.kmeans.math;

import io.eigenmill.math.SeedStream;
import java.util.Arrays;

/**
 * k-means restarts on the driver over every point, as many as the points' cost allows: each restart seeds k
 * centres by k-means++ (Arthur and Vassilvitskii 2007) in its own stream (seed, {@link SeedStream#DRIVER_RESTART},
 * k, restart), runs Lloyd iterations to a fixed point and refines the partition with Hartigan-Wong single-point
 * moves ({@link HartiganWong}). Restarts go on until the best within-cluster sum of squares seen has been reached
 * (within {@link #SAME} relative) by {@code atBest} restarts, and at least {@code minRestarts} have run, or until
 * the cap: {@code maxRestarts}, lowered for large point sets to what {@link #BUDGET} floating-point operations
 * allow (about {@link #SWEEPS_PER_RESTART} sweeps of m k d each per restart), but never below {@code minRestarts}.
 *
 * <p>Why "reached by several restarts": after r restarts of which h reached the best value, an optimum that a
 * single restart finds with probability p has been missed with probability (1 - p)^r; stopping only once the best
 * has h hits also makes it unlikely that a worse optimum that is merely common stops the search before a better
 * one is seen. Pure function; deterministic for a given seed.
 */
public final class DriverRestarts {
  /** Two within-cluster sums of squares within this relative difference are the same optimum. */
  public static final double SAME = 1e-9;
  /** Floating-point operations the restarts of one k may take (about 1 to 4 s on one core). */
  public static final double BUDGET = 4e9;
  /** Sweeps over the points (Lloyd iterations and move sweeps) a restart is assumed to take, for the cap. */
  public static final int SWEEPS_PER_RESTART = 25;
  /** Cap on the Lloyd iterations of one restart (the single-point moves finish what they leave). */
  static final int LLOYD_ITERATIONS = 100;
  /** Cap on the sweeps of single-point moves of one restart. */
  static final int MOVE_SWEEPS = 1000;

  private DriverRestarts() {}

  /**
   * The outcome for one k.
   *
   * @param centres point-major {@code k x d}, the best restart's centroids (the means of its clusters)
   * @param wcss each restart's within-cluster sum of squares, in the order run
   * @param best the lowest of them
   * @param atBest restarts within {@link #SAME} relative of the best
   */
  public record Outcome(int k, double[] centres, long[] sizes, double best, double[] wcss, int atBest) {
    public int restarts() {
      return wcss.length;
    }
  }

  /** The restart cap for m points in d dimensions at this k: see the class comment. */
  public static int cap(long m, int d, int k, int minRestarts, int maxRestarts) {
    double perRestart = (double) SWEEPS_PER_RESTART * m * Math.max(1, d) * k;
    long affordable = (long) Math.floor(BUDGET / Math.max(1, perRestart));
    return (int) Math.max(minRestarts, Math.min(maxRestarts, affordable));
  }

  /**
   * Runs the restarts.
   *
   * @param points point-major {@code m x d}
   * @throws IllegalArgumentException when the points have fewer than k distinct values
   */
  public static Outcome run(double[] points, int m, int d, int k, long seed, int minRestarts, int atBest,
      int maxRestarts) {
    int cap = cap(m, d, k, minRestarts, maxRestarts);
    double[] ones = new double[m];
    Arrays.fill(ones, 1.0);
    double[] wcss = new double[cap];
    double best = Double.POSITIVE_INFINITY;
    double[] bestCentres = null;
    long[] bestSizes = null;
    int hits = 0;
    int run = 0;
    while (run < cap) {
      long stream = SeedStream.stream(seed, SeedStream.DRIVER_RESTART, k, run, 0);
      double[] centres = KMeansSeeding.plusPlus(points, ones, m, d, k, stream);
      KMeansSeeding.lloyd(points, ones, m, d, centres, k, LLOYD_ITERATIONS);
      int[] owner = HartiganWong.assign(points, m, d, centres, k);
      HartiganWong.refine(points, m, d, owner, k, centres, MOVE_SWEEPS);
      double w = HartiganWong.wcss(points, m, d, owner, centres);
      wcss[run++] = w;
      if (w < best * (1 - SAME)) {
        hits = 1;
        best = w;
        bestCentres = centres;
        bestSizes = new long[k];
        for (int o : owner) {
          bestSizes[o]++;
        }
      } else if (w <= best * (1 + SAME)) {
        hits++;
      }
      if (hits >= atBest && run >= minRestarts) {
        break;
      }
    }
    double[] ran = Arrays.copyOf(wcss, run);
    int reached = 0;
    for (double w : ran) {
      if (w <= best * (1 + SAME)) {
        reached++;
      }
    }
    return new Outcome(k, bestCentres, bestSizes, best, ran, reached);
  }

  /** The median of the values (the mean of the middle two for an even count). */
  public static double median(double[] values) {
    double[] s = values.clone();
    Arrays.sort(s);
    int n = s.length;
    return n == 0 ? Double.NaN : n % 2 == 1 ? s[n / 2] : 0.5 * (s[n / 2 - 1] + s[n / 2]);
  }
}
