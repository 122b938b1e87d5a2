package io.eigenmill.plan;

import io.eigenmill.math.BlockBudget;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.InvalidJobException;
import io.eigenmill.settings.JobSettings;

/**
 * Picks the PCA method and says why, from the number of features d, the sketch size l and memory.
 *
 * <ul>
 *   <li>covariance: one pass, d x d Gram per task and on the driver; the default while d is at most
 *       {@code reduce.covariance-max-features} and the Gram fits.
 *   <li>tsqr: one pass (each block centred on its mean and QR-factored with the R so far); d x d R per task; chosen only when asked (best accuracy for ill-conditioned
 *       data, since singular values are not squared).
 *   <li>randomized: moments pass + (power-iterations + 1) passes, more (up to max-power-iterations + 1) while the
 *       accuracy bound is above reduce.randomized.tolerance; d x l arrays only, for wide tables.
 * </ul>
 */
public final class MethodChoice {
  private MethodChoice() {}

  public record Choice(Method method, String reason, MemoryEstimate memory) {}

  /** Bytes per double. */
  private static final long B = 8L;

  public static Choice choose(JobSettings.Reduce reduce, int d, long driverHeap, long taskHeap) {
    int l = sketchSize(reduce, d);
    int rows = BlockBudget.rows(reduce.blockRows(), d + 1);
    Method asked = reduce.method();
    if (asked != Method.AUTO) {
      MemoryEstimate m = estimate(asked, d, l, rows, driverHeap, taskHeap);
      if (!m.fits()) {
        throw new InvalidJobException("reduce.method = " + asked.word() + ": needs " + m.describe()
            + "; raise spark.driver.memory / spark.executor.memory, or set reduce.method = randomized (or auto)");
      }
      return new Choice(asked, "reduce.method = " + asked.word() + " (set in the job)", m);
    }
    MemoryEstimate cov = estimate(Method.COVARIANCE, d, l, rows, driverHeap, taskHeap);
    if (d <= reduce.covarianceMaxFeatures() && cov.fits()) {
      return new Choice(Method.COVARIANCE, "auto: d = " + d + " <= reduce.covariance-max-features ("
          + reduce.covarianceMaxFeatures() + ") and the d x d Gram fits in memory: one pass, exact", cov);
    }
    MemoryEstimate rnd = estimate(Method.RANDOMIZED, d, l, rows, driverHeap, taskHeap);
    if (!rnd.fits()) {
      throw new InvalidJobException("reduce.method = auto: even the randomized method needs " + rnd.describe()
          + "; raise spark.driver.memory / spark.executor.memory or lower reduce.block-rows");
    }
    String why = d > reduce.covarianceMaxFeatures()
        ? "d = " + d + " > reduce.covariance-max-features (" + reduce.covarianceMaxFeatures() + ")"
        : "the d x d Gram does not fit (" + cov.describe() + ")";
    return new Choice(Method.RANDOMIZED, "auto: " + why + ": randomized SVD with l = " + l
        + " columns, no d x d array, " + (reduce.powerIterations() + 2) + " passes"
        + (reduce.maxPowerIterations() > reduce.powerIterations() ? " (up to " + (reduce.maxPowerIterations() + 2)
            + " to reach reduce.randomized.tolerance)" : ""), rnd);
  }

  /** Sketch columns of the randomized method: k (or max-components) + oversample, at most d. */
  public static int sketchSize(JobSettings.Reduce reduce, int d) {
    int k = reduce.components().orElse(reduce.maxComponents());
    return Math.max(1, Math.min(d, k + reduce.oversample()));
  }

  public static MemoryEstimate estimate(Method method, int d, int l, int blockRows, long driverHeap, long taskHeap) {
    long dd = B * d * d;
    // a block carries a column of ones after the d features (see BlockFiller)
    long block = B * blockRows * (d + 1L);
    switch (method) {
      case COVARIANCE:
        // task: its Gram, the (d + 1) x (d + 1) Gram of one block with its column of ones, the block; driver: two
        // partials in the tree merge, the eigen copy and vectors
        return new MemoryEstimate(4 * dd, dd + B * (d + 1L) * (d + 1L) + block, driverHeap, taskHeap,
            "d x d Gram, " + MemoryEstimate.human(dd));
      case TSQR:
        return new MemoryEstimate(4 * dd, 2 * dd + B * (blockRows + d) * d + block, driverHeap, taskHeap,
            "d x d R factor, " + MemoryEstimate.human(dd));
      default:
        long dl = B * d * l;
        return new MemoryEstimate(4 * dl + 3 * B * l * l, 2 * dl + block + B * blockRows * l, driverHeap, taskHeap,
            "d x l sketch, " + MemoryEstimate.human(dl));
    }
  }
}
