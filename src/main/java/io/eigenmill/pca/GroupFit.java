package io.eigenmill.pca;

import io.eigenmill.engine.KeyValues;
import java.io.Serializable;

/**
 * One group of a grouped fit: its key, rows, and its model or the reason it has none.
 *
 * @param key the group's values as text (null elements for null values)
 * @param rowsRead the group's rows in the input
 * @param rowsUsed rows in the group's summary (without rows dropped for missing values)
 * @param missingCells per planned feature, the group's null, NaN or infinite cells
 * @param solved the group's model, spectrum (eigenvalues and the k kept loadings) and k; null when skipped
 * @param skipReason why the group has no model; null when it has one
 */
public record GroupFit(KeyValues key, long rowsRead, long rowsUsed, long[] missingCells, ModelSolver.Solved solved,
    String skipReason) implements Serializable {

  static GroupFit skipped(KeyValues key, long rowsRead, long rowsUsed, long[] missingCells, String reason) {
    return new GroupFit(key, rowsRead, rowsUsed, missingCells, null, reason);
  }

  public boolean hasModel() {
    return solved != null;
  }
}
