package io.eigenmill.math;

import java.util.Locale;

/**
 * Rows of a pass's block, by bytes as well as by count: at most {@code reduce.block-rows} rows and at most
 * {@link #BYTES} of doubles, whichever is fewer. A block of 1024 rows is 0.8 MiB at d = 100 but 156 MiB at
 * d = 20,000; capped by bytes, a wide table's task holds a block of 8 MiB (52 rows at d = 20,000), so its heap no
 * longer grows with the column count times a fixed row count. Blocks also start small and double as rows arrive
 * (see the engine's ColumnBlock), so a partition with few rows never allocates the whole block. BLAS level 3 keeps
 * its speed with a few dozen rows per call when each row holds thousands of columns: the work per call is rows x
 * d x d (covariance) or rows x d x l (sketches), so the call overhead stays negligible.
 */
public final class BlockBudget {
  /** The most a block may hold: 8 MiB of doubles. */
  public static final long BYTES = 8L << 20;

  private BlockBudget() {}

  /**
   * Rows of a block of {@code columns} doubles per row: {@code min(blockRows, BYTES / (8 x columns))}, at least 1.
   *
   * @param blockRows {@code reduce.block-rows}
   * @param columns doubles per row of the block (the features, plus the column of ones of a covariance block)
   */
  public static int rows(int blockRows, int columns) {
    long byBytes = BYTES / (8L * Math.max(1, columns));
    return (int) Math.max(1, Math.min(blockRows, byBytes));
  }

  /** The plan's line: the block's rows and bytes, and which limit set them. */
  public static String describe(int blockRows, int columns) {
    int rows = rows(blockRows, columns);
    double mib = 8.0 * rows * columns / (1 << 20);
    String why = rows < blockRows
        ? "capped at " + (BYTES >> 20) + " MiB per block (reduce.block-rows = " + blockRows + " would take "
            + String.format(Locale.ROOT, "%.1f MiB", 8.0 * blockRows * columns / (1 << 20)) + ")"
        : "reduce.block-rows (at most " + (BYTES >> 20) + " MiB per block)";
    return String.format(Locale.ROOT, "%d rows x %d columns, %.2f MiB at most per task and pass: %s", rows, columns,
        mib, why);
  }
}
