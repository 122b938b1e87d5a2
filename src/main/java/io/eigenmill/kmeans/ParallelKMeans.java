package io.eigenmill.kmeans;

import io.eigenmill.kmeans.math.DriverRestarts;
import io.eigenmill.kmeans.math.KMeansSeeding;
import io.eigenmill.kmeans.math.LloydStats;
import io.eigenmill.kmeans.math.NearestKeys;
import io.eigenmill.kmeans.math.SampleRound;
import io.eigenmill.math.SeedStream;
import java.io.Serializable;
import java.util.ArrayList;
import java.util.List;
import org.apache.spark.api.java.JavaRDD;
import org.apache.spark.sql.SparkSession;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * k-means on the cached points: many runs (every restart of every k tried) side by side, so that each pass over the
 * data serves all of them and the number of passes does not grow with the restarts or the k-range.
 *
 * <p><b>Initialisation: k-means||</b> (Bahmani, Moseley, Vattani, Kumar and Vassilvitskii 2012, "Scalable
 * k-means++", PVLDB 5(7), Algorithm 2). A run starts from one point drawn uniformly (the point of smallest unit
 * number in its stream); each of {@link #ROUNDS} rounds adds every row x with probability
 * min(1, l d^2(x, C) / phi), l = 2k, phi = sum d^2(x, C), in one pass ({@link SampleRound}; the paper shows a few
 * rounds suffice in practice). A run keeps sampling for up to {@link #MAX_EXTRA_ROUNDS} more rounds while it has
 * fewer than k distinct candidates (a round that samples nothing then takes the row of largest key: equal rows share
 * their identity, hence their unit number, so heavily duplicated rows can leave a round empty); when phi = 0 every
 * row coincides with a candidate, so the candidates are all the distinct points and fewer than k of them is an error
 * ({@link TooFewDistinctPoints}). A last pass counts the rows nearest to each candidate; on the driver, weighted
 * k-means++ and weighted Lloyd iterations on the candidates give the k starting centroids ({@link KMeansSeeding}).
 * Every random decision is a function of (seed, k, restart, round) and the row's identity, never of the partition:
 * the candidates do not depend on the partitioning.
 *
 * <p><b>Where the initialisation runs.</b> By default ({@code cluster.init-sample} rows, at most
 * {@link #INIT_SAMPLE_VALUES} / d) the rounds and the weights run on the driver over a seeded sample of the rows
 * (bottom-s of a unit number of each row's identity, gathered by the summary pass): no pass over the data, and the
 * candidate weights are counts over the sample, i.e. estimates of the full counts scaled by about s / n, a factor
 * to which weighted k-means++ and the weighted Lloyd iterations are invariant. A table of at most s rows is sampled
 * whole, which is the same computation as over the cache. The Lloyd iterations always run over every row. When the
 * sample turns out to hold fewer than k distinct points (duplicates crowd it) while the rows have more, the
 * initialisation runs again over all rows. With {@code cluster.init-sample = 0} it always runs over all rows.
 *
 * <p><b>Lloyd iterations</b>: one pass per iteration for all runs still moving; each run's new centroids are the
 * means of their rows. A run stops when no centroid moved more than {@code tolerance} times the data's RMS radius
 * (sqrt of the mean squared distance to the data mean), or after {@code maxIterations} passes. The reported state
 * of a run is the last one evaluated: the centroids of its last pass with that pass's exact within-cluster sum of squares, sizes and
 * mean distances (a consistent pair; at convergence the next centroids differ by at most tolerance x radius, which
 * changes the within-cluster sum of squares by at most n (tolerance x radius)^2 = tolerance^2 x total SS). An empty cluster is re-seeded
 * deterministically with the row farthest from its centroid (the next farthest for a second empty cluster, ties by
 * identity), counted in {@link Fitted#reseeds}, and the run is not considered converged in that iteration.
 *
 * <p><b>Restarts on the driver when the points are few.</b> When the initialisation sample holds every row (a table
 * of at most {@code cluster.init-sample} rows) and {@code cluster.max-restarts} is positive, the restarts of each k
 * run on the driver over all the points instead ({@link DriverRestarts}: k-means++, Lloyd, Hartigan-Wong
 * single-point moves), as many as it takes for the best within-cluster sum of squares to be reached by
 * {@code cluster.restarts-at-best} of them (at least {@code cluster.restarts}, at most {@code cluster.max-restarts},
 * fewer when the points' cost caps them); only the best of each k goes on to the Lloyd passes over the cache, which
 * confirm it (a partition no single move improves is a fixed point of Lloyd) and report its exact state. Larger
 * tables keep k-means|| with {@code cluster.restarts} restarts side by side. {@link #restartSpread} reports, per k,
 * the restarts run, how many reached the best, and the spread of their within-cluster sums of squares.
 *
 * <p>Passes: 1 summary (done by the caller) + Lloyd iterations (the slowest run's count), plus {@link #ROUNDS}
 * rounds + 1 (weights) when the initialisation runs over all rows, where a round whose kept rows overflow costs one
 * more pass (rare: see {@link #KEPT_PER_OVERSAMPLE}). Centroids travel as
 * broadcasts; all arithmetic is in coordinates shifted by the data mean.
 */
public final class ParallelKMeans {
  private static final Logger LOG = LoggerFactory.getLogger(ParallelKMeans.class);

  /**
   * Oversampling rounds of k-means|| (one pass each), each adding about l = 2k candidates per run. Two rounds keep
   * the initialisation to 3 passes (first centre from the summary pass, 2 rounds, weights); restarts run side by
   * side in the same passes and cover the variance of a short initialisation (see local-demo/BENCHMARKS.md for the
   * within-cluster sum of squares this gives against the engine's k-means on the benchmark's scores).
   */
  public static final int ROUNDS = 2;
  /** Further rounds allowed while a run has fewer than k distinct candidates. */
  public static final int MAX_EXTRA_ROUNDS = 30;
  /**
   * Rows of largest key kept per run and round, as a multiple of the expected number sampled (l = 2k) plus
   * {@link #KEPT_EXTRA}: the count sampled has mean at most l and variance at most l, so 4 l + 16 is exceeded with
   * negligible probability; when it is, one more pass with the known threshold keeps the round exact.
   */
  static final int KEPT_PER_OVERSAMPLE = 4;
  static final int KEPT_EXTRA = 16;
  /** Cap on the weighted Lloyd iterations over the candidates, on the driver. */
  public static final int LOCAL_ITERATIONS = 100;
  /**
   * Values (rows x d) of the initialisation sample at most: 2^21 doubles, 16 MiB, so that the summary's partials
   * and the driver's copy stay small at any d.
   */
  public static final int INIT_SAMPLE_VALUES = 1 << 21;

  /**
   * The restarts of one k: how many ran, how many reached the lowest within-cluster sum of squares (within
   * {@link DriverRestarts#SAME} relative), and the lowest, median and highest of their within-cluster sums of
   * squares. On the driver these are the driver's restarts (the best is then confirmed over the cache); otherwise
   * the k-means|| restarts' final states.
   */
  public record Spread(int k, int run, int atBest, double min, double median, double max, boolean onDriver)
      implements Serializable {}

  /** One k-means run: the number of clusters and the restart number (0-based). */
  public record Run(int k, int restart) implements Serializable {}

  /**
   * A run's outcome.
   *
   * @param centroids point-major {@code k x d} in the original point coordinates
   * @param sizes rows nearest to each centroid
   * @param meanDistances mean Euclidean distance of each cluster's rows to its centroid (0 for an empty cluster)
   * @param iterations Lloyd passes run
   * @param converged false when the run stopped at the iteration cap
   * @param reseeds empty clusters re-seeded during the run
   */
  public record Fitted(Run run, double[] centroids, long[] sizes, double[] meanDistances, double wcss,
      int iterations, boolean converged, int reseeds) {}

  /** Fewer distinct points than a run's k. */
  public static final class TooFewDistinctPoints extends RuntimeException {
    private final int k;
    private final int distinct;

    TooFewDistinctPoints(int k, int distinct) {
      super("k = " + k + " but the points have only " + distinct + " distinct values");
      this.k = k;
      this.distinct = distinct;
    }

    public int k() {
      return k;
    }

    public int distinct() {
      return distinct;
    }
  }

  private final SparkSession spark;
  private final JavaRDD<PointBlock> blocks;
  private final int d;
  private final double[] shift;
  private final long seed;
  private final int maxIterations;
  private final double tolerance;
  private int passes;
  private int minRestarts = 1;
  private int restartsAtBest = 1;
  private int maxRestarts = 0;
  private List<Spread> spread = List.of();
  private static final NearestKeys DRIVER_KERNEL = new NearestKeys.Scalar();
  /** Rows of the sample the last fit's initialisation ran on; 0 when it ran over all rows. */
  private int initRows;

  /**
   * @param shift the data mean: every computation runs on rows minus this vector
   */
  public ParallelKMeans(SparkSession spark, JavaRDD<PointBlock> blocks, int d, double[] shift, long seed,
      int maxIterations, double tolerance) {
    this.spark = spark;
    this.blocks = blocks;
    this.d = d;
    this.shift = shift.clone();
    this.seed = seed;
    this.maxIterations = maxIterations;
    this.tolerance = tolerance;
  }

  /**
   * Restarts on the driver (see the class comment): at least {@code min}, stopping once {@code atBest} reached the
   * best, at most {@code max}; {@code max = 0} keeps k-means|| restarts for every table.
   */
  public ParallelKMeans driverRestarts(int min, int atBest, int max) {
    this.minRestarts = min;
    this.restartsAtBest = atBest;
    this.maxRestarts = max;
    return this;
  }

  /** Per k of the last {@link #fit}, in increasing k: the restarts and the spread of their results. */
  public List<Spread> restartSpread() {
    return spread;
  }

  /** Rows of the sample the last {@link #fit}'s k-means|| ran on; 0 when it ran over all rows. */
  public int initialisationSample() {
    return initRows;
  }

  /** Passes over the data run so far by this instance. */
  public int passes() {
    return passes;
  }

  /**
   * Fits every run.
   *
   * @param summary the first pass, made with {@link #firstStreams} of these runs
   * @param radius the data's RMS radius
   * @throws TooFewDistinctPoints when a run's k exceeds the number of distinct points
   */
  public List<Fitted> fit(List<Run> runs, PointSummary summary, double radius) {
    initRows = 0;
    if (maxRestarts > 0 && summary.initSample != null
        && summary.initSampleSize() >= summary.moments().count()) {
      List<Fitted> onDriver = fitOnDriver(runs, summary, radius);
      if (onDriver != null) {
        return onDriver;
      }
    }
    List<PointBlock> sample = summary.initBlocks(ClusterPasses.CHUNK_ROWS);
    double[][] starts = null;
    if (sample != null) {
      long t0 = System.nanoTime();
      try {
        starts = new KMeansParallelInit(this, d, shift, seed).initialise(runs, summary, sample);
        initRows = summary.initSampleSize();
        LOG.info("k-means||: {} runs initialised on a sample of {} rows on the driver in {} ms", runs.size(),
            summary.initSampleSize(), (System.nanoTime() - t0) / 1_000_000);
      } catch (TooFewDistinctPoints e) {
        if (summary.initSampleSize() >= summary.moments().count()) {
          throw e; // the sample is every row
        }
        // duplicates can crowd the sample: the rows as a whole may still have k distinct points
        LOG.info("k-means||: the sample of {} rows has fewer than k = {} distinct points; initialising over all"
            + " rows", summary.initSampleSize(), e.k());
      }
    }
    if (starts == null) {
      starts = new KMeansParallelInit(this, d, shift, seed).initialise(runs, summary, null);
    }
    List<Fitted> fitted = lloyd(runs, starts, radius);
    spread = spreadOf(fitted);
    return fitted;
  }

  /**
   * The driver's restarts over every point (the initialisation sample is the whole table), then one Lloyd run per k
   * over the cache from the best; null when the points have fewer than k distinct values (k-means|| then reports
   * it).
   */
  private List<Fitted> fitOnDriver(List<Run> runs, PointSummary summary, double radius) {
    int m = summary.initSampleSize();
    double[] pts = summary.initSample.points();
    for (int i = 0; i < m; i++) {
      for (int l = 0; l < d; l++) {
        pts[i * d + l] -= shift[l];
      }
    }
    java.util.TreeSet<Integer> ks = new java.util.TreeSet<>();
    for (Run r : runs) {
      ks.add(r.k());
    }
    long t0 = System.nanoTime();
    List<Run> best = new ArrayList<>();
    double[][] starts = new double[ks.size()][];
    List<Spread> out = new ArrayList<>();
    for (int k : ks) {
      DriverRestarts.Outcome o;
      try {
        o = DriverRestarts.run(pts, m, d, k, seed, minRestarts, restartsAtBest, maxRestarts);
      } catch (IllegalArgumentException e) {
        return null; // fewer than k distinct points
      }
      starts[best.size()] = o.centres();
      best.add(new Run(k, 0));
      double[] w = o.wcss();
      out.add(new Spread(k, o.restarts(), o.atBest(), o.best(), DriverRestarts.median(w),
          java.util.Arrays.stream(w).max().orElse(Double.NaN), true));
      LOG.info("k-means: k = {}: {} restarts on the driver over all {} points, {} reached the best {}", k,
          o.restarts(), m, o.atBest(), o.best());
    }
    LOG.info("k-means: driver restarts took {} ms", (System.nanoTime() - t0) / 1_000_000);
    initRows = m;
    List<Fitted> fitted = lloyd(best, starts, radius);
    spread = List.copyOf(out);
    return fitted;
  }

  /** The spread of the k-means|| restarts of each k from their final states. */
  private static List<Spread> spreadOf(List<Fitted> fitted) {
    java.util.Map<Integer, List<Double>> byK = new java.util.TreeMap<>();
    for (Fitted f : fitted) {
      byK.computeIfAbsent(f.run().k(), x -> new ArrayList<>()).add(f.wcss());
    }
    List<Spread> out = new ArrayList<>();
    byK.forEach((k, list) -> {
      double[] w = list.stream().mapToDouble(Double::doubleValue).toArray();
      double min = java.util.Arrays.stream(w).min().orElse(Double.NaN);
      int at = 0;
      for (double x : w) {
        if (x <= min * (1 + DriverRestarts.SAME)) {
          at++;
        }
      }
      out.add(new Spread(k, w.length, at, min, DriverRestarts.median(w),
          java.util.Arrays.stream(w).max().orElse(Double.NaN), false));
    });
    return List.copyOf(out);
  }

  /** Rows of the initialisation sample for a request of {@code requested} rows (0: none) at dimension d. */
  public static int initSampleRows(int requested, int d) {
    return requested <= 0 ? 0 : Math.max(1, Math.min(requested, INIT_SAMPLE_VALUES / Math.max(1, d)));
  }

  /**
   * The first pass over the cached points (it also fills the cache): moments (with the full co-moment matrix when
   * {@code gram}), skipped rows, the silhouette sample of up to {@code sampleSize} points (bottom-s by the unit
   * number of each point's identity in the stream (seed, silhouette)), the initialisation sample of
   * {@link #initSampleRows} rows (the same rule in the stream (seed, init sample)) and the first centre of each run.
   */
  public static PointSummary summarize(SparkSession spark, JavaRDD<PointBlock> blocks, int d, boolean gram,
      int sampleSize, int initSample, long seed, List<Run> runs) {
    long sampleStream = SeedStream.stream(seed, SeedStream.SILHOUETTE, 0, 0, 0);
    long initStream = SeedStream.stream(seed, SeedStream.INIT_SAMPLE, 0, 0, 0);
    return ClusterPasses.summarize(spark, blocks, d, gram, sampleSize, sampleStream, initSampleRows(initSample, d),
        initStream, firstStreams(seed, runs));
  }

  /** The stream of each run's first centre. */
  static long[] firstStreams(long seed, List<Run> runs) {
    long[] s = new long[runs.size()];
    for (int r = 0; r < s.length; r++) {
      s[r] = SeedStream.stream(seed, SeedStream.FIRST_CENTRE, runs.get(r).k(), runs.get(r).restart(), 0);
    }
    return s;
  }

  private List<Fitted> lloyd(List<Run> runs, double[][] current, double radius) {
    int count = runs.size();
    Fitted[] out = new Fitted[count];
    int[] reseeds = new int[count];
    List<Integer> active = new ArrayList<>();
    for (int r = 0; r < count; r++) {
      active.add(r);
    }
    for (int it = 1; it <= maxIterations && !active.isEmpty(); it++) {
      CentroidTable table = tableOf(active, current);
      LloydStats stats = pass("cluster/lloyd-" + it, table, new ClusterPasses.Lloyd(), null);
      List<Integer> moving = new ArrayList<>();
      for (int a = 0; a < active.size(); a++) {
        int r = active.get(a);
        int k = runs.get(r).k();
        int off = table.offsets[a];
        double[] next = new double[k * d];
        int empties = 0;
        double[] far = null;
        long[] sizes = new long[k];
        double[] meanDistances = new double[k];
        for (int j = 0; j < k; j++) {
          long c = stats.count(off + j);
          sizes[j] = c;
          if (c > 0) {
            meanDistances[j] = stats.distanceSum(off + j) / c;
            for (int l = 0; l < d; l++) {
              next[j * d + l] = stats.sum(off + j, l) / c;
            }
          } else {
            far = far == null ? stats.farthestPoints(a) : far;
            int pick = Math.min(empties, far.length / d - 1);
            System.arraycopy(pick < 0 ? current[r] : far, pick < 0 ? j * d : pick * d, next, j * d, d);
            empties++;
          }
        }
        reseeds[r] += empties;
        boolean still = empties > 0 || maxMove(current[r], next, k) > tolerance * radius;
        out[r] = new Fitted(runs.get(r), unshifted(current[r], k), sizes, meanDistances, stats.wcss(a), it,
            !still, reseeds[r]);
        if (still) {
          current[r] = next;
          moving.add(r);
        }
      }
      active = moving;
    }
    List<Fitted> result = new ArrayList<>();
    for (Fitted f : out) {
      result.add(f);
    }
    LOG.info("k-means: {} runs, {} passes", count, passes);
    return result;
  }

  private double maxMove(double[] from, double[] to, int k) {
    double worst = 0;
    for (int j = 0; j < k; j++) {
      worst = Math.max(worst, KMeansSeeding.distance2(from, j * d, to, j * d, d));
    }
    return Math.sqrt(worst);
  }

  private double[] unshifted(double[] centroids, int k) {
    double[] out = centroids.clone();
    for (int j = 0; j < k; j++) {
      for (int l = 0; l < d; l++) {
        out[j * d + l] += shift[l];
      }
    }
    return out;
  }

  private CentroidTable tableOf(List<Integer> runs, double[][] centroids) {
    List<double[]> perRun = new ArrayList<>();
    for (int r : runs) {
      perRun.add(centroids[r]);
    }
    return CentroidTable.of(d, shift, perRun);
  }

  /**
   * One search: over {@code sample} on the driver when it is not null, else a pass over the cached points. The
   * driver's searches take the scalar kernel: they are small, and in local mode (driver and executor one JVM) their
   * shapes (one centroid per run in the first round, odd row counts) would make the JIT throw away the SIMD
   * kernel's compiled code in the middle of the Lloyd passes that follow (measured: a pass run slower by about 1 s
   * while it recompiled).
   */
  <B extends Serializable> B pass(String stage, CentroidTable table, ClusterPasses.Consumer<B> consumer,
      List<PointBlock> sample) {
    long t0 = System.nanoTime();
    B b;
    if (sample != null) {
      b = ClusterPasses.fold(table, consumer, sample.iterator(), DRIVER_KERNEL);
    } else {
      passes++;
      b = ClusterPasses.search(spark, stage, blocks, table, consumer);
    }
    LOG.debug("{}: {} ms, {} centroids", stage, (System.nanoTime() - t0) / 1000000, table.total());
    return b;
  }
}
