package io.eigenmill.engine;

/** How a pass treats a row with a missing cell (null, NaN or infinite). */
public enum ReadMode {
  /** Skip the row and count it. */
  DROP,
  /** Keep the row with NaN in the missing cells (for per-column statistics and imputation). */
  MARK
}
