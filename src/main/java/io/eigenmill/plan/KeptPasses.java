package io.eigenmill.plan;

import io.eigenmill.engine.KeptBatches;
import io.eigenmill.settings.Choices.Method;
import io.eigenmill.settings.Choices.MissingPolicy;
import io.eigenmill.settings.JobSettings;
import org.apache.spark.sql.SparkSession;

/**
 * Whether a multi-pass fit keeps its features in executor memory after the first pass ({@link KeptBatches}): kept
 * when the estimate, {@value KeptBatches#BYTES_PER_CELL} bytes per cell (a double; a null is kept as NaN), is at most
 * {@value #SHARE_PERCENT}% of the storage memory the executors have free; otherwise the passes stream, and the plan's
 * note and the fit's log say why. The planner and the fit ask the same question, each at its own time.
 */
public final class KeptPasses {
  /** The share of the executors' free storage memory the kept batches may take. */
  public static final int SHARE_PERCENT = 80;

  private KeptPasses() {}

  /** Whether to keep, the estimate and the free storage memory it was held against, in a line for plan and log. */
  public record Decision(boolean keep, long bytes, long free, String line) {}

  /**
   * The decision for a fit, or null when it reads the input once: the randomized method reads it 2 +
   * power-iterations times (one more with impute-mean); grouped fits and fits that write snapshots are not
   * randomized or keep their own first pass.
   */
  public static Decision of(SparkSession spark, JobSettings settings, Method method, int d, long rows,
      boolean columnar) {
    if (method != Method.RANDOMIZED || settings.reduce().grouped() || settings.output().writesSnapshots()) {
      return null;
    }
    int passes = 2 + settings.reduce().powerIterations()
        + (settings.prepare().missing() == MissingPolicy.IMPUTE_MEAN ? 1 : 0);
    return decide(spark, rows, d, passes, columnar);
  }

  /**
   * The decision for a fit of {@code passes} passes over {@code rows} rows (-1: not known before reading) of
   * {@code d} features.
   */
  public static Decision decide(SparkSession spark, long rows, int d, int passes, boolean columnar) {
    long free = KeptBatches.freeStorage(spark);
    if (passes < 2) {
      return new Decision(false, 0, free, "one pass: nothing to keep");
    }
    if (!columnar) {
      return new Decision(false, 0, free, "passes 2.." + passes + " read the input again: it has no columnar scan"
          + " to keep batches of");
    }
    if (rows < 0) {
      return new Decision(false, 0, free, "passes 2.." + passes + " read the input again: its row count is not"
          + " known before reading (no Parquet footers to count), so the memory it needs cannot be checked");
    }
    long bytes = rows * d * (long) KeptBatches.BYTES_PER_CELL;
    long allowed = free / 100 * SHARE_PERCENT;
    boolean keep = bytes <= allowed;
    String sizes = MemoryEstimate.human(bytes) + " (" + rows + " rows x " + d + " features x "
        + KeptBatches.BYTES_PER_CELL + " bytes)";
    String freeText = MemoryEstimate.human(free);
    return new Decision(keep, bytes, free, keep
        ? "the first pass keeps the features in executor memory, " + sizes + " of " + freeText
            + " free storage memory; passes 2.." + passes + " scan memory, not the input"
        : "passes 2.." + passes + " read the input again: keeping the features would take " + sizes + ", more than "
            + SHARE_PERCENT + "% of the " + freeText + " of free storage memory (raise spark.executor.memory)");
  }
}
